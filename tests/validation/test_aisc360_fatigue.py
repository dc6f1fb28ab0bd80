"""Allowable stress range of a fatigue detail.

Source: AISC 360, Specification for Structural Steel Buildings, Appendix 3, Table A-3.1 and
Eq. A-3-1, from memory (verify against the edition in force): F_SR = (C_f / n_SR)^(1/3) ≥ F_TH
[ksi] with, e.g., category A C_f = 250e8, F_TH = 24 ksi; category C C_f = 44e8, F_TH = 10 ksi.
"""

from __future__ import annotations

import math

import pytest

from trundle.analysis.checks import DETAIL_CATEGORIES, allowable_stress_range_ksi

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
