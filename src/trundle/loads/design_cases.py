"""Design load cases: the worst of several alternatives, each possibly restricted by a rule.

A published live-load model is often not one load but a choice: the design truck with the lane
load, or the tandem with the lane load, and, for negative moment and interior pier reactions
only, 90 % of two trucks with 90 % of the lane load. A :class:`DesignCase` holds such
alternatives; a :class:`Rule` says which effects and which region an alternative applies to.
Applying the rules to computed envelopes is :mod:`trundle.analysis.rules`; this module only
holds the data and checks it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from trundle.core.beam import ModelError
from trundle.loads.cases import LoadCase, Together, as_case

# The effects a rule may name: what each extreme of each line is called by the codes.
RULE_EFFECTS = ("positive moment", "negative moment", "shear", "interior reactions",
                "end reactions", "deflection")
# Regions of the beam a rule may name.
RULE_REGIONS = ("anywhere", "between points of contraflexure")


@dataclass(frozen=True)
class Rule:
    """Which effects and which region an alternative of a design case applies to.

    Parameters
    ----------
    effects : names from :data:`RULE_EFFECTS`; the alternative applies to these only
    region : "anywhere" (default) or "between points of contraflexure": sections inside the
        stretches where uniform load on every span causes hogging moment (and the supports
        inside them); reactions count as inside when their support is
    name : what results call the rule (default: built from the effects and region)
    """

    effects: tuple[str, ...] = RULE_EFFECTS
    region: str = "anywhere"
    name: str = ""

    def __post_init__(self) -> None:
        effects = (self.effects,) if isinstance(self.effects, str) else tuple(self.effects)
        if not effects:
            raise ModelError("rule: effects: expected one or more of "
                             f"{', '.join(RULE_EFFECTS)}, found none")
        for e in effects:
            if e not in RULE_EFFECTS:
                raise ModelError(f"rule: effects: expected some of {', '.join(RULE_EFFECTS)}, "
                                 f"found {e!r}")
        if self.region not in RULE_REGIONS:
            raise ModelError(f"rule: region: expected one of {', '.join(RULE_REGIONS)}, "
                             f"found {self.region!r}")
        object.__setattr__(self, "effects", effects)
        if not self.name:
            where = "" if self.region == "anywhere" else f", {self.region}"
            object.__setattr__(self, "name", "only " + ", ".join(effects) + where)


@dataclass(frozen=True)
class Alternative:
    """One way a design case may load the beam: a load case (or loads acting together)
    multiplied by ``factor``, restricted by ``rule`` (None: applies to everything).

    ``unlimited_gaps`` lists, for a train, the searched gaps whose upper end is "as long as the
    beam needs" (:func:`for_beam` sets it from the beam's length).
    """

    name: str
    case: LoadCase | Together
    factor: float = 1.0
    rule: Rule | None = None
    unlimited_gaps: tuple[int, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "case", as_case(self.case))
        if isinstance(self.factor, bool) or not isinstance(self.factor, int | float) or \
                not math.isfinite(self.factor) or self.factor <= 0:
            raise ModelError(f"alternative {self.name!r}: factor: expected a positive number, "
                             f"found {self.factor!r}")


@dataclass(frozen=True)
class DesignCase:
    """A design live-load case: at every line, the worst of its alternatives that apply.

    Fields
    ------
    name : the case name shown in results
    alternatives : one or more :class:`Alternative`
    parameters : values the file set (lane width, adjustment factors …), for the record
    """

    name: str
    alternatives: tuple[Alternative, ...]
    parameters: tuple[tuple[str, Any], ...] = field(default=())

    def __post_init__(self) -> None:
        alternatives = tuple(self.alternatives)
        if not alternatives:
            raise ModelError(f"design case {self.name!r}: expected one or more alternatives, "
                             "found none")
        names = [a.name for a in alternatives]
        for n in names:
            if names.count(n) > 1:
                raise ModelError(f"design case {self.name!r}: alternative names must differ, "
                                 f"found {n!r} twice")
        object.__setattr__(self, "alternatives", alternatives)

    def describe(self) -> str:
        parts = []
        for a in self.alternatives:
            text = a.name + (f" x{a.factor:g}" if a.factor != 1 else "")
            if a.rule is not None:
                text += f" ({a.rule.name})"
            parts.append(text)
        return f"{self.name}: worst of " + "; ".join(parts)

    def __str__(self) -> str:
        return self.describe()


def _with_gap_max(case: LoadCase, indices: tuple[int, ...], high: float) -> LoadCase:
    import dataclasses

    train = case.load
    gaps = list(train.gaps)
    for i in indices:
        low = gaps[i][0] if isinstance(gaps[i], tuple) else gaps[i]
        gaps[i] = (low, max(high, low * 1.000001 + 1e-9))
    return dataclasses.replace(case, load=dataclasses.replace(train, gaps=tuple(gaps)))


def for_beam(alternative: Alternative, beam_length: float) -> LoadCase | Together:
    """The alternative's load case with "unlimited" gaps bounded by the beam length.

    A gap at least as long as the beam leaves at most one vehicle of the pair with an axle
    strictly inside the beam, which a gap equal to the beam length reproduces; so searching
    up to the beam length covers every configuration that differs from one vehicle alone.
    """
    case = alternative.case
    if not alternative.unlimited_gaps:
        return case
    if isinstance(case, Together):
        parts = tuple(_with_gap_max(p, alternative.unlimited_gaps, beam_length)
                      if hasattr(p.load, "gaps") else p for p in case.parts)
        return Together(parts, case.name)
    return _with_gap_max(case, alternative.unlimited_gaps, beam_length)
