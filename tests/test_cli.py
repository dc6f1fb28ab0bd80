"""The command line: one-line errors with exit code 2, outputs that match the library."""

from __future__ import annotations

import csv
import hashlib
import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import trundle
from cli_helpers import assert_one_line_error, expected_key, run
from trundle.io import output_set as _io
from trundle.io.modelfile import load_model

ROOT = Path(__file__).resolve().parents[1]
SI_EXAMPLE = ROOT / "examples" / "harbour_lane_floor_girder_si.toml"
US_EXAMPLE = ROOT / "examples" / "millrace_access_bridge_us.toml"
BAD_MODELS = sorted((Path(__file__).parent / "bad_models").glob("*.toml"))


@pytest.mark.parametrize("command", ["summary", "lines"])
@pytest.mark.parametrize("path", BAD_MODELS, ids=lambda p: p.name)
def test_bad_models_give_one_line_and_exit_code_2(command, path, tmp_path):
    result = run(command, path, "--out", tmp_path / "out") if command == "lines" else \
        run(command, path)
    assert_one_line_error(result, str(path), expected_key(path))
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("how", ["module", "script"])
def test_a_real_process_gives_one_line_and_exit_code_2(how):
    bad = Path(__file__).parent / "bad_models" / "force_where_length_belongs.toml"
    if how == "module":
        command = [sys.executable, "-m", "trundle", "lines", str(bad)]
    else:
        script = Path(sys.executable).with_name("trundle")
        if not script.exists():
            pytest.skip("the trundle script is not installed next to this interpreter")
        command = [str(script), "summary", str(bad)]
    done = subprocess.run(command, capture_output=True, text=True, timeout=300)
    assert done.returncode == 2
    assert done.stderr.count("\n") == 1
    assert done.stderr.startswith(f"error: {bad}: beam.spans[1]: expected a length")
    assert "Traceback" not in done.stderr
    assert done.stdout == ""


