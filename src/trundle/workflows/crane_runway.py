"""Crane runway girders: reactions, envelopes, deflection and fatigue under travelling cranes.

One runway rail carries the wheels of one or more cranes. For strength the wheel loads carry
their vertical impact; for deflection, reactions "without impact" and fatigue they do not
(common practice, no source). Lateral wheel forces act on the lateral stiffness of the top
flange, in either direction. Two cranes can meet at their buffers or stand any distance apart.

Defaults below are from memory of common practice and widely used guides; each is marked and
can be overridden; every one must be verified against the governing guide and code. The checks
themselves (utilisation and verdict) are in :mod:`trundle.analysis.checks`.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.checks import (
    DeflectionCheck,
    FatigueSection,
    allowable_stress_range_ksi,
    deflection_checks,
    fatigue_allowable,
    rainflow_ranges,
)
from trundle.analysis.envelope import AbsoluteExtreme, Envelope, absolute_extremes, envelope
from trundle.analysis.records import EnvelopeRecords
from trundle.core._repr import html_table, short
from trundle.core.beam import Beam, ModelError
from trundle.loads.cases import LoadCase
from trundle.loads.cranes import Crane, WheelLoads, buffer_gap
from trundle.loads.vehicles import Train, Vehicle
from trundle.scan.passages import passage_history

SERVICE_CLASSES = ("A", "B", "C", "D", "E", "F")
# span / limit for the vertical deflection by crane service class, and for lateral
# deflection: from memory of common practice in a widely used steel design guide for
# crane-supporting structures; verify against the governing guide
VERTICAL_DEFLECTION_RATIO = {"A": 600.0, "B": 600.0, "C": 600.0, "D": 800.0, "E": 1000.0,
                             "F": 1000.0}
LATERAL_DEFLECTION_RATIO = 400.0
# full-load stress cycles over the girder's life by service class (upper ends of the usual
# ranges; D, E and F "over 2,000,000" are taken as unlimited, so the threshold governs):
# from memory of the same guide; verify
FATIGUE_CYCLES = {"A": 100_000.0, "B": 500_000.0, "C": 2_000_000.0, "D": math.inf,
                  "E": math.inf, "F": math.inf}
COMBINATIONS = ("each alone", "all loaded", "one loaded, others unloaded")


@dataclass(frozen=True)
class CraneCombination:
    """Cranes on the runway together, each "loaded" or "unloaded", in the given order."""

    name: str
    members: tuple[tuple[Crane, str], ...]


def crane_combinations(cranes: Sequence[Crane], wanted: Sequence[str] = COMBINATIONS
                       ) -> list[CraneCombination]:
    """The combinations asked for: "each alone" (every crane loaded, on its own), "all loaded"
    (every crane loaded, together) and "one loaded, others unloaded" (together, one loaded at
    a time)."""
    for w in wanted:
        if w not in COMBINATIONS:
            raise ModelError(f"crane combinations: expected some of {', '.join(COMBINATIONS)}, "
                             f"found {w!r}")
    out = []
    if "each alone" in wanted or len(cranes) == 1:
        out.extend(CraneCombination(f"{c.name} alone", ((c, "loaded"),)) for c in cranes)
    if len(cranes) > 1:
        if "all loaded" in wanted:
            out.append(CraneCombination("all loaded", tuple((c, "loaded") for c in cranes)))
        if "one loaded, others unloaded" in wanted:
            for i, c in enumerate(cranes):
                members = tuple((d, "loaded" if j == i else "unloaded")
                                for j, d in enumerate(cranes))
                out.append(CraneCombination(f"{c.name} loaded, others unloaded", members))
    return out


def combination_load(combo: CraneCombination, runway_length: float, with_impact: bool = False,
                     lateral: bool = False, confined: bool = False) -> Vehicle | Train:
    """The moving load of a combination: one crane, or a train of cranes whose clear gap runs
    from buffers touching to a runway length apart (searched). ``confined``: the beam is the
    whole runway between its end stops, so every wheel stays on it; otherwise wheels may
    stand beyond the beam's ends (on the next girders of a longer runway)."""
    vehicles = [c.vehicle(state, with_impact=with_impact, lateral=lateral, confined=confined)
                for c, state in combo.members]
    if len(vehicles) == 1:
        return Vehicle(vehicles[0].loads, vehicles[0].spacings, name=combo.name,
                       confined=confined)
    gaps = []
    for (a, _), (b, _) in zip(combo.members[:-1], combo.members[1:], strict=True):
        touching = buffer_gap(a, b)
        gaps.append((touching, touching + runway_length))
    return Train(tuple(vehicles), tuple(gaps), name=combo.name, confined=confined)


