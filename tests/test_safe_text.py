"""Text from model files made safe for terminal, CSV and figures (trundle.report.safe_text).

CSV injection: the rule (prefix an apostrophe to a text cell starting with =, +, -, @, tab or
carriage return) follows the OWASP "CSV Injection" guidance (owasp.org community page, from
memory).
"""

from __future__ import annotations

import csv
import io

import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from trundle.report.safe_text import (
    clean_text,
    csv_cell,
    csv_row,
    figure_text,
    terminal_text,
)


@pytest.mark.parametrize(("cell", "expected"), [
    ('=HYPERLINK("http://x","y")', '\'=HYPERLINK("http://x","y")'),
    ("+cmd", "'+cmd"), ("-2+3", "'-2+3"), ("@SUM(A1)", "'@SUM(A1)"),
    ("\tx", " x"), ("\r=1", "'=1"),
    ("truck", "truck"), ("-12.5", "-12.5"), ("+3", "+3"), ("1e3", "1e3"), ("", ""),
])
def test_csv_cells(cell, expected):
    assert csv_cell(cell) == expected


def test_numbers_untouched():
    assert csv_row([-1.5, 2, None, True]) == [-1.5, 2, None, True]


def test_csv_round_trip_has_no_formula_and_no_nul():
    buffer = io.StringIO()
    csv.writer(buffer).writerow(csv_row(["=1+1", "a\x00b\x1b[31mred", -3.0]))
    row = next(csv.reader(io.StringIO(buffer.getvalue())))
    assert row == ["'=1+1", "ab[31mred", "-3.0"]
    assert not any(cell.startswith(("=", "+", "@")) for cell in row)


def test_control_characters_dropped():
    hostile = "Girder\x1b]0;owned\x07 G1\x00\u202eevil\r\nnext"
    assert terminal_text(hostile) == "Girder]0;owned G1evil next"
    assert "\x1b" not in clean_text(hostile, keep_newlines=True)
    assert "\n" in clean_text(hostile, keep_newlines=True)


def _draw(text: str) -> None:
    figure = Figure()
    FigureCanvasAgg(figure)
    figure.suptitle(text)
    figure.canvas.draw()


def test_dollar_and_backslash_are_plain_characters_in_figures():
    hostile = r"cost $\frac{a$ and C:\temp \alpha"
    with pytest.raises(ValueError):  # matplotlib's mathtext refuses the raw text
        _draw(hostile)
    safe = figure_text(hostile)
    _draw(safe)  # drawn without a mathtext parse
    figure = Figure()
    FigureCanvasAgg(figure)
    title = figure.suptitle(safe)
    figure.canvas.draw()
    assert not title._preprocess_math(title.get_text())[1]  # not read as maths
    assert title._preprocess_math(title.get_text())[0] == hostile


def test_figure_text_shortened():
    assert len(figure_text("x" * 1_000_000)) == 200
    assert figure_text("a\nb") == "a\nb"


def test_json_escaped_keeps_the_data_and_hides_overrides():
    import json

    from trundle.report.safe_text import json_escaped

    dumped = json.dumps({"name": "truck\u202egnp.exe\x85", "unit": "kN·m"}, indent=1,
                        ensure_ascii=False)
    escaped = json_escaped(dumped)
    assert "\u202e" not in escaped and "\x85" not in escaped and "\\u202e" in escaped
    assert "kN·m" in escaped  # ordinary non-ASCII text stays readable
    assert json.loads(escaped) == json.loads(dumped)  # the same data to a JSON reader
