"""The README's examples cannot drift: the scripting example is extracted and run, and its
printed lines equal the output shown; every command of "Workflows, one command each" is run
(at 80 columns, as documented) and prints the lines the README shows.

No outside source: this checks trundle's documentation against trundle. The numbers
themselves are checked elsewhere against closed forms and independent solvers.
"""

from __future__ import annotations

import contextlib
import io
import re
import shlex
from pathlib import Path

import pytest
from tests.cli_helpers import run

ROOT = Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")


def _block_after(marker: str, language: str = "") -> tuple[str, str]:
    """The code block right after ``marker`` and the plain block after it (its output)."""
    start = README.index(marker)
    code = re.compile(rf"```{language}\n(.*?)```", re.S).search(README, start)
    assert code is not None, marker
    shown = re.compile(r"```\n(.*?)```", re.S).search(README, code.end())
    assert shown is not None, marker
    return code.group(1), shown.group(1)


def test_the_scripting_example_runs_and_prints_what_the_readme_shows():
    code, shown = _block_after("<!-- scripting example -->", "python")
    lines = [line for line in code.splitlines() if line.strip()]
    assert len(lines) <= 10, "the README promises ten lines"
    printed = io.StringIO()
    with contextlib.redirect_stdout(printed):
        exec(compile(code, "README.md (scripting example)", "exec"), {})  # noqa: S102
    out = printed.getvalue().splitlines()
    expected = [line for line in shown.splitlines() if line.strip() != "…"]
    assert expected, "the README shows no output"
    for line in expected:
        assert line in out, f"README shows {line!r}; the example printed {out}"
    assert out[0] == expected[0] and out[-1] == expected[-1]


def _workflow_commands() -> list[tuple[list[str], list[str], int | None]]:
    """(arguments, lines shown, exit code shown) of every `$ trundle …` in the section."""
    start = README.index("## Workflows, one command each")
    end = README.index("\n## ", start + 10)
    found: list[tuple[list[str], list[str], int | None]] = []
    for block in re.findall(r"```\n(.*?)```", README[start:end], re.S):
        lines = block.splitlines()
        i = 0
        while i < len(lines):
            if not lines[i].startswith("$ "):
                i += 1
                continue
            command = lines[i][2:]
            while command.endswith("\\"):
                i += 1
                command = command[:-1] + lines[i].strip()
            i += 1
            output = []
            while i < len(lines) and not lines[i].startswith("$ "):
                output.append(lines[i])
                i += 1
            if command == "echo $?":
                args, shown, _ = found[-1]
                found[-1] = (args, shown, int(output[0]))
                continue
            words = shlex.split(command)
            assert words[0] == "trundle", command
            found.append((words[1:], output, None))
    return found


COMMANDS = _workflow_commands()
# `trundle fleet` takes about a minute even on one process (its files and figures are part of
# the run); its output is checked by tests/test_fleet_cli.py, its README lines are not run here
RUN = [c for c in COMMANDS if c[0][0] != "fleet"]


def _without_out(args: list[str]) -> list[str]:
    """The arguments without --out DIR: with --quiet the files change nothing printed (they
    are checked by the CLI tests), and writing them would only slow this test."""
    out = list(args)
    if "--out" in out:
        i = out.index("--out")
        del out[i:i + 2]
    return out


def test_the_workflows_section_shows_every_workflow():
    shown = " ".join(" ".join(args) for args, _, _ in COMMANDS)
    for piece in ("harbour_lane", "design/", "cranes/", "sweep", "fleet", "permit"):
        assert piece in shown, piece
    for figure in re.findall(r"\]\((docs/figures/[^)]+\.png)\)", README):
        assert (ROOT / figure).is_file(), figure
    assert len(re.findall(r"\]\((docs/figures/[^)]+\.png)\)", README)) >= 5


@pytest.mark.parametrize(("args", "shown", "code"), RUN,
                         ids=[" ".join(a[:2]) for a, _, _ in RUN])
def test_each_workflow_command_prints_what_the_readme_shows(args, shown, code, tmp_path,
                                                            monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.chdir(tmp_path)
    (tmp_path / "examples").symlink_to(ROOT / "examples")
    if args[0] in ("fleet", "permit"):
        args = [*args, "--single-process"]  # the same numbers without starting a cluster
    result = run(*_without_out(args))
    assert result.exit_code == (code or 0), result.stdout + result.stderr
    printed = [line.rstrip() for line in result.stdout.splitlines()]
    expected = [line.rstrip() for line in shown]
    assert printed[:len(expected)] == expected