@dataclass(frozen=True)
class RunwaySpec:
    """What a runway analysis needs besides the beam.

    Parameters
    ----------
    cranes : the cranes on this runway
    combinations : which of COMBINATIONS to run
    lateral_EI : EI of the top flange about its vertical axis [force·length²], or None
        to skip the lateral analysis
    service_class : "A" … "F" (sets default deflection limits and fatigue cycles)
    vertical_ratio, lateral_ratio : overrides of span / limit
    section_modulus : elastic section modulus for the fatigue fibre [length³], or None
    detail_category : fatigue detail category, or None to skip the stress check
    fatigue_cycles : override of the service-class cycles
    ksi : one ksi in the model's stress units (force/length²), for the allowable range
    end_stops : the beam is the whole runway, with end stops at its ends: wheels stay on it.
        Without (default) wheels may stand beyond its ends, as on the next girders of a
        longer runway (conservative for a girder modelled alone)
    lateral_EI_given : how a model file stated lateral_EI ("" when not given)
    given : the ``[runway]`` table as written in a model file (empty when built in Python)

    A model file's ``[runway]`` table is read into a spec without cranes; the ``[[crane]]``
    tables fill them in (:func:`trundle.io.cranes.runway_spec`). :func:`analyse_runway`
    refuses a spec without cranes.
    """

    cranes: tuple[Crane, ...] = ()
    combinations: tuple[str, ...] = COMBINATIONS
    lateral_EI: float | None = None
    service_class: str = "C"
    vertical_ratio: float | None = None
    lateral_ratio: float | None = None
    section_modulus: float | None = None
    detail_category: str | None = None
    fatigue_cycles: float | None = None
    ksi: float | None = None
    end_stops: bool = False
    lateral_EI_given: str = ""
    given: Mapping[str, Any] = field(default_factory=dict, repr=False)

    def __post_init__(self) -> None:
        if not isinstance(self.end_stops, bool):
            raise ModelError(f"end_stops: expected true or false, found {self.end_stops!r}")
        object.__setattr__(self, "cranes", tuple(self.cranes))
        for i, crane in enumerate(self.cranes):
            if not isinstance(crane, Crane):
                raise ModelError(f"cranes[{i}]: expected a Crane, found {crane!r}")
        if self.service_class not in SERVICE_CLASSES:
            raise ModelError(f"service class: expected one of {', '.join(SERVICE_CLASSES)}, "
                             f"found {self.service_class!r}")
        names = [c.name for c in self.cranes]
        if len(set(names)) != len(names):
            raise ModelError(f"cranes: names must differ, found {names}")
        if isinstance(self.combinations, str):
            raise ModelError(f"crane combinations: expected a list of some of "
                             f"{', '.join(COMBINATIONS)}, found {self.combinations!r}")
        if self.cranes and not crane_combinations(self.cranes, self.combinations):
            raise ModelError(f"crane combinations: expected some of {', '.join(COMBINATIONS)}, "
                             f"found {self.combinations!r}")
        for key in ("lateral_EI", "vertical_ratio", "lateral_ratio", "section_modulus",
                    "fatigue_cycles", "ksi"):
            value = getattr(self, key)
            if value is None:
                continue
            try:
                number = float(value)
            except (TypeError, ValueError):
                number = math.nan
            unlimited = key == "fatigue_cycles" and number == math.inf
            if not (number > 0 and (math.isfinite(number) or unlimited)):
                raise ModelError(f"runway: {key}: expected a positive number, found {value!r}")
        if self.detail_category is not None:
            allowable_stress_range_ksi(self.detail_category, 1.0)
            if self.section_modulus is None or self.ksi is None:
                raise ModelError("fatigue: a detail category needs section_modulus and ksi "
                                 "(one ksi in the model's stress units), found "
                                 f"section_modulus={self.section_modulus!r}, ksi={self.ksi!r}")

    @property
    def vertical_limit_ratio(self) -> float:
        return (VERTICAL_DEFLECTION_RATIO[self.service_class] if self.vertical_ratio is None
                else self.vertical_ratio)

    @property
    def lateral_limit_ratio(self) -> float:
        return LATERAL_DEFLECTION_RATIO if self.lateral_ratio is None else self.lateral_ratio

    @property
    def cycles(self) -> float:
        return (FATIGUE_CYCLES[self.service_class] if self.fatigue_cycles is None
                else self.fatigue_cycles)


