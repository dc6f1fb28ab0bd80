"""Numba options in one place, so every kernel compiles the same way and is cached on disk.

Compiled kernels are cached in a per-user cache folder, not inside the installed package
(which may be read-only, shared between users, or part of a signed installation):
``$XDG_CACHE_HOME/trundle/numba`` (``~/.cache/trundle/numba`` by default). A user who sets
``NUMBA_CACHE_DIR`` keeps their choice. :func:`use_user_cache` runs before numba is imported
(from ``trundle/__init__.py``); numba reads the variable once, at its import.
"""

from __future__ import annotations

import os
from pathlib import Path

JIT_OPTIONS = {"cache": True, "nogil": True}
PARALLEL_OPTIONS = {**JIT_OPTIONS, "parallel": True}


def user_cache_folder() -> Path:
    """Where trundle keeps compiled kernels for this user."""
    base = os.environ.get("XDG_CACHE_HOME") or ""
    root = Path(base) if base and Path(base).is_absolute() else Path.home() / ".cache"
    return root / "trundle" / "numba"


def use_user_cache() -> None:
    """Set ``NUMBA_CACHE_DIR`` to :func:`user_cache_folder` unless the user has set it."""
    if os.environ.get("NUMBA_CACHE_DIR"):
        return
    try:
        os.environ["NUMBA_CACHE_DIR"] = str(user_cache_folder())
    except RuntimeError:  # no home folder to be found: numba's own default applies
        pass
