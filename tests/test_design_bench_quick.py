"""The design benchmark's quick mode runs (no timing is asserted: speed lives in the script)."""

from __future__ import annotations

import runpy
import sys
from pathlib import Path

SCRIPT = Path(__file__).resolve().parents[1] / "scripts" / "bench_design.py"


def test_bench_design_quick(capsys, monkeypatch) -> None:
    monkeypatch.setattr(sys, "argv", [str(SCRIPT), "--quick"])
    runpy.run_path(str(SCRIPT), run_name="__main__")
    out = capsys.readouterr().out
    assert "ratio (b)/(a)" in out and "sections: 31" in out
