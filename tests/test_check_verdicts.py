"""Every check's verdict is decided once (trundle.analysis.checks) and every output shows it.

A runway made to fail each check (vertical and lateral deflection limits far tighter than any
guide's, a poor fatigue detail on a small section modulus) must show EXCEEDS for each check in
the terminal, in the CSV files, in the JSON document and in the HTML report — and a passing
check shows PASS. The limits are invented to make the checks fail; only the rule "utilisation
> 1 is a failure" is asserted (common practice, no source).
"""

from __future__ import annotations

import csv
import json
import math
import re

import pytest

from cli_helpers import run
from trundle.analysis.checks import EXCEEDS, PASS, DeflectionCheck, FatigueSection, verdict

FAILING_RUNWAY = """units = "SI"
title = "Invented runway that fails every check"
[beam]
spans = ["7.5 m"]
supports = ["pin", "pin"]
E = "210 GPa"
I = "30000 cm^4"
[[crane]]
name = "test crane"
capacity = "20 t"
bridge_weight = "16 t"
trolley_weight = "5.5 t"
span = "21 m"
hook_approach = "1.2 m"
wheel_spacings = ["4 m"]
operation = "cab"
[runway]
service_class = "C"
lateral_I = "2000 cm^4"
vertical_limit = "L/20000"
lateral_limit = "L/20000"
section_modulus = "300 cm^3"
detail_category = "E'"
"""
CHECKS = ("vertical", "lateral", "fatigue")


def test_the_verdict_rule():
    assert verdict(0.0) == PASS and verdict(1.0) == PASS
    assert verdict(1.0 + 1e-12) == EXCEEDS and verdict(1.148) == EXCEEDS
    assert verdict(math.inf) == EXCEEDS and verdict(math.nan) == EXCEEDS  # never a silent pass


def test_the_check_records_carry_the_verdict():
    failing = DeflectionCheck.of(0, 6.0, 0.02, 3.0, "crane", 600.0)
    assert failing.limit == pytest.approx(0.01) and failing.utilisation == pytest.approx(2.0)
    assert failing.verdict == EXCEEDS
    assert DeflectionCheck.of(0, 6.0, -0.02, 3.0, "lane", 600.0).verdict == EXCEEDS  # upward
    assert DeflectionCheck.of(0, 6.0, 0.01, 3.0, "lane", 600.0).verdict == PASS  # at the limit
    fatigue = FatigueSection(1.0, "crane", 10.0, ((10.0, 1.0),), 1.148, 1.148, 1.0,
                             "threshold")
    assert fatigue.utilisation == pytest.approx(1.148) and fatigue.verdict == EXCEEDS
    assert FatigueSection(1.0, "crane", 10.0, ()).verdict is None  # no detail: no check


@pytest.fixture(scope="module")
def failing(tmp_path_factory):
    folder = tmp_path_factory.mktemp("failing")
    model = folder / "failing.toml"
    model.write_text(FAILING_RUNWAY)
    out = folder / "out"
    result = run("envelope", model, "--out", out, "--no-figure")
    assert result.exit_code == 0, result.output + result.stderr
    return result.output, out


def _csv_rows(path):
    lines = [line for line in path.read_text().splitlines() if not line.startswith("#")]
    return list(csv.DictReader(lines))


@pytest.fixture(scope="module")
def failing_full(failing, tmp_path_factory):
    folder = tmp_path_factory.mktemp("failing-full")
    model = folder / "failing.toml"
    model.write_text(FAILING_RUNWAY)
    result = run("envelope", model, "--full")
    assert result.exit_code == 0, result.output + result.stderr
    return result.output


@pytest.mark.parametrize("check", CHECKS)
def test_a_failing_check_shows_in_the_terminal(failing, failing_full, check):
    # the default view (compact tables) and the full tables (framed)
    short = {"vertical": r"^\s*\d+\s+vertical\s", "lateral": r"^\s*\d+\s+lateral \(±\)",
             "fatigue": r"(finite life|threshold)\s+[0-9.]+\s"}
    framed = {"vertical": r"│\s+\d+ │ vertical ", "lateral": r"│\s+\d+ │ lateral \(±\)",
              "fatigue": r"│ (finite life|threshold) +│ +[0-9.]+ │"}
    for output, row_of in ((failing[0], short[check]), (failing_full, framed[check])):
        rows = [line for line in output.splitlines() if re.search(row_of, line)]
        assert rows, output
        assert all(EXCEEDS in row for row in rows), rows
    assert "checks: 3 of 3 EXCEED" in failing[0] and "checks: 3 of 3 EXCEED" in failing_full


