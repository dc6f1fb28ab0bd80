"""The exact absolute ("anywhere in the span") moment extremes (trundle.analysis.absolute_moment,
``absolute_extremes`` in trundle.analysis.envelope).

Sources beside each check:
- two equal moving loads on a simple span: the classical rule "the section of absolute
  maximum moment is under a load, with midspan halfway between that load and the resultant
  of the loads on the span" (R. C. Hibbeler, Structural Analysis, chapter on influence lines,
  "absolute maximum moment"; from memory), derived here with sympy from statics;
- one load: PL/4 (any handbook of beam formulas; common practice, no source);
- a three-axle truck on a simple span: an independent brute force in this file (every axle as
  the critical one, every set of axles on the span, the rule above and every position where a
  load enters or leaves, each evaluated by plain statics);
- random continuous beams (springs, hinges, overhangs, fixed ends) and random axle groups:
  trundle's exact section envelope on 2,001 sections of the span (a lower bound) plus a bound
  on how much the moment can rise between two sections (an upper bound), and the governing
  configuration re-solved by the independent static solver of tests/naive_scan.py.
"""

from __future__ import annotations

import numpy as np
import pytest
import sympy as sp

import trundle
from conftest import SCAN_BEAMS, TRUCK_ON_TWO_SPANS, random_beam
from naive_scan import ReferenceSolver, random_axles
from trundle.analysis.absolute_moment import quartic_maxima
from trundle.analysis.envelope import _sampled_extreme, absolute_extremes, exact_absolute
from trundle.core.statics import PointLoad, solve_static
from trundle.loads.cases import LoadCase, Together

# --- closed forms ------------------------------------------------------------------------


def _two_load_closed_form(L: float, a: float, P: float) -> float:
    """Absolute maximum moment of two equal loads P at spacing a on a simple span L, derived
    with sympy: both loads on the span, the section under one of them (x), the other at x + a.
    The rule (Hibbeler, from memory) puts midspan halfway between the load and the resultant;
    here it comes out of dM/dx = 0. One load alone at midspan (PL/4) is the alternative."""
    x, Ls, As, Ps = sp.symbols("x L a P", positive=True)
    left_reaction = Ps * (Ls - x) / Ls + Ps * (Ls - x - As) / Ls
    moment = left_reaction * x  # no load left of the section
    x_star = sp.solve(sp.diff(moment, x), x)[0]
    both = sp.simplify(moment.subs(x, x_star))
    assert sp.simplify(both - Ps * (Ls - As / 2) ** 2 / (2 * Ls)) == 0  # the textbook form
    values = {Ls: L, As: a, Ps: P}
    two = float(both.subs(values)) if a <= L else 0.0
    return max(two, P * L / 4)


@pytest.mark.parametrize("a", [0.0, 1.0, 4.0, 8.0, 11.0, 11.8, 15.0, 25.0])
def test_two_equal_loads_on_a_simple_span(a: float) -> None:
    # Hibbeler, Structural Analysis, influence lines, absolute maximum moment (from memory);
    # two loads govern while a < (2 - sqrt 2) L
    L, P = 20.0, 10.0
    beam = trundle.Beam(spans=[L])
    pair = LoadCase(trundle.Vehicle(loads=[P, P], spacings=[a]))
    found = {e.which: e for e in absolute_extremes(beam, pair, 0)}
    assert found["max"].value == pytest.approx(_two_load_closed_form(L, a, P), rel=1e-12)
    assert found["max"].certified and found["min"].certified
    assert found["min"].value == pytest.approx(0.0, abs=1e-9)


def test_one_load_quarter_span() -> None:
    # PL/4 under a single load at midspan (common practice, no source)
    beam = trundle.Beam(spans=[12.0])
    (found,) = absolute_extremes(beam, LoadCase(trundle.Vehicle(loads=[7.0])), 0,
                                 extremes=("max",))
    assert found.value == pytest.approx(7.0 * 12.0 / 4, rel=1e-13)
    assert found.x == pytest.approx(6.0, abs=1e-9)


