"""Where the live load stands for the governing design values: one record per value.

A design value is the factored permanent part plus γL × the governing live case's own extreme
(:mod:`trundle.analysis.combinations`). The case envelopes keep only numbers and names, so
here, for the values a checker looks at first, the governing live configuration is found
again: per combination and span the largest design moment (max) and the smallest (min) at
the sections, the largest design shear (at the critical shear sections of the span where the
model has them, else at every section of the span, each face inside the span), and per
support the largest reaction (and the smallest where it is an uplift). For each, the
governing case — a design case's governing alternative, a plain load, a patterned uniform
load, a lane load w(L) — is enveloped again at that one line, and its
:class:`~trundle.analysis.records.ExtremeRecord` says where its axles stand, which way it
travels, which stretches are loaded and which spacings were found. The record's value times
the alternative's factor reproduces the case's own extreme (``reproduced`` says whether it
does to 1e-6; a record that does not is shown as not reproduced, never as the cause).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.case_envelopes import CaseEnvelope
from trundle.analysis.combinations import PERMANENT_ONLY, DesignEnvelope
from trundle.analysis.envelope import envelope, kind_and_side
from trundle.analysis.patterns import LaneIntensity, lane_loaded_set
from trundle.analysis.records import EnvelopeRecords, ExtremeRecord, span_faces
from trundle.core.beam import Beam
from trundle.loads.cases import as_case
from trundle.loads.design_cases import DesignCase, for_beam
from trundle.loads.patterns import UniformLoad

# relative agreement of a re-found configuration with the case's own extreme
REPRODUCED = 1e-6


@dataclass(frozen=True)
class DesignRecord:
    """One governing design value and the live-load configuration that gives it.

    Fields
    ------
    combination : the combination's name
    family : moment, shear_left, shear_right or reaction
    which : "max" or "min"
    value : the design value, factored: the design table's and design-envelope.csv's
        [force or force·length]
    x : the section, or the support's position [length]
    index : the section's index in ``DesignResult.sections``; the support's number for a
        reaction
    spans : the spans (from 0) whose governing value it is (a section at a support can be
        the worst of both spans); empty for a reaction
    case : the governing live case's name, or ``PERMANENT_ONLY`` where no live case acts
    alternative : what governs inside the case ("truck + lane", "spans 1, 3 loaded"; "" for
        a single load)
    permanent : the factored permanent part of ``value``
    live_factor : γL of the combination
    live : the governing case's own extreme (impact and case factors included, not γL):
        value = permanent + live_factor × live
    alternative_factor : the factor of the governing alternative of a design case (1 for
        other cases): live = alternative_factor × load.value
    load : where the governing live load stands (None where no live case acts); its value is
        the load's own extreme before the alternative's factor
    reproduced : whether ``alternative_factor × load.value`` equals ``live`` (to 1e-6
        relative): the drawn configuration gives the tabulated value
    """

    combination: str
    family: str
    which: str
    value: float
    x: float
    index: int
    spans: tuple[int, ...]
    case: str
    alternative: str
    permanent: float
    live_factor: float
    live: float
    alternative_factor: float = 1.0
    load: ExtremeRecord | None = None
    reproduced: bool = True

    @property
    def governed(self) -> bool:
        """Whether a live case governs (and so ``load`` says where it stands)."""
        return self.load is not None


@dataclass(frozen=True)
class _Pick:
    combination: str
    family: str
    which: str
    index: int
    spans: tuple[int, ...]


def _section_picks(name: str, env: DesignEnvelope, beam: Beam, sections: NDArray[np.float64],
                   critical: NDArray[np.float64]) -> list[_Pick]:
    """Per span: the worst design moment max and min at its sections, and the worst design
    shear (at its critical shear sections if any, else at its sections, faces in the span)."""
    chosen: dict[tuple[str, str, int], list[int]] = {}
    tolerance = 1e-9 * beam.length
    is_critical = np.array([bool(critical.size) and
                            bool(np.min(np.abs(critical - x)) <= tolerance) for x in sections])
    for span in range(beam.n_spans):
        inside, right_faces, left_faces = span_faces(beam, sections, span)
        if not inside.size:
            continue
        for which, pick in (("max", np.argmax), ("min", np.argmin)):
            values = env.values["moment", which][inside]
            if not np.isfinite(values).any():
                continue
            j = int(inside[int(pick(np.where(np.isfinite(values), values,
                                             -np.inf if which == "max" else np.inf)))])
            chosen.setdefault(("moment", which, j), []).append(span)
        candidates = []  # (|V|, order, family, which, j)
        critical_inside = [int(j) for j in inside if is_critical[j]]
        for family, faces in (("shear_right", right_faces), ("shear_left", left_faces)):
            for j in faces:
                if critical_inside and int(j) not in critical_inside:
                    continue
                for which in ("max", "min"):
                    v = float(env.values[family, which][j])
                    if math.isfinite(v):
                        candidates.append((abs(v), -len(candidates), family, which, int(j)))
        if candidates:
            _, _, family, which, j = max(candidates)
            chosen.setdefault((family, which, j), []).append(span)
    return [_Pick(name, family, which, j, tuple(spans))
            for (family, which, j), spans in chosen.items()]


def _support_picks(name: str, env: DesignEnvelope) -> list[_Pick]:
    """Per support: the largest design reaction, and the smallest where it is an uplift."""
    picks = []
    high, low = env.values["reaction", "max"], env.values["reaction", "min"]
    for k in range(high.size):
        if math.isfinite(float(high[k])):
            picks.append(_Pick(name, "reaction", "max", k, ()))
        if math.isfinite(float(low[k])) and float(low[k]) < 0.0:
            picks.append(_Pick(name, "reaction", "min", k, ()))
    return picks


def _order(pick: _Pick) -> tuple:
    """Span by span (moment max, moment min, shear), then the supports."""
    if pick.family == "reaction":
        return (1, pick.index, pick.which != "max")
    kind = 0 if pick.family == "moment" else 1
    return (0, min(pick.spans), kind, pick.which != "max", pick.index)


class LiveLoads:
    """The live loads of a design spec by case name (design cases, plain loads, patterned
    uniform loads, lane loads w(L)), and how each is enveloped again."""

    def __init__(self, beam: Beam, design_loads: Sequence[DesignCase], loads: Sequence[Any],
                 live_patterns: Sequence[tuple[str, float, str]],
                 lane_length_loads: Sequence[tuple[str, LaneIntensity, bool]]) -> None:
        self.beam = beam
        self.design = {d.name: d for d in design_loads}
        self.plain = {as_case(load).name: as_case(load) for load in loads}
        self.patterns = {name: UniformLoad(w, "spans" if placement == "spans" else "anywhere",
                                           name=name)
                         for name, w, placement in live_patterns}
        self.lanes = {name: (intensity, whole) for name, intensity, whole in lane_length_loads}

    def load_of(self, case: str, alternative: str) -> tuple[Any, float] | None:
        """(the load case to envelope, the alternative's factor), or None for a lane load."""
        if case in self.design:
            for a in self.design[case].alternatives:
                if a.name == alternative:
                    return for_beam(a, self.beam.length), a.factor
            raise LookupError(f"design case {case!r} has no alternative {alternative!r}")
        if case in self.plain:
            return self.plain[case], 1.0
        if case in self.patterns:
            return self.patterns[case], 1.0
        if case in self.lanes:
            return None
        raise LookupError(f"no live case named {case!r}")


def _where(pick: _Pick, sections: NDArray[np.float64], beam: Beam) -> float:
    if pick.family == "reaction":
        return float(beam.support_positions[pick.index])
    return float(sections[pick.index])


def design_records(sources: LiveLoads, sections: NDArray[np.float64],
                   critical: NDArray[np.float64], cases: Mapping[str, CaseEnvelope],
                   designs: Mapping[str, DesignEnvelope]) -> dict[str, tuple[DesignRecord, ...]]:
    """Per combination (by name), its governing design values with where the live load
    stands, span by span and then support by support."""
    beam = sources.beam
    picks: dict[str, list[_Pick]] = {}
    for name, env in designs.items():
        mine = _section_picks(name, env, beam, sections, critical) + _support_picks(name, env)
        picks[name] = sorted(mine, key=_order)
    # envelope each governing load once over every line asked of it
    wanted: dict[tuple[str, str], list[_Pick]] = {}
    for name, items in picks.items():
        for p in items:
            case = designs[name].governing[p.family, p.which][p.index]
            if case == PERMANENT_ONLY:
                continue
            inner = cases[case].governing.get((p.family, p.which), ())
            alternative = inner[p.index] if p.index < len(inner) else ""
            wanted.setdefault((case, alternative), []).append(p)
    found: dict[tuple[str, str, str, str, int], tuple[ExtremeRecord, float]] = {}
    for (case, alternative), items in wanted.items():
        source = sources.load_of(case, alternative)
        if source is None:  # a lane load w(L): its loaded set, found again line by line
            intensity, whole = sources.lanes[case]
            for p in items:
                where: float | int = p.index if p.family == "reaction" else float(
                    sections[p.index])
                loaded = lane_loaded_set(beam, intensity, p.family, where, p.which, whole)
                record = ExtremeRecord(p.family, p.which, loaded.value,
                                       _where(p, sections, beam), case, loaded=loaded.stretches,
                                       placement="loaded length")
                found[case, alternative, p.family, p.which, p.index] = (record, 1.0)
            continue
        load, factor = source
        xs = sorted({float(sections[p.index]) for p in items if p.family != "reaction"})
        kinds = tuple(dict.fromkeys(kind_and_side(p.family)[0] for p in items))
        env = envelope(beam, [load], sections=xs or [float(sections[0])], effects=kinds)
        records = EnvelopeRecords(env)
        for p in items:
            if p.family == "reaction":
                record = records.at_supports("reaction", p.which)[p.index]
            else:
                at = int(np.argmin(np.abs(np.asarray(env.sections) - sections[p.index])))
                record = records.at_sections(p.family, p.which)[at]
            found[case, alternative, p.family, p.which, p.index] = (record, factor)
    out: dict[str, tuple[DesignRecord, ...]] = {}
    for name, items in picks.items():
        env = designs[name]
        live_factor = env.combination.live
        rows = []
        for p in items:
            value = float(env.values[p.family, p.which][p.index])
            permanent = float(env.permanent[p.family, p.which][p.index])
            case = env.governing[p.family, p.which][p.index]
            x = _where(p, sections, beam)
            if case == PERMANENT_ONLY:
                rows.append(DesignRecord(name, p.family, p.which, value, x, p.index, p.spans,
                                         case, "", permanent, live_factor, 0.0))
                continue
            inner = cases[case].governing.get((p.family, p.which), ())
            alternative = inner[p.index] if p.index < len(inner) else ""
            live = float(cases[case].values[p.family, p.which][p.index])
            record, factor = found[case, alternative, p.family, p.which, p.index]
            reproduced = abs(factor * record.value - live) <= REPRODUCED * (
                abs(live) + 1e-3 * _scale(cases[case], p.family))
            rows.append(DesignRecord(name, p.family, p.which, value, x, p.index, p.spans,
                                     case, alternative, permanent, live_factor, live, factor,
                                     record, reproduced))
        out[name] = tuple(rows)
    return out


def _scale(case: CaseEnvelope, family: str) -> float:
    """The case's largest |value| of a family (what 'zero' is measured against)."""
    values = np.concatenate([np.asarray(case.values[family, w], dtype=float)
                             for w in ("max", "min")])
    finite = np.abs(values[np.isfinite(values)])
    return float(finite.max()) if finite.size else 0.0


__all__ = ["DesignRecord", "LiveLoads", "design_records"]
