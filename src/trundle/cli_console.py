"""What every ``trundle`` command shares at the terminal: how wide it prints, how much it says
(``--quiet`` / ``--verbose``), progress while it works, and tables that fit the width.

- Width: ``COLUMNS`` when set, else the width of the terminal that stdout (or, when stdout is
  piped, stderr) is on, else :data:`WIDTH_WITHOUT_TERMINAL` (a file or a pipe with no terminal
  anywhere: wide enough that most tables print on one row each).
- ``--quiet``: only errors, warnings and the verdict summary (:func:`say`); ``--verbose``:
  also what was computed and how long it took (:func:`step`, on stderr) and, after an
  internal error, the traceback.
- Progress (:func:`progress`) is drawn on stderr only when stderr is a terminal and the run is
  not quiet; a pipe or a file never receives it.
- Tables (:func:`print_renderable`): a rich table whose columns cannot all stand side by side
  at the width is cut into several tables, each repeating the first column (the row's name),
  so that a heading never wraps one word per line and a number never folds; a column of text
  wraps at word boundaries.
"""

from __future__ import annotations

import io
import math
import os
import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, replace
from typing import Any

import click
from rich.cells import cell_len
from rich.console import Console
from rich.table import Table
from rich.text import Text

QUIET, NORMAL, VERBOSE = -1, 0, 1
WIDTH_WITHOUT_TERMINAL = 140
NARROWEST = 40
_TEXT_COLUMN_WIDTH = 16  # a column of words wraps no narrower than this (or its longest word)


@dataclass
class _State:
    level: int = NORMAL


STATE = _State()


def set_level(level: int) -> None:
    STATE.level = level


def quiet() -> bool:
    return STATE.level <= QUIET


def verbose() -> bool:
    return STATE.level >= VERBOSE


def _set_from_option(context: click.Context, option: click.Parameter, value: bool) -> None:
    if value:
        set_level(QUIET if option.name == "quiet" else VERBOSE)


def verbosity_options(function: Callable[..., Any]) -> Callable[..., Any]:
    """``-q/--quiet`` and ``-v/--verbose`` on a command (or the group); the last given wins."""
    function = click.option(
        "-v", "--verbose", "verbose", is_flag=True, expose_value=False, is_eager=True,
        callback=_set_from_option,
        help="Also say what is computed and how long it takes (stderr); show the traceback "
             "of an internal error.")(function)
    return click.option(
        "-q", "--quiet", "quiet", is_flag=True, expose_value=False, is_eager=True,
        callback=_set_from_option,
        help="Print only errors, warnings and the verdict summary.")(function)


def terminal_width() -> int:
    """COLUMNS, else the terminal's width (stdout's, or stderr's when stdout is piped), else
    :data:`WIDTH_WITHOUT_TERMINAL`; never narrower than :data:`NARROWEST`."""
    columns = os.environ.get("COLUMNS", "").strip()
    if columns.isdigit() and int(columns) > 0:
        return max(int(columns), NARROWEST)
    for stream in (sys.stdout, sys.stderr):
        try:
            if stream.isatty():
                return max(os.get_terminal_size(stream.fileno()).columns, NARROWEST)
        except (AttributeError, OSError, ValueError):
            continue
    return WIDTH_WITHOUT_TERMINAL


def console() -> Console:
    """The console of a command's tables and notes (prints nothing with --quiet)."""
    file = io.StringIO() if quiet() else None
    return Console(file=file, highlight=False, markup=False, soft_wrap=False,
                   width=terminal_width())


def say(text: str | Text, style: str | None = None) -> None:
    """A line of the verdict summary: printed even with --quiet."""
    Console(highlight=False, markup=False, soft_wrap=False, width=terminal_width()).print(
        text, style=style)


def note(text: str) -> None:
    """A --verbose line on stderr."""
    if verbose():
        click.echo(f"· {text}", err=True)


