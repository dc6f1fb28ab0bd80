"""Each load case's own envelope, kept separately so a design envelope can name the case that
governs and a report can draw every case beside it.

A :class:`CaseEnvelope` holds, for one case, the maximum and minimum of moment, shear (just
left and just right of each section), deflection at the sections and the reaction of every
support, and for each value what governs it inside the case (the alternative of a design
case, the loaded spans of a pattern) and which rules excluded other alternatives there.
A value is NaN where nothing of the case applies (every alternative excluded by its rule).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from trundle.analysis.envelope import Envelope, envelope, kind_and_side
from trundle.analysis.rules import FAMILIES, applicability
from trundle.core.beam import Beam, ModelError
from trundle.loads.cases import Together, as_case
from trundle.loads.design_cases import DesignCase, for_beam

Key = tuple[str, str]  # (family, "max" | "min")
ENVELOPE_EFFECTS = ("moment", "shear", "deflection", "reaction")


@dataclass(frozen=True, eq=False)
class CaseEnvelope:
    """One case's own envelope.

    Fields
    ------
    name : the case name
    sections : (n_sections,) x of the sections [length]
    values : {(family, "max"|"min"): array}; families are those of
        :data:`trundle.analysis.rules.FAMILIES`; "reaction" has one value per support
        (NaN at a free end); NaN where the case does not apply
    governing : {(family, which): tuple of str}: what governs each value inside the case
        (an alternative's name, "spans 1, 3 loaded" …; "" for a single load)
    excluded : {(family, which): tuple of str}: the rules that excluded alternatives at
        each value ("" where none did)
    rule : the placement rule of the case, named for the results ("" for none)
    """

    name: str
    sections: NDArray[np.float64]
    values: Mapping[Key, NDArray[np.float64]]
    governing: Mapping[Key, tuple[str, ...]] = field(default_factory=dict)
    excluded: Mapping[Key, tuple[str, ...]] = field(default_factory=dict)
    rule: str = ""

    def max(self, family: str) -> NDArray[np.float64]:
        return self._get(family, "max")

    def min(self, family: str) -> NDArray[np.float64]:
        return self._get(family, "min")

    def _get(self, family: str, which: str) -> NDArray[np.float64]:
        if (family, which) not in self.values:
            raise ModelError(f"case {self.name!r}: effect: expected one of "
                             f"{', '.join(sorted({f for f, _ in self.values}))}, found {family!r}")
        return self.values[family, which]


def _family_values(env: Envelope, family: str, which: str) -> NDArray[np.float64]:
    kind, side = kind_and_side(family)
    values = env.max(kind, side=side) if which == "max" else env.min(kind, side=side)
    return np.asarray(values, dtype=float)


def from_envelope(env: Envelope, name: str | None = None, rule: str = "") -> CaseEnvelope:
    """The CaseEnvelope of an envelope run with one load case."""
    if name is None:
        name = env.cases[0].name if len(env.cases) == 1 else " / ".join(c.name for c in
                                                                        env.cases)
    values = {(f, w): _family_values(env, f, w) for f in FAMILIES for w in ("max", "min")}
    blank = {k: ("",) * v.size for k, v in values.items()}
    return CaseEnvelope(name, np.asarray(env.sections, dtype=float), values, blank, blank, rule)


def load_case_envelope(beam: Beam, load: Any, sections: ArrayLike,
                       name: str | None = None) -> CaseEnvelope:
    """One load (Vehicle, Train, UniformLoad, LoadCase or Together) on its own."""
    case = as_case(load)
    env = envelope(beam, [case], sections=sections, effects=ENVELOPE_EFFECTS)
    return from_envelope(env, name or case.name)


def _family_effects(families: Sequence[str]) -> tuple[str, ...]:
    return tuple(dict.fromkeys(kind_and_side(f)[0] for f in families))


def _part_values(beam: Beam, case: Any, sections: NDArray[np.float64],
                 families: Sequence[str]) -> dict[Key, NDArray[np.float64]]:
    """One load case's extremes of ``families`` at ``sections`` (reactions: every support)."""
    env = envelope(beam, [case], sections=sections, effects=_family_effects(families))
    return {(f, w): _family_values(env, f, w) for f in families for w in ("max", "min")}


def design_case_envelope(beam: Beam, design_case: DesignCase, sections: ArrayLike
                         ) -> CaseEnvelope:
    """A design case: at each line the worst of the alternatives whose rule applies there.

    Each alternative is the sum of its parts' own extremes (loads acting together, each at its
    own worst), multiplied by its factor and masked by its rule; an alternative that does not
    apply does not govern, and ``excluded`` names its rule at that line. A part shared by
    several alternatives (the lane load of HL-93) is enveloped once; an alternative restricted
    by a rule is enveloped only for the effects and at the sections its rule names.
    """
    sections = np.atleast_1d(np.asarray(sections, dtype=float))
    n_supports = len(beam.supports)
    values: dict[Key, NDArray[np.float64]] = {}
    governing: dict[Key, list[str]] = {}
    excluded: dict[Key, list[list[str]]] = {}
    for family in FAMILIES:
        size = n_supports if family == "reaction" else sections.size
        for which in ("max", "min"):
            values[family, which] = np.full(size, np.nan)
            governing[family, which] = [""] * size
            excluded[family, which] = [[] for _ in range(size)]
    shared: dict[Any, dict[Key, NDArray[np.float64]]] = {}

    def full(part: Any) -> dict[Key, NDArray[np.float64]]:
        try:
            hash(part)
        except TypeError:
            return _part_values(beam, part, sections, FAMILIES)
        if part not in shared:
            shared[part] = _part_values(beam, part, sections, FAMILIES)
        return shared[part]

    for alternative in design_case.alternatives:
        case = for_beam(alternative, beam.length)
        parts = case.parts if isinstance(case, Together) else (case,)
        masks = applicability(alternative.rule, beam, sections)
        if alternative.rule is None:
            mine = {k: sum(full(p)[k] for p in parts) for k in values}
        else:
            # only what the rule names: the sections and families where it applies
            families = [f for f in FAMILIES if masks[f, "max"].any() or masks[f, "min"].any()]
            used = np.zeros(sections.size, dtype=bool)
            for f in families:
                if f != "reaction":
                    used |= masks[f, "max"] | masks[f, "min"]
            mine = {k: np.full(v.size, np.nan) for k, v in values.items()}
            if families:
                subset = sections[used] if used.any() else sections[:1]
                for p in parts:
                    try:
                        known = p in shared
                    except TypeError:  # an unhashable part is never shared
                        known = False
                    if known:
                        got = {k: (v if k[0] == "reaction" else v[used])
                               for k, v in shared[p].items() if k[0] in families}
                    else:
                        got = _part_values(beam, p, subset, families)
                    for k, v in got.items():
                        target = mine[k]
                        if k[0] == "reaction":
                            target[:] = np.where(np.isnan(target), 0.0, target) + v
                        elif used.any():
                            target[used] = np.where(np.isnan(target[used]), 0.0,
                                                    target[used]) + v
        for key, applies in masks.items():
            factored = alternative.factor * mine[key]
            sign = 1.0 if key[1] == "max" else -1.0
            current = values[key]
            for j in range(factored.size):
                if not applies[j]:  # only a rule excludes (without one, all applies)
                    assert alternative.rule is not None
                    excluded[key][j].append(f"{alternative.name}: {alternative.rule.name}")
                    continue
                if np.isnan(factored[j]):
                    continue
                if np.isnan(current[j]) or sign * factored[j] > sign * current[j]:
                    current[j] = factored[j]
                    governing[key][j] = alternative.name
    return CaseEnvelope(
        design_case.name, sections, values,
        {k: tuple(v) for k, v in governing.items()},
        {k: tuple("; ".join(e) for e in v) for k, v in excluded.items()})


def case_envelopes(beam: Beam, cases: Iterable[Any], sections: ArrayLike
                   ) -> dict[str, CaseEnvelope]:
    """Every case's own envelope, by name: design cases, loads, or CaseEnvelopes already
    computed (patterns, loaded-length lane load), in the order given."""
    out: dict[str, CaseEnvelope] = {}
    for item in cases:
        if isinstance(item, CaseEnvelope):
            result = item
        elif isinstance(item, DesignCase):
            result = design_case_envelope(beam, item, sections)
        else:
            result = load_case_envelope(beam, item, sections)
        if result.name in out:
            raise ModelError(f"cases: names must differ, found {result.name!r} twice")
        out[result.name] = result
    return out


def same_sections(envelopes: Sequence[CaseEnvelope]) -> NDArray[np.float64]:
    """The sections every envelope shares; a clear error when they differ."""
    first = envelopes[0].sections
    for e in envelopes[1:]:
        if e.sections.shape != first.shape or not np.allclose(e.sections, first, rtol=0,
                                                               atol=1e-9 * max(1.0, first.max())):
            raise ModelError(f"case {e.name!r}: expected the same sections as case "
                             f"{envelopes[0].name!r}")
    return first
