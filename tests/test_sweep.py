"""What-if sweeps: each point equals the envelope computed directly for that model; the worst
point of a fine sweep agrees with the engine's searched spacing; closed forms; reuse.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

import trundle
from trundle.io.cranes import runway_spec
from trundle.io.modelfile import load_model, read_model
from trundle.io.sweeps import build_spec, sweep
from trundle.workflows.crane_runway import analyse_runway
from trundle.workflows.sweep import NOT_CERTIFIED, SweepError, parse_effect, run

ROOT = Path(__file__).resolve().parents[1]
SPANS = [24.0, 30.0, 24.0]

# An invented three-span girder with a three-axle vehicle (one spacing searched) and a lane.
THREE_SPAN = """
title = "Sweep test girder (invented)"
units = "SI"

[beam]
spans = [24.0, 30.0, 24.0]
supports = ["pin", "pin", "pin", "pin"]
EI = 1.0

[[load]]
name = "truck"
axles = [35.0, 145.0, 145.0]
spacings = [4.3, SPACING]

[[load]]
name = "lane"
uniform = 9.3
"""

EFFECTS = ("moment max span 2", "moment min", "reaction max support 1", "reaction min",
           "shear max span 1", "shear min at 24", "deflection max span 3")


def _direct(spacing: float) -> trundle.Envelope:
    """The envelope for one spacing, built from Python objects (not from the model file)."""
    beam = trundle.Beam(SPANS)
    loads = [trundle.Vehicle([35.0, 145.0, 145.0], [4.3, spacing], name="truck"),
             trundle.UniformLoad(9.3, name="lane")]
    return trundle.envelope(beam, loads, sections=beam.tenth_points())


def _span_rows(x: np.ndarray, span: int) -> np.ndarray:
    ends = np.concatenate([[0.0], np.cumsum(SPANS)])
    return np.flatnonzero((x >= ends[span - 1] - 1e-9) & (x <= ends[span] + 1e-9))


def test_each_point_is_the_envelope_computed_directly_for_that_spacing() -> None:
    model = read_model(THREE_SPAN.replace("SPACING", "{ min = 4.3, max = 9.0 }"))
    result = sweep(model, {"load.truck.spacings[1]": "4.3:9.0:0.5"}, EFFECTS)
    assert result.points[:, 0] == pytest.approx([4.3 + 0.5 * k for k in range(10)] + [9.0])
    x = trundle.Beam(SPANS).tenth_points()
    ends = np.concatenate([[0.0], np.cumsum(SPANS)])
    for p, spacing in enumerate(result.points[:, 0]):
        env = _direct(float(spacing))
        in_span1 = _span_rows(x, 1)
        expected = [
            env.max("moment")[_span_rows(x, 2)].max(),
            env.min("moment").min(),
            env.max("reaction")[1],
            np.nanmin(env.min("reaction")),
            max(env.max("shear", "right")[in_span1[x[in_span1] < ends[1] - 1e-9]].max(),
                env.max("shear", "left")[in_span1[x[in_span1] > 1e-9]].max()),
            min(env.min("shear", "left")[x == 24.0][0], env.min("shear", "right")[x == 24.0][0]),
            env.max("deflection")[_span_rows(x, 3)].max(),
        ]
        np.testing.assert_allclose(result.values[p], expected, rtol=1e-12, atol=1e-12)


def test_the_worst_point_of_a_fine_sweep_agrees_with_the_searched_spacing() -> None:
    # hogging moment over the first pier under two equal axles whose spacing is searched from
    # 12 to 30 m: the worst spacing puts one axle in each span next to the pier, inside the
    # range (about 22 m), not at an end of it
    text = THREE_SPAN.replace('[35.0, 145.0, 145.0]', '[150.0, 150.0]').replace(
        "[4.3, SPACING]", "[SPACING]")
    text = text[: text.index('[[load]]\nname = "lane"')]  # the vehicle alone
    searched = read_model(text.replace("SPACING", "{ min = 12.0, max = 30.0 }"))
    engine = trundle.envelope(searched.beam, [searched.tables["load"][0].case],
                              sections=[24.0], effects=("moment",))
    g = engine.governing("moment", "min")[0]
    assert 15.0 < g.searched[0] < 29.0  # an interior optimum: the check below means something
    step = 0.25
    result = sweep(searched, {"load.truck.spacings[0]": f"12:30:{step}"},
                   ["loads moment min at 24"])
    worst = result.worst(0)
    assert abs(result.points[worst, 0] - g.searched[0]) <= step
    # the engine's extreme is certified over the whole range: no sweep point is worse ...
    assert result.values[:, 0].min() >= g.value - 1e-9 * abs(g.value)
    # ... and the sweep's best point is within one step's worth of it: a finer sweep around
    # the best point closes the gap
    fine = sweep(searched, {"load.truck.spacings[0]":
                            f"{result.points[worst, 0] - step}:"
                            f"{result.points[worst, 0] + step}:0.001"},
                 ["moment min at 24"])
    assert fine.values[:, 0].min() >= g.value - 1e-9 * abs(g.value)
    assert fine.values[:, 0].min() - g.value <= 1e-4 * abs(g.value)
    assert fine.values[:, 0].min() <= result.values[worst, 0]


@pytest.mark.parametrize("a", [2.0, 4.0, 8.0])
def test_closed_form_two_equal_moving_loads_on_a_simple_span(a: float) -> None:
    # AISC Steel Construction Manual, "Beam Diagrams and Formulas", simple beam, two equal
    # concentrated moving loads (from memory): M_max = P/(2L)·(L − a/2)² for a < 0.586 L,
    # anywhere in the span; largest end reaction R = P(2 − a/L)
    L, P = 20.0, 10.0
    model = read_model(f"""