def _simple_span_moment(L: float, positions: np.ndarray, loads: np.ndarray, x: float) -> float:
    on = (positions >= 0.0) & (positions <= L)
    p, w = positions[on], loads[on]
    left = float(np.sum(w * (L - p) / L))
    return left * x - float(np.sum(np.where(p < x, w * (x - p), 0.0)))


def _simple_span_brute_force(L: float, loads: list[float], spacings: list[float]) -> float:
    """Every axle i as the critical one; for every set of consecutive axles j..k on the span
    the rule's position (midspan halfway between axle i and the resultant of j..k) and every
    position where an axle reaches a support; both directions. Plain statics at each."""
    best = 0.0
    for order in (1, -1):
        P = np.asarray(loads if order == 1 else loads[::-1], dtype=float)
        s = spacings if order == 1 else spacings[::-1]
        u = np.concatenate([[0.0], np.cumsum(s)])  # axle k at t - u_k
        n = len(P)
        positions_t = [L + uk for uk in u] + [uk for uk in u]
        for i in range(n):
            for j in range(n):
                for k in range(j, n):
                    resultant_at = float(np.sum(P[j:k + 1] * u[j:k + 1]) / np.sum(P[j:k + 1]))
                    # midspan halfway between axle i (t − u_i) and the resultant (t − r)
                    positions_t.append(L / 2 + (u[i] + resultant_at) / 2)
        for t in positions_t:
            for i in range(n):
                x = t - u[i]
                if 0.0 <= x <= L:
                    best = max(best, _simple_span_moment(L, t - u, P, x))
    return best


def test_three_axle_truck_on_a_simple_span_against_brute_force() -> None:
    # an invented three-axle truck; reference: the exhaustive rule + statics above
    L = 18.0
    loads, spacings = [35.0, 145.0, 145.0], [4.3, 4.3]
    beam = trundle.Beam(spans=[L])
    (found,) = absolute_extremes(beam, LoadCase(trundle.Vehicle(loads=loads, spacings=spacings)),
                                 0, extremes=("max",))
    assert found.value == pytest.approx(_simple_span_brute_force(L, loads, spacings), rel=1e-12)
    # a dense scan of positions (section under each axle) never beats it
    u = np.array([0.0, 4.3, 8.6])
    t = np.linspace(0.0, L + 8.6, 20001)
    dense = max(_simple_span_moment(L, tt - u, np.array(loads), tt - u[i])
                for tt in t for i in range(3) if 0.0 <= tt - u[i] <= L)
    assert found.value >= dense - 1e-12 * found.value


# --- the sampled search read low; the exact one does not -----------------------------------


def test_two_near_equal_peaks_the_old_search_read_low() -> None:
    # invented: a propped cantilever (fixed at x = 0, pin at 20) under a one-way pair whose
    # rear axle is a little heavier. The moment envelope along the span has two peaks (front
    # or rear axle over the section) of nearly the same height; the sampled search (40
    # sections, refined between the neighbours of the best) climbs the lower one.
    beam = trundle.Beam(spans=[20.0], supports=["fixed", "pin"])
    case = LoadCase(trundle.Vehicle(loads=[10.0, 11.15], spacings=[3.0], reversible=False))
    (exact,) = absolute_extremes(beam, case, 0, extremes=("max",))
    coarse = trundle.envelope(beam, [case], sections=np.linspace(0.0, 20.0, 41),
                              effects=("moment",), refine=False)
    old_value, old_x, *_ = _sampled_extreme(beam, case, "moment", "max", 0.0, 20.0, coarse)
    assert exact.value > old_value * (1 + 5e-4)  # 0.086 % higher
    assert abs(exact.x - old_x) > 1.0  # on the other peak
    # the higher peak is real: trundle's exact envelope at that section, and a static solve
    at = trundle.envelope(beam, [case], sections=[exact.x], effects=("moment",))
    assert at.max("moment")[0] == pytest.approx(exact.value, rel=1e-9)
    assert _resolved(beam, case, exact) == pytest.approx(exact.value, rel=1e-9)


# --- random beams against a dense reference --------------------------------------------------


