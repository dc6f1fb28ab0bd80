"""The fleet benchmark's quick mode runs to the end (speed is printed, never asserted)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).parents[1]


def test_bench_fleet_quick_runs() -> None:
    env = {**os.environ, "PYTHONPATH": str(ROOT / "src")}
    done = subprocess.run([sys.executable, str(ROOT / "scripts" / "bench_fleet.py"), "--quick"],
                          capture_output=True, text=True, env=env, timeout=600)
    assert done.returncode == 0, done.stderr[-2000:]
    for mark in ("(a) one process", "(b) LocalCluster, 2 workers", "parallel efficiency",
                 "(c) whole workflow", "(d) pieces visited", "(e) per worker, resident set"):
        assert mark in done.stdout, done.stdout
