"""Compiled kernels are cached in a per-user cache folder, not inside the package
(trundle._jit); a user's own NUMBA_CACHE_DIR is kept."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

SRC = Path(__file__).resolve().parents[1] / "src"
_PROBE = "import trundle, numba; print(numba.config.CACHE_DIR)"


def _cache_dir_seen(**environment: str) -> str:
    env = {k: v for k, v in os.environ.items()
           if k not in ("NUMBA_CACHE_DIR", "XDG_CACHE_HOME")}
    env.update(environment, PYTHONPATH=str(SRC))
    done = subprocess.run([sys.executable, "-c", _PROBE], env=env, capture_output=True,
                          text=True, timeout=120, check=True)
    return done.stdout.strip()


def test_cache_goes_to_the_user_cache_folder(tmp_path):
    assert _cache_dir_seen(XDG_CACHE_HOME=str(tmp_path)) == str(tmp_path / "trundle" / "numba")


def test_default_is_under_home(tmp_path):
    assert _cache_dir_seen(HOME=str(tmp_path)) == str(tmp_path / ".cache" / "trundle" / "numba")


def test_user_setting_is_kept(tmp_path):
    mine = tmp_path / "mine"
    assert _cache_dir_seen(NUMBA_CACHE_DIR=str(mine)) == str(mine)
