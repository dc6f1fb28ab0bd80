"""Permanent loads: always present, analysed statically on the same beam.

Each permanent load has a name and a category (DC, DW, D …) by which combinations factor it.
Its effects are read at the lines of the envelope: moment, shear just left and right of every
section, deflection at the sections and every support's reaction, one value each (a permanent
load is not placed; its maximum and minimum are the same number).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from trundle.core.beam import Beam, ModelError
from trundle.core.statics import DistributedLoad, PointLoad, PointMoment

PERMANENT_KINDS = ("self weight", "superimposed dead", "partial uniform", "point", "couple")


@dataclass(frozen=True)
class PermanentLoad:
    """One permanent load.

    Parameters
    ----------
    name : shown in results; names differ within a model
    category : the combination category ("DC", "DW", "D" …)
    kind : one of :data:`PERMANENT_KINDS`
    value : w [force/length] for self weight, superimposed dead and partial uniform loads;
        P [force] downward for a point load; M [force·length] clockwise for a couple
    start, end : x of a partial uniform load [length]
    at : x of a point load or couple [length]
    """

    name: str
    category: str
    kind: str
    value: float
    start: float | None = None
    end: float | None = None
    at: float | None = None

    def __post_init__(self) -> None:
        label = f"permanent load {self.name!r}"
        if not str(self.name).strip():
            raise ModelError("permanent load: name: expected a name that is not blank")
        if not str(self.category).strip():
            raise ModelError(f"{label}: category: expected a category such as DC, DW or D")
        if self.kind not in PERMANENT_KINDS:
            raise ModelError(f"{label}: kind: expected one of {', '.join(PERMANENT_KINDS)}, "
                             f"found {self.kind!r}")
        if isinstance(self.value, bool) or not isinstance(self.value, int | float) or \
                not math.isfinite(self.value):
            raise ModelError(f"{label}: value: expected a finite number, found {self.value!r}")
        if self.kind == "partial uniform" and (self.start is None or self.end is None
                                               or not self.end > self.start):
            raise ModelError(f"{label}: expected start < end, found {self.start!r} .. "
                             f"{self.end!r}")
        if self.kind in ("point", "couple") and self.at is None:
            raise ModelError(f"{label}: at: expected the position of the {self.kind}")

    def statics_loads(self, beam: Beam) -> list:
        """The load as :mod:`trundle.core.statics` loads on ``beam``."""
        L = beam.length
        if self.kind in ("self weight", "superimposed dead"):
            return [DistributedLoad(0.0, L, float(self.value))]
        if self.kind == "partial uniform":
            assert self.start is not None and self.end is not None
            return [DistributedLoad(float(self.start), float(self.end), float(self.value))]
        assert self.at is not None
        if self.kind == "point":
            return [PointLoad(float(self.at), float(self.value))]
        return [PointMoment(float(self.at), float(self.value))]


@dataclass(frozen=True, eq=False)
class PermanentEffects:
    """Effects of one permanent load at the envelope's lines.

    Fields
    ------
    name, category : of the load
    sections : (n_sections,) [length]
    values : {family: array}: "moment", "shear_left", "shear_right", "deflection" at the
        sections, "reaction" per support
    """

    name: str
    category: str
    sections: NDArray[np.float64]
    values: Mapping[str, NDArray[np.float64]]


def permanent_effects(beam: Beam, loads: Sequence[PermanentLoad], sections: ArrayLike
                      ) -> list[PermanentEffects]:
    """Each permanent load's effects at the sections and supports (one static solve each)."""
    sections = np.atleast_1d(np.asarray(sections, dtype=float))
    names = [p.name for p in loads]
    for n in names:
        if names.count(n) > 1:
            raise ModelError(f"permanent loads: names must differ, found {n!r} twice")
    out = []
    for p in loads:
        try:
            result = beam.static(p.statics_loads(beam))
        except ModelError as error:
            raise ModelError(f"permanent load {p.name!r}: {error}") from None
        values = {
            "moment": result.moment(sections),
            "shear_left": result.shear(sections, side="left"),
            "shear_right": result.shear(sections, side="right"),
            "deflection": result.deflection(sections),
            "reaction": np.where([s == "free" for s in beam.supports], np.nan,
                                 result.reactions),
        }
        out.append(PermanentEffects(p.name, p.category, sections,
                                    {k: np.asarray(v, dtype=float) for k, v in values.items()}))
    return out


def by_category(effects: Iterable[PermanentEffects]) -> dict[str, dict[str, NDArray]]:
    """The effects summed per category: {category: {family: array}}."""
    out: dict[str, dict[str, NDArray]] = {}
    for e in effects:
        target = out.setdefault(e.category, {f: np.zeros_like(v) for f, v in e.values.items()})
        for f, v in e.values.items():
            target[f] = target[f] + v
    return out
