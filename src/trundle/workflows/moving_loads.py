"""The moving-load workflow: loads over a beam's sections → envelope and absolute extremes.

spec → :func:`run` → result. The result carries the :class:`~trundle.Envelope` (every value
with its governing load by name, position, spacings found and concurrent effects) and, per
span, the worst absolute moment over all loads (found between the sections too).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.envelope import AbsoluteExtreme, Envelope, envelope
from trundle.analysis.records import EnvelopeRecords
from trundle.core._repr import html_table, short
from trundle.core.beam import Beam
from trundle.loads.cases import LoadCase, Together

EFFECTS = ("moment", "shear", "deflection", "reaction", "support_moment")


@dataclass(frozen=True)
class MovingLoadsSpec:
    """What the workflow runs.

    Fields
    ------
    beam : the beam
    loads : load cases (a Vehicle, Train or UniformLoad is taken as a case of factor 1)
    sections : x of the sections [length] (default: the tenth points)
    effects : effects enveloped
    """

    beam: Beam
    loads: Sequence[LoadCase | Together | object]
    sections: NDArray[np.float64] | None = None
    effects: tuple[str, ...] = EFFECTS


@dataclass(frozen=True, eq=False)
class MovingLoadsResult:
    """The envelope and, per span and per "max"/"min", the worst absolute moment.

    Fields
    ------
    spec : what was run
    env : the envelope (values, governing configurations, concurrent effects)
    absolute : per span, {"max": …, "min": …} the worst absolute moment (None: none found)
    records : (property) the records of ``env`` — what governs each extreme, by name, with
        positions, stretches and spacings found (:mod:`trundle.analysis.records`), made
        once when first asked for
    """

    spec: MovingLoadsSpec
    env: Envelope
    absolute: tuple[dict[str, AbsoluteExtreme | None], ...] = field(default=())

    @cached_property
    def records(self) -> EnvelopeRecords:
        return EnvelopeRecords(self.env)

    def _absolute_rows(self) -> list[list[str]]:
        rows = []
        for span, found in enumerate(self.absolute):
            for which in ("max", "min"):
                extreme = found.get(which)
                if extreme is not None:
                    case = self.env.cases[extreme.case].name
                    rows.append([f"span {span + 1}", f"moment {which}", short(extreme.value),
                                 f"x = {extreme.x:.6g}", case])
        return rows

    def __repr__(self) -> str:
        worst = [f"{row[1]} {row[2]} in {row[0]} at {row[3]} ({row[4]})"
                 for row in self._absolute_rows()]
        shown = "; ".join(worst[:4]) + ("; ..." if len(worst) > 4 else "")
        return (f"<MovingLoadsResult {len(self.env.cases)} load case(s) over "
                f"{len(self.env.sections)} sections; absolute: {shown or 'none'}>")

    def _repr_html_(self) -> str:
        return (self.env._repr_html_()
                + html_table("Absolute moment extremes per span (between the sections too)",
                             ["span", "effect", "value", "where", "load"],
                             self._absolute_rows()))


def run(spec: MovingLoadsSpec) -> MovingLoadsResult:
    """Envelope every load over the sections; the absolute moment extremes per span."""
    env = envelope(spec.beam, list(spec.loads), sections=spec.sections, effects=spec.effects)
    absolute = worst_absolute(env) if "moment" in spec.effects else ()
    return MovingLoadsResult(spec, env, absolute)


def worst_absolute(env: Envelope) -> tuple[dict[str, AbsoluteExtreme | None], ...]:
    """Per span, the worst absolute moment max and min over all loads (None: none found).

    The worst is certified only when every load's is: a load whose value is not certified
    may read low, so the worst of the others is not proven to be the worst."""
    worst: list[dict[str, AbsoluteExtreme | None]] = [{"max": None, "min": None}
                                                      for _ in range(env.beam.n_spans)]
    certified = [{"max": True, "min": True} for _ in range(env.beam.n_spans)]
    for extreme in env.absolute("moment"):
        current = worst[extreme.span][extreme.which]
        certified[extreme.span][extreme.which] &= extreme.certified
        sign = 1.0 if extreme.which == "max" else -1.0
        if current is None or sign * extreme.value > sign * current.value:
            worst[extreme.span][extreme.which] = extreme
    for span, pair in enumerate(worst):
        for which, extreme in pair.items():
            if extreme is not None:
                pair[which] = dataclasses.replace(extreme,
                                                  certified=certified[span][which])
    return tuple(worst)