def _axles_on_beam(length: float, case: LoadCase, g, multiplier: float
                   ) -> list[tuple[float, float]]:
    """(x, load × multiplier) of every axle of the governing configuration ``g`` that stands
    on the beam, an axle on an end counted as the limit side ``g.side`` says."""
    group = case.load.group(g.searched, case.impact)
    if g.direction < 0:
        group = group.mirrored()
    axles = []
    for u, P in zip(group.point_u, group.point_P, strict=True):
        p = g.reference - u
        if abs(p) <= 1e-12 * length:
            p = 0.0
        if abs(p - length) <= 1e-12 * length:
            p = length
        if p < 0 or p > length or (p == 0.0 and g.side < 0) or (p == length and g.side > 0):
            continue
        axles.append((p, P * multiplier))
    return axles


def _resolved(beam: trundle.Beam, case: LoadCase, extreme) -> float:
    """The moment at the extreme's section under its governing configuration, from the
    independent static solver (one-sided limits for an axle exactly on an end of the beam)."""
    g = extreme.governing
    a = float(beam.support_positions[extreme.span])
    if g.case < 0:
        return 0.0
    L = beam.length
    x = extreme.x
    axles = _axles_on_beam(L, case, g, case.multiplier)
    res = ReferenceSolver(beam, [x] if a < x < L else []).solve(axles)
    # equilibrium of everything left of x inside the span: the supports at or left of the
    # span's left end, and the loads left of x
    total = 0.0
    for R, C, p in zip(res.reactions, res.couples, beam.support_positions, strict=True):
        if p <= a + 1e-12 * L or p < x - 1e-12 * L:
            total += R * (x - p) - C
    total -= sum(P * (x - p) for p, P in axles if p < x)
    return total


def _dense_reference(beam: trundle.Beam, case, span: int, n: int = 2001
                     ) -> tuple[float, float, float, float]:
    """(largest, smallest) moment of trundle's exact section envelope over n sections of the
    span (its right end left out: read there, the moment is the next span's where a support
    couple acts), and the bound by which the true extremes may exceed them: along a span the
    moment of any placement is concave with slope |V| ≤ Vmax (V falls from V(a⁺) to V(b⁻))."""
    a, b = beam.support_positions[span], beam.support_positions[span + 1]
    xs = np.linspace(a, b, n)[:-1]
    env = trundle.envelope(beam, [case], sections=xs, effects=("moment",))
    ends = trundle.envelope(beam, [case], sections=[a, b], effects=("shear",))
    v_max = max(float(ends.max("shear", side="right")[0]),
                -float(ends.min("shear", side="left")[1]), 0.0)
    h = (b - a) / (n - 1)
    return (float(env.max("moment").max()), float(env.min("moment").min()),
            2.0 * v_max * h, float(np.abs(env.max("moment")).max()
                                   + np.abs(env.min("moment")).max()))


