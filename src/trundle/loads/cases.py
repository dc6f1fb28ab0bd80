"""Load cases: a load with its dynamic allowance and plain multipliers, traceably named."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from trundle.core.beam import ModelError


@dataclass(frozen=True)
class LoadCase:
    """A load with its factors.

    Parameters
    ----------
    load : Vehicle | Train | UniformLoad
    impact : float
        Dynamic allowance as a fraction (0.33 for 33 %), applied to axle loads only.
    factors : tuple of (name, value)
        Plain multipliers on every effect (multiple presence, distribution to one girder …),
        kept by name so a report can show each one.
    name : str
        Defaults to the load's name.
    load_factor : float
        Multiplier for strength: on reactions, shear, moment and support couples, but not on
        deflection and rotation, which stay at service level (common practice, no source).
    """

    load: Any
    impact: float = 0.0
    factors: tuple[tuple[str, float], ...] = ()
    name: str = ""
    load_factor: float = 1.0

    def __post_init__(self) -> None:
        is_placed = hasattr(self.load, "placement")
        is_moving = hasattr(self.load, "group") and hasattr(self.load, "parameters")
        if not (is_placed or is_moving):
            label = f"load case {self.name!r}" if self.name else "load case"
            raise ModelError(f"{label}: load: expected a Vehicle, Train or UniformLoad, "
                             f"found {self.load!r}")
        try:
            impact = float(self.impact)
        except (TypeError, ValueError):
            impact = float("nan")
        if not math.isfinite(impact) or impact < 0:
            raise ModelError(f"load case {self.name or self.load.name!r}: impact: expected a "
                             f"fraction >= 0, found {self.impact!r}")
        factors = []
        for k, v in (self.factors.items() if isinstance(self.factors, dict) else self.factors):
            try:
                value = float(v)
            except (TypeError, ValueError):
                value = float("nan")
            if not math.isfinite(value) or value < 0:
                raise ModelError(f"load case {self.name or self.load.name!r}: factor {k!r}: "
                                 f"expected a number >= 0, found {v!r}")
            factors.append((str(k), value))
        try:
            load_factor = float(self.load_factor)
        except (TypeError, ValueError):
            load_factor = float("nan")
        if not math.isfinite(load_factor) or load_factor <= 0:
            raise ModelError(f"load case {self.name or self.load.name!r}: load_factor: expected "
                             f"a number > 0, found {self.load_factor!r}")
        object.__setattr__(self, "impact", impact)
        object.__setattr__(self, "factors", tuple(factors))
        object.__setattr__(self, "load_factor", load_factor)
        if not self.name:
            object.__setattr__(self, "name", getattr(self.load, "name", "load"))

    @property
    def service_multiplier(self) -> float:
        """Product of the named factors: what deflection and rotation are multiplied by."""
        return float(np.prod([v for _, v in self.factors])) if self.factors else 1.0

    @property
    def multiplier(self) -> float:
        """Named factors times the load factor: what forces and moments are multiplied by."""
        return self.service_multiplier * self.load_factor

    def describe(self) -> str:
        parts = [self.load.describe()]
        if self.impact:
            parts.append(f"dynamic allowance {100 * self.impact:g} % on axles")
        parts.extend(f"{k} x{v:g}" for k, v in self.factors)
        if self.load_factor != 1.0:
            parts.append(f"load factor x{self.load_factor:g} (not on deflection)")
        return "; ".join(parts)


def as_case(item: Any) -> Any:
    """A LoadCase (or Together) for anything the envelope accepts as a load."""
    if isinstance(item, LoadCase | Together):
        return item
    return LoadCase(item)


@dataclass(frozen=True)
class Together:
    """Loads that act at the same time, each standing where it is worst for the effect.

    The extreme of the sum is the sum of the extremes (each part placed independently, the
    empty beam counting for each), the way a lane load is superposed on a design vehicle.
    Each part keeps its own impact, factors and load factor.

    Parameters
    ----------
    parts : two or more LoadCase (or Vehicle, Train, UniformLoad) items
    name : str
        Defaults to the parts' names joined with " + ".
    """

    parts: tuple[Any, ...]
    name: str = ""

    def __post_init__(self) -> None:
        try:
            parts = tuple(as_case(p) for p in self.parts)
        except TypeError:
            raise ModelError(f"loads acting together {self.name!r}: parts: expected a list of "
                             f"loads, found {self.parts!r}") from None
        if len(parts) < 2:
            raise ModelError(f"loads acting together {self.name!r}: parts: expected two or "
                             f"more loads, found {len(parts)}")
        object.__setattr__(self, "parts", parts)
        if not self.name:
            object.__setattr__(self, "name", " + ".join(p.name for p in parts))

    # a Together is a case of its own; the factors live on its parts
    impact = 0.0
    factors = ()  # a class constant, not a field: the factors live on the parts
    load_factor = 1.0
    multiplier = 1.0
    service_multiplier = 1.0

    def describe(self) -> str:
        return "acting together: " + " + ".join(f"({p.describe()})" for p in self.parts)
