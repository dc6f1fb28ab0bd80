"""Rules of design cases: which effects and which region of the beam an alternative applies to.

Effects are named the way codes name them: "positive moment" is the maximum (sagging) moment at
a section, "negative moment" its minimum (hogging), "shear" either extreme of shear, "interior
reactions" and "end reactions" either extreme of the reaction of an interior or an end support,
"deflection" either extreme of deflection. The region "between points of contraflexure" is
where uniform load on every span causes hogging moment; the points of contraflexure are the
zeros of that moment diagram, computed from the beam itself (a static solve).

An alternative that does not apply to a line does not govern it; :func:`applicability` says,
line by line, which rule excluded it.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from trundle.core.beam import Beam
from trundle.core.statics import DistributedLoad
from trundle.loads.design_cases import RULE_EFFECTS, RULE_REGIONS, Rule

__all__ = ["FAMILIES", "RULE_EFFECTS", "RULE_REGIONS", "Rule", "applicability",
           "contraflexure_points", "effect_name", "hogging_region", "in_region"]

# The line families a design envelope is kept for (support couples of fixed ends: later).
FAMILIES = ("moment", "shear_left", "shear_right", "deflection", "reaction")


def effect_name(family: str, which: str, support: int | None = None,
                n_supports: int = 0) -> str:
    """The rule vocabulary's name of one extreme of one family.

    ``which`` is "max" or "min"; for reactions ``support`` and ``n_supports`` tell an end
    support (the first or the last) from an interior one.
    """
    if family == "moment":
        return "positive moment" if which == "max" else "negative moment"
    if family in ("shear_left", "shear_right", "shear"):
        return "shear"
    if family == "deflection":
        return "deflection"
    if family == "reaction":
        if support is None:
            raise ValueError("effect_name: a reaction needs its support number")
        return "end reactions" if support in (0, n_supports - 1) else "interior reactions"
    raise ValueError(f"effect_name: expected one of {', '.join(FAMILIES)}, found {family!r}")


def _uniform_moment(beam: Beam):
    return beam.static([DistributedLoad(0.0, beam.length, 1.0)])


def contraflexure_points(beam: Beam) -> NDArray[np.float64]:
    """Points of contraflexure of uniform load on every span [length], sorted.

    The zeros of the moment diagram strictly inside the beam where the moment changes sign
    (a hinge or a free end, where it only touches zero, is not one).
    """
    result = _uniform_moment(beam)
    pp = result.moment_pp
    roots = np.asarray(pp.roots(extrapolate=False), dtype=float)
    roots = roots[np.isfinite(roots)]
    L = beam.length
    tol = 1e-9 * L
    roots = np.sort(roots[(roots > tol) & (roots < L - tol)])
    if roots.size:  # a root at a knot may come twice (once from each piece)
        roots = roots[np.concatenate([[True], np.diff(roots) > tol])]
    probe = 1e-6 * L
    keep = [r for r in roots
            if np.sign(result.moment(r - probe)[0]) * np.sign(result.moment(r + probe)[0]) < 0]
    return np.asarray(keep, dtype=float)


# hogging regions by beam (keyed on its values, as the envelope's prepared lines): every
# rule-restricted alternative and every call on the same beam reuses them
_HOGGING: dict[str, list[tuple[float, float]]] = {}
_HOGGING_KEEP = 8


def hogging_region(beam: Beam) -> list[tuple[float, float]]:
    """Stretches between points of contraflexure where uniform load on every span causes
    hogging moment, as closed intervals [(a, b), …] [length]."""
    key = beam._value_key  # a Beam compares by identity; its repr spells out every value
    if key not in _HOGGING:
        if len(_HOGGING) >= _HOGGING_KEEP:
            _HOGGING.pop(next(iter(_HOGGING)))
        _HOGGING[key] = _hogging_region(beam)
    return list(_HOGGING[key])


def _hogging_region(beam: Beam) -> list[tuple[float, float]]:
    L = beam.length
    cuts = np.concatenate([[0.0], contraflexure_points(beam), [L]])
    result = _uniform_moment(beam)
    out: list[tuple[float, float]] = []
    for a, b in zip(cuts[:-1], cuts[1:], strict=True):
        mid = 0.5 * (a + b)
        if result.moment(mid)[0] < 0:
            out.append((float(a), float(b)))
    return out


def in_region(beam: Beam, region: str, x: NDArray[np.float64]) -> NDArray[np.bool_]:
    """Which positions lie in ``region`` (closed intervals, so a section exactly at a point of
    contraflexure counts as inside: the rule then adds a case there, which is conservative)."""
    x = np.atleast_1d(np.asarray(x, dtype=float))
    if region == "anywhere":
        return np.ones(x.shape, dtype=bool)
    if region != "between points of contraflexure":
        raise ValueError(f"region: expected one of {', '.join(RULE_REGIONS)}, found {region!r}")
    tol = 1e-9 * beam.length
    inside = np.zeros(x.shape, dtype=bool)
    for a, b in hogging_region(beam):
        inside |= (x >= a - tol) & (x <= b + tol)
    return inside


def applicability(rule: Rule | None, beam: Beam, sections: NDArray[np.float64]
                  ) -> dict[tuple[str, str], NDArray[np.bool_]]:
    """Where an alternative with ``rule`` applies: {(family, "max"|"min"): mask}.

    Section families give one entry per section; "reaction" one per support.
    """
    sections = np.atleast_1d(np.asarray(sections, dtype=float))
    n_supports = len(beam.supports)
    supports = beam.support_positions
    out: dict[tuple[str, str], NDArray[np.bool_]] = {}
    if rule is None:
        for family in FAMILIES:
            size = n_supports if family == "reaction" else sections.size
            for which in ("max", "min"):
                out[family, which] = np.ones(size, dtype=bool)
        return out
    section_region = in_region(beam, rule.region, sections)
    support_region = in_region(beam, rule.region, supports)
    for family in FAMILIES:
        for which in ("max", "min"):
            if family == "reaction":
                names = [effect_name(family, which, k, n_supports) for k in range(n_supports)]
                named = np.array([n in rule.effects for n in names], dtype=bool)
                out[family, which] = named & support_region
            else:
                named = effect_name(family, which) in rule.effects
                out[family, which] = section_region & named
    return out
