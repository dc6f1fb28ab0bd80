"""Crane runway girders: deflection limits and stress cycles by crane service class.

Source: AISC Design Guide 7, Industrial Buildings — Roofs to Anchor Rods (2nd ed.), crane
runway girders, from memory (verify against the edition in force): vertical deflection
span/600 for crane service classes A, B, C, span/800 for D, span/1000 for E and F; lateral
deflection span/400; full-load cycles by service class A 20,000–100,000, B 100,000–500,000,
C 500,000–2,000,000, D and above over 2,000,000 (the upper end of each range is the default;
"over 2,000,000" is taken as unlimited, so the fatigue threshold governs).
"""

from __future__ import annotations

import math

from conftest import make_crane
from trundle.workflows.crane_runway import (
    COMBINATIONS,
    FATIGUE_CYCLES,
    LATERAL_DEFLECTION_RATIO,
    SERVICE_CLASSES,
    VERTICAL_DEFLECTION_RATIO,
    RunwaySpec,
)


def test_limits_and_cycles_by_service_class() -> None:
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
    crane = make_crane("yard crane")
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
