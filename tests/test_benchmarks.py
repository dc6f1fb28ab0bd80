"""Every benchmark script runs in its ``--quick`` mode (tiny sizes), so a benchmark broken by a
change fails here instead of at the next measurement. Speed itself is never asserted: the
numbers are for people, in scripts/bench_*.py."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
BENCHMARKS = sorted((ROOT / "scripts").glob("bench_*.py"))


def test_there_are_benchmarks() -> None:
    assert {p.name for p in BENCHMARKS} >= {"bench_envelope.py", "bench_influence.py"}


@pytest.mark.parametrize("script", BENCHMARKS, ids=lambda p: p.name)
def test_benchmark_runs_quick(script: Path) -> None:
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(ROOT / "src"), *filter(None, [os.environ.get("PYTHONPATH")])])}
    done = subprocess.run([sys.executable, str(script), "--quick"], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, done.stderr[-3000:]
    assert "Traceback" not in done.stderr
    # every benchmark prints ratios, not only times
    assert "x" in done.stdout or "ratio" in done.stdout, done.stdout
