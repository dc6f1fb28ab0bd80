"""``trundle sweep`` shows every check of the model at every point, as ``trundle envelope``
makes it (a failing check is shown failing in every output); worst points of values that do
not change; the help's examples run; effect phrases get a "did you mean"."""

from __future__ import annotations

import json
import re
import shlex
from pathlib import Path

import numpy as np
import pytest

from cli_helpers import assert_one_line_error, read_csv, run
from test_sweep_cli import check_sweep_page
from trundle.io.modelfile import load_model
from trundle.io.sweeps import build_spec, model_at, sweep
from trundle.workflows.sweep import DEFAULT_EFFECTS, SweepAxis, SweepResult, SweepSpec

ROOT = Path(__file__).resolve().parents[1]
RUNWAY = ROOT / "examples" / "cranes" / "hall_kestrel_quay_si.toml"
FLOOR = ROOT / "examples" / "harbour_lane_floor_girder_si.toml"
CONVOY = ROOT / "examples" / "ferry_road_overpass_convoy_si.toml"
I_RANGE = "beam.I=40000:100000:60000 cm^4"  # 40000 and 100000 cm^4


def _envelope_of_file(path: Path) -> str:
    result = run("envelope", path)
    assert result.exit_code == 0, result.output + result.stderr
    return result.output


@pytest.fixture(scope="module")
def runway_sweep(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, str]:
    out = tmp_path_factory.mktemp("sweep") / "out"
    result = run("sweep", RUNWAY, "--vary", I_RANGE, "-e", "deflection max",
                 "-e", "moment max", "--out", out)
    assert result.exit_code == 0, result.output + result.stderr
    return out, result.output


def test_a_stiffness_sweep_shows_the_deflection_check_failing_where_it_fails(
        runway_sweep: tuple[Path, str], tmp_path: Path) -> None:
    """The runway with I = 40000 cm^4 deflects beyond span/600 (EXCEEDS), with 100000 cm^4
    within it (PASS); the sweep's verdicts and utilisations at each point are those of
    ``trundle envelope`` run on the model file with that I written in."""
    out, printed = runway_sweep
    flat = " ".join(printed.split())
    assert "checks: 1 of 2 points EXCEED (vertical deflection (spans 1, 2, 3, 4, 5, 6))" \
        in flat
    assert "EXCEEDS" in printed and "PASS" in printed
    header, rows = read_csv(out / "sweep.csv")
    checks = header.index("checks")
    assert [r[checks] for r in rows] == ["EXCEEDS", "PASS"]
    text = RUNWAY.read_text()
    assert 'I = "107200 cm^4"' in text
    for row, inertia in zip(rows, ("40000", "100000"), strict=True):
        written = tmp_path / f"runway_{inertia}.toml"
        written.write_text(text.replace('I = "107200 cm^4"', f'I = "{inertia} cm^4"'))
        shown = " ".join(_envelope_of_file(written).split())
        verdicts = [row[k] for k, h in enumerate(header) if h.endswith(": verdict")]
        failing = verdicts.count("EXCEEDS")
        if failing:
            assert f"checks: {failing} of {len(verdicts)} EXCEED" in shown
        else:
            assert f"checks: all {len(verdicts)} PASS" in shown
    # the utilisations are those of the runway analysis of the model with I written in
    from trundle.io.cranes import runway_spec
    from trundle.workflows.crane_runway import analyse_runway

    model = load_model(RUNWAY)
    spec = build_spec(model, [I_RANGE], ["deflection max"], check_points=False)
    for p, row in enumerate(rows):
        changed = model_at(model, spec.subject_at.ranges, (spec.axes[0].values[p],))
        runway = analyse_runway(changed.beam, runway_spec(changed), changed.sections)
        for c in runway.vertical_checks:
            k = header.index(f"vertical deflection, span {c.span + 1}: utilisation")
            assert float(row[k]) == pytest.approx(c.utilisation, rel=1e-9)
            assert row[k + 1] == c.verdict
    # an elastic deflection is inversely proportional to EI (any beam-deflection formula,
    # e.g. Roark's Formulas for Stress and Strain, 7th ed., ch. 8, from memory): the
    # utilisation at 40000 cm^4 is 100000/40000 times that at 100000 cm^4
    for span in range(1, 7):
        k = header.index(f"vertical deflection, span {span}: utilisation")
        assert float(rows[0][k]) == pytest.approx(2.5 * float(rows[1][k]), rel=1e-6)
    assert float(rows[0][header.index("vertical deflection, span 1: utilisation")]) > 1.0