units = "SI"
[beam]
spans = [{L}]
supports = ["pin", "pin"]
EI = 1.0
[[load]]
name = "pair"
axles = [{P}, {P}]
spacings = [1.0]
""")
    result = sweep(model, {"load.pair.spacings[0]": f"{a}:{a + 1.0}:1.0"},
                   ["moment max span 1 anywhere", "reaction max support 0"])
    for p, spacing in enumerate(result.points[:, 0]):
        expected_moment = P / (2 * L) * (L - spacing / 2) ** 2
        assert result.values[p, 0] == pytest.approx(expected_moment, rel=1e-7)
        assert result.values[p, 1] == pytest.approx(P * (2 - spacing / L), rel=1e-12)
        # where: under one load, a/4 from midspan (either side by symmetry)
        assert min(abs(result.x[p, 0] - (L / 2 - spacing / 4)),
                   abs(result.x[p, 0] - (L / 2 + spacing / 4))) < 1e-4 * L
        # a fixed pair of loads: the exact method answers, nothing is marked
        assert NOT_CERTIFIED not in result.load[p][0]


def test_an_anywhere_value_of_the_sampled_search_is_marked_in_every_output(tmp_path) -> None:
    """A searched spacing: the worst section of the span comes from the sampled search (no
    exact method yet), so its load carries the mark into the table, the CSV, the JSON and
    the terminal's worst line (the mark itself is ours; no source)."""
    model = read_model("""
units = "SI"
[beam]
spans = [20.0]
supports = ["pin", "pin"]
EI = 1e5
[[load]]
name = "triple"
axles = [10.0, 10.0, 10.0]
spacings = [1.0, { min = "1 m", max = "4 m" }]
""")
    result = sweep(model, {"load.triple.spacings[0]": "1:2:1"}, ["moment max span 1 anywhere"])
    assert all(NOT_CERTIFIED in result.load[p][0] for p in range(len(result.points)))
    # the mark reaches every output
    from trundle.report.sweep_section import summary_lines, sweep_csv, sweep_json
    assert NOT_CERTIFIED in sweep_csv(result) and NOT_CERTIFIED in sweep_json(result)
    assert any(NOT_CERTIFIED in line for line in summary_lines(result))


def test_load_sweeps_reuse_the_lines_and_span_sweeps_rebuild_them() -> None:
    model = read_model(THREE_SPAN.replace("SPACING", "6.0"))
    loads_only = sweep(model, {"load.truck.axles[1]": "100:160:20 kN"},
                       ["moment max span 2", "reaction max support 1"])
    assert loads_only.reused_lines == len(loads_only.points) - 1
    spans = sweep(model, {"beam.spans[1]": "28:32:2 m"}, ["moment max span 2"])
    assert spans.reused_lines == 0
    for p, span in enumerate(spans.points[:, 0]):
        beam = trundle.Beam([24.0, float(span), 24.0])
        env = trundle.envelope(beam, [trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 6.0]),
                                      trundle.UniformLoad(9.3)], sections=beam.tenth_points())
        ends = beam.support_positions
        rows = (beam.tenth_points() >= ends[1] - 1e-9) & (beam.tenth_points() <= ends[2] + 1e-9)
        assert spans.values[p, 0] == pytest.approx(env.max("moment")[rows].max(), rel=1e-12)


