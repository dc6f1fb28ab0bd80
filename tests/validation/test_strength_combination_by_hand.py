"""A factored combination by hand at one section: 1.25·DC + 1.50·DW + 1.75·(LL+IM) for the
maximum, and 0.90·DC + 0.65·DW where the permanent effect is favourable.

Sources: the factors, AASHTO LRFD Bridge Design Specifications (8th/9th ed.), Tables 3.4.1-1 and
3.4.1-2, Strength I (from memory); moments of two equal spans under uniform load on one or both
spans, AISC Steel Construction Manual, "Beam Diagrams and Formulas" (from memory):
both spans loaded M(x) = w(3/8·L·x − x²/2), span 1 loaded M(x) = w(7/16·L·x − x²/2) in span 1,
span 2 loaded M(x) = −w·L·x/16 in span 1; pier moment −wL²/8 with both loaded. Units: kip, ft.
"""

from __future__ import annotations

import pytest

import trundle
from trundle.analysis.case_envelopes import load_case_envelope
from trundle.analysis.combinations import BRIDGE_STRENGTH_I, design_envelope
from trundle.analysis.permanent import PermanentLoad, permanent_effects

L = 100.0
DC, DW, LANE = 1.2, 0.3, 0.64  # kip/ft


def test_strength_i_by_hand_at_0_4_L_and_at_the_pier() -> None:
    beam = trundle.Beam(spans=[L, L])
    x = 0.4 * L
    sections = [x, L]
    permanent = permanent_effects(beam, [
        PermanentLoad("girder and deck", "DC", "self weight", DC),
        PermanentLoad("wearing surface", "DW", "superimposed dead", DW)], sections)
    live = load_case_envelope(beam, trundle.UniformLoad(LANE, name="lane"), sections)
    result = design_envelope(BRIDGE_STRENGTH_I, permanent, [live])

    def both(w: float, at: float) -> float:
        return w * (3 / 8 * L * at - at**2 / 2)

    m_dc, m_dw = both(DC, x), both(DW, x)            # 0.07 wL², sagging: adverse for max
    ll_max = LANE * (7 / 16 * L * x - x**2 / 2)      # span 1 loaded: 0.095 wL²
    ll_min = -LANE * L * x / 16                       # span 2 loaded: −0.025 wL²
    assert m_dc == pytest.approx(0.07 * DC * L**2, rel=1e-12)
    assert result.max("moment")[0] == pytest.approx(1.25 * m_dc + 1.50 * m_dw + 1.75 * ll_max,
                                                    rel=1e-9)
    # for the minimum the sagging permanent moments are favourable: 0.90 and 0.65
    assert result.min("moment")[0] == pytest.approx(0.90 * m_dc + 0.65 * m_dw + 1.75 * ll_min,
                                                    rel=1e-9)
    # at the pier the permanent moment is hogging: favourable for the maximum
    p_dc, p_dw, ll_pier = -DC * L**2 / 8, -DW * L**2 / 8, -LANE * L**2 / 8
    assert result.max("moment")[1] == pytest.approx(0.90 * p_dc + 0.65 * p_dw, abs=1e-9)
    assert result.min("moment")[1] == pytest.approx(1.25 * p_dc + 1.50 * p_dw + 1.75 * ll_pier,
                                                    rel=1e-9)
    assert result.governing["moment", "max"][0] == "lane"
    assert result.by_case["lane"]["moment", "max"][0] == result.max("moment")[0]
