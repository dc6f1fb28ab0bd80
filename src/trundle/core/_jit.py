"""Numba options in one place, so every kernel compiles the same way and is cached on disk.

Compiled kernels are cached in a per-user cache folder, not inside the installed package
(which may be read-only, shared between users, or part of a signed installation):
``$XDG_CACHE_HOME/trundle/numba`` (``~/.cache/trundle/numba`` by default). A user who sets
``NUMBA_CACHE_DIR`` keeps their choice. :func:`use_user_cache` runs before numba is imported
(from ``trundle/__init__.py``); numba reads the variable once, at its import.
"""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

JIT_OPTIONS = {"cache": True, "nogil": True}
PARALLEL_OPTIONS = {**JIT_OPTIONS, "parallel": True}


def _kernel_sources_digest() -> str:
    """A short hash of every module that holds compiled code. numba checks only the stamp of
    the file a kernel is written in, so a kernel that calls another module's kernel (the
    fleet scan calls the envelope's loop body) could load a stale compiled copy after that
    other module changed; a folder per version of the sources rules that out."""
    package = Path(__file__).resolve().parents[1]
    digest = hashlib.sha256()
    for path in sorted(package.rglob("*.py")):
        text = path.read_bytes()
        if b"njit" in text:
            digest.update(path.relative_to(package).as_posix().encode())
            digest.update(text)
    return digest.hexdigest()[:16]


def user_cache_folder() -> Path:
    """Where trundle keeps compiled kernels for this user (one folder per version of the
    kernels' sources)."""
    base = os.environ.get("XDG_CACHE_HOME") or ""
    root = Path(base) if base and Path(base).is_absolute() else Path.home() / ".cache"
    return root / "trundle" / "numba" / _kernel_sources_digest()


def use_user_cache() -> None:
    """Set ``NUMBA_CACHE_DIR`` to :func:`user_cache_folder` unless the user has set it."""
    if os.environ.get("NUMBA_CACHE_DIR"):
        return
    try:
        os.environ["NUMBA_CACHE_DIR"] = str(user_cache_folder())
    except RuntimeError:  # no home folder to be found: numba's own default applies
        pass
