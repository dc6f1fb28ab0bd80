"""The crane runway of a model file, gathered for presentation: one place that decides what
the crane tables, figures, CSV files and the JSON part show.

:func:`runway_report` takes the result of :func:`trundle.workflows.crane_runway.analyse_runway`
(run by the caller, not here) and keeps what the outputs read: per support the worst reactions
with and without impact, per span the governing moment and shear with impact (also the worst
section between the sections), the deflection checks, the lateral moments (wheel forces either
way), the fatigue ranges, and every default in use with where it comes from.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.checks import DETAIL_CATEGORIES, FatigueSection
from trundle.analysis.records import ExtremeRecord, span_faces
from trundle.core.beam import Beam
from trundle.io.cranes import CraneEntry, cranes_of, runway_settings_of
from trundle.io.units import UnitSystem
from trundle.loads.cranes import (
    IMPACT_BY_OPERATION,
    LATERAL_FRACTION,
    LONGITUDINAL_FRACTION,
    Crane,
    buffer_gap,
)
from trundle.report.envelope_data import EnvelopeResults, Extreme, describe
from trundle.workflows.crane_runway import (
    FATIGUE_CYCLES,
    LATERAL_DEFLECTION_RATIO,
    VERTICAL_DEFLECTION_RATIO,
    CraneCombination,
    RunwayResult,
    RunwaySpec,
)
from trundle.workflows.crane_runway import fatigue_score as fatigue_score
from trundle.workflows.crane_runway import fatigue_worst_per_span as runway_fatigue_worst

VERIFY = "verify against the governing guide/code in force"
CRANE_CAUTION = ("Crane defaults in use (vertical impact, lateral and longitudinal force "
                 "fractions, deflection limits and fatigue cycles by service class, allowable "
                 "stress ranges by detail category) are recalled from common practice and "
                 "widely used codes and guides, not transcribed: verify each against the "
                 "governing guide/code in force.")
CRANE_BASIS = "recalled from a widely used US building-code provision"
GUIDE_BASIS = "recalled from a widely used design guide for crane-supporting steel structures"
FATIGUE_BASIS = "recalled from the fatigue appendix of a widely used steel specification"


@dataclass(frozen=True)
class DefaultInUse:
    """A value the model did not give, taken from a default.

    Fields: item, applies_to (a crane's name or "runway"), value (in words), basis (where the
    default comes from)."""

    item: str
    applies_to: str
    value: str
    basis: str


@dataclass(frozen=True)
class CranePlacement:
    """One governing extreme of a runway envelope and where the cranes stand for it.

    Fields
    ------
    extreme : value (display units), section, combination, direction, lead wheel x, wheels x
    gaps : distance from the last wheel of one crane to the first of the next [length]
    touching : per gap, whether the buffers touch (the smallest gap the cranes allow)
    wheel_loads : load of each wheel of the placement [force] (with impact for strength)
    cranes : per crane of the combination, in order: (name, "loaded"/"unloaded", wheels)
    """

    extreme: Extreme
    gaps: tuple[float, ...] = ()
    touching: tuple[bool, ...] = ()
    wheel_loads: tuple[float, ...] = ()
    cranes: tuple[tuple[str, str, int], ...] = ()

    @property
    def governed(self) -> bool:
        return self.extreme.governed


@dataclass(frozen=True)
class RunwaySpan:
    """Governing strength values in one span (with impact).

    Fields: span index, start and end x; moment max and min at the sections, the worst
    sagging moment anywhere in the span (None if not computed); shear max and min inside the
    span; the lateral moment (either way) at the sections."""

    span: int
    start: float
    end: float
    moment_max: CranePlacement
    moment_min: CranePlacement
    moment_anywhere: CranePlacement | None
    shear_max: CranePlacement
    shear_min: CranePlacement
    lateral_moment: CranePlacement | None


@dataclass(frozen=True)
class SupportReactions:
    """Worst vertical reactions of one support (what its bracket and column receive).

    Fields: support index, x; max and min with impact (strength), max and min without
    impact (service)."""

    support: int
    x: float
    max_with_impact: CranePlacement
    min_with_impact: CranePlacement
    max_without_impact: CranePlacement
    min_without_impact: CranePlacement


@dataclass(frozen=True, eq=False)
class RunwayReport:
    """Everything the crane outputs show.

    Fields
    ------
    results : the envelope results the section belongs to (model, units, traceability)
    entries : the model's [[crane]] entries
    settings : the model's [runway] table
    spec : the RunwaySpec analysed
    runway : the RunwayResult of analyse_runway on the model's beam and sections
    """

    results: EnvelopeResults
    entries: tuple[CraneEntry, ...]
    settings: RunwaySpec
    spec: RunwaySpec
    runway: RunwayResult
    cache: dict[Any, Any] = field(default_factory=dict, repr=False)

    @property
    def units(self) -> UnitSystem:
        return self.results.units

    @property
    def beam(self) -> Beam:
        return self.runway.beam

    @property
    def sections(self) -> NDArray[np.float64]:
        return self.runway.sections

    @property
    def cranes(self) -> tuple[Crane, ...]:
        return self.spec.cranes

    @property
    def combinations(self) -> dict[str, CraneCombination]:
        """The crane combinations run, by name (the name of each load case)."""
        return {c.name: c for c in self.runway.combinations}

    @property
    def stress_unit(self) -> str:
        return "MPa" if self.units.name == "SI" else "ksi"

    @property
    def stress_factor(self) -> float:
        """Model stress (force/length²) × factor = stress in MPa or ksi."""
        units = self.units
        return units.factor(f"{units.force}/{units.length}**2", self.stress_unit)


def runway_report(results: EnvelopeResults) -> RunwayReport | None:
    """The crane runway part of the results, or None if the model has no cranes."""
    model = results.model
    settings = runway_settings_of(model)
    if results.runway is None or settings is None:
        return None
    runway = results.runway
    return RunwayReport(results, cranes_of(model), settings, runway.spec, runway)


# ------------------------------------------------------------------------------------------
# placements


def placement(report: RunwayReport, record: ExtremeRecord) -> CranePlacement:
    """A record of one of the runway envelopes in words, with its cranes."""
    extreme = describe(record, report.units, report.beam)
    if not record.governed:
        return CranePlacement(extreme)
    combo = report.combinations[record.case]
    # a train of cranes: its searched gaps, last wheel of one crane to the first of the next
    gaps = [value for name, value in record.searched if name.startswith("gap ")]
    touching = [abs(value - buffer_gap(a, b)) <= 1e-6 * max(1.0, value)
                for (a, _), (b, _), value in zip(combo.members[:-1], combo.members[1:], gaps,
                                                 strict=True)]
    cranes = tuple((c.name, state, c.wheels_per_rail) for c, state in combo.members)
    return CranePlacement(extreme, tuple(gaps), tuple(touching), record.point_loads, cranes)


def _extremes(report: RunwayReport, envelope: str, family: str, which: str
              ) -> list[CranePlacement]:
    key = (envelope, family, which)
    if key not in report.cache:
        records = report.runway.records[envelope].at_sections(family, which)
        report.cache[key] = [placement(report, r) for r in records]
    return report.cache[key]


def section_placements(report: RunwayReport, family: str, which: str,
                       strength: bool = True) -> list[CranePlacement]:
    """Per section: the strength (with impact) or service (without) extreme of a family."""
    return _extremes(report, "strength" if strength else "service", family, which)


def support_reactions(report: RunwayReport) -> list[SupportReactions]:
    """Per support that holds the runway: worst reactions with and without impact."""
    if "reactions" in report.cache:
        return report.cache["reactions"]
    beam = report.beam
    out = []
    by = {}
    for name in ("strength", "service"):
        for which in ("max", "min"):
            by[(name, which)] = {
                support: placement(report, record) for support, record in
                report.runway.records[name].at_supports("reaction", which).items()}
    for k in sorted(by[("strength", "max")]):
        out.append(SupportReactions(k, float(beam.support_positions[k]),
                                    by[("strength", "max")][k], by[("strength", "min")][k],
                                    by[("service", "max")][k], by[("service", "min")][k]))
    report.cache["reactions"] = out
    return out


def lateral_placements(report: RunwayReport, kind: str = "moment") -> list[CranePlacement]:
    """Per section: the lateral extreme with the wheel forces acting either way (value ≥ 0,
    read as ±), with the combination that gives it."""
    key = ("lateral", kind)
    if key in report.cache:
        return report.cache[key]
    if report.runway.lateral is None:
        return []
    records = report.runway.records["lateral"]
    tops = records.at_sections(kind, "max")
    bottoms = records.at_sections(kind, "min")
    out = []
    for top, bottom in zip(tops, bottoms, strict=True):
        p = placement(report, top if top.value >= -bottom.value else bottom)
        # shown as a magnitude (±): |value| is both[i], the larger of the two senses
        extreme = dataclasses.replace(p.extreme, which="max", value=abs(p.extreme.value))
        out.append(dataclasses.replace(p, extreme=extreme))
    report.cache[key] = out
    return out


# ------------------------------------------------------------------------------------------
# per span


def _worst(candidates: list[CranePlacement], which: str) -> CranePlacement:
    sign = 1.0 if which == "max" else -1.0
    return max(candidates, key=lambda p: sign * p.extreme.value)


def runway_spans(report: RunwayReport) -> list[RunwaySpan]:
    """One RunwaySpan per span that has sections (computed once)."""
    if "spans" in report.cache:
        return report.cache["spans"]
    beam = report.beam
    ends = beam.support_positions
    families = {(f, w): section_placements(report, f, w)
                for f in ("moment", "shear_left", "shear_right") for w in ("max", "min")}
    lateral = lateral_placements(report)
    anywhere = _moment_anywhere(report)
    out = []
    for span, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        inside, rights, lefts = span_faces(beam, report.sections, span)
        if inside.size == 0:
            continue
        shear = {w: _worst([families[("shear_right", w)][i] for i in rights]
                           + [families[("shear_left", w)][i] for i in lefts], w)
                 for w in ("max", "min")}
        moment = {w: _worst([families[("moment", w)][i] for i in inside], w)
                  for w in ("max", "min")}
        lateral_worst = _worst([lateral[i] for i in inside], "max") if lateral else None
        out.append(RunwaySpan(span, float(a), float(b), moment["max"], moment["min"],
                              anywhere.get(span), shear["max"], shear["min"], lateral_worst))
    report.cache["spans"] = out
    return out


def _moment_anywhere(report: RunwayReport) -> dict[int, CranePlacement]:
    """Per span: the worst sagging moment with impact over every section of the span, as the
    workflow found it (:attr:`RunwayResult.moment_anywhere`)."""
    records = report.runway.records["strength"]
    out = {}
    for span, best in enumerate(report.runway.moment_anywhere):
        if best is not None:
            found = placement(report, records.absolute(best))
            out[span] = dataclasses.replace(
                found, extreme=dataclasses.replace(found.extreme, certified=best.certified))
    return out


# ------------------------------------------------------------------------------------------
# fatigue


def fatigue_by_crane(report: RunwayReport) -> dict[str, list[FatigueSection]]:
    out: dict[str, list[FatigueSection]] = {c.name: [] for c in report.cranes}
    for item in report.runway.fatigue:
        out[item.crane].append(item)
    return out


def fatigue_worst_per_span(report: RunwayReport) -> list[tuple[int, FatigueSection]]:
    """Per crane, per span: the section with the largest utilisation (or range)
    (:func:`trundle.workflows.crane_runway.fatigue_worst_per_span`, also used by sweeps)."""
    return runway_fatigue_worst(report.beam, [c.name for c in report.cranes],
                                report.runway.fatigue)


def fatigue_life_cycles(report: RunwayReport, item: FatigueSection) -> float:
    """Stress cycles over the life for the allowable range: passages × cycles per passage."""
    return report.spec.cycles * max(item.cycles_per_passage, 1.0)


# ------------------------------------------------------------------------------------------
# defaults


def _percent(fraction: float) -> str:
    return f"{100 * fraction:.4g} %"


def defaults_in_use(report: RunwayReport) -> list[DefaultInUse]:
    """Every value the model left to a default, with where the default comes from; cranes
    with the same default share one entry."""
    merged: dict[tuple[str, str, str], list[str]] = {}
    for d in _each_default(report):
        merged.setdefault((d.item, d.value, d.basis), []).append(d.applies_to)
    return [DefaultInUse(item, ", ".join(names), value, basis)
            for (item, value, basis), names in merged.items()]


def _each_default(report: RunwayReport) -> list[DefaultInUse]:
    out = []
    for entry in report.entries:
        crane, given = entry.crane, entry.given
        name = crane.name
        if crane.wheel_loads is None:
            out.append(DefaultInUse(
                "wheel loads", name, "from the crane data, not the maker's wheel loads",
                "crane statics: bridge shared equally by the rails, trolley and load at the "
                "hook approach, equal wheels (common practice, no source)"))
        if crane.impact is None:
            out.append(DefaultInUse(
                "vertical impact", name,
                f"{_percent(IMPACT_BY_OPERATION[crane.operation])} of the maximum wheel "
                f"loads ({crane.operation} operation)", CRANE_BASIS))
        if crane.lateral_fraction is None:
            out.append(DefaultInUse(
                "lateral force", name, f"{_percent(LATERAL_FRACTION)} of (rated capacity + "
                "trolley weight)", CRANE_BASIS))
        if "lateral_share" not in given:
            out.append(DefaultInUse(
                "share of the lateral force on this runway", name,
                f"{crane.lateral_share:g} (equal between the two runways)",
                "common practice where both runways are equally stiff laterally"))
        if crane.longitudinal_fraction is None:
            out.append(DefaultInUse(
                "longitudinal force", name, f"{_percent(LONGITUDINAL_FRACTION)} of the maximum "
                "wheel loads on this rail", CRANE_BASIS))
    spec = report.spec
    klass = spec.service_class
    if spec.vertical_ratio is None:
        out.append(DefaultInUse("vertical deflection limit", "runway",
                                f"span / {VERTICAL_DEFLECTION_RATIO[klass]:g} (service class "
                                f"{klass}), wheel loads without impact", GUIDE_BASIS))
    if spec.lateral_EI is not None and spec.lateral_ratio is None:
        out.append(DefaultInUse("lateral deflection limit", "runway",
                                f"span / {LATERAL_DEFLECTION_RATIO:g}", GUIDE_BASIS))
    if spec.section_modulus is not None and spec.fatigue_cycles is None:
        cycles = FATIGUE_CYCLES[klass]
        words = ("unlimited (the threshold of the detail governs)" if math.isinf(cycles)
                 else f"{cycles:,.0f} loaded passages of each crane")
        out.append(DefaultInUse("fatigue life", "runway", f"{words} (service class {klass})",
                                GUIDE_BASIS))
    if spec.detail_category is not None:
        c_f, threshold = DETAIL_CATEGORIES[spec.detail_category]
        in_model_units = ""
        if report.stress_unit != "ksi" and spec.ksi is not None:
            mpa = threshold * spec.ksi * report.stress_factor
            in_model_units = f" = {mpa:.1f} {report.stress_unit}"
        out.append(DefaultInUse(
            "allowable stress range", "runway",
            f"category {spec.detail_category}: (C_f / N)^(1/3) with C_f = {c_f:.3g} ksi³ "
            f"(N cycles); passes below the threshold {threshold:g} ksi{in_model_units}",
            FATIGUE_BASIS))
    return out


def crane_value_source(entry: CraneEntry, item: str) -> str:
    """ "given" or "default" for one value of a crane (for the crane tables)."""
    key = {"impact": "impact", "lateral": "lateral", "longitudinal": "longitudinal",
           "wheel loads": "wheel_loads", "lateral share": "lateral_share"}[item]
    return "given" if key in entry.given else "default"
