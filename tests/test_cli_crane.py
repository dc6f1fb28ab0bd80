"""``trundle envelope`` on crane runways: the files written, the numbers printed and written
equal analyse_runway's for the same model, the report carries the crane summary and the
cautions, bad crane files give one line and write nothing.

The crane examples run once per session (conftest.bundled_run, shared with the report tests;
analyse_runway takes seconds for two cranes).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest

from cli_helpers import assert_one_line_error, column, expected_key, read_csv, run
from trundle.io.cranes import cranes_of, runway_spec
from trundle.io.modelfile import load_model
from trundle.io.output_set import MANIFEST
from trundle.workflows.crane_runway import RunwayResult, analyse_runway, lateral_extremes

ROOT = Path(__file__).resolve().parents[1]
SI_HALL = ROOT / "examples" / "cranes" / "hall_kestrel_quay_si.toml"
US_HALL = ROOT / "examples" / "cranes" / "hall_sawtooth_creek_us.toml"
BAD_CRANES = sorted((Path(__file__).parent / "bad_models").glob("crane_*.toml"))
CRANE_FILES = {"envelope.json", "report.html", "runway-reactions.csv", "runway-sections.csv",
               "runway-deflection.csv", "runway-fatigue.csv", "runway-reactions.png",
               "runway-vertical.png", "runway-lateral.png", "runway-positions.png"}
TITLE = "Crane runway"
# Source: NIST Special Publication 811 (2008 edition), Appendix B.8: 1 ft = 12 in exactly;
# 1 MPa = 1000 kN/m²; standard gravity g_n = 9.806 65 m/s² (conventional value).
G_N = 9.80665


def library_runway(path: Path) -> RunwayResult:
    """The runway analysed directly with the library, for comparison with the files."""
    model = load_model(path)
    return analyse_runway(model.beam, runway_spec(model), sections=model.sections)


@pytest.fixture(scope="module")
def si(bundled_run):
    return *bundled_run(SI_HALL), library_runway(SI_HALL)  # the session's one CLI run


@pytest.fixture(scope="module")
def us(bundled_run):
    return *bundled_run(US_HALL), library_runway(US_HALL)


# --- the files ----------------------------------------------------------------------------


@pytest.mark.parametrize("which", ["si", "us"])
def test_crane_examples_write_every_file(which, request):
    result, out, _ = request.getfixturevalue(which)
    assert result.exit_code == 0, result.stderr
    # a crane-only model has no [[load]] envelope: no envelope.csv or reactions.csv
    assert {p.name for p in out.iterdir()} == CRANE_FILES | {MANIFEST}
    for name in CRANE_FILES:
        if name.endswith(".png"):
            assert (out / name).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert not [p for p in out.iterdir() if p.name.endswith(".part")]


def test_reactions_csv_equals_the_library(si):
    _, out, runway = si
    header, body = read_csv(out / "runway-reactions.csv")
    assert [row[0] for row in body] == [str(k) for k in range(7)]
    checks = {
        "reaction max with impact [kN]": runway.strength.max("reaction"),
        "reaction min with impact [kN]": runway.strength.min("reaction"),
        "reaction max without impact [kN]": runway.service.max("reaction"),
        "reaction min without impact [kN]": runway.service.min("reaction"),
    }
    for name, expected in checks.items():
        np.testing.assert_allclose(column(header, body, name), expected, rtol=1e-11,
                                   atol=1e-9, err_msg=name)
    names = [c.name for c in runway.strength.cases]
    governing = runway.strength.governing("reaction", "max")
    index = header.index("reaction max with impact: combination")
    assert [row[index] for row in body] == [names[g.case] for g in governing]


def test_interior_reaction_of_the_simple_spans_by_hand(si):
    # Chain of simple 7.5 m spans: the interior reaction's influence line is a triangle of
    # height 1 over the two adjacent spans (by hand, common practice, no source). The worst
    # places the rear wheel of the 20 t crane on the support, its front wheel 4.0 m on one
    # side and the 10 t crane with buffers touching on the other: the clear gap is the sum of
    # the end distances, (5.0 - 4.0)/2 + (3.8 - 3.2)/2 = 0.8 m, and the 10 t wheels stand
    # 0.8 m and 0.8 + 3.2 = 4.0 m from the support.
    _, out, _ = si
    L = 7.5
    wheel_20 = (0.5 * 16 + 25.5 * (21 - 1.2) / 21) * G_N / 2 * 1.25  # kN with 25 % impact
    wheel_10 = (0.5 * 7.5 + 11.2 * (21 - 1.0) / 21) * G_N / 2 * 1.10  # kN with 10 % impact
    by_hand = wheel_20 * (1 + (1 - 4.0 / L)) + wheel_10 * ((1 - 0.8 / L) + (1 - 4.0 / L))
    header, body = read_csv(out / "runway-reactions.csv")
    values = column(header, body, "reaction max with impact [kN]")
    assert values[1:-1] == pytest.approx([by_hand] * 5, rel=1e-9)


def test_sections_csv_equals_the_library(si):
    _, out, runway = si
    header, body = read_csv(out / "runway-sections.csv")
    np.testing.assert_allclose(column(header, body, "x [m]"), runway.sections, rtol=1e-12)
    lateral_moment, _ = lateral_extremes(runway, "moment")
    lateral_deflection, _ = lateral_extremes(runway, "deflection")
    checks = {
        "moment max with impact [kN·m]": runway.strength.max("moment"),
        "moment min with impact [kN·m]": runway.strength.min("moment"),
        "shear left max with impact [kN]": runway.strength.max("shear", side="left"),
        "shear right min with impact [kN]": runway.strength.min("shear", side="right"),
        # deflection in mm; the core gives m
        "deflection max without impact [mm]": 1000.0 * runway.service.max("deflection"),
        "lateral moment (either way) [kN·m]": lateral_moment,
        "lateral deflection (either way) [mm]": 1000.0 * lateral_deflection,
    }
    for name, expected in checks.items():
        np.testing.assert_allclose(column(header, body, name), expected, rtol=1e-11,
                                   atol=1e-9, err_msg=name)


def test_deflection_and_fatigue_csv_equal_the_library(si):
    _, out, runway = si
    header, body = read_csv(out / "runway-deflection.csv")
    vertical = [row for row in body if row[0] == "vertical"]
    lateral = [row for row in body if row[0] == "lateral either way"]
    assert len(vertical) == len(lateral) == 6
    index = header.index("deflection [mm]")
    np.testing.assert_allclose([float(r[index]) for r in vertical],
                               [1000.0 * c.value for c in runway.vertical_checks],
                               rtol=1e-11)
    index = header.index("utilisation")
    np.testing.assert_allclose([float(r[index]) for r in lateral],
                               [c.utilisation for c in runway.lateral_checks], rtol=1e-11)
    header, body = read_csv(out / "runway-fatigue.csv")
    assert len(body) == len(runway.fatigue) == 2 * len(runway.sections)
    np.testing.assert_allclose(column(header, body, "moment range per passage [kN·m]"),
                               [f.moment_range for f in runway.fatigue], rtol=1e-11, atol=1e-9)
    # stresses in MPa; the core gives kN/m²
    np.testing.assert_allclose(column(header, body, "stress range max [MPa]"),
                               [f.stress_range / 1000.0 for f in runway.fatigue], rtol=1e-11,
                               atol=1e-9)
    np.testing.assert_allclose(column(header, body, "allowable stress range [MPa]"),
                               [f.allowable / 1000.0 for f in runway.fatigue], rtol=1e-11)
    np.testing.assert_allclose(column(header, body, "cycles per passage"),
                               [f.cycles_per_passage for f in runway.fatigue], rtol=1e-12)


def test_terminal_prints_the_crane_summary_then_the_results(si):
    result, _, runway = si
    out = result.output
    flat = " ".join(out.split())
    # crane summary first: masses as written beside their weights
    assert out.index("Cranes as given") < out.index("Vertical wheel loads") < \
        out.index("Vertical reactions per support")
    assert f"{20 * G_N:.1f} (20 t)" in out
    wheels = runway.wheels["20 t process crane"]
    assert f"{wheels.maximum:.1f}" in out and f"{wheels.maximum * 1.25:.1f}" in out
    assert f"{runway.longitudinal['20 t process crane']:.2f}" in out
    # the results as analyse_runway has them
    assert f"{runway.strength.max('reaction')[1]:.1f}" in out
    assert f"{runway.service.max('reaction')[1]:.1f}" in out
    assert f"{runway.strength.max('moment').max():.1f}" in out
    assert f"{runway.vertical_checks[0].utilisation:.3f}" in out
    assert f"{runway.lateral_checks[0].utilisation:.3f}" in out
    assert "0.8 (buffers touching)" in out
    # every default is labelled
    defaults = out[out.index("Defaults in use"):out.index("Runway checks as set up")]
    assert " ".join(defaults.split()).count("verify against the") >= 9
    assert "verify against the governing guide/code" in flat
    assert "qualified engineer" in flat


def test_json_carries_the_runway(si):
    _, out, runway = si
    document = json.loads((out / "envelope.json").read_text(encoding="utf-8"))
    assert document["loads"] == [] and document["sections"] == []
    crane = document["extra"][TITLE]
    assert any("verify each against the governing guide/code" in c
               for c in document["cautions"])
    np.testing.assert_allclose([r["max_with_impact"]["value"] for r in crane["reactions"]],
                               runway.strength.max("reaction"), rtol=1e-12)
    # the wheels of the worst reaction stand where the envelope puts them
    for r, g in zip(crane["reactions"], runway.strength.governing("reaction", "max"),
                    strict=True):
        np.testing.assert_allclose(r["max_with_impact"]["wheel_positions"],
                                   runway.strength.axle_positions(g), rtol=1e-12)
    assert crane["cranes"][0]["capacity"] == pytest.approx(20 * G_N, rel=1e-14)
    assert crane["cranes"][0]["impact"] == {"fraction": 0.25, "from": "default"}
    assert {d["item"] for d in crane["defaults_in_use"]} >= {
        "vertical impact", "lateral force", "longitudinal force", "vertical deflection limit",
        "fatigue life", "allowable stress range"}
    np.testing.assert_allclose([c["utilisation"] for c in crane["vertical_deflection"]],
                               [c.utilisation for c in runway.vertical_checks], rtol=1e-12)
    assert crane["longitudinal"] == pytest.approx(runway.longitudinal, rel=1e-15)


def test_report_has_the_crane_summary_the_figures_and_the_cautions(si):
    _, out, runway = si
    html = (out / "report.html").read_text(encoding="utf-8")
    text = " ".join(re.sub(r"<[^>]+>", " ", html).split())
    for phrase in ("Cranes as given", "Vertical wheel loads on this runway rail",
                   "Horizontal crane forces", "Defaults in use", "Vertical reactions per support",
                   "Bending moment per span with impact", "Deflection per span against the limits",
                   "Fatigue per span and crane", "runway-fatigue.csv", "20 t process crane",
                   "10 t workshop crane",
                   "checking by a qualified engineer", "local codes and licensed practice govern",
                   "verify against the governing guide/code"):
        assert phrase in text, phrase
    # four runway figures and the critical load positions, inline SVG
    assert len(re.findall(r'<svg role="img" class="figure"', html)) == 5 and "<img" not in html
    assert not re.search(r'(src|href)="(https?:|//|file:)', html)
    assert f"{runway.strength.max('reaction')[1]:.1f}" in text


def test_us_runway_in_us_units_with_the_makers_wheel_loads(us):
    result, out, runway = us
    assert result.exit_code == 0, result.stderr
    assert "maker's data" in result.output
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "<td class=\"num short\">30.00 (15 ton)</td>" in html  # 15 short tons = 30 kip
    header, body = read_csv(out / "runway-sections.csv")
    # deflection in inches; the core gives ft
    np.testing.assert_allclose(column(header, body, "deflection max without impact [in]"),
                               12.0 * runway.service.max("deflection"), rtol=1e-11, atol=1e-12)
    np.testing.assert_allclose(column(header, body, "moment min with impact [kip·ft]"),
                               runway.strength.min("moment"), rtol=1e-11, atol=1e-9)
    header, body = read_csv(out / "runway-fatigue.csv")
    # stresses in ksi; the core gives kip/ft² (1 ksi = 144 kip/ft²)
    np.testing.assert_allclose(column(header, body, "stress range max [ksi]"),
                               [f.stress_range / 144.0 for f in runway.fatigue], rtol=1e-11,
                               atol=1e-12)
    crane = json.loads((out / "envelope.json").read_text())["extra"][TITLE]
    assert crane["cranes"][0]["wheel_loads"]["from"] == "given"
    assert crane["units"]["stress"] == "ksi"
    # one crane: no gap column, the uplift of the continuous runway is shown
    assert "wheel to wheel" not in result.output
    assert runway.strength.min("reaction").min() < 0
    assert f"{runway.strength.min('reaction')[2]:.2f}" in result.output


# --- loads and cranes, options ------------------------------------------------------------


def test_a_model_with_loads_and_cranes_gets_both(tmp_path):
    model = tmp_path / "both.toml"
    model.write_text("""units = "SI"
