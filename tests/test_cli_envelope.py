"""``trundle envelope`` and ``trundle library``: the files written agree with the library,
the JSON round-trips, the report stands alone and carries the cautions, bad input is one line.
"""

from __future__ import annotations

import datetime
import functools
import hashlib
import json
import re
import tomllib
from pathlib import Path

import numpy as np
import pytest

import trundle
from cli_helpers import assert_one_line_error, column, expected_key, read_csv, run
from trundle.io.loads import loads_of
from trundle.io.modelfile import load_model
from trundle.io.output_set import MANIFEST
from trundle.io.outputs import Provenance
from trundle.report.envelope_data import ExtraSection, TableData, collect
from trundle.report.envelope_report import envelope_files, envelope_html
from trundle.report.envelope_tables import envelope_document
from trundle.workflows import moving_loads

ROOT = Path(__file__).resolve().parents[1]
SI_EXAMPLE = ROOT / "examples" / "harbour_lane_floor_girder_si.toml"
US_EXAMPLE = ROOT / "examples" / "millrace_access_bridge_us.toml"
BAD_LOADS = sorted((Path(__file__).parent / "bad_models").glob("load_*.toml"))
ALL_FILES = {"envelope.csv", "reactions.csv", "envelope.json", "report.html",
             "envelope-moment.png", "envelope-shear.png", "envelope-deflection.png",
             "reactions.png"}



def _moving(model):
    return moving_loads.run(moving_loads.MovingLoadsSpec(
        model.beam, [e.case for e in loads_of(model)], sections=model.sections))

@functools.cache
def library_envelope(path: Path) -> trundle.Envelope:
    """The envelope computed directly with the library, for comparison with the files (once
    per model: the tests only read it)."""
    model = load_model(path)
    return trundle.envelope(model.beam, [e.case for e in loads_of(model)],
                            sections=model.sections)


@pytest.fixture(scope="module")
def si_run(bundled_run):
    return bundled_run(SI_EXAMPLE)  # the session's one run of the example (conftest)


# --- the files ----------------------------------------------------------------------------


def test_envelope_writes_every_file(si_run):
    result, out = si_run
    assert result.exit_code == 0, result.stderr
    assert {p.name for p in out.iterdir()} == ALL_FILES | {MANIFEST}
    for name in ALL_FILES - {"envelope.csv", "reactions.csv", "envelope.json", "report.html"}:
        assert (out / name).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert not [p for p in out.iterdir() if p.name.endswith(".part")]


def test_csv_values_equal_the_library_envelope(si_run):
    _, out = si_run
    env = library_envelope(SI_EXAMPLE)
    header, body = read_csv(out / "envelope.csv")
    # CSV numbers carry 12 significant digits
    np.testing.assert_allclose(column(header, body, "x [m]"), env.sections, rtol=1e-12)
    checks = {
        "moment max [kN·m]": env.max("moment"), "moment min [kN·m]": env.min("moment"),
        "shear left max [kN]": env.max("shear", side="left"),
        "shear left min [kN]": env.min("shear", side="left"),
        "shear right max [kN]": env.max("shear", side="right"),
        "shear right min [kN]": env.min("shear", side="right"),
        # deflection in mm; the core gives m (1 m = 1000 mm)
        "deflection max [mm]": 1000.0 * env.max("deflection"),
        "deflection min [mm]": 1000.0 * env.min("deflection"),
    }
    for name, expected in checks.items():
        np.testing.assert_allclose(column(header, body, name), expected, rtol=1e-11,
                                   atol=1e-9, err_msg=name)
    # governing load names, as the library reports them
    names = [c.name for c in env.cases]
    loads = [row[header.index("moment max: load")] for row in body]
    for g, name in zip(env.governing("moment", "max"), loads, strict=True):
        assert name == (names[g.case] if g.case >= 0 else "(no load)")
    # the concurrent shear with the max moment
    concurrent = env.concurrent("moment", "max")
    np.testing.assert_allclose(column(header, body, "moment max: concurrent shear left [kN]"),
                               np.diagonal(concurrent["shear_left"]), rtol=1e-11, atol=1e-9)
    np.testing.assert_allclose(column(header, body, "moment max: concurrent shear right [kN]"),
                               np.diagonal(concurrent["shear_right"]), rtol=1e-11, atol=1e-9)