def test_two_parameters_make_a_grid_with_the_first_varying_slowest() -> None:
    model = read_model(THREE_SPAN.replace("SPACING", "6.0"))
    both = sweep(model, ["load.truck.axles[1]=100:140:20 kN", "load.lane.uniform=8.3:10.3:1"],
                 ["reaction max support 1"])
    assert both.shape == (3, 3) and both.points.shape == (9, 2)
    assert list(both.points[:3, 0]) == [100.0, 100.0, 100.0]
    assert list(both.points[:3, 1]) == pytest.approx([8.3, 9.3, 10.3])
    beam = trundle.Beam(SPANS)
    for i, axle in enumerate([100.0, 120.0, 140.0]):
        for j, w in enumerate([8.3, 9.3, 10.3]):
            env = trundle.envelope(beam, [trundle.Vehicle([35.0, axle, 145.0], [4.3, 6.0]),
                                          trundle.UniformLoad(w)], effects=("reaction",))
            assert both.grid(0)[i, j] == pytest.approx(env.max("reaction")[1], rel=1e-12)
    # the lane at the model's own value: the column equals a one-parameter sweep
    one = sweep(model, ["load.truck.axles[1]=100:140:20 kN"], ["reaction max support 1"])
    np.testing.assert_allclose(one.values[:, 0], both.grid(0)[:, 1], rtol=1e-12)


def test_a_pin_support_made_elastic_matches_a_spring_beam() -> None:
    model = read_model(THREE_SPAN.replace("SPACING", "6.0"))
    result = sweep(model, {"beam.supports[1].spring": "1000:3000:1000 kN/m"},
                   ["reaction max support 2"])
    for p, k in enumerate(result.points[:, 0]):
        beam = trundle.Beam(SPANS, supports=["pin", trundle.Spring(float(k)), "pin", "pin"])
        env = trundle.envelope(beam, [trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 6.0]),
                                      trundle.UniformLoad(9.3)], effects=("reaction",))
        assert result.values[p, 0] == pytest.approx(env.max("reaction")[2], rel=1e-12)


def test_crane_wheel_spacing_sweep_equals_the_runway_analysis() -> None:
    path = ROOT / "examples" / "cranes" / "hall_kestrel_quay_si.toml"
    model = load_model(path)
    vary = {'crane."20 t process crane".wheel_spacings[0]': "3.5:4.5:1.0"}
    result = sweep(model, vary, ["reaction max support 1", "deflection max"])
    text = path.read_text()
    for p, spacing in enumerate(result.points[:, 0]):
        changed = read_model(text.replace('wheel_spacings = ["4.0 m"]',
                                          f'wheel_spacings = ["{spacing} m"]'))
        runway = analyse_runway(changed.beam, runway_spec(changed), changed.sections)
        assert result.values[p, 0] == pytest.approx(runway.strength.max("reaction")[1],
                                                    rel=1e-12)
        assert result.values[p, 1] == pytest.approx(np.nanmax(runway.service.max("deflection")),
                                                    rel=1e-12)


def test_progress_is_reported_after_each_point() -> None:
    model = read_model(THREE_SPAN.replace("SPACING", "6.0"))
    seen: list[tuple[int, int]] = []
    spec = build_spec(model, {"load.truck.spacings[1]": "5:7:1"}, ["reaction max"])
    run(spec, lambda done, total: seen.append((done, total)))
    assert seen == [(1, 3), (2, 3), (3, 3)]


def test_the_python_entry_point() -> None:
    result = trundle.sweep(ROOT / "examples" / "harbour_lane_floor_girder_si.toml",
                           ['load."pallet forklift".spacings[0]=1.2:1.8:0.3 m'],
                           ["moment max span 2"])
    assert result.values.shape == (3, 1)
    assert all(math.isfinite(v) for v in result.values[:, 0])


@pytest.mark.parametrize(("effect", "fragment"), [
    ("moment", "KIND WHICH"),
    ("torque max", "KIND WHICH"),
    ("moment max span", "span number"),
    ("moment max span 0", "span number"),
    ("moment max span 2 somewhere", "anywhere"),
    ("shear max span 1 anywhere", "moment and deflection"),
    ("reaction max span 1", "support K"),
    ("moment max support 1", "span N"),
    ("moment max at", "position"),
    ("moment max near 3", "found \"near\""),
])
def test_bad_effects_are_one_line_errors(effect: str, fragment: str) -> None:
    with pytest.raises(SweepError) as caught:
        parse_effect(effect)
    assert fragment in str(caught.value) and "\n" not in str(caught.value)


