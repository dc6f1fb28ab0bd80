"""What ``trundle envelope`` prints by default: the results an engineer reads on a screen.

The full tables (the inputs as read, the defaults, every column of what governs, every row
of every check) are in the HTML report, the CSV files and ``trundle envelope --full``. By
default the terminal shows, per part of the run:

- the governing values per span and per support with the load or combination that gives them
  (the columns that say where the load stands are left to the files);
- the envelope at the tenth points and supports, values only, when it is short enough to read
  on a screen (at most :data:`MOST_SECTION_ROWS` rows), else one line saying where it is;
- each check table as one row per kind of check: how many, how many EXCEED, the largest
  utilisation and where, its verdict (a table of a few rows is shown whole). A failing check
  is never hidden: its group reads EXCEEDS, and the command's verdict lines name every one;
- one line naming the files that hold every section.

Only presentation of tables already built (:class:`TableData`); no number is computed here.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from trundle.report.envelope_data import EnvelopeResults, ExtraSection, TableData
from trundle.report.format import NO_VALUE, verdict_cell
from trundle.report.package import body_rows, shortened, x_column_values

# A per-section table longer than this (after the cut to tenth points and supports) is left
# to the files: 31 rows are the tenth points of three spans (a longer beam's governing values
# per span are on the screen; its envelope at every section is a file to read, not a screen).
MOST_SECTION_ROWS = 33
# A check table of at most this many rows is shown whole; a longer one is summarised.
MOST_CHECK_ROWS = 2
# A table of x that is no longer than this is shown whole (a few chosen sections).
FEW_SECTIONS = 6
FULL_HINT = ("the inputs as read, the defaults and every column of these tables: --full; "
             "every section: the CSV files and report.html (--out DIR)")


@dataclass(frozen=True)
class Pointer:
    """A line of the default view that says where something not shown is (dim), or a
    note that must not be missed (a failing check: bold)."""

    text: str
    style: str = "dim"


def heading(column: str) -> str:
    """A column's name without its unit and line breaks: "M max\\n[kN·m]" -> "M max"."""
    return " ".join(column.split()).split(" [")[0].strip()


def narrowed(table: TableData, keep: Sequence[str], title: str | None = None,
             with_note: bool = False) -> TableData:
    """``table`` with only the columns whose name (:func:`heading`) is in ``keep`` (in the
    table's order), without the rules between groups; its note left to the full view unless
    ``with_note`` (or a kept value is marked "not certified")."""
    # a column with nothing in it (no searched spacing anywhere, one crane) is left out; a
    # column of words that says the same in every row (one crane combination, one load) is
    # said once, under the table
    numeric = table.numeric or (False,) * len(table.columns)
    chosen, same = [], []
    for k, column in enumerate(table.columns):
        if heading(column) not in keep or not any(row[k].strip() for row in table.rows):
            continue
        values = {row[k] for row in table.rows}
        if k > 1 and not numeric[k] and len(values) == 1 and len(table.rows) > 1:
            same.append(f"{heading(column)}: {values.pop()}, in every row.")
            continue
        chosen.append(k)
    rows = tuple(tuple(row[k] for k in chosen) for row in table.rows)
    # a value marked "not certified" keeps the note that says it may read low
    marked = any("not certified" in cell for row in rows for cell in row)
    note = table.note if with_note else ""
    if marked and not with_note:  # what 'not certified' means, not what 'anywhere' means
        start = table.note.find("'not certified'")
        end = table.note.find("governs.", start) + len("governs.")
        note = table.note[start:end] if 0 <= start < end else table.note
    return TableData(title or table.title, tuple(table.columns[k] for k in chosen), rows,
                     tuple(numeric[k] for k in chosen), " ".join([*same, note]).strip())


def values_only(table: TableData) -> TableData:
    """The first column (what the row is) and the numeric columns."""
    numeric = table.numeric or (False,) * len(table.columns)
    keep = [heading(c) for k, c in enumerate(table.columns) if k == 0 or numeric[k]]
    return narrowed(table, keep)