def test_reactions_csv_has_one_row_per_support(si_run):
    _, out = si_run
    env = library_envelope(SI_EXAMPLE)
    header, body = read_csv(out / "reactions.csv")
    assert [row[0] for row in body] == ["0", "1", "2", "3"]
    assert body[3][header.index("kind")] == "spring"
    np.testing.assert_allclose(column(header, body, "reaction max [kN]"), env.max("reaction"),
                               rtol=1e-11)
    np.testing.assert_allclose(column(header, body, "reaction min [kN]"), env.min("reaction"),
                               rtol=1e-11)


def test_json_round_trips_and_traces_the_model(si_run):
    _, out = si_run
    text = (out / "envelope.json").read_text(encoding="utf-8")
    document = json.loads(text)
    assert json.dumps(document, indent=1, ensure_ascii=False, allow_nan=False) + "\n" == text
    assert document["trundle_version"] == trundle.__version__
    assert document["model"]["sha256"] == hashlib.sha256(SI_EXAMPLE.read_bytes()).hexdigest()
    assert document["model"]["inputs"] == json.loads(json.dumps(
        tomllib.loads(SI_EXAMPLE.read_text())))
    assert datetime.datetime.fromisoformat(document["date"]).tzinfo is not None
    assert document["units"]["moment"] == "kN*m" and document["units"]["deflection"] == "mm"
    assert any("qualified engineer" in c for c in document["cautions"])
    env = library_envelope(SI_EXAMPLE)
    moments = [s["moment"]["max"]["value"] for s in document["sections"]]
    np.testing.assert_allclose(moments, env.max("moment"), rtol=1e-12, atol=1e-12)
    reactions = [s["reaction"]["min"]["value"] for s in document["supports"]]
    np.testing.assert_allclose(reactions, env.min("reaction"), rtol=1e-12)
    forklift = document["loads"][1]
    assert forklift["name"] == "pallet forklift" and forklift["load"]["axles"] == [34.0, 12.0]
    assert forklift["impact"] == pytest.approx(0.15, rel=1e-15)
    assert [f["name"] for f in forklift["factors"]] == ["wheel share on this girder"]
    assert forklift["load_factor"] == 1.5
    assert forklift["product_of_factors"] == pytest.approx(0.9, rel=1e-15)
    assert forklift["product_of_factors_for_deflection"] == pytest.approx(0.6, rel=1e-15)


def test_json_absolute_moments_come_from_the_library(si_run):
    _, out = si_run
    document = json.loads((out / "envelope.json").read_text(encoding="utf-8"))
    env = library_envelope(SI_EXAMPLE)
    for span in document["spans"]:
        extremes = [a for a in env.absolute("moment")
                    if a.span == span["span"] - 1 and a.which == "max"]
        best = max(extremes, key=lambda a: a.value)
        entry = span["moment"]["max_anywhere"]
        assert entry["value"] == pytest.approx(best.value, rel=1e-12)
        assert entry["x"] == pytest.approx(best.x, rel=1e-12)
        # the worst section in the span is at least as bad as every section in it
        assert entry["value"] >= span["moment"]["max"]["value"] * (1 - 1e-12)


def test_report_stands_alone_with_the_cautions_and_the_figures(si_run):
    _, out = si_run
    html = (out / "report.html").read_text(encoding="utf-8")
    text = " ".join(re.sub(r"<[^>]+>", " ", html).split())
    assert "checking by a qualified engineer" in text
    assert "must be verified against the edition in force" in text
    assert "local codes and licensed practice govern" in text
    # four envelope figures and the critical load positions, inline SVG
    assert len(re.findall(r'<svg role="img" class="figure"', html)) == 5 and "<img" not in html
    assert not re.search(r'(src|href)="(https?:|//|file:)', html)
    assert hashlib.sha256(SI_EXAMPLE.read_bytes()).hexdigest() in html
    assert trundle.__version__ in html
    assert "pallet forklift" in html and "wheel share on this girder" in html
    assert "sagging" in text and "Sign conventions" in text


