"""Atomic file writes and output sets: a reader never sees a half-written output, and an
output folder never mixes the results of two runs.

Everything is written to a temporary file in the destination directory and moved over the
target with ``os.replace``, which is atomic on one file system. :func:`write_output_set` also
keeps a manifest (:data:`MANIFEST`) of the files a trundle run wrote into the folder; the next
run into the same folder removes the files of the earlier run that it does not write again.
Files trundle did not write (not in the manifest) are never touched.
"""

from __future__ import annotations

import datetime
import hashlib
import json
import os
import tempfile
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

from trundle._version import __version__


def write_atomic(path: str | os.PathLike[str], data: bytes | str) -> Path:
    """Write ``data`` to ``path`` via a temporary file and a rename; return the path."""
    target = Path(path)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    descriptor, temporary = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part",
                                             dir=target.parent)
    try:
        os.fchmod(descriptor, _file_mode(target))
        with os.fdopen(descriptor, "wb") as handle:
            handle.write(payload)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(temporary, target)
    except BaseException:
        try:
            os.unlink(temporary)
        except FileNotFoundError:
            pass
        raise
    return target


def _file_mode(target: Path) -> int:
    """The mode an ordinary new file would get (mkstemp makes it private)."""
    try:
        return target.stat().st_mode & 0o777
    except FileNotFoundError:
        mask = os.umask(0)
        os.umask(mask)
        return 0o666 & ~mask


def write_all_atomic(directory: str | os.PathLike[str],
                     files: Mapping[str, bytes | str]) -> list[Path]:
    """Write several finished outputs into ``directory`` (created if missing).

    The contents are complete before anything is written, so a failure while preparing them
    leaves the directory untouched; each file is then replaced atomically.
    """
    folder = Path(directory)
    folder.mkdir(parents=True, exist_ok=True)
    return [write_atomic(folder / name, data) for name, data in files.items()]


MANIFEST = ".trundle-output.json"


def _earlier_files(folder: Path) -> list[str]:
    """File names an earlier trundle run wrote into ``folder`` (by its manifest)."""
    try:
        listed = json.loads((folder / MANIFEST).read_text(encoding="utf-8")).get("files", [])
    except (OSError, ValueError, AttributeError):
        return []
    # only plain names of this folder: a damaged manifest must not reach outside it
    return [name for name in listed if isinstance(name, str) and name
            and Path(name).name == name and name not in (".", "..", MANIFEST)]


def write_output_set(directory: str | os.PathLike[str],
                     files: Mapping[str, bytes | str]) -> tuple[list[Path], list[Path]]:
    """Write a run's complete set of outputs into ``directory``; return (written, removed).

    Every file is written atomically, then the manifest naming exactly these files, then the
    files of an earlier trundle run (named by its manifest) that this run did not write are
    removed — so the folder holds this run's results only, plus whatever the user put there.
    """
    folder = Path(directory)
    folder.mkdir(parents=True, exist_ok=True)
    earlier = _earlier_files(folder)
    written = write_all_atomic(folder, files)
    write_atomic(folder / MANIFEST, json.dumps({"written_by": "trundle",
                                                "files": sorted(files)}, indent=1) + "\n")
    removed = []
    for name in earlier:
        path = folder / name
        if name not in files and path.is_file() and not path.is_symlink():
            path.unlink()
            removed.append(path)
    return written, removed


def file_sha256(path: str | os.PathLike[str]) -> str | None:
    """SHA-256 (hex) of a file's bytes, or None if it cannot be read."""
    try:
        return hashlib.sha256(Path(path).read_bytes()).hexdigest()
    except OSError:
        return None


@dataclass(frozen=True)
class Provenance:
    """Where a set of results comes from — an input of every document, never looked up by it.

    Fields
    ------
    model_file : the model file as the user named it ("" for a model built in Python)
    sha256 : SHA-256 of the model file's bytes (hex; "" without a file)
    version : trundle version
    date : when the results were computed (UTC, ISO 8601)
    """

    model_file: str = ""
    sha256: str = ""
    version: str = __version__
    date: str = ""

    @classmethod
    def of_file(cls, path: str | os.PathLike[str], date: str | None = None) -> Provenance:
        """The provenance of results computed now from the model file ``path``."""
        when = date or datetime.datetime.now(datetime.UTC).isoformat(timespec="seconds")
        return cls(str(path), file_sha256(path) or "", __version__, when)

    def csv_comment(self) -> str:
        """The first line of every CSV trundle writes."""
        return (f"# trundle {self.version}; model file {self.model_file or '(built in Python)'}"
                f"; SHA-256 {self.sha256 or '-'}")
