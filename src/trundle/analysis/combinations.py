"""Factored combinations and the design envelope.

A combination gives each permanent-load category a maximum and a minimum factor and the live
load one factor γL. At every line, for the maximum: each category's effect P (summed over the
loads of that category) enters as γmax·P where it increases the maximum (P > 0) and as γmin·P
where it decreases it (P < 0), plus γL × the live maximum; for the minimum the other way round
(γmax·P where P < 0, γmin·P where P > 0), plus γL × the live minimum. Each live case is
combined on its own, so every case keeps its own design values, and the design envelope is the
worst of them with the governing case named. Deflection is a service quantity and is not
combined here (see :func:`trundle.analysis.checks.live_load_deflection_checks`).

The shipped combinations (:data:`BRIDGE_STRENGTH_I`, :data:`BUILDING_1_4D`,
:data:`BUILDING_1_2D_1_6L`) are transcribed from memory: verify them against the code in force.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.case_envelopes import CaseEnvelope, Key, same_sections
from trundle.analysis.permanent import PermanentEffects, by_category
from trundle.core.beam import ModelError

COMBINED_FAMILIES = ("moment", "shear_left", "shear_right", "reaction")
PERMANENT_ONLY = "permanent loads only"


def _factor(value: object, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float) or \
            not math.isfinite(value) or value < 0:
        raise ModelError(f"{what}: expected a factor >= 0, found {value!r}")
    return float(value)


@dataclass(frozen=True)
class Combination:
    """A factored combination of permanent loads by category and live load.

    Parameters
    ----------
    name : shown in results
    permanent : {category: (γmax, γmin)} or {category: γ} (the same both ways); γmin ≤ γmax
    live : γL, the factor on the live load (0 for a permanent-only combination)
    provenance : where the factors come from (standard, edition, clause; "from memory")
    """

    name: str
    permanent: Mapping[str, tuple[float, float]]
    live: float = 0.0
    provenance: str = ""

    def __post_init__(self) -> None:
        label = f"combination {self.name!r}"
        if not str(self.name).strip():
            raise ModelError("combination: name: expected a name that is not blank")
        factors: dict[str, tuple[float, float]] = {}
        for category, given in dict(self.permanent).items():
            what = f"{label}: {category}"
            if isinstance(given, tuple | list):
                if len(given) != 2:
                    raise ModelError(f"{what}: expected [max, min] or one factor, found "
                                     f"{list(given)!r}")
                high, low = _factor(given[0], what), _factor(given[1], what)
            else:
                high = low = _factor(given, what)
            if low > high:
                raise ModelError(f"{what}: expected the minimum factor ({low:g}) not above the "
                                 f"maximum ({high:g}), written as [max, min]")
            factors[str(category)] = (high, low)
        object.__setattr__(self, "permanent", factors)
        object.__setattr__(self, "live", _factor(self.live, f"{label}: live"))

    def describe(self) -> str:
        parts = [f"{c} x{h:g}" + (f" (x{lo:g} where favourable)" if lo != h else "")
                 for c, (h, lo) in self.permanent.items()]
        if self.live:
            parts.append(f"live x{self.live:g}")
        return f"{self.name}: " + " + ".join(parts)


# Shipped combinations: provenance and "verify" in each.
BRIDGE_STRENGTH_I = Combination(
    "bridge strength I", {"DC": (1.25, 0.90), "DW": (1.50, 0.65)}, live=1.75,
    provenance="AASHTO LRFD Bridge Design Specifications, Strength I, Tables 3.4.1-1 and "
    "3.4.1-2 (transcribed from memory; verify against the edition in force). Live load "
    "includes the dynamic allowance; multiple presence and distribution are the user's.")
BUILDING_1_4D = Combination(
    "building 1.4D", {"D": (1.4, 1.4)}, live=0.0,
    provenance="ASCE/SEI 7 strength combination 1 (1.4D), as in ACI 318 and the IBC "
    "(transcribed from memory; verify against the code in force).")
BUILDING_1_2D_1_6L = Combination(
    "building 1.2D + 1.6L", {"D": (1.2, 1.2)}, live=1.6,
    provenance="ASCE/SEI 7 strength combination 2 (1.2D + 1.6L + 0.5(Lr or S or R)) without "
    "roof or snow load (transcribed from memory; verify against the code in force).")
SHIPPED = {c.name: c for c in (BRIDGE_STRENGTH_I, BUILDING_1_4D, BUILDING_1_2D_1_6L)}


@dataclass(frozen=True, eq=False)
class DesignEnvelope:
    """The design envelope of one combination.

    Fields
    ------
    combination : the Combination
    sections : (n_sections,) [length]
    values : {(family, "max"|"min"): array}, families :data:`COMBINED_FAMILIES`
    governing : {(family, which): tuple of str}: the live case that governs each value
        (:data:`PERMANENT_ONLY` where no live case acts)
    permanent : {(family, which): array}: the factored permanent part of each value
    by_case : {case name: {(family, which): array}}: each live case's own design values
    """

    combination: Combination
    sections: NDArray[np.float64]
    values: Mapping[Key, NDArray[np.float64]]
    governing: Mapping[Key, tuple[str, ...]]
    permanent: Mapping[Key, NDArray[np.float64]]
    by_case: Mapping[str, Mapping[Key, NDArray[np.float64]]] = field(default_factory=dict)

    def max(self, family: str) -> NDArray[np.float64]:
        return self.values[family, "max"]

    def min(self, family: str) -> NDArray[np.float64]:
        return self.values[family, "min"]


def factored_permanent(combination: Combination, permanent: Sequence[PermanentEffects]
                       ) -> dict[Key, NDArray[np.float64]]:
    """The permanent part of the maximum and the minimum at every line.

    Raises a one-line ModelError when a category is used by a permanent load but has no factor
    in the combination (it would drop out silently), or the combination names a category that
    no permanent load has (most likely a misspelling).
    """
    totals = by_category(permanent)
    known = sorted(totals)
    for category in combination.permanent:
        if category not in totals and totals:
            raise ModelError(f"combination {combination.name!r}: category {category!r}: expected "
                             f"one of {', '.join(known)} (the categories of the permanent "
                             f"loads), found {category!r}")
    for category in totals:
        if category not in combination.permanent:
            given = ", ".join(combination.permanent) or "none"
            raise ModelError(f"combination {combination.name!r}: expected factors for category "
                             f"{category!r} (used by permanent loads), found factors for "
                             f"{given}")
    out: dict[Key, NDArray[np.float64]] = {}
    for family in COMBINED_FAMILIES:
        high = low = None
        for category, values in totals.items():
            g_max, g_min = combination.permanent[category]
            p = values[family]
            up = np.where(p > 0, g_max * p, g_min * p)     # increases the maximum: γmax
            down = np.where(p < 0, g_max * p, g_min * p)   # increases the minimum's size: γmax
            high = up if high is None else high + up
            low = down if low is None else low + down
        out[family, "max"] = high if high is not None else np.zeros(0)
        out[family, "min"] = low if low is not None else np.zeros(0)
    return out


def design_envelope(combination: Combination, permanent: Sequence[PermanentEffects],
                    live: Mapping[str, CaseEnvelope] | Sequence[CaseEnvelope]
                    ) -> DesignEnvelope:
    """The design envelope of ``combination`` over every live case (each combined on its own).

    A live case's value that is NaN (the case does not apply there) takes no part; where no
    case applies, or γL = 0, the permanent part alone is the value.
    """
    cases = list(live.values()) if isinstance(live, Mapping) else list(live)
    if not cases and not permanent:
        raise ModelError(f"combination {combination.name!r}: expected permanent loads or live "
                         "cases, found neither")
    sections = (same_sections(cases) if cases else permanent[0].sections)
    perm = factored_permanent(combination, permanent)
    values: dict[Key, NDArray[np.float64]] = {}
    governing: dict[Key, tuple[str, ...]] = {}
    base: dict[Key, NDArray[np.float64]] = {}
    by_case: dict[str, dict[Key, NDArray[np.float64]]] = {c.name: {} for c in cases}
    for family in COMBINED_FAMILIES:
        for which in ("max", "min"):
            key = (family, which)
            size = cases[0].values[key].size if cases else perm[key].size
            p = perm[key] if perm[key].size else np.zeros(size)
            base[key] = p
            best = p.copy()
            names = [PERMANENT_ONLY] * size
            sign = 1.0 if which == "max" else -1.0
            if combination.live > 0:
                combined = [p + combination.live * case.values[key] for case in cases]
                finite = [np.abs(m[~np.isnan(m)]) for m in combined]
                # a later case governs only where it is worse beyond rounding (1e-10 of the
                # family's largest value), so equal cases do not take turns on noise
                tie = 1e-10 * max([float(f.max()) for f in finite if f.size] or [0.0])
                for case, mine in zip(cases, combined, strict=True):
                    by_case[case.name][key] = mine
                    # the first case that applies replaces the permanent part alone (its live
                    # extreme includes the empty beam); later ones only where they are worse
                    for j in np.flatnonzero(~np.isnan(mine)):
                        if names[j] == PERMANENT_ONLY or sign * (mine[j] - best[j]) > tie:
                            best[j] = mine[j]
                            names[j] = case.name
            values[key] = best
            governing[key] = tuple(names)
    return DesignEnvelope(combination, sections, values, governing, base, by_case)