def test_terminal_summary_names_the_governing_loads_and_the_absolute_maximum(si_run):
    result, _ = si_run
    out = result.output
    env = library_envelope(SI_EXAMPLE)
    best = max((a for a in env.absolute("moment") if a.span == 0 and a.which == "max"),
               key=lambda a: a.value)
    assert f"{best.value:.1f}" in out and f"{best.x:.3f}".rstrip("0") in out
    assert f"{env.max('reaction')[2]:.1f}" in out
    for header in ("M [kN·m]", "V [kN]", "max δ [mm]", "R [kN]", "at x [m]"):
        assert header in out
    assert "floor live load" in out and "placed: spans 1, 3" in out
    assert "qualified engineer" in out


def test_us_units_and_svg_figures_without_report(tmp_path):
    result = run("envelope", US_EXAMPLE, "-o", tmp_path, "--format", "svg", "--no-report")
    assert result.exit_code == 0, result.stderr
    names = {p.name for p in tmp_path.iterdir()}
    assert names == {"envelope.csv", "reactions.csv", "envelope.json", "envelope-moment.svg",
                     "envelope-shear.svg", "envelope-deflection.svg", "reactions.svg",
                     MANIFEST}
    env = library_envelope(US_EXAMPLE)
    header, body = read_csv(tmp_path / "envelope.csv")
    # deflection in inches; the core gives ft. Source: NIST SP 811 (2008), B.8: 1 ft = 12 in.
    np.testing.assert_allclose(column(header, body, "deflection max [in]"),
                               12.0 * env.max("deflection"), rtol=1e-11)
    np.testing.assert_allclose(column(header, body, "moment min [kip·ft]"), env.min("moment"),
                               rtol=1e-11)
    assert "→" in result.output or "←" in result.output


def test_no_figure_and_no_report_write_the_tables_only(tmp_path):
    result = run("envelope", SI_EXAMPLE, "-o", tmp_path, "--no-figure", "--no-report")
    assert result.exit_code == 0, result.stderr
    assert {p.name for p in tmp_path.iterdir()} == {"envelope.csv", "reactions.csv",
                                                   "envelope.json", MANIFEST}