@dataclass(frozen=True, eq=False)
class RunwayResult:
    """Everything a runway designer reads off one runway.

    Fields
    ------
    spec, beam, sections : the inputs
    wheels : crane name -> WheelLoads on this rail
    combinations : the crane combinations run
    strength : envelope of moment, shear and reactions with vertical impact
    service : envelope of deflection and reactions without impact
    lateral : envelope of lateral moment and deflection (None without lateral_EI); the
        lateral forces act either way, so read it through ``lateral_extremes``
    vertical_checks, lateral_checks : per-span deflection checks
    longitudinal : crane name -> tractive force on this rail [force]
    fatigue : per crane, per section moment range and rainflow cycles
    moment_anywhere : per span, the worst sagging moment with impact over every section of
        the span (a bounded search between the sections; None where no crane loads it)
    records : (property) "strength", "service" and (with lateral_EI) "lateral" -> the
        records of that envelope (:mod:`trundle.analysis.records`)
    """

    spec: RunwaySpec
    beam: Beam
    sections: NDArray[np.float64]
    wheels: dict[str, WheelLoads]
    combinations: tuple[CraneCombination, ...]
    strength: Envelope
    service: Envelope
    lateral: Envelope | None
    vertical_checks: tuple[DeflectionCheck, ...]
    lateral_checks: tuple[DeflectionCheck, ...]
    longitudinal: dict[str, float]
    fatigue: tuple[FatigueSection, ...] = field(default=())
    moment_anywhere: tuple[AbsoluteExtreme | None, ...] = field(default=())

    @cached_property
    def records(self) -> dict[str, EnvelopeRecords]:
        envelopes = {"strength": self.strength, "service": self.service,
                     "lateral": self.lateral}
        return {name: EnvelopeRecords(env) for name, env in envelopes.items()
                if env is not None}

    def _check_rows(self) -> list[list[str]]:
        rows = []
        for name, checks in (("vertical", self.vertical_checks),
                             ("lateral", self.lateral_checks)):
            for check in checks:
                rows.append([f"{name} deflection, span {check.span + 1}",
                             short(check.value), f"L/{check.ratio:g} = "
                             f"{short(check.limit)}", short(check.utilisation),
                             check.verdict, check.governing])
        worst: dict[str, FatigueSection] = {}
        for section in self.fatigue:  # per crane the section of largest utilisation
            if section.utilisation is None:
                continue
            found = worst.get(section.crane)
            if found is None or not section.utilisation <= found.utilisation:
                worst[section.crane] = section
        for section in worst.values():
            if section.utilisation is not None:
                rows.append([f"fatigue, worst section x = {section.x:.6g}",
                             short(section.stress_range), short(section.allowable),
                             short(section.utilisation), section.verdict or "—", section.crane])
        return rows

    def __repr__(self) -> str:
        reactions = self.strength.max("reaction")
        k = int(np.nanargmax(reactions))
        verdicts = [row[4] for row in self._check_rows()]
        failing = verdicts.count("EXCEEDS")
        return (f"<RunwayResult {len(self.spec.cranes)} crane(s), "
                f"{len(self.combinations)} combination(s); max reaction {reactions[k]:.5g} at "
                f"support {k} (with impact); worst of {len(verdicts)} check(s): "
                f"{failing} EXCEEDS>")

    def _repr_html_(self) -> str:
        return (self.strength._repr_html_()
                + html_table("Checks (verdicts decided in trundle.analysis.checks)",
                             ["check", "demand", "allowable", "utilisation", "verdict",
                              "governing"], self._check_rows()))