def section_view(table: TableData, results: EnvelopeResults, file: str
                 ) -> TableData | Pointer:
    """A per-section table cut to the tenth points and supports, values only; a pointer to
    ``file`` (and --full) when even that is too long for a screen."""
    x = _x_values(table)
    keep = body_rows(x, results) if x is not None else list(range(len(table.rows)))
    short = shortened(table, keep, file)
    if len(short.rows) > MOST_SECTION_ROWS:
        return Pointer(f"{short.title}: {len(short.rows)} rows, not shown here; in "
                       f"report.html and, every section, {file} (--out DIR).")
    view = values_only(short)
    # the note of the cut (and what a mark such as * means), and where what governs is
    return TableData(view.title, view.columns, view.rows, view.numeric,
                     f"{short.note} What governs each value is there too.")


def _x_values(table: TableData) -> list[float] | None:
    """The sections of a table whose first column is x (a mark such as "4.5 *" ignored)."""
    if not table.columns or heading(table.columns[0]) != "x":
        return x_column_values(table)
    try:
        return [float(row[0].split(",")[0].rstrip(" *")) for row in table.rows]
    except (ValueError, IndexError):
        return None


def _utilisation(cell: str) -> float:
    """A utilisation cell as a number; a blank or "—" (nothing checked) as -1, anything
    else that does not read as a number as infinity (so that it is never the mild one)."""
    text = cell.strip().rstrip("*").strip()
    if text in ("", NO_VALUE):
        return -1.0
    try:
        value = float(text)
    except ValueError:
        return math.inf
    return value if math.isfinite(value) else math.inf


def check_view(table: TableData, group: int | None = None, where: int = 0
               ) -> TableData:
    """A check table (columns "utilisation" and "verdict") in a few rows: whole when short,
    else one row per value of column ``group`` (all rows when None) with the number of
    checks, how many EXCEED, the largest utilisation, where it is (column ``where``) and
    the verdict of that row. A group with any check that EXCEEDS reads EXCEEDS."""
    names = [heading(c) for c in table.columns]
    u, v = names.index("utilisation"), names.index("verdict")
    if len(table.rows) <= MOST_CHECK_ROWS:
        return TableData(table.title, table.columns, table.rows, table.numeric, table.note)
    groups: dict[str, list[tuple[str, ...]]] = {}
    for row in table.rows:
        groups.setdefault(row[group].strip() if group is not None else "", []).append(row)
    exceeds = verdict_cell("EXCEEDS")
    rows = []
    for name, members in groups.items():
        worst = max(members, key=lambda row: _utilisation(row[u]))
        failing = sum(1 for row in members if row[v] == exceeds)
        verdict = exceeds if failing else worst[v]
        # the utilisation as the full table writes it (no second rounding)
        rows.append((name or "all", str(len(members)),
                     f"{failing} EXCEED" if failing else "none", worst[u].strip(),
                     f"{names[where]} {worst[where].strip()}", verdict))
    first = names[group] if group is not None else "checks"
    # a value marked * (not certified) keeps the note that says what the mark means
    marked = any(cell.rstrip().endswith("*") for row in table.rows for cell in row)
    return TableData(table.title + " (summary)",
                     (first, "checks", "exceeding", "largest utilisation", "at", "verdict"),
                     tuple(rows), (False, True, True, True, False, False),
                     table.note if marked else "")


def default_view(results: EnvelopeResults,
                 loads_part: Sequence[TableData | Pointer | str]
                 ) -> list[TableData | Pointer | str]:
    """Every part of the default view in order: the loads' part (built by the caller from
    the envelope tables), then each extra section's own short view (``terminal``), or, for
    a section that has none, its tables with per-section tables cut and check tables
    summarised."""
    out: list[TableData | Pointer | str] = list(loads_part)
    for section in results.extra:
        out.append(section.title)
        # a note that reports a failing check is never left to the full view
        out.extend(Pointer(note, "bold") for note in section.notes if _failing(note))
        out.extend(section.terminal if section.terminal is not None
                   else generic_view(results, section))
    return out


