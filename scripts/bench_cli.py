"""Benchmark: the whole `trundle envelope MODEL --out DIR` run at two section counts.

The job: examples/millrace_access_bridge_us.toml (invented; two 66 ft spans, a five-axle
truck with a searched spacing, a lane load and both acting together) with its sections
replaced by a regular spacing, so that the run has about N1 and N2 sections (440 and 4,400;
``--quick``: 30 and 60, numbers that mean nothing).

Printed (read the ratios; absolute times depend on the machine and how loaded it is, so the
load average is printed at the start and at the end):
  1. per size: CPU seconds of the whole CLI run in a fresh process (figures and report
     included), CPU per section, peak resident memory;
  2. per size: the split of one in-process run into its stages (read, scan, records and
     CSV, JSON, figures, report);
  3. the growth exponent of the whole run and of each stage between the two sizes
     (log(t2 / t1) / log(n2 / n1): 1 is linear).

Run: PYTHONPATH=src python scripts/bench_cli.py [--quick]
"""

from __future__ import annotations

import json
import math
import os
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
MODEL = ROOT / "examples" / "millrace_access_bridge_us.toml"
LENGTH_FT = 132.0  # the model's two spans


def _model(folder: Path, sections: int) -> Path:
    """The example with a regular section spacing giving about ``sections`` sections."""
    text = MODEL.read_text()
    spacing = LENGTH_FT / sections
    text, count = re.subn(r"(?m)^at = \[.*$", f'every = "{spacing:.6g} ft"', text)
    if count != 1:
        raise SystemExit("bench_cli: the example's [sections] line has changed; update me")
    path = folder / f"millrace_{sections}.toml"
    path.write_text(text)
    return path


def _cli_run(model: Path, out: Path) -> tuple[float, float]:
    """(CPU seconds, peak resident MB) of `trundle envelope model --out out` in a child."""
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(ROOT / "src"), *filter(None, [os.environ.get("PYTHONPATH")])])}
    child = subprocess.Popen([sys.executable, "-m", "trundle", "envelope", str(model),
                              "--out", str(out), "--quiet"], env=env, cwd=ROOT,
                             stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    child.returncode = os.waitstatus_to_exitcode(status)
    stderr = child.stderr.read().decode() if child.stderr else ""
    if child.returncode != 0:
        raise SystemExit(f"bench_cli: trundle envelope failed:\n{stderr[-2000:]}")
    return usage.ru_utime + usage.ru_stime, usage.ru_maxrss / 1024.0


STAGES = ("read", "scan", "records and CSV", "JSON", "figures", "report")


def _stages(model: str) -> dict[str, float]:
    """CPU seconds of each stage of one in-process run (what the CLI does, step by step)."""
    from trundle.cli import _load
    from trundle.io.loads import loads_of
    from trundle.io.outputs import Provenance
    from trundle.report.envelope_data import collect
    from trundle.report.envelope_figures import envelope_figures
    from trundle.report.envelope_report import envelope_html
    from trundle.report.envelope_tables import envelope_csv, envelope_json, reactions_csv
    from trundle.report.figures import figure_bytes
    from trundle.report.positions_figure import positions_figures
    from trundle.report.sections import SECTIONS
    from trundle.workflows import moving_loads

    found: dict[str, float] = {}
    clock = time.process_time
    start = clock()
    loaded = _load(model, ())
    found["read"] = clock() - start
    start = clock()
    moving = moving_loads.run(moving_loads.MovingLoadsSpec(
        loaded.beam, [entry.case for entry in loads_of(loaded)], sections=loaded.sections))
    results = collect(loaded, Provenance.of_model(loaded, model), moving,
                      providers=SECTIONS)
    found["scan"] = clock() - start
    start = clock()
    envelope_csv(results)
    reactions_csv(results)
    found["records and CSV"] = clock() - start
    start = clock()
    envelope_json(results)
    found["JSON"] = clock() - start
    start = clock()
    figures = envelope_figures(results)
    svgs = {name: figure_bytes(figure, "svg") for name, figure in figures.items()}
    for figure in figures.values():
        figure_bytes(figure, "png")
    found["figures"] = clock() - start
    start = clock()
    for name, figure in positions_figures(results).items():
        svgs[name] = figure_bytes(figure, "svg")
    envelope_html(results, svgs)
    found["report"] = clock() - start
    return found


def _stages_in_child(model: Path) -> dict[str, float]:
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(ROOT / "src"), *filter(None, [os.environ.get("PYTHONPATH")])])}
    done = subprocess.run([sys.executable, __file__, "--stages", str(model)], env=env,
                          cwd=ROOT, capture_output=True, text=True, check=False)
    if done.returncode != 0:
        raise SystemExit(f"bench_cli: the stage run failed:\n{done.stderr[-2000:]}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def _exponent(t1: float, t2: float, n1: int, n2: int) -> float:
    if t1 <= 0 or t2 <= 0:
        return math.nan
    return math.log(t2 / t1) / math.log(n2 / n1)


def main() -> None:
    if len(sys.argv) == 3 and sys.argv[1] == "--stages":
        print(json.dumps(_stages(sys.argv[2])))
        return
    quick = "--quick" in sys.argv
    sizes = (30, 60) if quick else (440, 4400)
    print(f"load average at start: {os.getloadavg()[0]:.2f}")
    with tempfile.TemporaryDirectory() as folder:
        rows = []
        for n in sizes:
            model = _model(Path(folder), n)
            if not quick:  # numba's cache and the files' pages warm, as on a second run
                _cli_run(model, Path(folder) / f"warm-{n}")
            cpu, memory = _cli_run(model, Path(folder) / f"out-{n}")
            rows.append((n, cpu, memory, _stages_in_child(model)))
    print("\nwhole CLI run (trundle envelope --out, figures and report), fresh process:")
    print(f"{'sections':>9} {'CPU s':>8} {'CPU ms/section':>15} {'peak MB':>8}")
    for n, cpu, memory, _ in rows:
        print(f"{n:>9} {cpu:>8.2f} {1000 * cpu / n:>15.2f} {memory:>8.0f}")
    print("\nstages of one in-process run [CPU s] and their growth exponents:")
    print(f"{'stage':>16} " + " ".join(f"{n:>9}" for n, *_ in rows) + "  exponent")
    (n1, cpu1, _, s1), (n2, cpu2, _, s2) = rows
    for stage in STAGES:
        print(f"{stage:>16} {s1[stage]:>9.2f} {s2[stage]:>9.2f}  "
              f"{_exponent(s1[stage], s2[stage], n1, n2):8.2f}")
    print(f"\nwhole run: {cpu2 / cpu1:.2f}x the CPU for {n2 / n1:.0f}x the sections; growth "
          f"exponent {_exponent(cpu1, cpu2, n1, n2):.2f} (1 = linear; the fixed cost of "
          "starting Python and importing trundle keeps it below 1)")
    print(f"load average at end: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
