"""Small, plain HTML tables for ``_repr_html_`` in Jupyter (every layer may use them).

Kept tiny and dependency-free: a caption, a header row and rows of already formatted text,
escaped here. Numbers are written by :func:`short` (five significant digits), enough to read
a result at a glance; files and reports use :mod:`trundle.report.format`.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from html import escape


def short(value: float | None) -> str:
    """A number at a glance: five significant digits, "—" for None or NaN, no "-0"."""
    if value is None or not math.isfinite(value):
        return "—"
    return f"{float(value) + 0.0:.5g}"


def html_table(caption: str, header: Sequence[str], rows: Sequence[Sequence[str]],
               note: str = "") -> str:
    """A small HTML table; every cell is escaped."""
    head = "".join(f"<th style='text-align:left'>{escape(h)}</th>" for h in header)
    body = "".join("<tr>" + "".join(f"<td style='text-align:left'>{escape(str(c))}</td>"
                                    for c in row) + "</tr>" for row in rows)
    tail = f"<p style='font-size:smaller'>{escape(note)}</p>" if note else ""
    return (f"<div><table><caption style='text-align:left'><b>{escape(caption)}</b></caption>"
            f"<thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>{tail}</div>")