[beam]
spans = [8.0, 8.0]
supports = ["pin", "pin", "pin"]
EI = 2.0e5

[[load]]
name = "walkway"
uniform = "2 kN/m"

[[crane]]
name = "hand crane"
capacity = "5 t"
bridge_weight = "4 t"
trolley_weight = "0.6 t"
span = "15 m"
hook_approach = "0.8 m"
wheel_spacings = ["2.5 m"]
operation = "hand"

[runway]
service_class = "A"
""")
    out = tmp_path / "out"
    result = run("envelope", model, "--out", out, "--no-figure", "--no-report",
                 "--full")
    assert result.exit_code == 0, result.stderr
    assert {p.name for p in out.iterdir()} == {
        "envelope.csv", "reactions.csv", "envelope.json", "runway-reactions.csv",
        "runway-sections.csv", "runway-deflection.csv", "runway-fatigue.csv", MANIFEST}
    document = json.loads((out / "envelope.json").read_text())
    assert document["loads"][0]["name"] == "walkway" and TITLE in document["extra"]
    assert "Loads" in result.output and "Cranes as given" in result.output
    # a hand-geared crane: no impact by default, so with and without impact agree
    read = load_model(model)
    runway = analyse_runway(read.beam, runway_spec(read), sections=read.sections)
    header, body = read_csv(out / "runway-reactions.csv")
    np.testing.assert_allclose(column(header, body, "reaction max with impact [kN]"),
                               column(header, body, "reaction max without impact [kN]"),
                               rtol=1e-12)
    np.testing.assert_allclose(column(header, body, "reaction max with impact [kN]"),
                               runway.strength.max("reaction"), rtol=1e-11)
    # no lateral stiffness given: no lateral analysis, and the summary says so
    assert "no lateral analysis" in result.output


def test_summary_lists_the_cranes():
    result = run("summary", US_HALL)
    assert result.exit_code == 0, result.stderr
    model = load_model(US_HALL)
    assert "Cranes as given" in result.output and "15-ton bridge crane" in result.output
    assert f"{cranes_of(model)[0].crane.capacity:.2f}" in result.output


def test_help_names_the_cranes_and_the_cautions():
    text = " ".join(run("envelope", "--help").output.split())
    assert "[[crane]]" in text and "hall_kestrel_quay_si.toml" in text
    assert "verified against the governing guide/code" in text
    assert "checking by a qualified engineer" in text
    assert "local codes and licensed practice govern" in text


@pytest.mark.parametrize("path", BAD_CRANES, ids=lambda p: p.name)
def test_bad_crane_files_give_one_line_and_write_nothing(path, tmp_path):
    result = run("envelope", path, "--out", tmp_path / "out")
    assert_one_line_error(result, str(path), expected_key(path))
    assert not (tmp_path / "out").exists()