@contextmanager
def step(what: str) -> Iterator[None]:
    """Time a piece of work; with --verbose, say what it was and how long it took."""
    start = time.perf_counter()
    yield
    note(f"{what}: {time.perf_counter() - start:.2f} s")


def _show_progress() -> bool:
    try:
        return not quiet() and sys.stderr.isatty()
    except (AttributeError, ValueError):
        return False


class Progress:
    """Steps of a command's work on stderr: a bar with the step's name and the time elapsed
    (nothing when stderr is not a terminal or the run is quiet)."""

    def __init__(self, total: int, description: str = "working"):
        self.total, self.description = total, description
        self._bar: Any = None

    def __enter__(self) -> Progress:
        if _show_progress():
            from rich.progress import (
                BarColumn,
                MofNCompleteColumn,
                SpinnerColumn,
                TextColumn,
                TimeElapsedColumn,
            )
            from rich.progress import Progress as Bar

            self._bar = Bar(
                SpinnerColumn(), TextColumn("{task.description}"), BarColumn(),
                MofNCompleteColumn(), TimeElapsedColumn(),
                console=Console(stderr=True), transient=True)
            self._bar.__enter__()
            self._task = self._bar.add_task(self.description, total=self.total)
        return self

    def update(self, description: str | None = None, advance: int = 0) -> None:
        if self._bar is not None:
            self._bar.update(self._task, advance=advance,
                             **({"description": description} if description else {}))

    @contextmanager
    def step(self, what: str) -> Iterator[None]:
        """One step: shown while it runs, counted when done, timed with --verbose."""
        self.update(what)
        with step(what):
            yield
        self.update(advance=1)

    def __exit__(self, *exception: object) -> None:
        if self._bar is not None:
            self._bar.__exit__(*exception)


def progress_shown() -> bool:
    """Whether a progress bar would be drawn (for workflows that draw their own)."""
    return _show_progress()


# ------------------------------------------------------------------------------------------
# tables that fit the width


def _lines(cell: Any) -> list[str]:
    text = cell.plain if isinstance(cell, Text) else str(cell)
    return text.splitlines() or [""]


def _needed(column: Any) -> int:
    """The narrowest width at which the column reads well: a number (right-justified column)
    whole, a heading at worst on two lines and never narrower than its longest word, a text
    cell wrapped at words no narrower than :data:`_TEXT_COLUMN_WIDTH`."""
    width = 1
    for line in _lines(column.header):
        words = line.split() or [""]
        longest = max(cell_len(w) for w in words)
        width = max(width, min(cell_len(line), max(longest, math.ceil(cell_len(line) / 2))))
    numeric = column.justify == "right"
    for cell in column._cells:
        for line in _lines(cell):
            if numeric:
                width = max(width, cell_len(line))
            else:
                longest = max((cell_len(w) for w in line.split()), default=0)
                width = max(width, min(cell_len(line), max(longest, _TEXT_COLUMN_WIDTH)))
    return width


def _natural(column: Any) -> int:
    cells = [column.header, *column._cells]
    return max(cell_len(line) for cell in cells for line in _lines(cell))




def _edge(table: Table) -> int:
    """What a column costs beside its text: its padding left and right and the rule (or
    space) on its right: 3 for a framed table, 2 for the compact tables of the default view
    (padding on the right only)."""
    _, right, _, left = table.padding
    return left + right + 1


