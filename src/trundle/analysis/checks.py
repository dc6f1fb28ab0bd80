"""Checks: utilisation and verdict of every check, decided here and only here.

A check compares a demand with a capacity: utilisation = demand / allowable, and its verdict is
:data:`PASS` when the utilisation is at most 1 and :data:`EXCEEDS` otherwise (also for a
utilisation that is not a number: never unconservative). Every output (terminal, CSV, JSON,
HTML) shows :attr:`verdict` as it is computed here; none decides again.

Deflection against span / ratio — crane runways, vertical and lateral
(:func:`deflection_checks`), and live load of a design envelope
(:func:`live_load_deflection_checks`: the largest downward and upward deflection of each live
case anywhere in each span, a search over the section as well) — all as one
:class:`DeflectionCheck`; and fatigue of a detail under rainflow counted stress ranges.
Defaults are from memory of widely used guides; each must be verified. Limits such as
span/800 or span/1000 (bridges) and span/360 (floors) are common practice; the model states
which one applies ("verify" against the code in force).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import rainflow
from numpy.typing import NDArray

from trundle.analysis.envelope import Envelope, absolute_extremes
from trundle.core.beam import Beam, ModelError
from trundle.loads.cases import LoadCase, Together, as_case
from trundle.loads.design_cases import DesignCase, for_beam

PASS = "PASS"
EXCEEDS = "EXCEEDS"


def verdict(utilisation: float) -> str:
    """PASS for a utilisation ≤ 1, EXCEEDS above 1 — or when it is not a number."""
    return PASS if float(utilisation) <= 1.0 else EXCEEDS


def utilisation_of(demand: float, allowable: float) -> float:
    """|demand| / allowable; NaN (which :func:`verdict` never passes) for an allowable that is
    not positive or a demand that is not a number."""
    if not (allowable > 0) or math.isnan(demand):
        return math.nan
    return abs(demand) / allowable


# detail category -> (C_f, threshold F_TH [ksi]); allowable range F_SR = (C_f / n)^(1/3) ≥ F_TH
# [ksi]: from memory of the fatigue appendix of a widely used steel specification; verify
# (C' is the usual category of stiffener welds on crane girders; F, shear on welds, follows
# another exponent and is not offered)
DETAIL_CATEGORIES = {"A": (250e8, 24.0), "B": (120e8, 16.0), "B'": (61e8, 12.0),
                     "C": (44e8, 10.0), "C'": (44e8, 12.0), "D": (22e8, 7.0), "E": (11e8, 4.5),
                     "E'": (3.9e8, 2.6)}
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
class DeflectionCheck:
    """The worst deflection in one span against span / ratio — every deflection check of
    trundle (crane runway vertical and lateral, live-load deflection of a design envelope).

    Fields
    ------
    span : span index (0 from the left)
    span_length : its length [length]
    value : the worst deflection in the span [length]; downward positive for the live-load
        check (either sense), its size for the runway checks
    x : where it occurs [length]
    governing : name of the governing load, case or crane combination ("" or "none" when
        nothing deflects the span)
    ratio : the ratio given (600 for span/600)
    limit : the allowable deflection span_length / ratio [length]
    utilisation : |value| / limit (:func:`utilisation_of`)
    certified : False when a search between the sections could not prove its value (see
        ``analysis.envelope.absolute_extremes``)
    """

    span: int
    span_length: float
    value: float
    x: float
    governing: str
    ratio: float
    limit: float
    utilisation: float
    certified: bool = True

    @classmethod
    def of(cls, span: int, span_length: float, value: float, x: float, governing: str,
           ratio: float, certified: bool = True) -> DeflectionCheck:
        """The check of ``value`` in a span of ``span_length`` against span / ``ratio``."""
        limit = span_length / ratio
        return cls(span, float(span_length), float(value), float(x), governing, float(ratio),
                   limit, utilisation_of(float(value), limit), certified)

    @property
    def verdict(self) -> str:
        """PASS or EXCEEDS (:func:`verdict`)."""
        return verdict(self.utilisation)


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

    @property
    def verdict(self) -> str | None:
        """PASS or EXCEEDS (:func:`verdict`); None without a detail category (no check)."""
        return None if self.utilisation is None else verdict(self.utilisation)



def deflection_checks(env: Envelope, ratio: float, both_ways: bool
                       ) -> tuple[DeflectionCheck, ...]:
    """Per span: the worst deflection anywhere in the span over every combination.

    Every combination is searched between the sections (not only the one that governs at the
    sections: another may peak between them), so no case is skipped on a guess."""
    beam = env.beam
    out = []
    ends = beam.support_positions
    high, low = env.max("deflection"), env.min("deflection")
    senses = ("max", "min") if both_ways else ("max",)
    for span in range(beam.n_spans):
        inside = beam.sections_in_span(env.sections, span)
        value, x, name = 0.0, 0.5 * (ends[span] + ends[span + 1]), "none"
        certified = True
        if inside.size:
            candidates = [(high[i], i, "max") for i in inside]
            if both_ways:
                candidates += [(-low[i], i, "min") for i in inside]
            value, i, which = max(candidates)
            governing = env.governing("deflection", which)[i]
            x = float(env.sections[i])
            if governing.case >= 0:
                name = env.cases[governing.case].name
        # every sense of every combination; each search asks only for values beyond the
        # worst already held (a sense that cannot reach it is proven, not searched to 1e-9)
        for which in senses:
            for case in range(len(env.cases)):
                for extreme in absolute_extremes(beam, env.cases[case], span, "deflection",
                                                 extremes=(which,), beyond=value):
                    certified &= extreme.certified
                    if abs(extreme.value) > value:
                        value, x, name = abs(extreme.value), extreme.x, env.cases[case].name
        out.append(DeflectionCheck.of(span, beam.spans[span], value, x, name, ratio,
                                      certified))
    return tuple(out)


def _live_loads_of(item: Any, beam: Beam) -> list[tuple[str, LoadCase | Together, float]]:
    if isinstance(item, DesignCase):
        out = []
        for a in item.alternatives:
            if a.rule is not None and "deflection" not in a.rule.effects:
                continue  # a rule that does not name deflection excludes it
            out.append((f"{item.name} ({a.name})", for_beam(a, beam.length), a.factor))
        return out
    case = as_case(item)
    return [(case.name, case, 1.0)]


def _parts_of(case: LoadCase | Together) -> list[LoadCase]:
    return list(case.parts) if isinstance(case, Together) else [case]


def live_load_deflection_checks(beam: Beam, cases: Sequence[Any], ratio: float
                                ) -> list[DeflectionCheck]:
    """Per span: the worst live-load deflection over ``cases`` against span / ``ratio``.

    Loads acting together are summed part by part (each at its own worst, which is an upper
    bound of their joint deflection; conservative). Deflections are at service level: the
    load factor of a case is not applied.
    """
    if isinstance(ratio, bool) or not isinstance(ratio, int | float) or not ratio > 0 or \
            not math.isfinite(ratio):
        raise ModelError(f"deflection limit: expected a ratio > 0 (800 for span/800), found "
                         f"{ratio!r}")
    checks = []
    ends = beam.support_positions
    for span in range(beam.n_spans):
        best = (0.0, float("nan"), "")
        certified = True
        for item in cases:
            for name, case, factor in _live_loads_of(item, beam):
                total = {"max": 0.0, "min": 0.0}
                where = {"max": math.nan, "min": math.nan}
                parts = _parts_of(case)
                for part in parts:
                    # one part alone: ask only for values beyond the worst held (a sense that
                    # cannot reach it is proven, not searched to 1e-9); parts are summed, so
                    # each of several is searched in full
                    beyond = abs(best[0]) if len(parts) == 1 else 0.0
                    found = [e for which in ("max", "min") for e in absolute_extremes(
                        beam, part, span, "deflection", extremes=(which,), beyond=beyond)]
                    for extreme in found:
                        certified &= extreme.certified
                        value = factor * extreme.value  # service level already
                        total[extreme.which] += value
                        if math.isnan(where[extreme.which]):
                            where[extreme.which] = extreme.x
                for which in ("max", "min"):
                    if abs(total[which]) > abs(best[0]):
                        best = (total[which], where[which], name)
        checks.append(DeflectionCheck.of(span, float(ends[span + 1] - ends[span]), best[0],
                                         best[1], best[2], ratio, certified))
    return checks


def rainflow_ranges(history: NDArray[np.float64], scale: float
                    ) -> tuple[tuple[float, float], ...]:
    """Rainflow cycles (range, count) of one passage's history, from and back to the empty
    runway (ASTM E1049); ranges below 1e-12 of ``scale`` are rounding and dropped."""
    series = np.concatenate([[0.0], history, [0.0]])
    return tuple((float(r), float(n)) for r, n in rainflow.count_cycles(series)
                 if r > 1e-12 * max(1.0, scale))


def fatigue_allowable(category: str, ksi: float, cycles: float, largest: float,
                      equivalent: float) -> tuple[float, str]:
    """(allowable range [stress], which check) for a section's stress ranges.

    A detail passes either way (from memory of the fatigue appendix named above; verify):
    every range below the constant-amplitude threshold ("threshold": the largest range
    against F_TH), or the damage-equivalent range (Miner's rule, slope 3) within the finite-life
    range (C_f / n)^(1/3) for all the ``cycles`` ("finite life", no threshold floor). The check
    reported is the one with the lower utilisation, so the utilisation does not jump at the
    threshold. ``ksi``: one ksi in the model's stress units.
    """
    c_f, threshold = DETAIL_CATEGORIES[category]
    finite = ksi * (c_f / cycles) ** (1.0 / 3.0)  # 0 for unlimited cycles
    floor = threshold * ksi
    by_threshold = largest / floor
    by_life = equivalent / finite if finite > 0.0 else math.inf
    if by_threshold <= by_life:
        return floor, "threshold"
    return finite, "finite life"
