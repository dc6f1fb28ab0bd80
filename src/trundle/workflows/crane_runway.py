"""Crane runway girders: reactions, envelopes, deflection and fatigue under travelling cranes.

One runway rail carries the wheels of one or more cranes. For strength the wheel loads carry
their vertical impact; for deflection, reactions "without impact" and fatigue they do not
(common practice, no source). Lateral wheel forces act on the lateral stiffness of the top
flange, in either direction. Two cranes can meet at their buffers or stand any distance apart.

Defaults below are from memory of common practice and widely used guides; each is marked and
can be overridden; every one must be verified against the governing guide and code.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import rainflow
from numpy.typing import NDArray

from trundle.analysis.envelope import Envelope, absolute_extremes, envelope
from trundle.core.beam import Beam, ModelError
from trundle.loads.cases import LoadCase
from trundle.loads.cranes import Crane, WheelLoads, buffer_gap
from trundle.loads.vehicles import Train, Vehicle
from trundle.scan.engine import LineBatch

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
# detail category -> (C_f, threshold F_TH [ksi]); allowable range F_SR = (C_f / n)^(1/3) ≥ F_TH
# [ksi]: from memory of the fatigue appendix of a widely used steel specification; verify
# (C' is the usual category of stiffener welds on crane girders; F, shear on welds, follows
# another exponent and is not offered)
DETAIL_CATEGORIES = {"A": (250e8, 24.0), "B": (120e8, 16.0), "B'": (61e8, 12.0),
                     "C": (44e8, 10.0), "C'": (44e8, 12.0), "D": (22e8, 7.0), "E": (11e8, 4.5),
                     "E'": (3.9e8, 2.6)}
COMBINATIONS = ("each alone", "all loaded", "one loaded, others unloaded")


def allowable_stress_range_ksi(category: str, cycles: float) -> float:
    """Allowable stress range [ksi] of a detail category for a number of cycles."""
    if category not in DETAIL_CATEGORIES:
        raise ModelError(f"detail category: expected one of {', '.join(DETAIL_CATEGORIES)}, "
                         f"found {category!r}")
    c_f, threshold = DETAIL_CATEGORIES[category]
    if not cycles > 0:
        raise ModelError(f"fatigue cycles: expected a positive number, found {cycles!r}")
    if math.isinf(cycles):
        return threshold
    return max((c_f / cycles) ** (1.0 / 3.0), threshold)


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


def _crane_vehicle(crane: Crane, state: str, with_impact: bool, lateral: bool,
                   confined: bool = False) -> Vehicle:
    w = crane.wheels()
    if lateral:
        # an unloaded crane still pushes sideways with its trolley: the same fraction of the
        # trolley weight alone
        if state == "loaded":
            load = w.lateral
        else:
            load = w.lateral * crane.trolley_weight / max(crane.capacity + crane.trolley_weight,
                                                          1e-300)
    else:
        load = w.maximum if state == "loaded" else w.unloaded
        if with_impact:
            load *= 1.0 + w.impact
    return Vehicle([load] * crane.wheels_per_rail, list(crane.wheel_spacings),
                   name=f"{crane.name} ({state})", confined=confined)


def combination_load(combo: CraneCombination, runway_length: float, with_impact: bool = False,
                     lateral: bool = False, confined: bool = False) -> Vehicle | Train:
    """The moving load of a combination: one crane, or a train of cranes whose clear gap runs
    from buffers touching to a runway length apart (searched). ``confined``: the beam is the
    whole runway between its end stops, so every wheel stays on it; otherwise wheels may
    stand beyond the beam's ends (on the next girders of a longer runway)."""
    vehicles = [_crane_vehicle(c, state, with_impact, lateral, confined)
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
class DeflectionCheck:
    """Worst deflection in one span against span / ratio.

    Fields: span index, span length, deflection [length], x where it occurs, ratio, allowable
    deflection [length], utilisation (deflection / allowable), governing combination name.
    """

    span: int
    span_length: float
    deflection: float
    x: float
    ratio: float
    allowable: float
    utilisation: float
    governing: str


@dataclass(frozen=True)
class FatigueSection:
    """Moment range at one section under one passage of one loaded crane (no impact).

    Fields
    ------
    x : section [length]
    crane : crane name
    moment_range : max − min moment over the passage, the empty runway included [moment]
    cycles : rainflow cycles of one passage as (range [moment], count) pairs (ASTM E1049)
    stress_range, equivalent_range : ΔM / S and (Σ n ΔM³ / n_passage)^(1/3) / S [stress],
        None without a section modulus
    allowable : allowable stress range [stress], or None without a detail category
    check : "threshold" (the largest range against the detail's constant-amplitude
        threshold) or "finite life" (the equivalent range against the allowable range for all
        the cycles), whichever gives the lower utilisation
    """

    x: float
    crane: str
    moment_range: float
    cycles: tuple[tuple[float, float], ...]
    stress_range: float | None = None
    equivalent_range: float | None = None
    allowable: float | None = None
    check: str | None = None

    @property
    def cycles_per_passage(self) -> float:
        return float(sum(n for _, n in self.cycles))

    @property
    def utilisation(self) -> float | None:
        """The largest range over the threshold, or (finite life) the damage-equivalent range
        over the allowable range for all the cycles (Miner's rule, slope 3), whichever is
        lower; inf where unlimited cycles meet a range above the threshold."""
        if self.equivalent_range is None or self.allowable is None:
            return None
        demand = self.stress_range if self.check == "threshold" else self.equivalent_range
        return math.inf if self.allowable == 0.0 else demand / self.allowable


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


def lateral_extremes(result: RunwayResult, kind: str = "moment"
                     ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """(max, min) of a lateral effect with the wheel forces acting either way: the envelope
    of both senses, so min = −max."""
    if result.lateral is None:
        raise ModelError("the runway has no lateral analysis (give lateral_EI)")
    both = np.maximum(result.lateral.max(kind), -result.lateral.min(kind))
    return both, -both


def _deflection_checks(env: Envelope, ratio: float, both_ways: bool
                       ) -> tuple[DeflectionCheck, ...]:
    """Per span: the worst deflection at the envelope's sections, then refined over every
    section of the span for the combination that governs there."""
    beam = env.beam
    out = []
    ends = beam.support_positions
    high, low = env.max("deflection"), env.min("deflection")
    for span in range(beam.n_spans):
        inside = np.flatnonzero((env.sections >= ends[span]) & (env.sections <= ends[span + 1]))
        value, x, name = 0.0, 0.5 * (ends[span] + ends[span + 1]), "none"
        searches: list[tuple[int, str]] = []
        if inside.size:
            candidates = [(high[i], i, "max") for i in inside]
            if both_ways:
                candidates += [(-low[i], i, "min") for i in inside]
            value, i, which = max(candidates)
            governing = env.governing("deflection", which)[i]
            x = float(env.sections[i])
            if governing.case >= 0:
                name = env.cases[governing.case].name
                searches.append((governing.case, which))
        if not searches:  # no loaded section asked for in this span: try every combination
            searches = [(c, w) for c in range(len(env.cases))
                        for w in (("max", "min") if both_ways else ("max",))]
        for case, which in searches:
            for extreme in absolute_extremes(beam, env.cases[case], span, "deflection",
                                             extremes=(which,)):
                if abs(extreme.value) > value:
                    value, x, name = abs(extreme.value), extreme.x, env.cases[case].name
        length = beam.spans[span]
        allowable = length / ratio
        out.append(DeflectionCheck(span, length, float(value), x, ratio, allowable,
                                   float(value) / allowable, name))
    return tuple(out)


def passage_history(batch: LineBatch, vehicle: Vehicle, samples: int = 2001
                    ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Every line's response as the vehicle crosses once: (ξ (N,), values (N, n_lines)).

    Sampled at every break (an axle over a knot) and on a fine even grid in between. A
    confined vehicle (a crane) travels from one end of the beam to the other with every
    wheel on it; another enters and leaves.
    """
    group = vehicle.group()
    weights, offsets, kinds, constant = group.terms()
    lo, hi = offsets.min(), batch.length + offsets.max()
    if group.confined:
        lo, hi = offsets.max(), batch.length + offsets.min()
    breaks = (batch.knots[None, :] + offsets[:, None]).ravel()
    xi = np.unique(np.concatenate([np.linspace(lo, hi, samples), breaks[(breaks >= lo)
                                                                        & (breaks <= hi)]]))
    values = np.zeros((xi.size, batch.n_lines))
    for w, d in zip(weights, offsets, strict=True):
        values += w * batch.ordinates(xi - d, "right")
    return xi, values


def _fatigue(beam: Beam, sections: NDArray[np.float64], spec: RunwaySpec
             ) -> tuple[FatigueSection, ...]:
    out = []
    for crane in spec.cranes:
        vehicle = _crane_vehicle(crane, "loaded", with_impact=False, lateral=False,
                                 confined=spec.end_stops)
        env = envelope(beam, [vehicle], sections=sections, effects=("moment",))
        ranges = env.max("moment") - env.min("moment")
        _, history = passage_history(env.batch, vehicle)  # the envelope's moment lines
        for i, x in enumerate(sections):
            series = np.concatenate([[0.0], history[:, i], [0.0]])
            cycles = tuple((float(r), float(n)) for r, n in rainflow.count_cycles(series)
                           if r > 1e-12 * max(1.0, ranges[i]))
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
    """(allowable range [stress], which check) for a section's stress ranges.

    A detail passes either way (from memory of the fatigue appendix named above; verify):
    every range below the constant-amplitude threshold ("threshold": the largest range
    against F_TH), or the damage-equivalent range (Miner's rule, slope 3) within the finite-life
    range (C_f / n)^(1/3) for all the cycles ("finite life", no threshold floor). The check
    reported is the one with the lower utilisation, so the utilisation does not jump at the
    threshold.
    """
    c_f, threshold = DETAIL_CATEGORIES[spec.detail_category]
    cycles = spec.cycles * max(per_passage, 1.0)
    finite = spec.ksi * (c_f / cycles) ** (1.0 / 3.0)  # 0 for unlimited cycles
    floor = threshold * spec.ksi
    by_threshold = largest / floor
    by_life = equivalent / finite if finite > 0.0 else math.inf
    if by_threshold <= by_life:
        return floor, "threshold"
    return finite, "finite life"


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
    service_loads = [LoadCase(combination_load(c, length, confined=confined), name=c.name)
                     for c in combos]
    strength = envelope(beam, strength_loads, sections=sections,
                        effects=("moment", "shear", "reaction", "support_moment"))
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
        lateral_checks = _deflection_checks(lateral, spec.lateral_limit_ratio, both_ways=True)
    vertical_checks = _deflection_checks(service, spec.vertical_limit_ratio, both_ways=False)
    wheels = {c.name: c.wheels() for c in spec.cranes}
    longitudinal = {name: w.longitudinal for name, w in wheels.items()}
    fatigue = _fatigue(beam, sections, spec)
    return RunwayResult(spec, beam, sections, wheels, combos, strength, service, lateral,
                        vertical_checks, lateral_checks, longitudinal, fatigue)