def fit_table(table: Table, width: int) -> list[Table]:
    """``table`` as one or more tables that fit ``width`` (see the module docstring)."""
    edge = _edge(table)
    columns = table.columns
    if len(columns) < 2 or not table.box:
        return [table]
    natural = [_natural(c) for c in columns]
    if 1 + sum(natural) + edge * len(columns) <= width:
        return [table]
    needed = [min(_needed(c), n) for c, n in zip(columns, natural, strict=True)]
    needed[0] = min(needed[0], max(width // 4, 8))  # the row's name wraps rather than crowd
    keys = _key_columns(table)
    groups: list[list[int]] = [list(range(keys, len(columns)))]
    if 1 + sum(needed) + edge * len(columns) > width:
        room = width - 1 - sum(needed[:keys]) - edge * keys
        groups = [[]]
        used = 0
        for j in range(keys, len(columns)):
            if groups[-1] and used + needed[j] + edge > room:
                groups.append([])
                used = 0
            groups[-1].append(j)
            used += needed[j] + edge
    parts = []
    for g, group in enumerate(groups):
        chosen = [*range(keys), *group]
        part = Table(title=_continued(table.title, g), title_justify=table.title_justify,
                     caption=table.caption if g == len(groups) - 1 else None,
                     caption_justify=table.caption_justify, box=table.box,
                     show_header=table.show_header, show_lines=table.show_lines,
                     show_edge=table.show_edge, padding=table.padding,
                     pad_edge=table.pad_edge)
        widths = _widths([natural[j] for j in chosen], [needed[j] for j in chosen],
                         width - 1 - edge * len(chosen))
        part.columns = [replace(columns[j], _cells=list(columns[j]._cells), _index=i,
                                width=w, min_width=None, max_width=None,
                                overflow="fold", no_wrap=False)
                        for i, (j, w) in enumerate(zip(chosen, widths, strict=True))]
        part.rows = list(table.rows)
        parts.append(part)
    return parts


def _key_columns(table: Table) -> int:
    """How many leading columns name a row: the first, and the next ones while the names so
    far repeat (span 1 max, span 1 min …), at most three."""
    columns = table.columns
    rows = len(columns[0]._cells)
    for keys in range(1, min(3, len(columns) - 1) + 1):
        names = {tuple(_lines(columns[k]._cells[r])[0] for k in range(keys))
                 for r in range(rows)}
        if len(names) == rows:
            return keys
    return min(3, len(columns) - 1)


def _widths(natural: list[int], needed: list[int], room: int) -> list[int]:
    """Column widths within ``room``: each at least what it needs (if room allows), the rest
    shared out in proportion to how much more each would take to stand unwrapped."""
    if sum(natural) <= room:
        return natural
    base = list(needed)
    if sum(base) > room:  # one column too wide even at its narrowest: it wraps further
        widest = max(range(len(base)), key=lambda i: base[i])
        base[widest] = max(1, base[widest] - (sum(base) - room))
        return base
    spare = room - sum(base)
    widths = list(base)
    # the columns that need least to stand unwrapped first (headings, numbers), so that the
    # squeeze falls on the long texts, which wrap at words
    order = sorted(range(len(widths)), key=lambda i: natural[i] - base[i])
    for k, i in enumerate(order):
        share = natural[i] - base[i]
        if share > spare:
            rest = order[k:]
            total = sum(natural[j] - base[j] for j in rest)
            for j in rest:
                widths[j] += spare * (natural[j] - base[j]) // total
            break
        widths[i] = natural[i]
        spare -= share
    return widths


def _continued(title: Any, index: int) -> Any:
    if index == 0 or title is None:
        return title
    if isinstance(title, Text):
        return Text(f"{title.plain} (continued)", style=title.style)
    return f"{title} (continued)"


def print_renderable(out: Console, renderable: Any, style: str | None = None) -> None:
    """Print a table fitted to the console's width (cut into parts if need be; its title and
    caption as paragraphs of the full width), or any other renderable as it is."""
    if isinstance(renderable, Table) and renderable.columns:
        parts = fit_table(renderable, out.width)
        for i, part in enumerate(parts):
            title, caption = part.title, part.caption
            part.title = part.caption = None
            if title is not None:
                out.print(_paragraph(title, "bold"))
            out.print(part)
            if caption is not None and i == len(parts) - 1:
                out.print(_paragraph(caption, None))
        return
    out.print(renderable, style=style)


def _paragraph(text: Any, style: str | None) -> Any:
    if isinstance(text, Text):
        return text
    return Text(str(text), style=style or "")