def lateral_extremes(result: RunwayResult, kind: str = "moment"
                     ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """(max, min) of a lateral effect with the wheel forces acting either way: the envelope
    of both senses, so min = −max."""
    if result.lateral is None:
        raise ModelError("the runway has no lateral analysis (give lateral_EI)")
    both = np.maximum(result.lateral.max(kind), -result.lateral.min(kind))
    return both, -both


def _fatigue(beam: Beam, sections: NDArray[np.float64], spec: RunwaySpec
             ) -> tuple[FatigueSection, ...]:
    out = []
    for crane in spec.cranes:
        vehicle = crane.vehicle("loaded", confined=spec.end_stops)
        env = envelope(beam, [vehicle], sections=sections, effects=("moment",))
        ranges = env.max("moment") - env.min("moment")
        _, history = passage_history(env.batch, vehicle.group())  # the envelope's moment lines
        for i, x in enumerate(sections):
            cycles = rainflow_ranges(history[:, i], ranges[i])
            stress = equivalent = allowable = check = None
            if spec.section_modulus is not None:
                stress = ranges[i] / spec.section_modulus
                per_passage = sum(n for _, n in cycles)
                if per_passage > 0:
                    damage = sum(n * r**3 for r, n in cycles)
                    equivalent = (damage / per_passage) ** (1.0 / 3.0) / spec.section_modulus
                else:
                    equivalent = 0.0
                if spec.detail_category is not None and spec.ksi is not None:
                    allowable, check = _allowable(spec, stress, equivalent, per_passage)
            out.append(FatigueSection(float(x), crane.name, float(ranges[i]), cycles,
                                      None if stress is None else float(stress),
                                      None if equivalent is None else float(equivalent),
                                      allowable, check))
    return tuple(out)


def _allowable(spec: RunwaySpec, largest: float, equivalent: float, per_passage: float
               ) -> tuple[float, str]:
    """(allowable range [stress], which check): :func:`trundle.analysis.checks.fatigue_allowable`
    for the spec's detail and the cycles over the life."""
    return fatigue_allowable(spec.detail_category, spec.ksi,
                             spec.cycles * max(per_passage, 1.0), largest, equivalent)


def analyse_runway(beam: Beam, spec: RunwaySpec, sections: NDArray[np.float64] | None = None
                   ) -> RunwayResult:
    """Run every crane combination over the runway: strength, service, lateral, fatigue."""
    if not spec.cranes:
        raise ModelError("cranes: at least one crane is needed")
    sections = beam.tenth_points() if sections is None else np.asarray(sections, dtype=float)
    combos = tuple(crane_combinations(spec.cranes, spec.combinations))
    length = beam.length
    confined = spec.end_stops
    strength_loads = [LoadCase(combination_load(c, length, with_impact=True, confined=confined),
                               name=c.name)
                      for c in combos]
    strength = envelope(beam, strength_loads, sections=sections,
                        effects=("moment", "shear", "reaction", "support_moment"))
    checks = runway_checks(beam, spec, sections)
    wheels = {c.name: c.wheels() for c in spec.cranes}
    longitudinal = {name: w.longitudinal for name, w in wheels.items()}
    return RunwayResult(spec, beam, sections, wheels, combos, strength, checks.service,
                        checks.lateral, checks.vertical_checks, checks.lateral_checks,
                        longitudinal, checks.fatigue, _moment_anywhere(strength))


@dataclass(frozen=True, eq=False)
class RunwayChecks:
    """The parts of a runway analysis that hold its checks (see :class:`RunwayResult`)."""

    service: Envelope
    lateral: Envelope | None
    vertical_checks: tuple[DeflectionCheck, ...]
    lateral_checks: tuple[DeflectionCheck, ...]
    fatigue: tuple[FatigueSection, ...]


def runway_checks(beam: Beam, spec: RunwaySpec, sections: NDArray[np.float64]
                  ) -> RunwayChecks:
    """The service and lateral envelopes, the deflection checks and fatigue of a runway: what
    :func:`analyse_runway` checks, without its strength envelope (a what-if sweep asks for the
    checks at every point and the strength effects it follows itself)."""
    if not spec.cranes:
        raise ModelError("cranes: at least one crane is needed")
    sections = np.asarray(sections, dtype=float)
    combos = tuple(crane_combinations(spec.cranes, spec.combinations))
    length = beam.length
    confined = spec.end_stops
    service_loads = [LoadCase(combination_load(c, length, confined=confined), name=c.name)
                     for c in combos]
    service = envelope(beam, service_loads, sections=sections,
                       effects=("deflection", "reaction"))
    lateral = None
    lateral_checks: tuple[DeflectionCheck, ...] = ()
    if spec.lateral_EI is not None:
        lateral_beam = Beam(beam.spans, EI=spec.lateral_EI, supports=beam.supports,
                            hinges=beam.hinges)
        lateral_loads = [LoadCase(combination_load(c, length, lateral=True, confined=confined),
                                  name=c.name)
                         for c in combos]
        lateral = envelope(lateral_beam, lateral_loads, sections=sections,
                           effects=("moment", "deflection"))
        lateral_checks = deflection_checks(lateral, spec.lateral_limit_ratio, both_ways=True)
    vertical_checks = deflection_checks(service, spec.vertical_limit_ratio, both_ways=False)
    return RunwayChecks(service, lateral, vertical_checks, lateral_checks,
                        _fatigue(beam, sections, spec))


def fatigue_score(item: FatigueSection) -> float:
    """What makes a section the worst for fatigue: utilisation, else range."""
    if item.utilisation is not None:
        return item.utilisation
    if item.equivalent_range is not None:
        return item.stress_range or 0.0
    return item.moment_range


def fatigue_worst_per_span(beam: Beam, cranes: Sequence[str],
                           fatigue: Sequence[FatigueSection]
                           ) -> list[tuple[int, FatigueSection]]:
    """Per crane (in the order given), per span: the section with the largest utilisation
    (or range) — the fatigue checks a runway reports."""
    out = []
    for crane in cranes:
        items = [item for item in fatigue if item.crane == crane]
        xs = [item.x for item in items]
        for span in range(beam.n_spans):
            inside = beam.sections_in_span(xs, span)
            if inside.size:
                out.append((span, max((items[i] for i in inside), key=fatigue_score)))
    return out


def _moment_anywhere(env: Envelope) -> tuple[AbsoluteExtreme | None, ...]:
    """Per span: the worst sagging moment over every section of the span, all combinations."""
    beam = env.beam
    out: list[AbsoluteExtreme | None] = []
    for span in range(beam.n_spans):
        best = None
        certified = True  # only if every combination's is (one read low could be worst)
        for c, case in enumerate(env.cases):
            for extreme in absolute_extremes(beam, case, span, "moment", case_index=c,
                                             extremes=("max",)):
                certified &= extreme.certified
                if best is None or extreme.value > best.value:
                    best = extreme
        if best is not None and best.governing.case >= 0:
            out.append(dataclasses.replace(best, certified=certified))
        else:
            out.append(None)
    return tuple(out)
