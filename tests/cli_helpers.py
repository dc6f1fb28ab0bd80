"""Shared helpers for the CLI tests: run a command in-process, check a one-line error."""

from __future__ import annotations

import csv
import os
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
from click.testing import CliRunner

from trundle.cli import cli


def runner() -> CliRunner:
    try:  # click < 8.2 mixes stderr into the output unless told not to
        return CliRunner(mix_stderr=False)
    except TypeError:
        return CliRunner()


def run(*args: object):
    return runner().invoke(cli, [str(a) for a in args], prog_name="trundle")


def assert_one_line_error(result, *fragments: str) -> None:
    """Exit code 2, exactly one line on stderr starting "error: ", no traceback."""
    assert result.exit_code == 2, (result.output, result.stderr)
    lines = result.stderr.splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("error: ")
    assert "Traceback" not in result.output + result.stderr
    for fragment in fragments:
        assert fragment in lines[0]


def expected_key(path: Path) -> str:
    """The key a bad model file names in its "# key:" comment."""
    for line in path.read_text().splitlines():
        if line.startswith("# key:"):
            return line.removeprefix("# key:").strip()
    raise AssertionError(f"{path.name} has no '# key:' comment")


def read_csv(path: Path) -> tuple[list[str], list[list[str]]]:
    """(header, rows) of a CSV file written by the CLI."""
    with open(path, newline="", encoding="utf-8") as handle:
        lines = [line for line in handle if not line.startswith("#")]  # provenance comment
    rows = list(csv.reader(lines))
    return rows[0], rows[1:]


def column(header: list[str], body: list[list[str]], name: str) -> np.ndarray:
    """One named column of a CSV as numbers."""
    index = header.index(name)
    return np.array([float(row[index]) for row in body])


class HtmlChecker(HTMLParser):
    """Every element closed in the order opened (void elements excepted); ids unique.
    Feed a page, close, then look at ``errors``, ``stack`` (empty) and ``ids``."""

    VOID = {"meta", "br", "img", "hr", "link", "input", "col", "wbr", "source"}

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.ids: list[str] = []
        self.errors: list[str] = []

    def handle_starttag(self, tag, attrs):
        for name, value in attrs:
            if name == "id":
                self.ids.append(value)
        if tag not in self.VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):  # <path/> in SVG: opened and closed at once
        for name, value in attrs:
            if name == "id":
                self.ids.append(value)

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1:]} at {self.getpos()}")
            return
        self.stack.pop()


def html_problems(page: str) -> list[str]:
    """What is wrong with a page's structure ([] for a well-formed page)."""
    checker = HtmlChecker()
    checker.feed(page)
    checker.close()
    problems = list(checker.errors)
    if checker.stack:
        problems.append(f"never closed: {checker.stack}")
    if len(checker.ids) != len(set(checker.ids)):
        problems.append("an id is used twice")
    return problems


# Debian's headless browser, for the report tests that print a page (skipped where absent)
CHROMIUM = shutil.which("chromium") or (
    "/usr/bin/chromium" if os.path.exists("/usr/bin/chromium") else None)


def chromium(*args: str, user_dir: str) -> None:
    """Run headless Chromium once (a screenshot or a PDF) with its own profile folder."""
    subprocess.run([CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu",
                    "--disable-background-networking", "--disable-component-update",
                    "--disable-sync", "--no-first-run", f"--user-data-dir={user_dir}", *args],
                   check=True, capture_output=True, timeout=180)
