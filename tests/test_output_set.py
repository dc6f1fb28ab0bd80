"""Output sets replaced as a whole (trundle.io.output_set): killed, interrupted or disk-full
runs leave the previous set intact; a lock keeps two runs apart; a blank --out is refused."""

from __future__ import annotations

import errno
import json
import os
import signal
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

import trundle.io.output_set as output_set
from trundle.io.output_set import (
    MANIFEST,
    OutputSet,
    OutputSetError,
    check_out_option,
    lock_path,
    write_output_set,
)

SRC = Path(__file__).resolve().parents[1] / "src"
OLD = {"envelope.csv": "old csv\n", "envelope.json": '{"old": true}\n', "report.html": "old"}
NEW = {"envelope.csv": "new csv\n", "envelope.json": '{"new": true}\n', "report.html": "new"}


def contents(folder: Path) -> dict[str, str]:
    return {p.name: p.read_text() for p in folder.iterdir() if p.name != MANIFEST}


def strays(parent: Path, name: str) -> list[str]:
    """Staging or moved-aside folders left beside the target."""
    return [p.name for p in parent.iterdir()
            if p.name.startswith((f".{name}.new-", f".{name}.old-"))]


def test_first_set_and_replacement(tmp_path):
    out = tmp_path / "results"
    written, removed = write_output_set(out, OLD)
    assert sorted(p.name for p in written) == sorted(OLD) and removed == []
    assert contents(out) == OLD
    manifest = json.loads((out / MANIFEST).read_text())
    assert sorted(manifest["files"]) == sorted(OLD)
    _, removed = write_output_set(out, {"envelope.csv": "only this\n"})
    assert contents(out) == {"envelope.csv": "only this\n"}  # no old report.html beside it
    assert sorted(p.name for p in removed) == ["envelope.json", "report.html"]
    assert strays(tmp_path, "results") == []


def test_empty_out_refused():
    for blank in ("", "  "):
        with pytest.raises(OutputSetError, match="found an empty name"):
            check_out_option(blank)


def test_file_as_out_refused(tmp_path):
    (tmp_path / "f").write_text("x")
    with pytest.raises(OutputSetError, match="expected a folder, found a file"):
        write_output_set(tmp_path / "f", NEW)


def test_the_users_own_files_stay_with_every_set(tmp_path):
    mine = tmp_path / "documents"
    mine.mkdir()
    (mine / "thesis.txt").write_text("precious")
    inode = (mine / "thesis.txt").stat().st_ino
    write_output_set(mine, OLD)
    write_output_set(mine, NEW)
    assert contents(mine) == {**NEW, "thesis.txt": "precious"}
    assert (mine / "thesis.txt").stat().st_ino == inode  # the same file, not a copy
    assert strays(tmp_path, "documents") == []


def test_a_folder_of_the_users_own_folders_is_refused(tmp_path):
    mine = tmp_path / "documents"
    (mine / "chapters").mkdir(parents=True)
    with pytest.raises(OutputSetError, match='your own folder "chapters"'):
        write_output_set(mine, NEW)
    assert os.listdir(mine) == ["chapters"]


def test_another_commands_set_is_refused_before_any_work(tmp_path):
    out = tmp_path / "results"
    write_output_set(out, {"lines.csv": "x\n"}, command="lines")
    with pytest.raises(OutputSetError, match="found the outputs of 'trundle lines'"):
        with OutputSet(out, command="envelope"):
            pass
    assert contents(out) == {"lines.csv": "x\n"}
    write_output_set(out, {"lines.csv": "y\n"}, command="lines")  # the same command may
    assert contents(out) == {"lines.csv": "y\n"}


def test_a_damaged_manifest_is_refused(tmp_path):
    out = tmp_path / "results"
    out.mkdir()
    (out / MANIFEST).write_text("{not json")
    (out / "envelope.csv").write_text("whose?")
    with pytest.raises(OutputSetError, match="damaged"):
        write_output_set(out, NEW)
    assert (out / "envelope.csv").read_text() == "whose?"


def test_existing_empty_folder_is_used(tmp_path):
    out = tmp_path / "empty"
    out.mkdir()
    write_output_set(out, NEW)
    assert contents(out) == NEW


