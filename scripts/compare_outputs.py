"""Rerun every bundled example and compare its numbers with a saved baseline folder.

    python scripts/compare_outputs.py BASELINE_DIR [--new NEW_DIR] [--rel 1e-12] [--only TEXT]

BASELINE_DIR holds one folder per run (see ``_runs``; paths relative to the repository, as the
baseline was run): ``<example name>/`` for
``trundle envelope EXAMPLE --out BASELINE_DIR/<example name>`` of every model in examples/,
examples/cranes/ and examples/design/, and ``lines-floor/``, ``sweep-ferry/``, ``fleet/`` and
``permit/`` for the commands of scripts/demo and the README (written earlier by the same
commands from a clean copy). The runs are made again into NEW_DIR (a temporary folder unless
given) and every JSON value and every CSV cell is compared: numbers to ``--rel`` relative (zero
compares to zero within ``--rel`` absolute), text exactly. Fields that only describe the run
(date, paths) are skipped. Fields renamed on purpose are mapped through ``JSON_RENAMES`` /
``CSV_RENAMES`` below; the renames used are printed. Exit code 0 when everything agrees, 1
otherwise.
"""

from __future__ import annotations

import argparse
import csv
import json
import math
import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

# Baseline JSON path (regular expression on the dotted path, list indices as [i]) -> new path.
JSON_RENAMES: dict[str, str] = {
    # the fatigue check's basis ("threshold" / "finite life") is not its verdict
    r"^(extra\.Crane runway\.fatigue\[\d+\])\.check$": r"\1.basis",
}
# (baseline CSV file name, baseline column header) -> (new file name, new column header);
# a header of None renames the whole file.
CSV_RENAMES: dict[tuple[str, str | None], tuple[str, str | None]] = {
    ("runway-fatigue.csv", "check"): ("runway-fatigue.csv", "basis"),
}
# CSV headings once spelled units in ASCII ("[kN*m]", "[kN*m^2]"); they now spell them as the
# tables and the report do ("[kN·m]", "[kN·m²]"): a baseline heading is looked up both ways.
ASCII_UNIT_SPELLINGS = (("*", "·"), ("^2", "²"), ("^4", "⁴"))
# Text reworded on purpose, compared as present only: a load model's description now gives
# its numbers in the units of the model that uses it (a US model showed kN before).
JSON_REWORDED = (r"^loads\[\d+\]\.description$",)
# Values that describe the run, not the result.
SKIPPED_JSON = ("date", "model.file", "generator", "provenance.date", "provenance.model_file")
# Built-in load models are named by their absolute path, which differs between checkouts.
LIBRARY = "/loadmodels/"
# The output set's manifest (file names and SHA-256 of their bytes).
MANIFEST = ".trundle-output.json"
# A first line starting with '#' in a CSV carries provenance (file name, SHA-256, version).
PROVENANCE_PREFIX = "#"


FLEET_DESIGN = "demo-heavy-vehicle-5-axle+demo-lane-load"


def _runs() -> list[tuple[str, list[str]]]:
    """(folder name, trundle arguments before ``--out``) of every bundled run."""
    models = [m.relative_to(ROOT) for folder in ("", "cranes", "design")
              for m in sorted((ROOT / "examples" / folder).glob("*.toml"))]
    runs = [(m.stem, ["envelope", str(m), "--no-figure", "--no-report"]) for m in models]
    floor = "examples/harbour_lane_floor_girder_si.toml"
    runs.append(("lines-floor", ["lines", floor, "--effect", "moment", "--effect", "shear",
                                 "--effect", "reaction", "--at", "3.6", "--at", "7.2",
                                 "--no-figure"]))
    runs.append(("sweep-ferry", [
        "sweep", "examples/ferry_road_overpass_convoy_si.toml", "--vary",
        'load."crane carrier (one way)".spacings[1]=3.0:6.0:0.5 m', "--effect",
        "reaction max support 1", "--effect", "moment max span 2", "--no-figure",
        "--no-report"]))
    fleet = Path("examples/fleet")
    runs.append(("fleet", ["fleet", str(fleet / "traffic_invented.csv"),
                           str(fleet / "inventory.csv"), "--design", FLEET_DESIGN,
                           "--truck-chunk", "500", "--no-figure"]))
    runs.append(("permit", ["permit", str(fleet / "permit_crane_carrier.toml"),
                            str(fleet / "inventory.csv"), "--design", FLEET_DESIGN,
                            "--impact", "10", "--limit", "1.0"]))
    return runs


def _run(arguments: list[str], out: Path) -> None:
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    done = subprocess.run([sys.executable, "-m", "trundle", *arguments, "--out", str(out)],
                          env=env, cwd=ROOT, stdout=subprocess.DEVNULL)
    if done.returncode not in (0, 3):  # 3: permit, a check exceeds its limit (in the outputs)
        raise subprocess.CalledProcessError(done.returncode, arguments)


def _flatten(value, path: str, into: dict[str, object]) -> None:
    if isinstance(value, dict):
        for key, item in value.items():
            _flatten(item, f"{path}.{key}" if path else str(key), into)
    elif isinstance(value, list):
        for index, item in enumerate(value):
            _flatten(item, f"{path}[{index}]", into)
    else:
        into[path] = value