def test_the_checks_reach_the_json_and_the_report_page(runway_sweep: tuple[Path, str]
                                                      ) -> None:
    out, _ = runway_sweep
    document = json.loads((out / "sweep.json").read_text())
    assert document["point_verdicts"] == ["EXCEEDS", "PASS"]
    assert document["points_exceeding"] == [0]
    names = [c["name"] for c in document["checks"]]
    assert len(names) == 24  # 6 vertical, 6 lateral, 2 cranes x 6 spans of fatigue
    vertical = document["checks"][names.index("vertical deflection, span 1")]
    assert vertical["verdict"] == ["EXCEEDS", "PASS"]
    assert vertical["utilisation"][0] > 1.0 >= vertical["utilisation"][1]
    page = (out / "sweep.html").read_text()
    checks = page.split("<h2>Checks at every point</h2>")[1].split("<h2>")[0]
    assert "1 of 2 points EXCEED" in checks
    assert checks.count("<td class='fail'>EXCEEDS</td>") == 6  # the six spans at 40000
    check_sweep_page(page, out / "sweep.csv", n_effects=2)
    every = page.split("<h2>Every point</h2>")[1]
    assert "<td class='fail'>EXCEEDS</td>" in every and "<td>PASS</td>" in every


def test_a_model_without_checks_says_so() -> None:
    result = sweep(FLOOR, {'load."pallet forklift".spacings[0]': "1.2:1.6:0.4 m"},
                   ["moment max span 2"])
    from trundle.report.sweep_section import check_summary

    assert result.check_names == () and result.point_verdict(0) is None
    assert check_summary(result).startswith("checks: none")


# ------------------------------------------------------------------------------------------
# worst of a value that does not change; ties


def _result(values: list[float], which: str = "max") -> SweepResult:
    from trundle.workflows.sweep import parse_effect

    n = len(values)
    spec = SweepSpec((SweepAxis("a", tuple(float(i) for i in range(n)), "m"),),
                     (parse_effect(f"moment {which}"),), lambda point: None)
    return SweepResult(spec, np.arange(n, dtype=float)[:, None],
                       np.array(values, dtype=float)[:, None], np.zeros((n, 1)),
                       -np.ones((n, 1), dtype=np.int64), tuple(("",) for _ in range(n)))


def test_equal_values_are_the_same_at_every_point_and_ties_go_to_the_first_point() -> None:
    noisy = [495.43265848, 495.43265848 * (1 + 3e-15), 495.43265848 * (1 - 2e-15)]
    assert _result(noisy).constant(0) and _result(noisy).worst(0) == 0
    assert _result(noisy, "min").worst(0) == 0
    assert _result([1.0, 2.0, 2.0 * (1 + 1e-14), 1.5]).worst(0) == 1
    assert not _result([1.0, 2.0, 2.0, 1.5]).constant(0)
    assert _result([3.0, -1.0, -1.0 * (1 + 1e-14)], "min").worst(0) == 1


def test_a_reaction_another_load_governs_is_the_same_at_every_point() -> None:
    result = sweep(CONVOY, {'load."crane carrier (one way)".spacings[1]': "3.0:4.0:0.5 m"},
                   ["reaction max support 1", "moment max span 2"])
    from trundle.report.sweep_section import summary_lines, worst_points

    assert result.constant(0) and not result.constant(1)
    (_, _, where0), (_, _, where1) = worst_points(result)
    assert where0 == "the same at every point" and where1.endswith("= 3 m")
    assert any(line.endswith(", the same at every point") for line in summary_lines(result))


# ------------------------------------------------------------------------------------------
# the help's examples


