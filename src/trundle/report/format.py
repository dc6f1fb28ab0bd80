"""How numbers, lengths, positions and verdicts are written: the one place outputs format them.

- :func:`number` — full precision for files (CSV cells): 12 significant digits, no "-0",
  empty for a missing or non-finite value.
- :func:`decimals` / :func:`fixed` — a column of values for people (terminal, HTML): the
  decimals that give ``significant`` digits to the largest value, then fixed-point, no "-0".
  A moment, shear, reaction or deflection in a report table is written by :func:`fixed`.
- :func:`length` — a position or length in labels: at most 6 significant digits.
- :func:`position` — where a load stands: to a thousandth of the length unit.
- :func:`verdict_cell` — the verdict of a check (decided in :mod:`trundle.analysis.checks`,
  never here) as every output shows it: "PASS", "EXCEEDS", or "—" where nothing is checked.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

NO_VALUE = "—"


def number(value: float | None) -> str:
    """Full precision for files: 12 significant digits; "" for None, inf or NaN."""
    if value is None or not math.isfinite(value):
        return ""
    return format(float(value) + 0.0, ".12g")


def decimals(values: Iterable[float | None], significant: int = 4, maximum: int = 6,
             default: int = 2) -> int:
    """Decimals that show ``significant`` digits of the largest finite value (``default``
    when all are zero or missing), at most ``maximum``."""
    biggest = max((abs(v) for v in values if v is not None and math.isfinite(v)), default=0.0)
    if biggest == 0.0:
        return default
    return int(min(maximum, max(0, significant - 1 - math.floor(math.log10(biggest)))))


def fixed(value: float, places: int) -> str:
    """``value`` with ``places`` decimals; a value that rounds to zero shows without sign."""
    text = f"{value + 0.0:.{places}f}"
    return text[1:] if text.startswith("-") and not text.strip("-0.") else text


def length(x: float | None) -> str:
    """A position or length for labels: at most 6 significant digits, no trailing zeros."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return NO_VALUE
    return f"{round(float(x), 9) + 0.0:.6g}"


def position(x: float | None) -> str:
    """A load position for people: to a thousandth of the length unit (mm, 0.001 ft)."""
    if x is None or not math.isfinite(x):
        return NO_VALUE
    text = f"{float(x) + 0.0:.3f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def verdict_cell(verdict: str | None) -> str:
    """A check's verdict as shown in every output ("—" where nothing is checked)."""
    return NO_VALUE if verdict is None else verdict