def test_second_run_into_the_same_folder_is_refused(tmp_path):
    out = tmp_path / "results"
    with OutputSet(out) as first:
        with pytest.raises(OutputSetError, match="another trundle run is writing"):
            with OutputSet(out):
                pass
        first.commit(NEW)
    write_output_set(out, OLD)  # the lock is released afterwards
    assert contents(out) == OLD
    assert lock_path(out).exists() and lock_path(out).parent == tmp_path


def test_disk_full_keeps_the_previous_set(tmp_path, monkeypatch):
    out = tmp_path / "results"
    write_output_set(out, OLD)
    real = output_set._write_file
    calls = []

    def full_disk(path, payload):
        calls.append(path.name)
        if len(calls) == 2:
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), str(path))
        real(path, payload)

    monkeypatch.setattr(output_set, "_write_file", full_disk)
    with pytest.raises(OutputSetError, match="No space left on device.*unchanged"):
        write_output_set(out, NEW)
    assert contents(out) == OLD
    assert strays(tmp_path, "results") == []


def test_keyboard_interrupt_keeps_the_previous_set(tmp_path):
    out = tmp_path / "results"
    write_output_set(out, OLD)

    def interrupt(name: str) -> None:
        if name == "envelope.json":
            raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        with OutputSet(out, progress=interrupt) as outputs:
            outputs.commit(NEW)
    assert contents(out) == OLD
    assert strays(tmp_path, "results") == []


def test_fallback_without_atomic_exchange(tmp_path, monkeypatch):
    monkeypatch.setattr(output_set, "_exchange", lambda a, b: False)
    out = tmp_path / "results"
    write_output_set(out, OLD)
    write_output_set(out, NEW)
    assert contents(out) == NEW
    assert strays(tmp_path, "results") == []


def test_tidy_puts_back_a_set_moved_aside(tmp_path):
    out = tmp_path / "results"
    write_output_set(out, OLD)
    aside = tmp_path / ".results.old-abc"
    os.rename(out, aside)  # as if killed between the two renames of the fallback
    (tmp_path / ".results.new-xyz").mkdir()  # and a half-written staging folder
    with OutputSet(out):
        assert contents(out) == OLD
    assert strays(tmp_path, "results") == []


_CHILD = textwrap.dedent("""
    import sys, time
    from trundle.io.output_set import OutputSet
    files = {"envelope.csv": "new csv\\n", "envelope.json": "{}", "report.html": "new"}

    def pause(name):
        print(name, flush=True)
        if name == "envelope.json":
            time.sleep(60)  # killed here, in the middle of its writes

    with OutputSet(sys.argv[1], progress=pause) as outputs:
        outputs.commit(files)
""")


def test_sigkill_during_the_writes_leaves_the_previous_set_intact(tmp_path):
    out = tmp_path / "results"
    write_output_set(out, OLD)
    environment = {**os.environ, "PYTHONPATH": str(SRC)}
    child = subprocess.Popen([sys.executable, "-c", _CHILD, str(out)], env=environment,
                             stdout=subprocess.PIPE, text=True)
    try:
        assert child.stdout is not None
        assert child.stdout.readline().strip() == "envelope.csv"
        assert child.stdout.readline().strip() == "envelope.json"
        child.send_signal(signal.SIGKILL)
        assert child.wait(timeout=30) == -signal.SIGKILL
    finally:
        if child.poll() is None:
            child.kill()
            child.wait()
        if child.stdout is not None:
            child.stdout.close()
    assert contents(out) == OLD  # the previous set, whole
    assert not [p for p in out.iterdir() if p.name.endswith(".part")]
    # the killed run left its staging folder beside the target; the next run tidies it
    assert strays(tmp_path, "results")
    write_output_set(out, NEW)
    assert contents(out) == NEW
    assert strays(tmp_path, "results") == []


def test_the_current_folder_is_refused(tmp_path, monkeypatch):
    # replacing it as a whole would leave the shell in a removed folder
    (tmp_path / "notes.txt").write_text("mine")
    monkeypatch.chdir(tmp_path)
    for name in (".", str(tmp_path), ".."):
        with pytest.raises(OutputSetError, match="other than the current one"):
            write_output_set(name, NEW)
    assert os.listdir(tmp_path) == ["notes.txt"]
