"""Default percentages, limits and fatigue constants of the crane runway analysis.

Sources (every one from memory; each must be verified against the edition in force):
- ASCE/SEI 7, Minimum Design Loads for Buildings and Other Structures, crane loads (§4.9 in
  recent editions): vertical impact 25 % for monorail cranes (powered) and cab-operated or
  remotely operated bridge cranes (powered), 10 % for pendant-operated bridge cranes
  (powered), 0 % for hand-geared cranes; lateral force 20 % of (rated capacity + hoist and
  trolley weight); longitudinal force 10 % of the maximum wheel loads.
- AISC Design Guide 7, Industrial Buildings — Roofs to Anchor Rods (2nd ed.), crane runway
  girders: vertical deflection span/600 for crane service classes A, B, C, span/800 for D,
  span/1000 for E and F; lateral deflection span/400; full-load cycles by service class
  A 20,000–100,000, B 100,000–500,000, C 500,000–2,000,000, D and above over 2,000,000.
- AISC 360 (Specification for Structural Steel Buildings), Appendix 3, Table A-3.1: allowable
  stress range F_SR = (C_f / n_SR)^(1/3) ≥ F_TH [ksi] with, e.g., category A C_f = 250e8,
  F_TH = 24 ksi; category C C_f = 44e8, F_TH = 10 ksi.
"""

from __future__ import annotations

import math

import pytest

from trundle.analysis.checks import DETAIL_CATEGORIES, allowable_stress_range_ksi
from trundle.loads.cranes import (
    IMPACT_BY_OPERATION,
    LATERAL_FRACTION,
    LONGITUDINAL_FRACTION,
    Crane,
)
from trundle.workflows.crane_runway import (
    COMBINATIONS,
    FATIGUE_CYCLES,
    LATERAL_DEFLECTION_RATIO,
    SERVICE_CLASSES,
    VERTICAL_DEFLECTION_RATIO,
    RunwaySpec,
)


def _crane(**changes: object) -> Crane:
    data = dict(name="yard crane", capacity=100.0, bridge_weight=150.0, trolley_weight=20.0,
                span=15.0, hook_approach=0.75, wheel_spacings=(3.0,))
    data.update(changes)
    return Crane(**data)


def test_every_default_with_its_provenance() -> None:
    # ---- vertical impact by type of operation
    # Source: ASCE/SEI 7, crane loads, vertical impact force (from memory of a widely used
    # building code; verify)
    assert IMPACT_BY_OPERATION == {"cab": 0.25, "remote": 0.25, "monorail": 0.25,
                                   "pendant": 0.10, "hand": 0.0}
    assert _crane().impact_fraction == 0.25  # a crane is cab-operated unless told otherwise
    for operation, impact in IMPACT_BY_OPERATION.items():
        assert _crane(operation=operation).wheels().impact == impact
    # ---- lateral force: 20 % of (rated capacity + trolley and hoist), half to each runway
    # Source: ASCE/SEI 7, crane loads, lateral force (from memory; verify)
    assert LATERAL_FRACTION == 0.20
    assert _crane().lateral_share == 0.5
    assert _crane().wheels().lateral == pytest.approx(0.20 * 120.0 * 0.5 / 2, rel=1e-12)
    # ---- longitudinal force: 10 % of the maximum wheel loads
    # Source: ASCE/SEI 7, crane loads, longitudinal force (from memory; verify)
    assert LONGITUDINAL_FRACTION == 0.10
    w = _crane().wheels()
    assert w.longitudinal == pytest.approx(0.10 * 2 * w.maximum, rel=1e-12)
    # ---- deflection limits by crane service class, span / ratio
    # Source: AISC Design Guide 7, crane runway girders (from memory of a widely used design
    # guide for crane-supporting structures; verify)
    assert SERVICE_CLASSES == ("A", "B", "C", "D", "E", "F")
    assert VERTICAL_DEFLECTION_RATIO == {"A": 600.0, "B": 600.0, "C": 600.0, "D": 800.0,
                                         "E": 1000.0, "F": 1000.0}
    assert LATERAL_DEFLECTION_RATIO == 400.0
    # ---- full-load stress cycles over the life, by service class (upper end of each range;
    # "over 2,000,000" taken as unlimited, so the fatigue threshold governs)
    # Source: AISC Design Guide 7 (from memory; verify)
    assert FATIGUE_CYCLES == {"A": 100_000.0, "B": 500_000.0, "C": 2_000_000.0,
                              "D": math.inf, "E": math.inf, "F": math.inf}
    # ---- the runway takes them as its defaults; service class C unless told otherwise
    crane = _crane()
    assert RunwaySpec(cranes=(crane,)).service_class == "C"
    for service_class in SERVICE_CLASSES:
        spec = RunwaySpec(cranes=(crane,), service_class=service_class)
        assert spec.vertical_limit_ratio == VERTICAL_DEFLECTION_RATIO[service_class]
        assert spec.lateral_limit_ratio == 400.0
        assert spec.cycles == FATIGUE_CYCLES[service_class]
    overridden = RunwaySpec(cranes=(crane,), vertical_ratio=750.0, lateral_ratio=500.0,
                            fatigue_cycles=1.0e6)
    assert (overridden.vertical_limit_ratio, overridden.lateral_limit_ratio,
            overridden.cycles) == (750.0, 500.0, 1.0e6)
    # ---- crane combinations run by default (common practice, no source)
    assert RunwaySpec(cranes=(crane,)).combinations == COMBINATIONS == (
        "each alone", "all loaded", "one loaded, others unloaded")


