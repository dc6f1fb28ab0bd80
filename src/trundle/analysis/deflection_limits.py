"""Live-load deflection per span against a limit span / ratio given by the model.

The largest downward and upward deflection of each live case anywhere in each span (a search
over the section as well, not just at the given sections) is compared with span / ratio; the
governing case is named and the verdict comes from :func:`trundle.analysis.checks.verdict`.
Limits such as span/800 or span/1000 (bridges) and span/360 (floors) are common practice;
the model states which one applies ("verify" against the code in force).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from trundle.analysis.checks import utilisation_of, verdict
from trundle.analysis.envelope import absolute_extremes
from trundle.core.beam import Beam, ModelError
from trundle.loads.cases import LoadCase, Together, as_case
from trundle.loads.design_cases import DesignCase, for_beam


@dataclass(frozen=True)
class DeflectionCheck:
    """One span's live-load deflection check.

    Fields
    ------
    span : span number (0 from the left)
    value : the largest deflection in the span, either sense (downward positive) [length]
    x : where it occurs [length]
    case : the governing live case
    limit : span / ratio [length]
    ratio : the ratio given (800 for span/800)
    utilisation : |value| / limit (:func:`trundle.analysis.checks.utilisation_of`)
    verdict : PASS or EXCEEDS, from :func:`trundle.analysis.checks.verdict`
    certified : False when the search between sections could not prove ``value`` (see
        ``trundle.analysis.envelope.absolute_extremes``)
    """

    span: int
    value: float
    x: float
    case: str
    limit: float
    ratio: float
    utilisation: float
    certified: bool = True

    @property
    def verdict(self) -> str:
        """PASS or EXCEEDS (:func:`trundle.analysis.checks.verdict`)."""
        return verdict(self.utilisation)


def _loads_of(item: Any, beam: Beam) -> list[tuple[str, LoadCase | Together, float]]:
    if isinstance(item, DesignCase):
        out = []
        for a in item.alternatives:
            if a.rule is not None and "deflection" not in a.rule.effects:
                continue  # a rule that does not name deflection excludes it
            out.append((f"{item.name} ({a.name})", for_beam(a, beam.length), a.factor))
        return out
    case = as_case(item)
    return [(case.name, case, 1.0)]


def _parts(case: LoadCase | Together) -> list[LoadCase]:
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
            for name, case, factor in _loads_of(item, beam):
                total = {"max": 0.0, "min": 0.0}
                where = {"max": math.nan, "min": math.nan}
                for part in _parts(case):
                    for extreme in absolute_extremes(beam, part, span, "deflection"):
                        certified &= extreme.certified
                        value = factor * extreme.value  # service level already
                        total[extreme.which] += value
                        if math.isnan(where[extreme.which]):
                            where[extreme.which] = extreme.x
                for which in ("max", "min"):
                    if abs(total[which]) > abs(best[0]):
                        best = (total[which], where[which], name)
        length = float(ends[span + 1] - ends[span])
        limit = length / ratio
        checks.append(DeflectionCheck(span, best[0], best[1], best[2], limit, float(ratio),
                                      utilisation_of(best[0], limit), certified))
    return checks