@pytest.mark.parametrize("seed", range(8))
def test_random_beams_against_dense_sections_and_static_solves(seed: int) -> None:
    rng = np.random.default_rng(100 + seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    loads, spacings = random_axles(rng, beam, 1, 5)
    vehicle = trundle.Vehicle(loads=loads, spacings=spacings,
                              reversible=bool(rng.random() < 0.6),
                              confined=bool(rng.random() < 0.25)
                              and sum(spacings) < 0.9 * beam.length)
    case = LoadCase(vehicle, impact=float(rng.choice([0.0, 0.33])),
                    factors=(("distribution", float(rng.uniform(0.5, 1.5))),))
    for span in range(beam.n_spans):
        found = {e.which: e for e in absolute_extremes(beam, case, span)}
        assert found["max"].certified and found["min"].certified
        high, low, slack, scale = _dense_reference(beam, case, span)
        noise = 1e-9 * max(scale, 1e-12)
        # never below the exact envelope at any of 2,001 sections
        assert found["max"].value >= high - noise
        assert found["min"].value <= low + noise
        # and above it by no more than the moment can rise between two sections
        assert found["max"].value <= high + slack + noise
        assert found["min"].value >= low - slack - noise
        # the governing configuration, solved statically, gives the value
        for e in found.values():
            assert _resolved(beam, case, e) == pytest.approx(e.value, rel=1e-9, abs=noise)


# --- where the exact method does not apply: labelled -----------------------------------------


def test_searched_spacing_uniform_and_together_stay_labelled_not_certified() -> None:
    beam = trundle.Beam(spans=[15.0, 15.0])
    searched = LoadCase(trundle.Vehicle(loads=[10.0, 10.0], spacings=[(2.0, 6.0)]))
    fixed = LoadCase(trundle.Vehicle(loads=[10.0, 10.0], spacings=[4.0]))
    lane = LoadCase(trundle.UniformLoad(2.0))
    together = Together((fixed, lane))
    for case, exact_max in ((searched, False), (fixed, True), (lane, False), (together, False)):
        found = {e.which: e for e in absolute_extremes(beam, case, 0)}
        assert found["max"].certified is exact_max
        assert exact_absolute(case, "moment", "max") is exact_max
        # the least moment is at an end of the span for every downward load: always exact
        assert found["min"].certified


def test_minimum_is_at_a_span_end_even_where_the_sampled_search_agrees() -> None:
    # concavity of the moment along a span (downward loads only): the hogging extreme of a
    # two-span beam's first span sits over the middle support (common practice, no source)
    beam = trundle.Beam(spans=[15.0, 15.0])
    case = LoadCase(trundle.Vehicle(loads=[10.0, 10.0], spacings=[4.0]))
    (found,) = absolute_extremes(beam, case, 0, extremes=("min",))
    env = trundle.envelope(beam, [case], sections=[15.0], effects=("moment",))
    assert found.value == pytest.approx(env.min("moment")[0], rel=1e-12)
    assert found.x == 15.0


# --- the piece maximiser against numpy.roots ---------------------------------------------------


def test_quartic_maxima_against_numpy_roots() -> None:
    # reference: numpy.roots of the derivative (companion-matrix eigenvalues)
    rng = np.random.default_rng(3)
    polys = rng.normal(size=(400, 5)) * rng.choice([1.0, 1e-9, 0.0], size=(400, 5),
                                                    p=[0.7, 0.15, 0.15])
    values, where = quartic_maxima(polys)
    for p, v, s in zip(polys, values, where, strict=True):
        candidates = [0.0, 1.0]
        derivative = np.polyder(p)
        if np.any(derivative != 0):
            r = np.roots(np.trim_zeros(derivative, "f"))
            candidates += [float(z.real) for z in r if abs(z.imag) < 1e-9 and 0 < z.real < 1]
        reference = max(np.polyval(p, c) for c in candidates)
        assert v >= reference - 1e-12 * max(1.0, np.abs(p).sum())
        assert 0.0 <= s <= 1.0 and np.polyval(p, s) == pytest.approx(v, abs=1e-15)


# --- every output says which "anywhere" values are certified ------------------------------------

_MODEL = TRUCK_ON_TWO_SPANS


@pytest.mark.parametrize(("spacing", "certified"), [('"4.3 m"', True),
                                                     ('{ min = "4.3 m", max = "9.0 m" }', False)])
def test_outputs_mark_only_the_values_of_the_sampled_search(tmp_path, spacing, certified):
    import json

    from cli_helpers import run

    model = tmp_path / "truck.toml"
    model.write_text(_MODEL.replace("{spacing}", spacing))
    out = tmp_path / "out"
    # no figure files: the checks read the terminal, the JSON and the report, which draws its
    # own figures inline
    result = run("envelope", model, "--out", out, "--no-figure", "--full")
    assert result.exit_code == 0, result.output
    terminal = " ".join(result.output.split())
    html = " ".join((out / "report.html").read_text(encoding="utf-8").split())
    document = json.loads((out / "envelope.json").read_text(encoding="utf-8"))
    for span in document["spans"]:
        assert span["moment"]["max_anywhere"]["certified"] is certified
        assert span["moment"]["min_anywhere"]["certified"] is True  # at a span end: exact
    for text in (terminal, html):
        assert ("not certified" in text) is (not certified)
        assert "exact like the values at sections" in text


def test_a_job_beyond_the_size_limits_falls_back_labelled(monkeypatch) -> None:
    # bounded time and memory: beyond MAX_WORK the sampled search answers, marked as such
    from trundle.analysis import absolute_moment

    beam = trundle.Beam(spans=[10.0, 10.0])
    case = LoadCase(trundle.Vehicle(loads=[5.0, 5.0, 5.0], spacings=[2.0, 2.0]))
    (exact,) = absolute_extremes(beam, case, 0, extremes=("max",))
    monkeypatch.setattr(absolute_moment, "MAX_WORK", 1)
    (fallback,) = absolute_extremes(beam, case, 0, extremes=("max",))
    assert exact.certified and not fallback.certified
    assert fallback.value <= exact.value * (1 + 1e-9)


# --- deflection anywhere: branch and bound with a certificate --------------------------------


def test_deflection_of_one_load_on_a_simple_span() -> None:
    # PL³/(48 EI) at midspan (simple beam, concentrated load at centre: any handbook of beam
    # formulas, e.g. AISC Manual, Beam Diagrams and Formulas; from memory)
    P, L, EI = 100.0, 20.0, 1e5
    beam = trundle.Beam(spans=[L], EI=EI)
    found = {e.which: e for e in absolute_extremes(beam, LoadCase(trundle.Vehicle(loads=[P])),
                                                   0, "deflection")}
    assert found["max"].certified
    assert found["max"].value == pytest.approx(P * L**3 / (48 * EI), rel=1e-9)
    # no downward load lifts a simple span: the least deflection is 0 everywhere along it, a
    # flat stretch the bound cannot close on within its budget: honestly not certified
    assert found["min"].value == 0.0 and not found["min"].certified


def _resolved_deflection(beam: trundle.Beam, case: LoadCase, extreme) -> float:
    g = extreme.governing
    if g.case < 0:
        return 0.0
    L = beam.length
    axles = _axles_on_beam(L, case, g, case.service_multiplier)
    # trundle's fixed-load statics (exact diagrams, no influence line): a section a hair
    # from a node would cost the mesh-based reference solver its digits
    result = solve_static(beam, [PointLoad(p, P) for p, P in axles])
    return float(result.deflection(np.array([extreme.x]))[0])


@pytest.mark.parametrize("seed", range(4))
def test_random_deflection_against_dense_sections_and_static_solves(seed: int) -> None:
    rng = np.random.default_rng(300 + seed)
    beam = random_beam(rng, **SCAN_BEAMS)
    loads, spacings = random_axles(rng, beam, 1, 4)
    case = LoadCase(trundle.Vehicle(loads=loads, spacings=spacings,
                                    reversible=bool(rng.random() < 0.6)),
                    impact=0.25, factors=(("share", 0.8),), load_factor=1.5)
    for span in range(beam.n_spans):
        a, b = beam.support_positions[span], beam.support_positions[span + 1]
        xs = np.linspace(a, b, 2001)
        env = trundle.envelope(beam, [case], sections=xs, effects=("deflection",))
        scale = float(max(np.abs(env.max("deflection")).max(),
                          np.abs(env.min("deflection")).max(), 1e-300))
        for e in absolute_extremes(beam, case, span, "deflection"):
            sign = 1.0 if e.which == "max" else -1.0
            sampled = sign * (env.max("deflection") if e.which == "max"
                              else env.min("deflection"))
            # never below trundle's exact envelope at 2,001 sections
            assert sign * e.value >= sampled.max() - 1e-9 * scale
            if e.certified:
                # nor above it by more than the stated tolerance plus what a section between
                # two samples can add: checked on a fine grid around the best sample
                k = int(np.argmax(sampled))
                lo, hi = xs[max(k - 1, 0)], xs[min(k + 1, 2000)]
                nodes = [x for x in (*beam.hinges, *(s.x0 for s in beam.stiffness_segments))
                         if lo <= x <= hi]  # a hinge is a kink: the peak may sit on it
                fine = np.unique(np.concatenate([np.linspace(lo, hi, 201), nodes]))
                near = trundle.envelope(beam, [case], sections=fine, effects=("deflection",))
                best_near = (sign * (near.max("deflection") if e.which == "max"
                                     else near.min("deflection"))).max()
                assert sign * e.value <= max(best_near, sampled.max()) + 1e-7 * scale
            # the governing configuration solved statically (service level) gives the value
            assert _resolved_deflection(beam, case, e) == pytest.approx(
                e.value, rel=1e-9, abs=1e-9 * scale)
