"""Reading input files safely (trundle.io.source): regular files only, read once and hashed
from the same bytes, encodings named, nesting bounded, and where `use` may read from."""

from __future__ import annotations

import hashlib
import os
import socket
import threading
from pathlib import Path

import pytest

from trundle.io.source import (
    SourceError,
    nesting_depth,
    parse_toml,
    read_source,
    resolve_use,
)

MODEL = 'title = "t"\nunits = "SI"\n[beam]\nspans = [10.0]\nsupports = ["pin", "pin"]\n'


def test_regular_file_read_once_and_hashed_from_the_same_bytes(tmp_path):
    path = tmp_path / "m.toml"
    path.write_bytes(MODEL.encode())
    source = read_source(path)
    assert source.text == MODEL
    assert source.sha256 == hashlib.sha256(MODEL.encode()).hexdigest()


def test_utf8_byte_order_mark_is_accepted_and_hashed(tmp_path):
    data = b"\xef\xbb\xbf" + MODEL.encode()
    path = tmp_path / "m.toml"
    path.write_bytes(data)
    source = read_source(path)
    assert source.text == MODEL
    assert source.sha256 == hashlib.sha256(data).hexdigest()


@pytest.mark.parametrize(("encoding", "named"), [("utf-16", "UTF-16"), ("utf-16-be", "UTF-16"),
                                                 ("utf-32", "UTF-32")])
def test_other_encodings_are_named(tmp_path, encoding, named):
    path = tmp_path / "m.toml"
    path.write_bytes(MODEL.encode(encoding))
    with pytest.raises(SourceError) as caught:
        read_source(path)
    assert named in str(caught.value) and "save the file as UTF-8" in str(caught.value)


def test_latin1_byte_names_the_offset(tmp_path):
    path = tmp_path / "m.toml"
    path.write_bytes('title = "Br\xfccke"\n'.encode("latin-1"))
    with pytest.raises(SourceError, match="offset 11"):
        read_source(path)


def test_folder_refused(tmp_path):
    with pytest.raises(SourceError, match="found a folder"):
        read_source(tmp_path)


def test_missing_file(tmp_path):
    with pytest.raises(SourceError, match="expected an existing model file, found none"):
        read_source(tmp_path / "nothing.toml")


def test_fifo_refused_at_once_without_blocking(tmp_path):
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    outcome: list[object] = []

    def attempt() -> None:
        try:
            read_source(fifo)
        except SourceError as error:
            outcome.append(error)

    worker = threading.Thread(target=attempt, daemon=True)
    worker.start()
    worker.join(10.0)  # a hang guard, not a speed check: opening a FIFO would block forever
    if worker.is_alive():  # unblock the reader so the test process can end, then fail
        with open(fifo, "wb"):
            pass
        pytest.fail("reading a FIFO blocked")
    assert outcome and "named pipe (FIFO)" in str(outcome[0])


def test_device_refused():
    with pytest.raises(SourceError, match="found a device"):
        read_source("/dev/zero")


def test_socket_refused(tmp_path):
    path = tmp_path / "s.sock"
    server = socket.socket(socket.AF_UNIX)
    try:
        server.bind(str(path))
        with pytest.raises(SourceError, match="found a socket"):
            read_source(path)
    finally:
        server.close()


def test_oversized_file_refused_without_reading(tmp_path):
    path = tmp_path / "big.toml"
    with open(path, "wb") as handle:
        handle.truncate(50 * 1024 * 1024)  # sparse: no disk used
    with pytest.raises(SourceError, match="at most 4 MiB"):
        read_source(path)


def test_nesting_depth_counts_outside_strings_and_comments():
    assert nesting_depth('a = [[1], [2]]\n') == 2
    assert nesting_depth('a = "[[[[[[" # [[[[[\nb = \'{{{{\'\n') == 0
    assert nesting_depth('a = """ [[[ "\\"" ]"""\n[t]\nb = {c = [1]}\n') == 2


def test_deep_nesting_refused_before_tomllib_recurses():
    text = "a = " + "[" * 100_000 + "]" * 100_000 + "\n"
    # refused with our message, not a RecursionError from tomllib
    with pytest.raises(SourceError, match="nested at most 32 deep"):
        parse_toml(text, "m.toml")
    inline = "a = " + "{b = " * 40 + "1" + "}" * 40 + "\n"
    with pytest.raises(SourceError, match="nested"):
        parse_toml(inline, "m.toml")


def test_ordinary_nesting_parses():
    assert parse_toml('[[load]]\nname = "x"\nfactors = {"a" = 1.2}\n', "m.toml") == \
        {"load": [{"name": "x", "factors": {"a": 1.2}}]}


def test_deep_dotted_keys_refused_after_parsing():
    text = "a" + ".a" * 100 + " = 1\n"
    with pytest.raises(SourceError, match="nested"):
        parse_toml(text, "m.toml")


# --- where `use` may read from ------------------------------------------------------------


@pytest.fixture()
def project(tmp_path: Path) -> Path:
    (tmp_path / "project" / "models").mkdir(parents=True)
    (tmp_path / "project" / "models" / "truck.toml").write_text("x = 1\n")
    (tmp_path / "elsewhere").mkdir()
    (tmp_path / "elsewhere" / "secret.toml").write_text('name = "do not show"\n')
    return tmp_path


def test_relative_path_inside_the_tree(project):
    folder = project / "project"
    assert resolve_use("models/truck.toml", folder) == folder / "models/truck.toml"


@pytest.mark.parametrize("written", ["../elsewhere/secret.toml", "/etc/passwd",
                                     "~/.bashrc", "models/../../elsewhere/secret.toml",
                                     "/proc/self/environ"])
def test_paths_outside_the_tree_refused(project, written):
    with pytest.raises(SourceError) as caught:
        resolve_use(written, project / "project", shown="m.toml", key="load[0].use")
    message = str(caught.value)
    assert message.startswith("m.toml: load[0].use: expected a path")
    assert "--allow-path" in message
    assert "do not show" not in message


def test_symbolic_link_leaving_the_tree_refused(project):
    link = project / "project" / "link.toml"
    link.symlink_to(project / "elsewhere" / "secret.toml")
    with pytest.raises(SourceError, match="leads outside"):
        resolve_use("link.toml", project / "project")


def test_allowed_folder(project):
    allowed = project / "elsewhere"
    found = resolve_use(str(allowed / "secret.toml"), project / "project", allowed=[allowed])
    assert found == (allowed / "secret.toml").resolve()
    assert resolve_use("../elsewhere/secret.toml", project / "project",
                       allowed=[allowed]).resolve() == found


def test_library_folder_allowed(project):
    library = project / "elsewhere"
    assert resolve_use("../elsewhere/secret.toml", project / "project",
                       library_folder=library).name == "secret.toml"
