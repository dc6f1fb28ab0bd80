"""How accurate a haunch is: the prismatic pieces against the varying-stiffness beam.

A haunch is analysed as ``haunch_divisions`` prismatic pieces (README, docs/model-file.md).
Reference: the force method (flexibility method, from memory: any structural analysis text,
e.g. Hibbeler, Structural Analysis, chapter on the force method) on a two-span beam with
linear 1:4 haunches either side of the middle support; the flexibility integrals
δ_ij = ∫ m_i m_j / EI dx of the exact varying stiffness are evaluated by
``scipy.integrate.quad``. The stated accuracy is what this test measures.
"""

from __future__ import annotations

import pytest
from scipy.integrate import quad

import trundle

SEGMENTS = [(0.0, 6.0, 1.0), (6.0, 10.0, 1.0, 4.0, "linear"), (10.0, 14.0, 4.0, 1.0, "linear"),
            (14.0, 20.0, 1.0)]


def _EI(x: float) -> float:
    if 6.0 <= x <= 10.0:
        return 1.0 + 3.0 * (x - 6.0) / 4.0
    if 10.0 < x <= 14.0:
        return 4.0 - 3.0 * (x - 10.0) / 4.0
    return 1.0


def _middle_reaction(a: float) -> float:
    """Reaction of the middle support under a unit load at a (simple 20 m beam released at
    the middle support; X = −δ10 / δ11)."""
    L = 20.0

    def m1(x: float) -> float:  # unit upward force at the middle support
        return -0.5 * (x if x <= 10.0 else L - x)

    def m0(x: float) -> float:  # unit downward load at a
        return (1.0 - a / L) * x if x <= a else a * (1.0 - x / L)

    points = [a, 6.0, 10.0, 14.0]
    d11 = quad(lambda x: m1(x) ** 2 / _EI(x), 0.0, L, points=points, epsabs=0.0,
               epsrel=1e-13, limit=400)[0]
    d10 = quad(lambda x: m1(x) * m0(x) / _EI(x), 0.0, L, points=points, epsabs=0.0,
               epsrel=1e-13, limit=400)[0]
    return -d10 / d11


@pytest.mark.parametrize(("pieces", "stated"), [(24, 1e-4), (96, 1e-5)])
def test_haunch_pieces_reach_the_stated_accuracy(pieces: int, stated: float) -> None:
    beam = trundle.Beam(spans=[10.0, 10.0], EI=SEGMENTS, haunch_divisions=pieces)
    line = beam.influence("reaction", support=1)
    for a in (2.0, 4.0, 7.5, 12.0):
        reference = _middle_reaction(a)
        assert abs(line(a) - reference) <= stated * abs(reference), (a, line(a), reference)


def test_more_pieces_come_closer() -> None:
    error = {}
    for pieces in (6, 24):
        beam = trundle.Beam(spans=[10.0, 10.0], EI=SEGMENTS, haunch_divisions=pieces)
        error[pieces] = abs(beam.influence("reaction", support=1)(4.0) - _middle_reaction(4.0))
    # about the square of the ratio of pieces (midpoint stiffness per piece)
    assert error[24] < error[6] / 8.0
