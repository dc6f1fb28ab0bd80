"""The hostile corpus: every file of tests/hostile/ through the CLI, bounded in time and memory.

Each file states its expected outcome in its first lines (see tests/hostile/_make_corpus.py,
which writes them): a one-line error with exit code 2 naming the key, a sane result for valid
but extreme input, or (once wired) a one-line plausibility warning. Whatever the outcome:
no traceback, no hang, no kill by the memory limit, nothing left in --out after an error,
no spreadsheet formula or control character in what is written.

The corpus runs in one subprocess (tests/hostile_driver.py) that imports trundle once and
forks a bounded child per file. Cases that fail today and are fixed by the wiring phase are
listed in XFAIL (strict: a case that starts passing must be removed from the list).
"""

from __future__ import annotations

import csv
import json
import os
import re
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest

HERE = Path(__file__).resolve().parent
HOSTILE = HERE / "hostile"
CASES = sorted(HOSTILE.glob("*.toml"))
sys.path.insert(0, str(HERE))
from hostile_driver import header  # noqa: E402

XFAIL: dict[str, str] = {}  # none left: every case passes

FORMULA = ("=", "+", "-", "@")
CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


@pytest.fixture(scope="module")
def outcomes(tmp_path_factory: pytest.TempPathFactory) -> dict[str, dict[str, Any]]:
    """Every case run once by the driver (one subprocess for the whole corpus)."""
    work = tmp_path_factory.mktemp("hostile")
    results = work / "results.json"
    environment = {**os.environ, "PYTHONPATH": str(HERE.parent / "src")}
    # the driver bounds each case itself; this only guards against the driver hanging
    subprocess.run([sys.executable, str(HERE / "hostile_driver.py"), str(work / "runs"),
                    str(results), *map(str, CASES)], env=environment, check=True,
                   timeout=1800)
    return json.loads(results.read_text())


def test_corpus_is_complete():
    assert len(CASES) >= 150
    kinds = {header(case).get("expect", "").split(" ")[0] for case in CASES}
    assert kinds == {"error", "ok", "ok-or-error", "warning"}
    assert set(XFAIL) <= {case.stem for case in CASES}


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _check_outputs(out: Path) -> None:
    """What a successful run wrote: no formula cells, no control characters, no NaN/inf."""
    if not out.is_dir():
        return
    for path in out.iterdir():
        if path.suffix == ".csv":
            with open(path, newline="", encoding="utf-8") as handle:
                for row in csv.reader(handle):
                    for cell in row:
                        if _is_number(cell):
                            assert cell.lower().lstrip("+-") not in ("nan", "inf"), path.name
                        else:
                            assert not cell.startswith(FORMULA), (path.name, cell)
                        assert not CONTROL.search(cell), (path.name, cell)
        elif path.suffix in (".json", ".html"):
            text = path.read_text(encoding="utf-8")
            assert not CONTROL.search(text), path.name
            if path.suffix == ".json":  # (figures embedded in HTML are base64: any letters)
                assert not re.search(r"\b(NaN|-?Infinity)\b", text), path.name


@pytest.mark.parametrize("case", [
    pytest.param(case, id=case.stem, marks=[pytest.mark.xfail(
        strict=True, reason=XFAIL[case.stem])] if case.stem in XFAIL else [])
    for case in CASES])
def test_hostile_case(case: Path, outcomes: dict[str, dict[str, Any]]):
    info = header(case)
    outcome = outcomes[case.stem]
    assert outcome["status"] == "run", outcome
    code, stdout, stderr = outcome["exit"], outcome["stdout"], outcome["stderr"]
    # a negative code is a kill: by the hang guards (SIGXCPU for CPU time, SIGALRM/SIGKILL on
    # the clock) or the memory limit
    assert code >= 0, f"killed by signal {-code} after {outcome['seconds']} s"
    assert "Traceback" not in stderr, stderr[-2000:]
    out = Path(outcome["out"])
    kind, _, detail = info["expect"].partition(" ")
    lines = stderr.splitlines()
    if kind == "ok-or-error":
        kind = "error" if code == 2 else "ok"
        detail = ""
    if kind == "error":
        assert code == 2, (code, stderr)
        assert len(lines) == 1 and lines[0].startswith("error: "), stderr
        for fragment in filter(None, (f.strip() for f in detail.split("|"))):
            assert fragment in lines[0], (fragment, lines[0])
        if info.get("special") != "out-is-file":
            assert not out.exists() or not any(out.iterdir()), "files left in --out"
        return
    assert code == 0, stderr
    assert not [line for line in lines if line.startswith("error")], stderr
    assert not CONTROL.search(stdout), "control characters reached the terminal"
    _check_outputs(out)
    if kind == "warning":
        warnings = [line for line in lines if line.startswith("warning: ")]
        assert any(detail in line for line in warnings), stderr