def test_without_out_nothing_is_written(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    result = run("envelope", SI_EXAMPLE)
    assert result.exit_code == 0, result.stderr
    assert list(tmp_path.iterdir()) == []


# --- bad input ----------------------------------------------------------------------------


@pytest.mark.parametrize("path", BAD_LOADS, ids=lambda p: p.name)
def test_bad_load_files_give_one_line_and_write_nothing(path, tmp_path):
    result = run("envelope", path, "--out", tmp_path / "out")
    assert_one_line_error(result, str(path), expected_key(path))
    assert not (tmp_path / "out").exists()


def test_a_model_without_loads_is_refused(tmp_path):
    model = tmp_path / "no_loads.toml"
    model.write_text('units = "SI"\n[beam]\nspans = [6.0]\nsupports = ["pin", "pin"]\n'
                     "EI = 1e4\n")
    result = run("envelope", model, "--out", tmp_path / "out")
    assert_one_line_error(result, f"{model}: load: expected at least one [[load]]")
    assert not (tmp_path / "out").exists()


def test_out_that_is_a_file_is_refused_and_left_alone(tmp_path):
    target = tmp_path / "taken"
    target.write_text("keep me")
    assert_one_line_error(run("envelope", SI_EXAMPLE, "--out", target), "--out", "a file")
    assert target.read_text() == "keep me"


@pytest.mark.parametrize(("args", "fragment"), [
    (["--format", "pdf"], "--format"),
    (["--bogus"], "--bogus"),
    ([], "MODEL"),
])
def test_bad_options_give_one_line(args, fragment):
    model = [] if not args else [SI_EXAMPLE]
    assert_one_line_error(run("envelope", *model, *args), fragment)


def test_help_has_an_example_and_the_cautions():
    text = " ".join(run("envelope", "--help").output.split())
    assert "trundle envelope examples/" in text
    assert "checking by a qualified engineer" in text
    assert "load models are transcribed and must be verified against the edition in force" \
        in text
    assert "local codes and licensed practice govern" in text


# --- extra sections (for later features such as cranes) --------------------------------


def test_extra_sections_reach_the_json_and_the_report():
    model = load_model(SI_EXAMPLE)

    def provider(results):
        table = TableData("Wheel loads", ("wheel", "load [kN]"), (("1", "12.5"),), (True, True))
        return ExtraSection("Crane runway checks", tables=(table,), notes=("A note.",),
                            files={"extra.txt": "hello\n"}, data={"wheels": [12.5]})

    results = collect(model, Provenance.of_model(model, str(SI_EXAMPLE)), _moving(model),
                      providers=[provider, lambda r: None])
    assert [s.title for s in results.extra] == ["Crane runway checks"]
    document = envelope_document(results)
    assert document["extra"] == {"Crane runway checks": {"wheels": [12.5]}}
    html = envelope_html(results, svgs={})
    assert "Crane runway checks" in html and "Wheel loads" in html and "A note." in html
    files = envelope_files(results, with_figures=False, with_report=False)
    assert files["extra.txt"] == "hello\n"


# --- trundle library ----------------------------------------------------------------------


def test_library_lists_the_models():
    result = run("library")
    assert result.exit_code == 0, result.stderr
    out = result.output
    for name in ("demo-service-truck", "demo-heavy-vehicle-5-axle", "demo-lane-load"):
        assert name in out
    assert "placed uniform" in out and "vehicle" in out
    assert "Invented for trundle's examples" in out
    assert "verified against the edition in force" in " ".join(out.split())


def test_library_shows_one_model_in_detail():
    result = run("library", "demo-heavy-vehicle-5-axle")
    assert result.exit_code == 0, result.stderr
    out = result.output
    assert "5 to 9 (searched)" in out
    assert "total 420 kN" in out
    assert 'use = "demo-heavy-vehicle-5-axle"' in out


def test_library_with_an_unknown_name_suggests_one():
    assert_one_line_error(run("library", "demo-lane"), "library NAME", '"demo-lane"',
                          'did you mean "demo-lane-load"')


def test_summary_lists_the_loads():
    result = run("summary", US_EXAMPLE)
    assert result.exit_code == 0, result.stderr
    assert "Loads" in result.output and "33 %" in result.output
    assert "library model" in result.output and "demo-lane-load" in result.output


def test_cautions_name_invented_load_models_inside_trains(tmp_path):
    from trundle.report.envelope_report import cautions

    model = tmp_path / "train.toml"
    model.write_text('units = "SI"\n[beam]\nspans = [12.0]\nsupports = ["pin", "pin"]\n'
                     'EI = 1e5\n[[load]]\nname = "two trucks"\n'
                     'vehicles = ["demo-service-truck", "demo-service-truck"]\n'
                     'gaps = ["10 m"]\n')
    read = load_model(model)
    results = collect(read, Provenance.of_model(read, str(model)), _moving(read))
    assert results.loads[0].source == ""  # a train of library vehicles has no source itself
    assert any("demo-service-truck" in c and "not code load models" in c
               for c in cautions(results))


# --- loads acting together ----------------------------------------------------------------

TOGETHER_MODEL = """units = "SI"
[beam]
spans = ["{first}", "{second}"]
supports = ["pin", "pin", "pin"]
EI = 2.0e6

[[load]]
name = "truck + lane"
together = ["truck", "lane"]

[[load]]
name = "truck"
axles = ["{axle}"]
impact = "30 %"
factors = {{ "distribution" = 0.8 }}

[[load]]
name = "lane"
uniform = "{w}"
placement = "{placement}"
"""


def test_together_on_one_span_equals_the_closed_form_sum(tmp_path):
    # one axle P at midspan and a uniform load w over the whole span of a simple beam:
    # M = P L / 4 + w L^2 / 8, with the axle's impact and factor on P only.
    # Source: AISC Steel Construction Manual (15th ed.), Table 3-23, cases 1 and 7 (from memory).
    model = tmp_path / "one_span.toml"
    model.write_text(TOGETHER_MODEL.replace('"{second}"', "").replace(
        '"pin", "pin", "pin"', '"pin", "pin"').format(
        first="20 m", axle="200 kN", w="10 kN/m", placement="everywhere").replace(
        'spans = ["20 m", ]', 'spans = ["20 m"]'))
    out = tmp_path / "results"
    result = run("envelope", model, "--out", out, "--no-figure", "--no-report")
    assert result.exit_code == 0, result.stderr
    header, body = read_csv(out / "envelope.csv")
    middle = [row for row in body if float(row[0]) == 10.0][0]
    P, L, w = 200.0 * 1.3 * 0.8, 20.0, 10.0
    assert float(middle[header.index("moment max [kN·m]")]) == pytest.approx(
        P * L / 4 + w * L**2 / 8, rel=1e-10)
    assert middle[header.index("moment max: load")] == "truck + lane"
    assert float(middle[header.index("moment max: lead axle or point load x [m]")]) == \
        pytest.approx(10.0, rel=1e-10)
    assert middle[header.index("moment max: loaded stretches [m]")] == "0..20"


def test_together_in_the_cli_equals_the_library_together(tmp_path):
    model = tmp_path / "two_spans.toml"
    model.write_text(TOGETHER_MODEL.format(first="18 m", second="24 m", axle="150 kN",
                                           w="9 kN/m", placement="spans"))
    out = tmp_path / "results"
    result = run("envelope", model, "--out", out, "--no-figure", "--no-report", "--full")
    assert result.exit_code == 0, result.stderr
    # the same loads built directly with the library, not through the model file
    beam = trundle.Beam(spans=[18.0, 24.0], EI=2.0e6, supports=["pin", "pin", "pin"])
    truck = trundle.LoadCase(trundle.Vehicle(loads=[150.0], spacings=[], name="truck"),
                             impact=0.3, factors=(("distribution", 0.8),), name="truck")
    lane = trundle.UniformLoad(9.0, placement="spans", name="lane")
    both = trundle.Together((truck, lane), name="truck + lane")
    env = trundle.envelope(beam, [both, truck, lane], sections=beam.tenth_points())
    header, body = read_csv(out / "envelope.csv")
    np.testing.assert_allclose(column(header, body, "x [m]"), env.sections, rtol=1e-12)
    checks = {
        "moment max [kN·m]": env.max("moment"), "moment min [kN·m]": env.min("moment"),
        "shear left max [kN]": env.max("shear", side="left"),
        "shear right min [kN]": env.min("shear", side="right"),
        "deflection max [mm]": 1000.0 * env.max("deflection"),
    }
    for name, expected in checks.items():
        np.testing.assert_allclose(column(header, body, name), expected, rtol=1e-11,
                                   atol=1e-9, err_msg=name)
    # the combination governs wherever a load does: each part counts at its own worst
    governing = env.governing("moment", "max")
    loads = [row[header.index("moment max: load")] for row in body]
    for g, name in zip(governing, loads, strict=True):
        assert name == ("truck + lane" if g.case >= 0 else "(no load)")
    # (at the two ends and over the pier no load gives sagging moment)
    assert loads.count("truck + lane") == len(loads) - 3
    # where both parts act, the CSV gives the truck's lead axle and the lane's spans
    i = int(np.argmax(env.max("moment")))
    g = governing[i]
    axle = g.parts[0]
    assert float(body[i][header.index("moment max: lead axle or point load x [m]")]) == \
        pytest.approx(axle.reference, rel=1e-11)
    stretches = body[i][header.index("moment max: loaded stretches [m]")]
    assert stretches in ("0..18", "18..42")
    reactions_header, reactions = read_csv(out / "reactions.csv")
    np.testing.assert_allclose(column(reactions_header, reactions, "reaction max [kN]"),
                               env.max("reaction"), rtol=1e-11)
    # the terminal names the combination and where each part stands
    assert "truck + lane" in result.output
    assert "truck → lead axle at" in result.output and "lane: span" in result.output
    document = json.loads((out / "envelope.json").read_text(encoding="utf-8"))
    entry = document["loads"][0]
    assert entry["kind"] == "together" and entry["load"] == {"together": ["truck", "lane"]}
    assert entry["definition"] == "truck + lane" and entry["impact"] is None
    section = document["sections"][i]["moment"]["max"]
    assert section["load"] == "truck + lane"
    assert section["placement"].startswith("truck → lead axle at")


def test_summary_lists_loads_acting_together(tmp_path):
    model = tmp_path / "two_spans.toml"
    model.write_text(TOGETHER_MODEL.format(first="18 m", second="24 m", axle="150 kN",
                                           w="9 kN/m", placement="spans"))
    result = run("summary", model)
    assert result.exit_code == 0, result.stderr
    assert "acting together" in result.output and "truck + lane" in result.output
