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


def _one_folder_per_source_version(seen: str, root: Path) -> None:
    folder = Path(seen)
    assert folder.parent == root
    assert len(folder.name) == 16 and all(c in "0123456789abcdef" for c in folder.name)


def test_cache_goes_to_the_user_cache_folder(tmp_path):
    _one_folder_per_source_version(_cache_dir_seen(XDG_CACHE_HOME=str(tmp_path)),
                                   tmp_path / "trundle" / "numba")


def test_default_is_under_home(tmp_path):
    _one_folder_per_source_version(_cache_dir_seen(HOME=str(tmp_path)),
                                   tmp_path / ".cache" / "trundle" / "numba")


def test_a_change_to_any_kernel_source_gives_another_folder(tmp_path):
    """numba checks only the file a kernel is written in; a kernel calling another module's
    kernel must not load a copy compiled against that module's older source."""
    import shutil

    copy = tmp_path / "src"
    shutil.copytree(SRC, copy)
    env = {k: v for k, v in os.environ.items() if k not in ("NUMBA_CACHE_DIR",)}
    probe = "from trundle.core._jit import user_cache_folder; print(user_cache_folder())"

    def folder() -> str:
        return subprocess.run([sys.executable, "-c", probe], env={**env, "PYTHONPATH": str(copy)},
                              capture_output=True, text=True, timeout=120, check=True
                              ).stdout.strip()

    before = folder()
    kernels = copy / "trundle" / "scan" / "kernels.py"
    kernels.write_text(kernels.read_text() + "\n# changed\n")
    assert folder() != before


def test_user_setting_is_kept(tmp_path):
    mine = tmp_path / "mine"
    assert _cache_dir_seen(NUMBA_CACHE_DIR=str(mine)) == str(mine)
