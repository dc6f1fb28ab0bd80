"""Runs the hostile corpus (tests/hostile/*.toml) through the trundle CLI, cheaply and safely.

trundle is imported once; every case then runs in a child forked from this process, so a
case costs no interpreter start-up, yet each one is isolated and bounded:

* memory: ``RLIMIT_AS`` (address space) in the child, so a run that would take gigabytes
  fails at once (and shows as a failure: a MemoryError traceback or a kill);
* time: a limit on the child's CPU time (``RLIMIT_CPU``: a runaway computation gets SIGXCPU,
  whose default action ends it), and a wider wall-clock guard, ``alarm()`` in the child and a
  kill from here, for a child blocked in a system call (a FIFO, say). These are hang guards,
  not speed checks (speed lives in the benchmarks): the CPU limit does not depend on how
  loaded the machine is (a case that drew figures for 9 s was once killed by a 40 s
  wall-clock guard while other work shared the two cores), the wall-clock one is generous.

Usage: ``python tests/hostile_driver.py WORK RESULTS.json CASE.toml …`` writes, per case,
the exit status, stdout, stderr, the time taken, the peak memory and the folder used as
``--out``. Two cases run at a time (the machine has two cores).
"""

from __future__ import annotations

import json
import os
import re
import resource
import shlex
import shutil
import signal
import sys
import time
import traceback
from pathlib import Path

CPU_LIMIT = 40  # CPU seconds per case: a hang guard only
WALL_LIMIT = 180  # seconds per case on the clock (the machine may be shared and slow)
MEMORY_LIMIT = 3 * 1024**3  # bytes of address space per case
WORKERS = 2
DEFAULT_ARGS = "envelope {model} --out {out} --no-figure --no-report"
_REPEAT = re.compile(r"@@REPEAT\((.*?)\|(\d+)\)@@", re.DOTALL)


def header(path: Path) -> dict[str, str]:
    """The ``# expect:``, ``# args:`` and ``# special:`` lines at the top of a case."""
    found: dict[str, str] = {}
    with open(path, "rb") as handle:
        for raw in handle.read(4096).decode("utf-8", "replace").splitlines():
            if not raw.startswith("# "):
                break
            key, _, value = raw[2:].partition(":")
            found[key.strip()] = value.strip()
    return found


def expand(text: str) -> str:
    return _REPEAT.sub(lambda m: m.group(1) * int(m.group(2)), text)


def prepare(case: Path, work: Path) -> tuple[list[str], Path]:
    """The command line of ``case`` and its --out folder, building special inputs in
    ``work``."""
    info = header(case)
    special = info.get("special", "")
    text = case.read_text(encoding="utf-8")
    work.mkdir(parents=True, exist_ok=True)
    out = work / "out"
    model = case.resolve()
    copy = work / "model.toml"
    if "@@REPEAT(" in text:
        copy.write_text(expand(text), encoding="utf-8")
        model = copy
    if special == "fifo":
        model = work / "pipe.toml"
        os.mkfifo(model)
    elif special == "dev-zero":
        model = Path("/dev/zero")
    elif special == "dev-urandom":
        model = Path("/dev/urandom")
    elif special == "folder":
        model = work / "a-folder.toml"
        model.mkdir()
    elif special == "huge-file":
        model = work / "huge.toml"
        with open(model, "wb") as handle:
            handle.truncate(50 * 1024 * 1024)  # sparse: no disk used
    elif special.startswith("use-"):
        copy.write_text(text, encoding="utf-8")
        model = copy
        if special == "use-fifo":
            os.mkfifo(work / "pipe.toml")
        elif special == "use-folder":
            (work / "parts" / "folder.toml").mkdir(parents=True)
        elif special == "use-symlink-dev-zero":
            (work / "zero.toml").symlink_to("/dev/zero")
        elif special == "use-symlink-passwd":
            (work / "passwd.toml").symlink_to("/etc/passwd")
    elif special in ("utf8-bom", "utf16", "utf16-be", "utf32", "latin1", "nul", "png"):
        data = {
            "utf8-bom": lambda: b"\xef\xbb\xbf" + text.encode(),
            "utf16": lambda: text.encode("utf-16"),
            "utf16-be": lambda: text.encode("utf-16-be"),
            "utf32": lambda: text.encode("utf-32"),
            "latin1": lambda: (text + 'title = "Br\xfccke"\n').encode("latin-1"),
            "nul": lambda: (text + 'title = "a\x00b"\n').encode(),
            "png": lambda: b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(range(256)) * 4,
        }[special]()
        copy.write_bytes(data)
        model = copy
    elif special == "out-is-file":
        out = work / "a-file"
        out.write_text("not a folder\n")
    elif special == "dollar-name":
        model = work / "cost $x$ \\alpha.toml"
        model.write_text(text, encoding="utf-8")
    elif special:
        raise ValueError(f"{case.name}: unknown special {special!r}")
    args = [token.replace("{model}", str(model)).replace("{out}", str(out))
            for token in shlex.split(info.get("args", DEFAULT_ARGS))]
    return args, out


