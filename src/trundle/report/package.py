"""What turns the HTML report into a calculation package: the project block, the figures as
inline SVG, the per-section table cut to tenth points and supports, governing tables with
the loaded stretches, and the model file reproduced in an appendix.

Only presentation: every number comes from :mod:`trundle.report.envelope_data` (the same
extremes the CSV files are written from); the model text is the one the reader parsed
(``Model.text``), never read again here.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

import numpy as np
from markupsafe import Markup

from trundle.io.project import ProjectInfo, project_of
from trundle.report.envelope_data import EnvelopeResults, Extreme, TableData
from trundle.report.format import number as _number
from trundle.report.format import position as _position

# The rows of a per-section table the report body keeps: tenth points and supports.
BODY_SECTIONS = "tenth points and supports"


# ------------------------------------------------------------------------------------------
# the project block


def project_items(results: EnvelopeResults) -> list[tuple[str, str]]:
    """(label, value) of the project block; a field the model leaves out is "" (a blank to
    fill in by hand on the printed page)."""
    info = project_of(results.model) or ProjectInfo()
    return info.items()


def css_string(text: str) -> Markup:
    """``text`` as a quoted CSS string safe inside a <style> element: every character that is
    not a letter, digit, space or simple punctuation is a six-digit hex escape (so neither a
    quote nor ``</style>`` can end it)."""
    out = []
    for c in text:
        if c.isascii() and (c.isalnum() or c in " .,-_:/()"):
            out.append(c)
        else:
            out.append(f"\\{ord(c):06x} ")  # the space ends the escape (CSS eats it)
    return Markup('"' + "".join(out) + '"')


# ------------------------------------------------------------------------------------------
# figures as inline SVG

_SVG_START = re.compile(rb"<svg\b")
_ID_REFERENCE = re.compile(r'(\bid="|url\(#|xlink:href="#|\bhref="#)([^")]+)')


def inline_svg(svg: bytes, prefix: str) -> Markup:
    """A matplotlib SVG file as an element to put in HTML: the XML declaration and doctype
    dropped, every id (and reference to it) prefixed so figures never share one, and the
    fixed size replaced by a viewBox-scaled width."""
    start = _SVG_START.search(svg)
    if start is None:
        raise ValueError("not an SVG document")
    text = svg[start.start():].decode("utf-8")
    text = _ID_REFERENCE.sub(lambda m: m.group(1) + prefix + m.group(2), text)
    # matplotlib writes width="540pt" height="...pt" viewBox="0 0 540 ..."; CSS sizes it
    text = re.sub(r'^<svg([^>]*?) width="[^"]*" height="[^"]*"', r'<svg\1', text, count=1)
    text = text.replace("<svg", '<svg role="img" class="figure"', 1)
    return Markup(text)


# ------------------------------------------------------------------------------------------
# short per-section tables


def body_rows(x_values: Sequence[float], results: EnvelopeResults) -> list[int]:
    """Indices of the sections that are tenth points or supports of the beam (all of them
    when none is: sections chosen elsewhere are all shown)."""
    beam = results.beam
    marks = np.concatenate([beam.tenth_points(), beam.support_positions])
    tolerance = 1e-6 * beam.length
    keep = [i for i, x in enumerate(x_values) if np.min(np.abs(marks - x)) <= tolerance]
    return keep or list(range(len(x_values)))


def shortened(table: TableData, keep: Sequence[int], file: str) -> TableData:
    """``table`` with only the rows ``keep``; the note says that ``file`` has every row."""
    if len(keep) == len(table.rows):
        note = f"All {len(table.rows)} sections of the model are shown (and are in {file})."
    else:
        note = (f"{len(keep)} of {len(table.rows)} sections shown ({BODY_SECTIONS}); every "
                f"section is in {file}.")
    rows = tuple(table.rows[i] for i in keep)
    groups = tuple(sorted({sum(1 for k in keep if k < g) for g in table.groups}))
    if table.note:
        note = f"{table.note} {note}"
    return TableData(table.title.replace("at every section", f"at the {BODY_SECTIONS}"),
                     table.columns, rows, table.numeric, note, groups)


def x_column_values(table: TableData) -> list[float] | None:
    """The section positions of a table whose first "x" column holds them, else None."""
    for k, column in enumerate(table.columns):
        if column.split("\n")[0].split(" [")[0].strip() == "x":
            try:
                return [float(row[k].split(",")[0]) for row in table.rows]
            except (ValueError, IndexError):
                return None
    return None


# ------------------------------------------------------------------------------------------
# loaded stretches


def stretches_text(extreme: Extreme | None) -> str:
    """The loaded stretches of a placed load, "a–b; c–d" [length]; "" for a moving load."""
    if extreme is None or not extreme.loaded:
        return ""
    return "; ".join(f"{_position(a)}–{_position(b)}" for a, b in extreme.loaded)


def stretches_csv(extreme: Extreme | None) -> str:
    """The same stretches as envelope.csv writes them (for the tests' comparison)."""
    if extreme is None:
        return ""
    return " ".join(f"{_number(a)}..{_number(b)}" for a, b in extreme.loaded)


# ------------------------------------------------------------------------------------------
# the model file


def model_text_lines(text: str) -> str:
    """The model file as shown in the appendix: line ends as LF (a CRLF file says so in the
    note); any other control or direction-override character as a visible ⟨U+XXXX⟩ so the
    page shows every character the file has (escaped for HTML by the template)."""
    shown = text.replace("\r\n", "\n")
    return re.sub("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\u2028\u2029]",
                  lambda m: f"⟨U+{ord(m.group()):04X}⟩", shown)