@pytest.mark.parametrize(("effect", "fragment"), [
    ("moment max span 4", "span number 1 to 3"),
    ("reaction max support 9", "one of the supports"),
    ("support_moment max", "found none"),
    ("moment max at 200 m", "position on the beam"),
    ("cranes reaction max", "[[crane]]"),
])
def test_effects_the_model_cannot_give_are_refused_before_running(effect: str,
                                                                   fragment: str) -> None:
    model = read_model(THREE_SPAN.replace("SPACING", "6.0"))
    with pytest.raises(SweepError) as caught:
        build_spec(model, {"load.truck.spacings[1]": "5:7:1"}, [effect])
    assert fragment in str(caught.value)


def test_a_value_the_model_refuses_names_the_point_and_the_key() -> None:
    model = read_model(THREE_SPAN.replace("SPACING", "6.0"))
    with pytest.raises(SweepError) as caught:
        build_spec(model, {"load.truck.axles[1]": "-10:10:10"}, ["reaction max"])
    message = str(caught.value)
    assert "load.truck.axles[1] = -10 kN" in message and "load[0].axles[1]" in message


def test_modulus_sweep_in_us_units_scales_deflection_only() -> None:
    # one modulus for the whole beam: the moments of an indeterminate beam do not depend on
    # its value and the deflections are inversely proportional to it (linear elasticity;
    # common practice, no source)
    path = ROOT / "examples" / "millrace_access_bridge_us.toml"
    result = sweep(path, {"beam.E": "14500:29000:14500 ksi"},
                   ["moment min at 30 ft", "deflection max span 1", "reaction max support 1"])
    assert parse_effect("Moment MIN at 30 FT").at == "30 FT"  # units keep their case
    half, full = result.values
    assert half[0] == pytest.approx(full[0], rel=1e-9)
    assert half[2] == pytest.approx(full[2], rel=1e-9)
    assert half[1] == pytest.approx(2.0 * full[1], rel=1e-9)


def test_a_span_sweep_says_that_positions_written_in_the_file_stay_put() -> None:
    path = ROOT / "examples" / "cranes" / "hall_kestrel_quay_si.toml"
    spec = build_spec(load_model(path), {"beam.spans[1]": "7.5:7.5:1"}, ["reaction max"])
    assert len(spec.notes) == 1 and "hinges" in spec.notes[0]
    plain = read_model(THREE_SPAN.replace("SPACING", "6.0"))
    assert build_spec(plain, {"beam.spans[1]": "28:30:2"}, ["reaction max"]).notes == ()
    assert build_spec(plain, {"load.truck.spacings[1]": "5:6:1"}, ["reaction max"]).notes == ()


def test_the_readme_scripting_example_runs_and_prints_what_the_readme_shows(capsys) -> None:
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    after = readme.split("A plain loop does the same job in ten lines", 1)[1]
    code = after.split("```python\n", 1)[1].split("```", 1)[0]
    shown = after.split("```\n", 2)[1].split("```", 1)[0]
    assert len([line for line in code.splitlines() if line.strip()]) <= 10
    exec(compile(code, "README.md", "exec"), {})  # noqa: S102 - the README's own example
    printed = capsys.readouterr().out.splitlines()
    for line in shown.splitlines():
        if line.strip() and line.strip() != "…":
            assert line in printed
    # and the loop agrees with a sweep of the same spacing (the README says they do the
    # same job)
    model = read_model(THREE_SPAN.replace("SPACING", "4.3"))
    result = sweep(model, {"load.truck.spacings[1]": "4.3:9:0.7 m"}, ["reaction max support 1"])
    assert result.values[0, 0] == pytest.approx(318.8, abs=0.05)


def test_what_is_kept_with_the_lines_equals_what_is_computed_afresh() -> None:
    # a sweep of load numbers reuses the lines and, with them, a placed uniform load's areas
    # and ordinates: each later envelope must equal one computed from nothing
    from trundle.analysis import envelope as envelope_module

    beam = trundle.Beam(SPANS)
    loads = [trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 6.0], name="truck"),
             trundle.UniformLoad(9.3, point_load=80.0, name="lane")]
    envelope_module._PREPARED.clear()
    fresh = trundle.envelope(beam, loads)
    again = trundle.envelope(trundle.Beam(SPANS), loads[::-1])  # lines, areas reused
    for kind in ("moment", "deflection", "reaction"):
        np.testing.assert_array_equal(fresh.max(kind), again.max(kind))
        np.testing.assert_array_equal(fresh.min(kind), again.min(kind))
    batch = envelope_module._prepared_lines(beam, beam.tenth_points(),
                                            envelope_module.REQUESTABLE)[-1]
    kept = envelope_module._MEMO[batch]
    assert set(kept) == {"signed areas", "ordinate extremes"}
    assert not kept["signed areas"][0].flags.writeable  # shared: nobody may change it
