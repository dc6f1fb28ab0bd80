"""Load cases: a load with its dynamic allowance and plain multipliers, traceably named."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from trundle.model import ModelError


@dataclass(frozen=True)
class LoadCase:
    """A load with its factors.

    Parameters
    ----------
    load : Vehicle | Train | UniformLoad
    impact : float
        Dynamic allowance as a fraction (0.33 for 33 %), applied to axle loads only.
    factors : tuple of (name, value)
        Plain multipliers on everything (multiple presence, distribution to one girder,
        load factor …), kept by name so a report can show each one.
    name : str
        Defaults to the load's name.
    """

    load: Any
    impact: float = 0.0
    factors: tuple[tuple[str, float], ...] = ()
    name: str = ""

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
        if not np.isfinite(impact) or impact < 0:
            raise ModelError(f"load case {self.name or self.load.name!r}: impact: expected a "
                             f"fraction >= 0, found {self.impact!r}")
        factors = []
        for k, v in (self.factors.items() if isinstance(self.factors, dict) else self.factors):
            try:
                value = float(v)
            except (TypeError, ValueError):
                value = float("nan")
            if not np.isfinite(value) or value < 0:
                raise ModelError(f"load case {self.name or self.load.name!r}: factor {k!r}: "
                                 f"expected a number >= 0, found {v!r}")
            factors.append((str(k), value))
        object.__setattr__(self, "impact", impact)
        object.__setattr__(self, "factors", tuple(factors))
        if not self.name:
            object.__setattr__(self, "name", getattr(self.load, "name", "load"))

    @property
    def multiplier(self) -> float:
        return float(np.prod([v for _, v in self.factors])) if self.factors else 1.0

    def describe(self) -> str:
        parts = [self.load.describe()]
        if self.impact:
            parts.append(f"dynamic allowance {100 * self.impact:g} % on axles")
        parts.extend(f"{k} x{v:g}" for k, v in self.factors)
        return "; ".join(parts)


def as_case(item: Any) -> LoadCase:
    return item if isinstance(item, LoadCase) else LoadCase(item)