# Source: AISC 360, Appendix 3, Table A-3.1 (from memory of the fatigue appendix of a widely
# used steel specification; verify): detail category -> (C_f, F_TH [ksi])
TABLE_A31 = {"A": (250e8, 24.0), "B": (120e8, 16.0), "B'": (61e8, 12.0), "C": (44e8, 10.0),
             "C'": (44e8, 12.0), "D": (22e8, 7.0), "E": (11e8, 4.5), "E'": (3.9e8, 2.6)}


def test_detail_categories_as_transcribed() -> None:
    # Source: AISC 360, Appendix 3, Table A-3.1 (from memory; verify)
    assert DETAIL_CATEGORIES == TABLE_A31


@pytest.mark.parametrize("category", sorted(TABLE_A31))
@pytest.mark.parametrize("cycles", [2.0e4, 1.0e5, 5.0e5, 2.0e6, 1.0e7, 1.0e9])
def test_allowable_stress_range(category: str, cycles: float) -> None:
    # Source: AISC 360, Appendix 3, Eq. A-3-1 (from memory): F_SR = (C_f / n)^(1/3) ≥ F_TH
    c_f, threshold = TABLE_A31[category]
    expected = max((c_f / cycles) ** (1.0 / 3.0), threshold)
    assert allowable_stress_range_ksi(category, cycles) == pytest.approx(expected, rel=1e-12)
    assert allowable_stress_range_ksi(category, cycles) >= threshold


def test_allowable_stress_range_known_values() -> None:
    # Source: AISC 360, Appendix 3 (from memory): category C at 2,000,000 cycles ≈ 13.0 ksi
    # ((44e8 / 2e6)^(1/3) = 2200^(1/3) = 13.006); its threshold 10 ksi from
    # n = C_f / F_TH³ = 4.4e6 cycles on; category A threshold 24 ksi
    assert allowable_stress_range_ksi("C", 2.0e6) == pytest.approx(13.0, rel=1e-3)
    assert allowable_stress_range_ksi("C", 4.4e6) == pytest.approx(10.0, rel=1e-12)
    assert allowable_stress_range_ksi("C", 4.0e6) > 10.0
    assert allowable_stress_range_ksi("C", 1.0e8) == 10.0
    assert allowable_stress_range_ksi("A", 1.0e9) == 24.0
    # few cycles: the S-N line, far above the threshold
    assert allowable_stress_range_ksi("A", 1.0e5) == pytest.approx((250e8 / 1e5) ** (1 / 3),
                                                                   rel=1e-12)
    # unlimited cycles: the threshold
    for category, (_, threshold) in TABLE_A31.items():
        assert allowable_stress_range_ksi(category, math.inf) == threshold