def child(args: list[str], work: Path) -> None:
    """In the forked child: bounded, output to files, the CLI, then exit (never returns)."""
    code = 1
    try:
        resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT, MEMORY_LIMIT))
        resource.setrlimit(resource.RLIMIT_CPU, (CPU_LIMIT, CPU_LIMIT + 5))
        signal.alarm(WALL_LIMIT)
        for number, name in ((1, "stdout"), (2, "stderr")):
            descriptor = os.open(work / name, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o644)
            os.dup2(descriptor, number)
            os.close(descriptor)
        os.chdir(work)
        from trundle.cli import main

        sys.argv = ["trundle", *args]
        try:
            main()
            code = 0
        except SystemExit as done:
            code = done.code if isinstance(done.code, int) else (0 if done.code is None else 1)
    except BaseException:  # a traceback is what the corpus looks for: write it, exit 1
        traceback.print_exc()
        code = 1
    finally:
        for stream in (sys.stdout, sys.stderr):
            try:
                stream.flush()
            except BaseException:  # noqa: S110 (nothing more can be reported)
                pass
        os._exit(code)


WARM_UP_MODEL = """units = "SI"
[beam]
spans = [10.0, 12.0]
supports = ["pin", "pin", "pin"]
EI = 2e5
[[load]]
name = "truck"
axles = [100, 150]
spacings = [{min = 3.0, max = 5.0}]
[[load]]
name = "lane"
uniform = 10
"""


def warm_up(folder: Path) -> None:
    """Run one small envelope here, once, so every child inherits the compiled kernels (from
    numba's cache), the fonts and the templates instead of loading them again. The model is
    small enough that no threads start before the forks. The kernels are compiled here
    even on a cold cache (not run by their first-run copies), so no child compiles them
    again within its time limit."""
    import contextlib
    import io

    from trundle.cli import cli
    from trundle.scan import use_compiled_kernels

    use_compiled_kernels()

    folder.mkdir(parents=True, exist_ok=True)
    model_file = folder / "model.toml"
    model_file.write_text(WARM_UP_MODEL)
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        cli.main(["envelope", str(model_file), "--out", str(folder / "out")],
                 standalone_mode=False)


def run(cases: list[Path], work_root: Path) -> dict[str, dict[str, object]]:
    import trundle.cli  # noqa: F401  (imported once, inherited by every child)

    warm_up(work_root / "_warm-up")

    results: dict[str, dict[str, object]] = {}
    pending = list(cases)
    running: dict[int, tuple[Path, Path, Path, float]] = {}
    while pending or running:
        while pending and len(running) < WORKERS:
            case = pending.pop(0)
            work = work_root / case.stem
            try:
                args, out = prepare(case, work)
            except Exception as error:  # a broken case is reported, not fatal
                results[case.stem] = {"status": "not run", "error": repr(error)}
                continue
            sys.stdout.flush()
            sys.stderr.flush()
            pid = os.fork()
            if pid == 0:
                child(args, work)
            running[pid] = (case, work, out, time.monotonic())
        pid, status, usage = os.wait4(-1, os.WNOHANG)
        if pid == 0:
            now = time.monotonic()
            for other, (_case, _work, _out, started) in running.items():
                if now - started > WALL_LIMIT + 5:  # blocked in a system call: kill it
                    os.kill(other, signal.SIGKILL)
            time.sleep(0.02)
            continue
        case, work, out, started = running.pop(pid)
        code = os.waitstatus_to_exitcode(status)
        results[case.stem] = {
            "status": "run",
            "exit": code,
            "stdout": (work / "stdout").read_text(errors="replace")[:50_000],
            "stderr": (work / "stderr").read_text(errors="replace")[:50_000],
            "seconds": round(time.monotonic() - started, 2),
            "peak_memory_mb": round(usage.ru_maxrss / 1024, 1),
            "out": str(out),
        }
    return results


def main() -> None:
    work_root, results_path, *cases = sys.argv[1:]
    root = Path(work_root)
    if root.exists():
        shutil.rmtree(root)
    root.mkdir(parents=True)
    results = run([Path(c) for c in cases], root)
    Path(results_path).write_text(json.dumps(results, indent=1))


if __name__ == "__main__":
    main()
