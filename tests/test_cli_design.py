"""`trundle envelope` on models with design tables: every output (terminal, CSV, JSON, figures,
HTML) carries the design envelope and every case's own envelope; the rule that excluded a case
is named; a failing deflection check shows as failing everywhere; bad input is one line, exit 2.

The numbers come from the design workflow; here they are checked to reach the files unchanged
(against ``workflows.design_envelope.run`` on the same model)."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from cli_helpers import assert_one_line_error, read_csv, run
from conftest import design_run
from trundle.io.design_tables import read_design_model

ROOT = Path(__file__).resolve().parents[1]
DESIGN = ROOT / "examples" / "design"
OVERPASS = DESIGN / "alder_creek_overpass_hl93_us.toml"
FLOOR = DESIGN / "quarry_yard_floor_beam_si.toml"
EXAMPLES = sorted(DESIGN.glob("*.toml"))


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_every_design_example_writes_every_output(path: Path, bundled_run) -> None:
    result, out = bundled_run(path)  # the session's one run of the example (conftest)
    assert result.exit_code == 0, result.output + result.stderr
    text = " ".join(result.output.split())
    assert "Design envelope" in text and "Every live case's own envelope" in text
    assert "qualified engineer" in text and "verified against the edition in force" in text
    design = read_design_model(path)
    for combination in design.combinations:
        assert f"{combination.name}: design envelope" in text
        assert (out / f"design-{_stem(combination.name)}-moment.png").stat().st_size > 0
    header, rows = read_csv(out / "design-envelope.csv")
    assert header == ["combination_or_case", "kind", "x_or_support", "family", "which",
                      "value", "unit", "governing", "excluded_by_rule"]
    kinds = {r[1] for r in rows}
    assert kinds == {"design", "case"}
    data = json.loads((out / "envelope.json").read_text())["extra"]["Design envelope"]
    assert set(data["combinations"]) == {c.name for c in design.combinations}
    assert data["cases"]
    html = (out / "report.html").read_text()
    assert "Design envelope" in html and '<svg role="img" class="figure"' in html
    assert "every live case combined on its own" in html


def _stem(name: str) -> str:
    return "".join(c if c.isalnum() else "-" for c in name.lower()).strip("-")


def test_design_csv_carries_the_workflow_values_and_names_the_rule(tmp_path: Path) -> None:
    out = tmp_path / "out"
    assert run("envelope", OVERPASS, "--out", out, "--no-figure", "--no-report").exit_code == 0
    _, result = design_run(OVERPASS)  # the session's one design run of it (conftest)
    env = result.designs["bridge strength I"]
    _, rows = read_csv(out / "design-envelope.csv")
    by_key = {(r[0], r[1], r[2], r[3], r[4]): r for r in rows}
    for j, x in enumerate(result.sections):
        for which in ("max", "min"):
            row = by_key["bridge strength I", "design", format(float(x) + 0.0, ".12g"),
                         "moment", which]
            assert float(row[5]) == pytest.approx(env.values["moment", which][j], rel=1e-11,
                                                  abs=1e-9)
            assert row[7] == env.governing["moment", which][j]
    # the two-truck rule is restricted to negative moment: named where it is excluded
    sagging = [r for r in rows if r[0] == "hl93" and r[3] == "moment" and r[4] == "max"]
    assert all("90 % (two trucks + lane)" in r[8] and "negative moment" in r[8]
               for r in sagging)
    case = result.cases["hl93"]
    interior = np.flatnonzero(np.isclose(result.sections, 80.0))[0]
    assert case.governing["moment", "min"][interior]  # an alternative named over the pier


def test_a_failing_deflection_check_is_failing_in_every_output(tmp_path: Path) -> None:
    model = tmp_path / "strict.toml"
    model.write_text(FLOOR.read_text().replace('deflection_limit = "L/360"',
                                               'deflection_limit = "L/100000"'))
    out = tmp_path / "out"
    result = run("envelope", model, "--out", out, "--no-figure")
    assert result.exit_code == 0, result.stderr
    assert "EXCEEDS" in result.output and "FAILING CHECK" in result.output
    header, rows = read_csv(out / "design-deflection.csv")
    assert {r[header.index("verdict")] for r in rows} == {"EXCEEDS"}
    data = json.loads((out / "envelope.json").read_text())["extra"]["Design envelope"]
    assert {c["verdict"] for c in data["deflection_checks"]} == {"EXCEEDS"}
    assert "EXCEEDS" in (out / "report.html").read_text()


@pytest.mark.parametrize("old, new, fragments", [
    ('use = "building 1.4D"', 'use = "building 1.5D"', ("combination[0].use",)),
    ('uniform = "7.5 kN/m"\nplacement = "spans"', 'uniform = "7.5 kN/m"\nplacement = "some"',
     ("live_pattern[0].placement",)),
    ('category = "D"\npoint = "8 kN"', 'category = "Q"\npoint = "8 kN"', ("Q",)),
])
def test_bad_design_tables_are_one_line_errors(tmp_path: Path, old: str, new: str,
                                               fragments: tuple[str, ...]) -> None:
    model = tmp_path / "bad.toml"
    text = FLOOR.read_text()
    assert old in text
    model.write_text(text.replace(old, new))
    assert_one_line_error(run("envelope", model), *fragments)


def test_unknown_design_load_name_lists_the_valid_ones(tmp_path: Path) -> None:
    model = tmp_path / "bad.toml"
    model.write_text(OVERPASS.read_text().replace('use = "hl93"', 'use = "hl39"'))
    assert_one_line_error(run("envelope", model), "design_load[0].use", "hl93-truck",
                          "cooper-e80", 'did you mean "hl93"')


def test_negative_combination_factor_is_one_line(tmp_path: Path) -> None:
    model = tmp_path / "bad.toml"
    model.write_text(FLOOR.read_text().replace(
        '[[combination]]\nuse = "building 1.4D"',
        '[[combination]]\nname = "mine"\nfactors = { D = [1.2, -0.9], L = 1.6 }'))
    assert_one_line_error(run("envelope", model), "combination[0].factors")
