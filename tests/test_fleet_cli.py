"""``trundle fleet`` and ``trundle permit`` from the command line (in-process, single-process
engine: Dask itself is tested in test_fleet_dask.py), the inventory reader, and the permit
ratio against closed forms.

Closed form: the midspan moment of a simple span L under one axle P is P·L/4 with the axle at
midspan (statics; any structural-analysis text, e.g. Hibbeler, Structural Analysis, ch. 6,
from memory).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from cli_helpers import assert_one_line_error, run
from trundle.io.design_models import design_model, permit_vehicle
from trundle.io.inventory import InventoryError, read_inventory
from trundle.io.traffic import traffic_bytes
from trundle.io.traffic_generator import invented_traffic
from trundle.workflows.permit import EXCEEDS, PermitSpec
from trundle.workflows.permit import run as run_permit

ONE_AXLE = """units = "SI"
description = "one axle (test)"
source = "test"
axles = ["{P} kN"]
spacings = []
"""


@pytest.fixture
def folder(tmp_path: Path) -> Path:
    (tmp_path / "inventory.csv").write_text(
        "name,units,spans,supports,stiffness,effects\n"
        "span20,SI,20,pin pin,,midspan-moments end-reactions\n"
        "two,SI,15 18,pin pin pin,1 2,moment@7.5 pier-moments pier-reactions\n")
    (tmp_path / "design.toml").write_text(ONE_AXLE.format(P=100))
    (tmp_path / "permit.toml").write_text(ONE_AXLE.format(P=100))
    traffic = invented_traffic(120, seed=9, days=12)
    good = traffic_bytes(traffic, "csv").decode()
    (tmp_path / "good.csv").write_text(good)
    lines = good.splitlines()
    header = lines[0].split(",")
    # rows 3 and 7: a negative first axle, and a gross that does not match
    for row, column, value in ((3, '"axle_1"', "-5"), (7, '"gross"', "9999")):
        cells = lines[row].split(",")
        cells[header.index(column)] = value
        lines[row] = ",".join(cells)
    (tmp_path / "bad.csv").write_text("\n".join(lines) + "\n")
    return tmp_path


def test_bad_rows_fail_exits_2_before_writing_anything(folder: Path) -> None:
    out = folder / "out"
    result = run("fleet", folder / "bad.csv", folder / "inventory.csv", "--out", out,
                 "--single-process", "--no-progress")
    assert_one_line_error(result, "2 bad row(s)", "row 3 (line 4)", "axle_1: expected a weight > 0",
                          "row 7 (line 8)", "gross: the axle weights add up to")
    assert not out.exists()


def test_bad_rows_skip_counts_them_and_runs(folder: Path) -> None:
    out = folder / "out"
    result = run("fleet", folder / "bad.csv", folder / "inventory.csv", "--out", out,
                 "--single-process", "--no-progress", "--bad-rows", "skip", "--design",
                 folder / "design.toml", "--no-figure")
    assert result.exit_code == 0, result.output + result.stderr
    assert "skipped 2 bad row(s)" in result.output
    assert "INVENTED" in result.output and "qualified engineer" in result.output
    skipped = (out / "bad_rows_skipped.csv").read_text().splitlines()
    # the provenance line names the traffic file with its SHA-256
    assert skipped[0].startswith("# trundle") and "bad.csv; SHA-256 " in skipped[0]
    assert len(skipped) == 4 and skipped[2].startswith("3,4,")
    summary = (out / "fleet_summary.csv").read_text().splitlines()
    assert summary[0].startswith("# trundle") and "inventory.csv; SHA-256" in summary[0]
    assert len(summary) == 2 + 2 + 4  # comment, header, span20 (2 effects), two (4 effects)
    assert "INVENTED" in (out / "report.html").read_text()


def test_permit_ratio_against_the_closed_form(folder: Path) -> None:
    bridges = tuple(read_inventory(folder / "inventory.csv"))
    spec = PermitSpec((str(folder / "permit.toml"),), permit_vehicle, bridges,
                      design_model(str(folder / "design.toml")), impact=0.10, limit=1.0,
                      scheduler="none")
    rows = run_permit(spec).rows
    midspan = next(r for r in rows if r.bridge == "span20" and r.effect == "moment at 10")
    assert midspan.permit_max == pytest.approx(110.0 * 20.0 / 4.0, rel=1e-13)
    assert midspan.design_max == pytest.approx(100.0 * 20.0 / 4.0, rel=1e-13)
    assert midspan.ratio == pytest.approx(1.1, rel=1e-13)
    assert midspan.verdict == EXCEEDS
    assert midspan.x_front_axle == pytest.approx(10.0, rel=1e-12)
    # the same vehicle with the same allowance everywhere: every ratio is 1.1
    assert all(r.ratio == pytest.approx(1.1, rel=1e-12) for r in rows if np.isfinite(r.ratio))


def test_permit_command_flags_and_exit_codes(folder: Path) -> None:
    args = ("permit", folder / "permit.toml", folder / "inventory.csv", "--design",
            folder / "design.toml", "--impact", "10", "--single-process")
    flagged = run(*args, "--limit", "1.0", "--out", folder / "permit")
    assert flagged.exit_code == 3, flagged.output + flagged.stderr  # ran; a check exceeds
    assert "EXCEEDS" in flagged.output and "qualified engineer" in flagged.output
    # the verdict (analysis.checks.verdict of ratio / limit) in every output
    permit_csv = (folder / "permit" / "permit.csv").read_text().splitlines()
    assert permit_csv[0].startswith("# trundle") and "permit.toml; SHA-256 " in permit_csv[0]
    assert any("EXCEEDS" in r for r in permit_csv[2:])
    assert "EXCEEDS" in (folder / "permit" / "report.html").read_text()
    passed = run(*args, "--limit", "1.2", "--out", folder / "permit")
    assert passed.exit_code == 0 and "within the limit" in passed.output
    assert "PASS" in passed.output and "EXCEEDS" not in passed.output
    assert "EXCEEDS" not in (folder / "permit" / "permit.csv").read_text()
    assert_one_line_error(run("permit", "no-such-vehicle", folder / "inventory.csv", "--design",
                              folder / "design.toml", "--single-process"), "no-such-vehicle",
                          "vehicle")


def test_inventory_errors_name_the_row_and_column(tmp_path: Path) -> None:
    path = tmp_path / "inv.csv"
    path.write_text("name,spans,supports\na,10 12,pin pin\n")
    with pytest.raises(InventoryError, match=r"row 1 \(line 2\): supports: expected 3"):
        read_inventory(path)
    path.write_text("name,spans,effects\na,10,moment@11\n")
    with pytest.raises(InventoryError, match="expected a position on the beam"):
        read_inventory(path)
    path.write_text("name,spans\na,10\na,12\n")
    with pytest.raises(InventoryError, match="row 2 .*unique name"):
        read_inventory(path)
    result = run("fleet", tmp_path / "none.csv", path, "--single-process")
    assert_one_line_error(result, "none.csv", "expected an existing traffic file")


def test_a_folder_of_model_files_is_an_inventory() -> None:
    bridges = read_inventory(Path(__file__).parents[1] / "examples")
    assert {b.name for b in bridges} >= {"millrace_access_bridge_us"}
    millrace = next(b for b in bridges if b.name == "millrace_access_bridge_us")
    assert millrace.units.name == "US"
    assert any(e.kind == "reaction" for e in millrace.effects)


def test_help_shows_the_cautions() -> None:
    for command in ("fleet", "permit"):
        result = run(command, "--help")
        assert "qualified engineer" in result.output
        assert "verified against the edition in force" in result.output