def _failing(note: str) -> bool:
    # a failing check, or a result the program could not confirm (a design position not
    # reproduced): never left to the full view
    return ("FAILING" in note or verdict_cell("EXCEEDS") in note
            or "NOT REPRODUCED" in note)


def generic_view(results: EnvelopeResults, section: ExtraSection
                 ) -> list[TableData | Pointer]:
    """A section without a terminal view of its own: each table whose first column is x
    cut to tenth points and supports (values only), each check table summarised, the rest
    as they are."""
    csv_files = [name for name in section.files if name.endswith(".csv")]
    file = csv_files[0] if len(csv_files) == 1 else "the CSV files of this section"
    out: list[TableData | Pointer] = []
    for table in section.tables:
        names = [heading(c) for c in table.columns]
        if "utilisation" in names and "verdict" in names:
            out.append(check_view(table))
        elif _x_values(table) is not None and len(table.rows) > FEW_SECTIONS:
            out.append(section_view(table, results, file))
        else:
            out.append(table)
    return out


# ------------------------------------------------------------------------------------------
# the moving loads' part


def _load_line(table: TableData, row: Sequence[str]) -> str:
    """One load of the loads table as a line: "name: definition; impact 15 %; × 0.9"."""
    cells = dict(zip((heading(c) for c in table.columns), row, strict=True))
    parts = [f"{cells['load']}: {cells['definition']}"]
    if not cells["product"][:1].isdigit():  # loads acting together
        parts.append(f"impact and factors: {cells['product']}")
    else:
        if cells["impact"] not in ("", NO_VALUE):
            parts.append(f"impact {cells['impact']}")
        parts.append(f"factors × {cells['product']}")
    return "  " + "; ".join(parts)


def loads_view(results: EnvelopeResults) -> list[TableData | Pointer | str]:
    """The loads (name, definition, impact, factors), the governing values per span and per
    support with the load and its direction, and the envelope at the tenth points and
    supports (where each load stands, the concurrent shear and the loaded stretches: --full,
    report.html, envelope.csv)."""
    from trundle.report.envelope_tables import (
        deflection_table,
        loads_table,
        moment_table,
        reactions_table,
        sections_table,
        shear_table,
        support_moment_table,
    )

    if not results.has_loads:
        return []
    loads = loads_table(results)
    governing = [moment_table(results), shear_table(results), deflection_table(results),
                 reactions_table(results)]
    out: list[TableData | Pointer | str] = [
        "Loads (results include the impact and the product of the factors):",
        *(_load_line(loads, row) for row in loads.rows),
        narrowed(governing[0], ("span", "extreme", "M", "at x", "load", "travel")),
        narrowed(governing[1], ("span", "extreme", "V", "section x", "load",
                                        "travel")),
        narrowed(governing[2], ("span", "max δ", "span / δ", "at x", "load"),
                 with_note=True),
        narrowed(governing[3], ("support", "x", "extreme", "R", "load",
                                            "travel")),
    ]
    support_moments = support_moment_table(results)
    if support_moments is not None:
        out.append(narrowed(support_moments, ("support", "x", "extreme", "M", "load",
                                              "travel")))
    if support_moments is not None:
        governing.append(support_moments)
    searched = [t for t in governing for row in t.rows
                for k, c in enumerate(t.columns) if heading(c) == "searched" and row[k]]
    if searched:  # where each load stands is in the files; the spacings found are named
        out.append(Pointer("Spacings and gaps found by the search for each value, and where "
                           "each load stands: --full, report.html, envelope.csv."))
    out.append(section_view(sections_table(results), results, "envelope.csv"))
    return out