def test_a_real_process_succeeds_on_an_example(tmp_path):
    done = subprocess.run([sys.executable, "-m", "trundle", "lines", str(US_EXAMPLE),
                           "--at", "33 ft", "--out", str(tmp_path)],
                          capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    assert "moment at 33 ft" in done.stdout
    assert {p.name for p in tmp_path.iterdir()} == {"lines.csv", "lines.json", "lines.png",
                                                     _io.MANIFEST}


@pytest.mark.parametrize("args", [
    ["summary", "--help"], ["lines", "--help"], ["--help"],
])
def test_help_has_examples(args):
    result = run(*args)
    assert result.exit_code == 0
    assert "trundle summary" in result.output or "trundle lines" in result.output
    assert "Example" in result.output or "examples/" in result.output


def test_lines_help_shows_the_caution():
    text = " ".join(run("lines", "--help").output.split())
    assert "checking by a qualified engineer" in text
    assert "local codes and licensed practice govern" in text


def test_summary_prints_the_model():
    result = run("summary", US_EXAMPLE)
    assert result.exit_code == 0, result.stderr
    out = result.output
    assert "Millrace Park" in out
    assert "degree of indeterminacy 1" in out
    assert "kip·ft²" in out
    assert "18600 in^4" in out
    assert "23 sections [ft]" in out


def test_lines_writes_outputs_matching_the_library(tmp_path):
    result = run("lines", SI_EXAMPLE, "-e", "moment", "-e", "shear", "-e", "deflection",
                 "--at", "3.6", "--at", "7.2", "-e", "reaction", "--support", "1",
                 "--out", tmp_path)
    assert result.exit_code == 0, result.stderr
    model = load_model(SI_EXAMPLE)
    beam = model.beam

    with open(tmp_path / "lines.csv", newline="") as handle:
        first = handle.readline()
        rows = list(csv.reader(handle))
    assert first.startswith("# trundle ") and SI_EXAMPLE.name in first
    assert hashlib.sha256(SI_EXAMPLE.read_bytes()).hexdigest() in first
    header, body = rows[0], rows[1:]
    assert header[:2] == ["x [m]", "limit"]
    expected_columns = {
        "moment at 3.6 m [kN·m/kN]": (trundle.Effect("moment", at=3.6), 1.0),
        "moment at 7.2 m (support 1) [kN·m/kN]": (trundle.Effect("moment", at=7.2), 1.0),
        "shear right of 3.6 m [kN/kN]": (trundle.Effect("shear", at=3.6, side="right"), 1.0),
        "shear left of 7.2 m (support 1) [kN/kN]":
            (trundle.Effect("shear", at=7.2, side="left"), 1.0),
        "shear right of 7.2 m (support 1) [kN/kN]":
            (trundle.Effect("shear", at=7.2, side="right"), 1.0),
        # deflection in mm/kN: the core gives m/kN (1 m = 1000 mm)
        "deflection at 3.6 m [mm/kN]": (trundle.Effect("deflection", at=3.6), 1000.0),
        "reaction at support 1 (x = 7.2 m) [kN/kN]": (trundle.Effect("reaction", support=1),
                                                      1.0),
    }
    assert set(expected_columns) <= set(header)
    x = np.array([float(r[0]) for r in body])
    limits = [r[1] for r in body]
    assert x[0] == 0.0 and x[-1] == beam.length
    assert np.all(np.diff(x) >= 0.0)
    assert "left" in limits and "right" in limits  # the shear lines jump at their sections
    for column, (effect, factor) in expected_columns.items():
        line = beam.influence_set([effect]).line(0)
        values = np.array([float(r[header.index(column)]) for r in body])
        reference = np.array([line(xi, side=limit or "right") for xi, limit in
                              zip(x, limits, strict=True)]) * factor
        np.testing.assert_allclose(values, reference, rtol=1e-10, atol=1e-12 * factor)

    document = json.loads((tmp_path / "lines.json").read_text())
    assert document["units"]["length"] == "m"
    assert "qualified engineer" in document["caution"]
    by_label = {entry["label"]: entry for entry in document["lines"]}
    entry = by_label["deflection at 3.6 m"]
    assert entry["ordinate_unit"] == "mm/kN"
    line = beam.influence("deflection", at=3.6)
    value, where = line.max()
    assert entry["max"]["ordinate"] == pytest.approx(1000.0 * value, rel=1e-12)
    assert entry["max"]["x"] == pytest.approx(where, rel=1e-12)
    # the exact piecewise cubic in the JSON reproduces the line between knots
    knots = np.array(document["knots"])
    coefficients = np.array(entry["piecewise_cubic"]["coefficients"])  # (pieces, 4)
    probe = 0.5 * (knots[:-1] + knots[1:])
    local = probe - knots[:-1]
    from_json = sum(coefficients[:, k] * local ** (3 - k) for k in range(4))
    np.testing.assert_allclose(from_json, 1000.0 * line(probe), rtol=1e-12, atol=1e-15)
    assert (tmp_path / "lines.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_lines_table_reports_extremes_and_tenth_points():
    result = run("lines", SI_EXAMPLE, "--at", "3.6")
    assert result.exit_code == 0, result.stderr
    line = load_model(SI_EXAMPLE).beam.influence("moment", at=3.6)
    value, where = line.max()
    assert f"{value:.4f}" in result.output
    assert "Ordinates at tenth points" in result.output
    assert "qualified engineer" in result.output


def test_at_with_units_in_a_us_file_and_svg(tmp_path):
    result = run("lines", US_EXAMPLE, "-e", "deflection", "--at", "396 in", "--out", tmp_path,
                 "--format", "svg")
    assert result.exit_code == 0, result.stderr
    document = json.loads((tmp_path / "lines.json").read_text())
    assert document["lines"][0]["section"] == 33.0  # 396 in = 33 ft exactly
    assert document["lines"][0]["ordinate_unit"] == "in/kip"
    assert (tmp_path / "lines.svg").read_text().lstrip().startswith("<?xml")


def test_simple_span_midspan_deflection_through_the_cli(tmp_path):
    # Source: AISC Steel Construction Manual, Beam Diagrams and Formulas, simple beam with a
    # concentrated load at center: deflection at center = P L³ / (48 E I) (from memory).
    model = tmp_path / "simple.toml"
    model.write_text('units = "US"\n[beam]\nspans = ["40 ft"]\nsupports = ["pin", "pin"]\n'
                     'E = "29000 ksi"\nI = "1000 in^4"\n')
    result = run("lines", model, "-e", "deflection", "--at", "20", "--out", tmp_path / "o",
                 "--no-figure")
    assert result.exit_code == 0, result.stderr
    document = json.loads((tmp_path / "o" / "lines.json").read_text())
    expected = 480.0**3 / (48 * 29000.0 * 1000.0)  # in per kip, L = 480 in
    assert document["lines"][0]["max"]["ordinate"] == pytest.approx(expected, rel=1e-12)
    assert not (tmp_path / "o" / "lines.png").exists()


@pytest.mark.parametrize(("args", "fragments"), [
    (["--at", "30"], ["--at", "0 to 23.4 m", '"30"']),
    (["--at", "3 kN"], ["--at", "which is a force"]),
    (["-e", "reaction", "--support", "9"], ["--support", "0 to 3", "9"]),
    (["-e", "support-moment"], ["--effect support-moment", "restrains rotation"]),
    (["-e", "reaction", "--at", "3"], ["--at", "moment, shear"]),
    (["-e", "moment", "--support", "1"], ["--support", "reaction"]),
    (["-e", "momentum"], ["--effect", "momentum"]),
    (["--bogus"], ["--bogus"]),
])
def test_bad_options_give_one_line(args, fragments):
    assert_one_line_error(run("lines", SI_EXAMPLE, *args), *fragments)


def test_reaction_at_a_free_support_is_refused(tmp_path):
    model = tmp_path / "cantilever.toml"
    model.write_text('units = "SI"\n[beam]\nspans = [4.0]\nsupports = ["fixed", "free"]\n'
                     "EI = 2.0e4\n")
    assert_one_line_error(run("lines", model, "-e", "reaction", "--support", "1"),
                          "--support 1", "free")
    result = run("lines", model, "-e", "support-moment", "-e", "reaction")
    assert result.exit_code == 0, result.stderr
    assert "support moment at support 0" in result.output


def test_missing_model_file_and_missing_argument():
    assert_one_line_error(run("summary", "nowhere.toml"), "nowhere.toml: file")
    assert_one_line_error(run("lines"), "MODEL")


def test_out_that_is_a_file_leaves_it_alone(tmp_path):
    target = tmp_path / "taken"
    target.write_text("keep me")
    assert_one_line_error(run("lines", SI_EXAMPLE, "--out", target), "--out")
    assert target.read_text() == "keep me"


def test_bad_input_leaves_earlier_outputs_untouched(tmp_path):
    assert run("lines", SI_EXAMPLE, "--at", "3.6", "--out", tmp_path).exit_code == 0
    before = {p.name: p.read_bytes() for p in tmp_path.iterdir()}
    assert_one_line_error(run("lines", SI_EXAMPLE, "--at", "99", "--out", tmp_path), "--at")
    assert {p.name: p.read_bytes() for p in tmp_path.iterdir()} == before


def test_written_files_get_ordinary_permissions(tmp_path):
    written, _ = _io.write_output_set(tmp_path / "out", {"a.txt": "x"})
    mask = os.umask(0)
    os.umask(mask)
    assert written[0].stat().st_mode & 0o777 == 0o666 & ~mask
    assert (tmp_path / "out").stat().st_mode & 0o777 == 0o777 & ~mask


# --- --out: a folder holds one run's results ----------------------------------------------


def test_a_second_run_into_a_used_folder_leaves_only_its_own_files(tmp_path):
    from trundle.io.output_set import MANIFEST

    root = Path(__file__).resolve().parents[1]
    crane_model = root / "examples" / "cranes" / "hall_kestrel_quay_si.toml"
    floor_model = root / "examples" / "harbour_lane_floor_girder_si.toml"
    out = tmp_path / "results"
    out.mkdir()
    (out / "my notes.txt").write_text("the user's own file")
    first = run("envelope", crane_model, "--out", out, "--no-figure", "--no-report")
    assert first.exit_code == 0, first.output
    assert (out / "runway-fatigue.csv").is_file()
    second = run("envelope", floor_model, "--out", out, "--no-figure")
    assert second.exit_code == 0, second.output
    present = {p.name for p in out.iterdir()}
    assert present == {"envelope.csv", "reactions.csv", "envelope.json", "report.html",
                       MANIFEST, "my notes.txt"}
    assert "removed the earlier run's" in second.output and "runway-fatigue.csv" in second.output
    assert (out / "my notes.txt").read_text() == "the user's own file"  # never touched
    for name in ("envelope.csv", "reactions.csv"):  # and the CSVs say where they come from
        assert floor_model.name in (out / name).read_text().splitlines()[0]


def test_a_damaged_manifest_never_reaches_outside_the_folder(tmp_path):
    from trundle.io.output_set import MANIFEST, write_output_set

    outside = tmp_path / "keep.txt"
    outside.write_text("x")
    out = tmp_path / "out"
    out.mkdir()
    (out / MANIFEST).write_text('{"files": ["../keep.txt", "/etc/passwd", 3, "old.csv"]}')
    (out / "old.csv").write_text("old")
    written, removed = write_output_set(out, {"new.csv": "a\n"})
    assert [p.name for p in removed] == ["old.csv"] and outside.is_file()
    assert {p.name for p in out.iterdir()} == {"new.csv", MANIFEST}
