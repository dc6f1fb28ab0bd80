"""Moving loads: vehicles (axle groups), trains of vehicles, uniform loads attached to them.

Every moving load offers the same small protocol to the envelope: ``parameters()`` lists the
dimensions to search (variable spacings, gaps) as ``SearchParameter``s, and ``group(values,
impact)`` returns the rigid ``TermGroup`` for one choice of them, with the dynamic allowance
applied to axle loads only.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from trundle.core.beam import ModelError
from trundle.scan.engine import TermGroup

Spacing = float | tuple[float, float]


@dataclass(frozen=True)
class SearchParameter:
    """A dimension searched for its worst value, between ``low`` and ``high`` [length]."""

    label: str
    low: float
    high: float


def _number(value: object, what: str) -> float:
    try:
        return float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise ModelError(f"{what}: expected a number, found {value!r}") from None


def _sequence(value: object, what: str) -> tuple:
    if value is None or isinstance(value, str):
        raise ModelError(f"{what}: expected a list, found {value!r}")
    if isinstance(value, Iterable):
        return tuple(value)
    return (value,)  # a single value stands for a list of one


def _check_spacing(value: Spacing, what: str) -> Spacing:
    if isinstance(value, tuple | list):
        if len(value) != 2:
            raise ModelError(f"{what}: a range is (min, max), found {value!r}")
        lo, hi = _number(value[0], what), _number(value[1], what)
        if not (np.isfinite(lo) and np.isfinite(hi)) or lo < 0 or hi < lo:
            raise ModelError(f"{what}: expected 0 <= min <= max, found {value!r}")
        return (lo, hi) if hi > lo else lo
    v = _number(value, what)
    if not np.isfinite(v) or v < 0:
        raise ModelError(f"{what}: expected a length >= 0, found {value!r}")
    return v


@dataclass(frozen=True)
class Vehicle:
    """A group of axle (or wheel) loads that moves as one.

    Parameters
    ----------
    loads : sequence of float [force]
        Axle loads from the front axle to the back.
    spacings : sequence of float or (min, max) [length]
        Distance from each axle to the next (``len(loads) - 1``); a range is searched for its
        worst value.
    name : str
    reversible : bool
        Run in both directions (default). Turn off for a one-way load whose order matters.
    confined : bool
        Stand only where every axle is on the beam (a crane between the end stops of its
        runway), instead of entering and leaving the beam (default).
    """

    loads: tuple[float, ...]
    spacings: tuple[Spacing, ...] = ()
    name: str = "vehicle"
    reversible: bool = True
    confined: bool = False

    def __post_init__(self) -> None:
        loads = tuple(_number(p, f"vehicle {self.name!r}: loads[{i}]")
                      for i, p in enumerate(_sequence(self.loads, f"vehicle {self.name!r}: loads")))
        if not loads:
            raise ModelError(f"vehicle {self.name!r}: loads: at least one axle is needed")
        for i, p in enumerate(loads):
            if not np.isfinite(p) or p < 0:
                raise ModelError(f"vehicle {self.name!r}: loads[{i}]: expected a force >= 0, "
                                 f"found {p!r}")
        spacings = _sequence(self.spacings, f"vehicle {self.name!r}: spacings")
        if len(spacings) != len(loads) - 1:
            raise ModelError(f"vehicle {self.name!r}: spacings: expected {len(loads) - 1} "
                             f"(one between each pair of axles), found {len(spacings)}")
        spacings = tuple(_check_spacing(s, f"vehicle {self.name!r}: spacings[{i}]")
                         for i, s in enumerate(spacings))
        object.__setattr__(self, "loads", loads)
        object.__setattr__(self, "spacings", spacings)

    @property
    def total(self) -> float:
        return float(sum(self.loads))

    def parameters(self) -> list[SearchParameter]:
        return [SearchParameter(f"{self.name}: spacing {i + 1}-{i + 2}", s[0], s[1])
                for i, s in enumerate(self.spacings) if isinstance(s, tuple)]

    def resolved_spacings(self, values: Sequence[float]) -> list[float]:
        values = list(values)
        out = []
        for s in self.spacings:
            out.append(values.pop(0) if isinstance(s, tuple) else s)
        return out

    def axle_offsets(self, values: Sequence[float] = ()) -> np.ndarray:
        """Distance of each axle behind the front axle for the searched values given."""
        if not values:
            values = [s[0] for s in self.spacings if isinstance(s, tuple)]
        return np.concatenate([[0.0], np.cumsum(self.resolved_spacings(values))])

    def group(self, values: Sequence[float] = (), impact: float = 0.0) -> TermGroup:
        u = self.axle_offsets(values)
        return TermGroup(tuple(u), tuple(p * (1.0 + impact) for p in self.loads),
                         confined=self.confined)

    def describe(self) -> str:
        def fmt(s: Spacing) -> str:
            return f"{s[0]:g}..{s[1]:g}" if isinstance(s, tuple) else f"{s:g}"

        loads = ", ".join(f"{p:g}" for p in self.loads)
        spacings = ", ".join(fmt(s) for s in self.spacings)
        return f"{self.name}: axles {loads}" + (f"; spacings {spacings}" if spacings else "")


@dataclass(frozen=True)
class AttachedUniform:
    """A uniform load [force/length] that travels with a train, ``gap`` [length] clear of the
    nearest axle, over ``length`` [length] (``math.inf`` for unlimited)."""

    w: float
    length: float = math.inf
    gap: float = 0.0

    def __post_init__(self) -> None:
        if not np.isfinite(self.w) or self.w < 0:
            raise ModelError(f"attached uniform load: w: expected >= 0, found {self.w!r}")
        if not (self.length > 0):
            raise ModelError(f"attached uniform load: length: expected > 0, found {self.length!r}")
        if not np.isfinite(self.gap) or self.gap < 0:
            raise ModelError(f"attached uniform load: gap: expected >= 0, found {self.gap!r}")


@dataclass(frozen=True)
class Train:
    """Vehicles in a row, with clear gaps between them, and uniform load ahead or behind.

    Parameters
    ----------
    vehicles : sequence of Vehicle
        From the front of the train to the back.
    gaps : sequence of float or (min, max) [length]
        From the last axle of each vehicle to the first axle of the next
        (``len(vehicles) - 1``); a range is searched for its worst value.
    ahead, behind : AttachedUniform or None
        Uniform load travelling in front of the first axle / behind the last axle.
    confined : bool
        Stand only where every axle is on the beam (cranes between the end stops).
    """

    vehicles: tuple[Vehicle, ...]
    gaps: tuple[Spacing, ...] = ()
    ahead: AttachedUniform | None = None
    behind: AttachedUniform | None = None
    name: str = "train"
    reversible: bool = True
    confined: bool = False

    def __post_init__(self) -> None:
        vehicles = _sequence(self.vehicles, f"train {self.name!r}: vehicles")
        if not vehicles:
            raise ModelError(f"train {self.name!r}: at least one vehicle is needed")
        for i, v in enumerate(vehicles):
            if not isinstance(v, Vehicle):
                raise ModelError(f"train {self.name!r}: vehicles[{i}]: expected a Vehicle, "
                                 f"found {v!r}")
        for label, part in (("ahead", self.ahead), ("behind", self.behind)):
            if part is not None and not isinstance(part, AttachedUniform):
                raise ModelError(f"train {self.name!r}: {label}: expected an AttachedUniform "
                                 f"or None, found {part!r}")
        gaps = _sequence(self.gaps, f"train {self.name!r}: gaps")
        if len(gaps) != len(vehicles) - 1:
            raise ModelError(f"train {self.name!r}: gaps: expected {len(vehicles) - 1}, "
                             f"found {len(gaps)}")
        gaps = tuple(_check_spacing(g, f"train {self.name!r}: gaps[{i}]")
                     for i, g in enumerate(gaps))
        object.__setattr__(self, "vehicles", vehicles)
        object.__setattr__(self, "gaps", gaps)

    def parameters(self) -> list[SearchParameter]:
        out: list[SearchParameter] = []
        for i, v in enumerate(self.vehicles):
            out.extend(v.parameters())
            if i < len(self.gaps) and isinstance(self.gaps[i], tuple):
                lo, hi = self.gaps[i]
                out.append(SearchParameter(f"{self.name}: gap {i + 1}-{i + 2}", lo, hi))
        return out

    def group(self, values: Sequence[float] = (), impact: float = 0.0) -> TermGroup:
        values = list(values)
        u_all: list[float] = []
        p_all: list[float] = []
        cursor = 0.0
        for i, v in enumerate(self.vehicles):
            n = len(v.parameters())
            own, values = values[:n], values[n:]
            u = v.axle_offsets(own) + cursor
            u_all.extend(u)
            p_all.extend(p * (1.0 + impact) for p in v.loads)
            cursor = u[-1]
            if i < len(self.gaps):
                gap = self.gaps[i]
                cursor += values.pop(0) if isinstance(gap, tuple) else gap
        uniform = []
        if self.ahead is not None and self.ahead.w > 0:
            start = -self.ahead.gap
            uniform.append((start - self.ahead.length, start, self.ahead.w))
        if self.behind is not None and self.behind.w > 0:
            start = u_all[-1] + self.behind.gap
            uniform.append((start, start + self.behind.length, self.behind.w))
        return TermGroup(tuple(u_all), tuple(p_all), tuple(uniform), self.confined)

    def describe(self) -> str:
        parts = [v.describe() for v in self.vehicles]
        if self.gaps:
            parts.append("gaps " + ", ".join(
                f"{g[0]:g}..{g[1]:g}" if isinstance(g, tuple) else f"{g:g}" for g in self.gaps))
        for label, u in (("ahead", self.ahead), ("behind", self.behind)):
            if u is not None:
                parts.append(f"uniform {u.w:g} {label} (length {u.length:g}, gap {u.gap:g})")
        return f"{self.name}: " + "; ".join(parts)
