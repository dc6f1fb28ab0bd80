"""A 1,000-section envelope against the dense reference of tests/naive.py at sampled sections.

Lines are stored on their own breaks (structural nodes plus their own section), so a beam
with a thousand sections must give, at every section, what a fresh dense solve per load
position gives. For sampled sections the reference (which shares no code with trundle)
places the truck at every point of a grid on which all axles land on grid points, so the
grid maximum can never exceed the exact envelope; and the governing configuration the
envelope reports, solved again by the reference, gives the envelope's value.
Source: independent dense reference, common practice, no source.
"""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from naive import naive_solve

AXLES = (60.0, 120.0, 120.0)
SPACINGS = (3.0, 4.5)
STEP = 0.075  # divides both spacings: every axle of a grid position stands on the grid
SAMPLED = (1, 137, 400, 555, 801, 998)


@pytest.fixture(scope="module")
def job():
    beam = trundle.Beam([12.0, 15.0, 12.0], supports=["fixed", "pin", "pin", "pin"])
    sections = np.linspace(0.0, beam.length, 1000)
    truck = trundle.Vehicle(AXLES, SPACINGS, name="truck")
    env = trundle.envelope(beam, [truck], sections=sections,
                           effects=("moment", "shear", "deflection"))
    return beam, sections, truck, env


def _read(result, kind: str, x: float) -> float:
    if kind == "moment":
        return result.moment(x, "right")
    if kind == "shear":
        return result.shear(x, "left")
    return result.deflection(x)


def test_grid_of_dense_solves_never_exceeds_the_envelope(job) -> None:
    beam, sections, truck, env = job
    xs = tuple(float(sections[i]) for i in SAMPLED)
    grid = np.round(np.arange(0.0, beam.length + STEP / 2, STEP), 9)
    # ordinates of every sampled effect for a unit load at each grid point (one dense solve
    # per grid point reads all sampled sections); shear off the section itself only
    lines = {kind: np.zeros((len(grid), len(xs))) for kind in ("moment", "shear", "deflection")}
    for k, x in enumerate(grid):
        res = naive_solve(beam, float(x), 1.0, xs)
        for kind, table in lines.items():
            for i, s in enumerate(xs):
                if kind == "shear" and abs(x - s) < 1e-9:
                    table[k, i] = np.nan
                else:
                    table[k, i] = _read(res, kind, s)
    shifts = np.round(np.cumsum([0.0, *SPACINGS]) / STEP).astype(int)
    reach = int(shifts[-1])
    for kind, table in lines.items():
        padded = np.zeros((len(grid) + 2 * reach, len(xs)))
        padded[reach:reach + len(grid)] = table
        worst_max = np.full(len(xs), -np.inf)
        worst_min = np.full(len(xs), np.inf)
        for direction in (1, -1):
            start = [reach - s if direction == 1 else s for s in shifts]
            total = sum(P * padded[a:a + len(grid) + reach]
                        for a, P in zip(start, AXLES, strict=True))
            worst_max = np.fmax(worst_max, np.nanmax(total, axis=0))
            worst_min = np.fmin(worst_min, np.nanmin(total, axis=0))
        side = "left" if kind == "shear" else None
        exact_max = env.max(kind, side)[list(SAMPLED)]
        exact_min = env.min(kind, side)[list(SAMPLED)]
        scale = max(np.abs(env.max(kind, side)).max(), np.abs(env.min(kind, side)).max())
        # never above the exact envelope, and close to it (a grid misses the peak by little)
        assert np.all(worst_max <= exact_max + 1e-9 * scale), kind
        assert np.all(worst_min >= exact_min - 1e-9 * scale), kind
        assert np.all(exact_max - worst_max <= 0.02 * scale), kind
        assert np.all(worst_min - exact_min <= 0.02 * scale), kind


@pytest.mark.parametrize("kind", ["moment", "shear", "deflection"])
def test_governing_configuration_solved_again_gives_the_value(job, kind: str) -> None:
    beam, sections, truck, env = job
    side = "left" if kind == "shear" else None
    scale = max(np.abs(env.max(kind, side)).max(), np.abs(env.min(kind, side)).max())
    for which in ("max", "min"):
        governing = env.governing(kind, which, side)
        values = env.max(kind, side) if which == "max" else env.min(kind, side)
        for i in SAMPLED:
            g = governing[i]
            if g.case < 0:
                assert abs(values[i]) <= 1e-12 * scale
                continue
            x = float(sections[i])

            def response(shift: float, g=g, x=x) -> float:
                total = 0.0
                for a, P in zip(env.axle_positions(g) + shift, g_loads(env, g), strict=True):
                    if 0.0 <= a <= beam.length:
                        total += P * _read(naive_solve(beam, float(a), 1.0, (x,)), kind, x)
                return total

            if g.side == 0:
                total = response(0.0)
            else:
                # a one-sided limit at a jump: the loads a little to the given side, at two
                # distances, extrapolated to zero (the reference is ill-conditioned with a
                # load much closer to a node than this)
                eps = g.side * 1e-4 * beam.length
                total = 2.0 * response(eps) - response(2.0 * eps)
            assert total == pytest.approx(values[i], abs=1e-5 * scale), (kind, which, x)


def g_loads(env: trundle.Envelope, g) -> tuple[float, ...]:
    return env.group_of(g).point_P


def test_shear_left_and_right_are_one_line_inside_spans(job) -> None:
    beam, sections, truck, env = job
    inside = [i for i in SAMPLED if not np.any(np.isclose(sections[i],
                                                          beam.support_positions))]
    np.testing.assert_array_equal(env.max("shear", "left")[inside],
                                  env.max("shear", "right")[inside])