def _renamed_json_path(path: str, used: set[str]) -> str:
    for old, new in JSON_RENAMES.items():
        renamed, count = re.subn(old, new, path)
        if count:
            used.add(f"JSON {old} -> {new}")
            return renamed
    return path


def _number(text):
    if isinstance(text, bool) or text is None:
        return None
    if isinstance(text, (int, float)):
        return float(text)
    try:
        return float(text)
    except (TypeError, ValueError):
        return None


def _same(a, b, rel: float) -> bool:
    if isinstance(a, str) and isinstance(b, str) and LIBRARY in a and LIBRARY in b:
        # a built-in load model's file: the same file in another checkout
        return a.rsplit(LIBRARY, 1)[1] == b.rsplit(LIBRARY, 1)[1]
    x, y = _number(a), _number(b)
    if x is not None and y is not None:
        if math.isnan(x) or math.isnan(y):
            return math.isnan(x) and math.isnan(y)
        return math.isclose(x, y, rel_tol=rel, abs_tol=rel)
    return a == b


def _compare_json(old_file: Path, new_file: Path, rel: float, used: set[str]) -> list[str]:
    old: dict[str, object] = {}
    new: dict[str, object] = {}
    _flatten(json.loads(old_file.read_text()), "", old)
    _flatten(json.loads(new_file.read_text()), "", new)
    problems = []
    for path, value in old.items():
        if path.startswith(SKIPPED_JSON):
            continue
        target = _renamed_json_path(path, used)
        if target in new and any(re.search(p, path) for p in JSON_REWORDED):
            if value != new[target]:
                used.add(f"JSON {path}: reworded (units of the model)")
            continue
        if target not in new:
            problems.append(f"{old_file.name}: {path} missing in the new output")
        elif not _same(value, new[target], rel):
            problems.append(f"{old_file.name}: {path}: {value!r} -> {new[target]!r}")
    return problems


def _read_csv(path: Path) -> list[dict[str, str]]:
    lines = path.read_text().splitlines()
    if lines and lines[0].startswith(PROVENANCE_PREFIX):
        lines = lines[1:]
    return list(csv.DictReader(lines))


def _label_spelling(heading: str) -> str:
    """A heading with the units in brackets spelled as the report spells them."""
    def spelled(match: re.Match[str]) -> str:
        text = match.group(0)
        for ascii_text, label in ASCII_UNIT_SPELLINGS:
            text = text.replace(ascii_text, label)
        return text

    return re.sub(r"\[[^\]]*\]", spelled, heading)


def _compare_csv(old_file: Path, new_dir: Path, rel: float, used: set[str]) -> list[str]:
    new_name = old_file.name
    if (old_file.name, None) in CSV_RENAMES:
        new_name = CSV_RENAMES[(old_file.name, None)][0]
        used.add(f"CSV file {old_file.name} -> {new_name}")
    new_file = new_dir / new_name
    if not new_file.exists():
        return [f"{old_file.name}: not written by the new run"]
    old_rows, new_rows = _read_csv(old_file), _read_csv(new_file)
    if len(old_rows) != len(new_rows):
        return [f"{old_file.name}: {len(old_rows)} rows -> {len(new_rows)} rows"]
    problems = []
    for index, (old_row, new_row) in enumerate(zip(old_rows, new_rows, strict=True)):
        for column, value in old_row.items():
            target = column
            if (old_file.name, column) in CSV_RENAMES:
                target = CSV_RENAMES[(old_file.name, column)][1]
                used.add(f"CSV {old_file.name}: '{column}' -> '{target}'")
            if target not in new_row:
                target = _label_spelling(target)
                if target in new_row:
                    used.add("CSV headings: units spelled as in the report")
            if target not in new_row:
                problems.append(f"{old_file.name}: column '{column}' missing")
                break
            if not _same(value, new_row[target], rel):
                problems.append(f"{old_file.name} row {index + 1} '{column}': "
                                f"{value!r} -> {new_row[target]!r}")
    return problems


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("baseline", type=Path)
    parser.add_argument("--new", type=Path, default=None)
    parser.add_argument("--rel", type=float, default=1e-12)
    parser.add_argument("--only", default=None, help="compare only examples whose name has this")
    args = parser.parse_args()
    new_root = args.new or Path(tempfile.mkdtemp(prefix="trundle-compare-"))
    used: set[str] = set()
    failures = 0
    for name, arguments in _runs():
        if args.only and args.only not in name:
            continue
        old_dir = args.baseline / name
        if not old_dir.is_dir():
            print(f"{name}: no baseline folder {old_dir}, skipped")
            continue
        new_dir = new_root / name
        _run(arguments, new_dir)
        problems = []
        for old_file in sorted(old_dir.glob("*.json")):
            if old_file.name == MANIFEST:  # hashes of the files' bytes: describes the run
                continue
            problems += _compare_json(old_file, new_dir / old_file.name, args.rel, used)
        for old_file in sorted(old_dir.glob("*.csv")):
            problems += _compare_csv(old_file, new_dir, args.rel, used)
        failures += bool(problems)
        print(f"{name}: {'equal' if not problems else f'{len(problems)} differences'}")
        for line in problems[:int(os.environ.get("COMPARE_SHOW", "40"))]:
            print("   ", line)
    print("renames used:" if used else "renames used: none")
    for line in sorted(used):
        print("   ", line)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
