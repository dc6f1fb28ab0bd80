"""Text from a model file made safe for where it is shown: terminal, CSV, figures.

A model file is written by anyone; its title, description and load names reach a terminal
(where ESC sequences would move the cursor or recolour it), CSV files (where a cell such as
``=HYPERLINK(…)`` is a formula to a spreadsheet) and figures (where matplotlib reads ``$…$`` as
mathematics). These functions are applied at the last step, to text only, never to numbers:

* :func:`clean_text` drops control characters (C0 except tab/newline when kept, DEL, C1) and
  bidirectional-override characters, which can make a line read differently from what it is;
* :func:`csv_cell` neutralises a text cell that a spreadsheet would read as a formula (first
  character ``=``, ``+``, ``-``, ``@``, tab or carriage return) by prefixing an apostrophe, as
  the OWASP guidance on CSV injection recommends; numbers are left alone;
* :func:`figure_text` escapes ``$`` so matplotlib shows it as a plain character (a backslash
  outside ``$…$`` is already plain), and shortens very long text.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from typing import Any

# C0 controls except tab and newline, DEL, C1 controls; bidirectional embeddings, overrides
# and isolates (U+202A-U+202E, U+2066-U+2069); the line and paragraph separators.
_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\u2028\u2029]")
_CONTROL_AND_LINES = re.compile("[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\u2028\u2029]")
# what json.dumps(ensure_ascii=False) leaves raw of the above (it escapes C0 itself)
_RAW_IN_JSON = re.compile("[\x7f-\x9f\u202a-\u202e\u2066-\u2069\u2028\u2029]")
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")

# Longest text drawn in a figure: a title of a megabyte would take minutes to lay out.
FIGURE_TEXT_LENGTH = 200


def clean_text(text: str, keep_newlines: bool = False) -> str:
    """``text`` without control characters; tabs and newlines become spaces unless
    ``keep_newlines`` (then tabs and newlines are kept, other controls still dropped)."""
    if keep_newlines:
        return _CONTROL.sub("", text)
    return _CONTROL_AND_LINES.sub(lambda m: " " if m.group() in "\t\n\r" else "", text)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def csv_cell(value: Any) -> Any:
    """A value ready for ``csv.writer``: numbers as they are, text cleaned and, if a
    spreadsheet would read it as a formula, prefixed with an apostrophe."""
    if value is None or isinstance(value, bool | int | float):
        if isinstance(value, float) and not math.isfinite(value):
            return str(value)
        return value
    text = str(value)
    text = _CONTROL.sub("", text).replace("\t", " ")
    if text.startswith(_FORMULA_START) and not _is_number(text):
        return "'" + text
    return text


def csv_row(values: Iterable[Any]) -> list[Any]:
    """:func:`csv_cell` of every value of a row."""
    return [csv_cell(v) for v in values]


def terminal_text(text: str) -> str:
    """One line for the terminal: control characters dropped, whitespace collapsed."""
    return " ".join(clean_text(text).split())


def figure_text(text: str, limit: int = FIGURE_TEXT_LENGTH, keep_newlines: bool = True,
                parse_math: bool = True) -> str:
    """Text for matplotlib: controls dropped, at most ``limit`` characters per line (longer
    lines end with "…") and, when matplotlib will look for maths in it (``parse_math``, its
    default), ``$`` escaped so it shows as itself. trundle's own figure style turns the maths
    parser off (``text.parse_math = False``), so its figures pass ``parse_math=False``."""
    lines = clean_text(text, keep_newlines=keep_newlines).split("\n")
    shortened = [line if len(line) <= limit else line[: limit - 1] + "…" for line in lines]
    joined = "\n".join(shortened)
    return joined.replace("$", r"\$") if parse_math else joined


def json_escaped(document: str) -> str:
    """A JSON text with the controls and bidirectional overrides that ``ensure_ascii=False``
    leaves raw (DEL, C1, U+202A-U+202E, U+2066-U+2069, U+2028/U+2029) written as ``\\uXXXX``
    escapes: the same data to a JSON reader, nothing that acts on a terminal or an editor.
    (They can only occur inside JSON strings, where the escape means the same character.)"""
    return _RAW_IN_JSON.sub(lambda m: f"\\u{ord(m.group()):04x}", document)
