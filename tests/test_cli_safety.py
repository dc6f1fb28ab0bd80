"""The CLI's safety wiring (issue 10, phase 2): --allow-path for `use`, plausibility warnings
on stderr, one output set per folder (lock, another command's set refused), provenance from
the bytes parsed, terminal text without control characters."""

from __future__ import annotations

import hashlib
import shutil
from pathlib import Path

from cli_helpers import assert_one_line_error, run
from trundle.io.modelfile import load_model
from trundle.io.output_set import MANIFEST, OutputSet
from trundle.io.outputs import Provenance
from trundle.loads import library

ROOT = Path(__file__).resolve().parents[1]
SI_EXAMPLE = ROOT / "examples" / "harbour_lane_floor_girder_si.toml"
BEAM = ('units = "SI"\n[beam]\nspans = [10.0, 12.0]\nsupports = ["pin", "pin", "pin"]\n'
        'EI = "2e5 kN*m^2"\n')


def _load_model_file(folder: Path) -> Path:
    """A load-model file (a copy of a library one) in ``folder``."""
    folder.mkdir(parents=True, exist_ok=True)
    name = "demo-service-truck"
    copy = folder / f"{name}.toml"
    shutil.copyfile(library.path_of(name), copy)
    return copy


def test_use_outside_the_model_folder_needs_allow_path(tmp_path):
    shared = _load_model_file(tmp_path / "shared")
    model = tmp_path / "project" / "girder.toml"
    model.parent.mkdir()
    model.write_text(BEAM + f'[[load]]\nuse = "../shared/{shared.name}"\n')
    assert_one_line_error(run("summary", model), "load[0].use", "--allow-path")
    assert run("summary", model, "--allow-path", shared.parent).exit_code == 0
    # an absolute path, too, only inside an allowed folder
    model.write_text(BEAM + f'[[load]]\nuse = "{shared}"\n')
    assert_one_line_error(run("envelope", model), "load[0].use", "absolute path")
    result = run("envelope", model, "--allow-path", shared.parent)
    assert result.exit_code == 0, result.stderr
    assert run("lines", model, "--allow-path", shared.parent).exit_code == 0


def test_allow_path_must_be_an_existing_folder(tmp_path):
    result = run("summary", SI_EXAMPLE, "--allow-path", tmp_path / "missing")
    assert result.exit_code == 2 and "--allow-path" in result.stderr


def test_plausibility_warning_printed_once_on_stderr(tmp_path):
    model = tmp_path / "soft.toml"
    model.write_text(BEAM.replace('EI = "2e5 kN*m^2"', 'E = "200 MPa"\nI = "55200 cm^4"'))
    result = run("summary", model)
    assert result.exit_code == 0, result.stderr
    lines = result.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith("warning: beam.E = 0.2 GPa")
    assert "warning: " not in result.stdout


def test_no_warning_on_an_example():
    result = run("envelope", SI_EXAMPLE)
    assert result.exit_code == 0 and result.stderr == ""


def test_lines_refused_in_a_folder_of_envelope_outputs(tmp_path):
    out = tmp_path / "results"
    assert run("envelope", SI_EXAMPLE, "--out", out, "--no-figure",
               "--no-report").exit_code == 0
    before = {p.name: p.read_bytes() for p in out.iterdir()}
    assert_one_line_error(run("lines", SI_EXAMPLE, "--out", out),
                          f"--out {out}", "outputs of 'trundle envelope'")
    assert {p.name: p.read_bytes() for p in out.iterdir()} == before


def test_a_run_into_a_folder_being_written_is_refused(tmp_path):
    out = tmp_path / "results"
    with OutputSet(out, command="envelope"):  # another run holds the lock
        assert_one_line_error(run("envelope", SI_EXAMPLE, "--out", out),
                              "another trundle run is writing into this folder")
    assert not out.exists()
    assert run("envelope", SI_EXAMPLE, "--out", out, "--no-figure").exit_code == 0
    assert (out / MANIFEST).is_file()


def test_provenance_is_of_the_bytes_parsed(tmp_path):
    model_file = tmp_path / "girder.toml"
    data = SI_EXAMPLE.read_bytes()
    model_file.write_bytes(data)
    model = load_model(model_file)
    assert model.sha256 == hashlib.sha256(data).hexdigest()
    model_file.write_bytes(data + b"\n# edited after reading\n")  # never read again
    assert Provenance.of_model(model).sha256 == hashlib.sha256(data).hexdigest()


def test_control_characters_never_reach_the_terminal(tmp_path):
    model = tmp_path / "esc.toml"
    model.write_text('title = "Girder \\u001b[31mred\\u202e"\n'
                     'description = "\\u001b[2Jcleared"\n' + BEAM
                     + '[[load]]\nname = "truck\\u001b]0;x\\u0007"\naxles = [100]\n')
    for command in ("summary", "envelope", "lines"):
        result = run(command, model)
        assert result.exit_code == 0, result.stderr
        assert "\x1b" not in result.stdout and "\u202e" not in result.stdout
        assert "\x07" not in result.stdout
    assert "Girder [31mred" in run("summary", model).stdout


def test_load_model_files_are_hashed_from_the_bytes_parsed(tmp_path, monkeypatch):
    import trundle.io.loads as loads_module

    def no_second_read(path):
        raise AssertionError(f"{path} read a second time")

    monkeypatch.setattr(loads_module, "_file_fact", no_second_read)
    shared = _load_model_file(tmp_path / "loads")
    model_file = tmp_path / "girder.toml"
    model_file.write_text(BEAM + f'[[load]]\nuse = "loads/{shared.name}"\n'
                          f'[[load]]\nuse = "demo-service-truck"\nname = "again"\n'
                          '[[load]]\nname = "both"\ntogether = ["again", "'
                          f'{shared.stem}"]\n')
    entries = loads_module.loads_of(load_model(model_file))
    digest = hashlib.sha256(shared.read_bytes()).hexdigest()
    assert entries[0].file_facts[0][1] == digest
    assert entries[1].file_facts[0][1] == hashlib.sha256(
        library.path_of("demo-service-truck").read_bytes()).hexdigest()
    assert len(entries[2].file_facts) == 2


def test_the_html_report_carries_no_control_characters(tmp_path):
    model = tmp_path / "bidi.toml"
    model.write_text('title = "Girder \\u202eright-to-left\\u0085"\n' + BEAM
                     + '[[load]]\nname = "truck\\u2066x"\naxles = [100]\n')
    out = tmp_path / "out"
    assert run("envelope", model, "--out", out, "--no-figure").exit_code == 0
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "Girder right-to-left" in html
    assert not any(c in html for c in "\u202e\u2066\x85\x1b")


def test_design_load_paths_follow_the_same_rule(tmp_path):
    from trundle.loads import library as lib

    example = ROOT / "examples" / "design" / "alder_creek_overpass_hl93_us.toml"
    shared = tmp_path / "shared"
    shared.mkdir()
    shutil.copyfile(lib.path_of("hl93"), shared / "hl93.toml")
    model = tmp_path / "project" / "overpass.toml"
    model.parent.mkdir()
    model.write_text(example.read_text().replace('use = "hl93"', 'use = "../shared/hl93.toml"'))
    assert_one_line_error(run("summary", model), "design_load[0].use", "--allow-path")
    assert run("summary", model, "--allow-path", shared).exit_code == 0
    model.write_text(example.read_text().replace('use = "hl93"', 'use = "/etc/passwd"'))
    assert_one_line_error(run("summary", model), "design_load[0].use", "absolute path")