def _help_examples() -> list[list[str]]:
    result = run("sweep", "--help")
    assert result.exit_code == 0
    text = result.output.split("Examples:")[1].split("\n\n")[0]
    commands, current = [], ""
    for line in text.splitlines():
        line = line.strip()
        current += " " + line.rstrip("\\").strip()
        if not line.endswith("\\"):
            commands.append(shlex.split(current))
            current = ""
    return [c for c in commands if c]


def test_every_example_of_the_help_is_a_sound_sweep_that_runs(tmp_path: Path,
                                                              monkeypatch) -> None:
    """Each example's paths and ranges read at every value (the model read again there), and
    none moves a span of a model whose hinges or positions stay where written (the help once
    swept a span of the hinged runway: every other point a different structure). The
    examples on the floor girder run in full."""
    monkeypatch.chdir(ROOT)
    examples = _help_examples()
    assert len(examples) >= 3
    for words in examples:
        assert words[:2] == ["trundle", "sweep"]
        args = words[2:]
        model = load_model(ROOT / args[0])
        vary = [args[i + 1] for i, a in enumerate(args) if a == "--vary"]
        effects = [args[i + 1] for i, a in enumerate(args) if a in ("--effect", "-e")]
        if vary:
            spec = build_spec(model, vary, effects or DEFAULT_EFFECTS)
            assert spec.notes == (), (words, spec.notes)
        if args[0].endswith("harbour_lane_floor_girder_si.toml"):
            if "--out" in args:
                args[args.index("--out") + 1] = str(tmp_path / "results")
            result = run("sweep", *args)
            assert result.exit_code == 0, (words, result.output + result.stderr)


# ------------------------------------------------------------------------------------------
# headings and misspelt effects


def test_terminal_headings_say_whose_load_each_column_is(monkeypatch) -> None:
    monkeypatch.setenv("COLUMNS", "80")
    result = run("sweep", FLOOR, "--vary", 'load."pallet forklift".spacings[0]=1.2:1.6:0.4 m',
                 "-e", "moment max span 2", "-e", "reaction max support 1")
    assert result.exit_code == 0, result.output + result.stderr
    assert "(1) load" in result.output and "(2) load" in result.output
    assert not re.search(r"┃ load ", result.output)
    assert max(len(line) for line in result.output.splitlines()) <= 80


@pytest.mark.parametrize(("effect", "hint"), [
    ("momnet", '"moment max" or "moment min"'),
    ("momnet max", '"moment max"'),
    ("moment mx span 2", '"moment max span 2"'),
    ("cranes reacton max support 1", '"cranes reaction max support 1"'),
    ("max moment spn 2", '"span"'),
])
def test_a_misspelt_effect_gets_the_closest_valid_names(effect: str, hint: str) -> None:
    result = run("sweep", FLOOR, "--vary", 'load."pallet forklift".spacings[0]=1.2:1.6:0.4 m',
                 "--effect", effect)
    assert_one_line_error(result, "--effect", "did you mean", hint)


def test_the_live_load_deflection_limit_of_design_tables_is_checked_at_each_point() -> None:
    """A model with design tables: the sweep's subject carries them, and its checks are the
    design workflow's live-load deflection checks (the same utilisations and verdicts, the
    verdict that of analysis.checks)."""
    from trundle.analysis.checks import verdict
    from trundle.io.design_tables import design_model_of, design_spec_of
    from trundle.io.sweeps import subject_of
    from trundle.workflows import design_envelope
    from trundle.workflows.sweep import checks_of

    model = load_model(ROOT / "examples" / "design" / "quarry_yard_floor_beam_si.toml")
    found = checks_of(subject_of(model))
    expected = design_envelope.run(design_spec_of(design_model_of(model))).deflection
    assert len(found) == len(expected) == model.beam.n_spans
    for c, d in zip(found, expected, strict=True):
        assert c.name == f"live-load deflection, span {d.span + 1}"
        assert c.utilisation == pytest.approx(d.utilisation, rel=1e-12)
        assert c.verdict == d.verdict == verdict(c.utilisation)