@pytest.mark.parametrize("check", CHECKS)
def test_a_failing_check_shows_in_the_csv(failing, check):
    _, out = failing
    if check == "fatigue":
        rows = _csv_rows(out / "runway-fatigue.csv")
        rows = [r for r in rows if r["utilisation"]]
    else:
        rows = [r for r in _csv_rows(out / "runway-deflection.csv")
                if r["direction"].startswith(check)]
    assert rows
    for row in rows:
        utilisation = float(row["utilisation"]) if row["utilisation"] else math.inf
        assert row["verdict"] == (EXCEEDS if utilisation > 1.0 else PASS), row
    assert any(row["verdict"] == EXCEEDS for row in rows)


@pytest.mark.parametrize("check", CHECKS)
def test_a_failing_check_shows_in_the_json(failing, check):
    _, out = failing
    crane = json.loads((out / "envelope.json").read_text())["extra"]["Crane runway"]
    key = {"vertical": "vertical_deflection", "lateral": "lateral_deflection",
           "fatigue": "fatigue"}[check]
    items = [item for item in crane[key] if item.get("verdict") is not None]
    assert items
    for item in items:
        utilisation = math.inf if item["utilisation"] is None else item["utilisation"]
        assert item["verdict"] == (EXCEEDS if utilisation > 1.0 else PASS), item
    assert any(item["verdict"] == EXCEEDS for item in items)


@pytest.mark.parametrize("check", CHECKS)
def test_a_failing_check_shows_in_the_html(failing, check):
    _, out = failing
    html = (out / "report.html").read_text()
    rows = re.findall(r"<tr[^>]*>(.*?)</tr>", html, flags=re.S)
    cells = [re.findall(r"<t[dh][^>]*>(.*?)</t[dh]>", row, flags=re.S) for row in rows]
    if check == "fatigue":
        found = [c for c in cells if "finite life" in c or "threshold" in c]
    else:
        word = {"vertical": "vertical", "lateral": "lateral (±)"}[check]
        found = [c for c in cells if word in c]
    assert found, html[:2000]
    for row in found:  # the verdict cell follows the utilisation cell
        index = next(i for i, cell in enumerate(row) if cell in (PASS, EXCEEDS))
        assert row[index] == (EXCEEDS if float(row[index - 1]) > 1.0 else PASS), row
    assert any(EXCEEDS in row for row in found)


def test_a_passing_check_shows_pass_everywhere(tmp_path):
    model = tmp_path / "passing.toml"
    model.write_text(FAILING_RUNWAY.replace('"L/20000"', '"L/10"'))
    out = tmp_path / "out"
    result = run("envelope", model, "--out", out, "--no-figure")
    assert result.exit_code == 0
    vertical = [r for r in _csv_rows(out / "runway-deflection.csv")
                if r["direction"] == "vertical"]
    assert vertical and all(r["verdict"] == PASS for r in vertical)
    assert any(re.search(r"^\s*\d+\s+vertical\s", line) and PASS in line
               for line in result.output.splitlines())
    crane = json.loads((out / "envelope.json").read_text())["extra"]["Crane runway"]
    assert all(item["verdict"] == PASS for item in crane["vertical_deflection"])


def test_every_csv_names_the_model_file_its_hash_and_the_version(failing):
    import hashlib

    import trundle

    _, out = failing
    digest = hashlib.sha256((out.parent / "failing.toml").read_bytes()).hexdigest()
    csvs = sorted(out.glob("*.csv"))
    assert len(csvs) == 4
    for path in csvs:
        first = path.read_text().splitlines()[0]
        assert first.startswith(f"# trundle {trundle.__version__};"), path.name
        assert "failing.toml" in first and digest in first, path.name
