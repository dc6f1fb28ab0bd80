"""Atomic file writes: a reader never sees a half-written output.

Everything is written to a temporary file in the destination directory and moved over the
target with ``os.replace``, which is atomic on one file system.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Mapping
from pathlib import Path


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
