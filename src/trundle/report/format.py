"""How numbers, lengths, positions and verdicts are written: the one place outputs format them.

- :func:`number` — full precision for files (CSV cells): 12 significant digits, no "-0",
  empty for a missing or non-finite value.
- :func:`decimals` / :func:`fixed` — a column of values for people (terminal, HTML): the
  decimals that give ``significant`` digits to the largest value, then fixed-point, no "-0".
  A moment, shear, reaction or deflection in a report table is written by :func:`fixed`.
  Within one column every row has the same decimals (per quantity: the M max and M min
  columns of a table share them), chosen from the column's largest magnitude.
- :func:`position_decimals` — a column of positions (x of sections): the fewest decimals,
  at most three, that write every position of the column to a thousandth, all rows alike.
- :func:`length` — a position or length in labels: at most 6 significant digits.
- :func:`significant` — a property of the structure as given (EI, a spring stiffness, a
  section modulus): 6 significant digits written out in full ("37256900", never
  "3.72569e+07"), so that it reads like the results beside it; an exponent only beyond
  1e15 or below 1e-6.
- :func:`position` — where a load stands: to a thousandth of the length unit.
- :func:`marked` — a value found by a sampled search (not certified: it may read low) as
  every table and figure shows it: the value, then " *"; :data:`NOT_CERTIFIED_WORDS` says
  what the mark means in a legend or a caption.
- :func:`verdict_cell` — the verdict of a check (decided in :mod:`trundle.analysis.checks`,
  never here) as every output shows it: "PASS", "EXCEEDS", or "—" where nothing is checked.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

NO_VALUE = "—"
NOT_CERTIFIED_MARK = "*"
NOT_CERTIFIED_WORDS = "* not certified: found by a sampled search, may read low"


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


def position_decimals(values: Iterable[float | None], maximum: int = 3) -> int:
    """The fewest decimals (at most ``maximum``) that write every finite value of a column of
    positions as :func:`position` does (to a thousandth of the unit): 0, 0.4, 6.75 → 2."""
    finite = [float(v) for v in values if v is not None and math.isfinite(v)]
    for places in range(maximum):
        if all(abs(round(v, places) - round(v, maximum)) < 0.1 * 10.0 ** -maximum
               for v in finite):
            return places
    return maximum


def fixed(value: float, places: int) -> str:
    """``value`` with ``places`` decimals; a value that rounds to zero shows without sign."""
    text = f"{value + 0.0:.{places}f}"
    return text[1:] if text.startswith("-") and not text.strip("-0.") else text


def length(x: float | None) -> str:
    """A position or length for labels: at most 6 significant digits, no trailing zeros."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return NO_VALUE
    return f"{round(float(x), 9) + 0.0:.6g}"


def significant(value: float | None, digits: int = 6) -> str:
    """``value`` to ``digits`` significant digits without an exponent (1e15 > |value| ≥
    1e-6), no trailing zeros after the point, no "-0"; "—" for None, inf or NaN."""
    if value is None or not math.isfinite(value):
        return NO_VALUE
    value = float(value) + 0.0
    if value == 0.0:
        return "0"
    magnitude = math.floor(math.log10(abs(value)))
    if magnitude >= 15 or magnitude < -6:
        return f"{value:.{digits - 1}e}"
    places = max(0, digits - 1 - magnitude)
    text = f"{round(value, digits - 1 - magnitude) + 0.0:.{places}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def position(x: float | None) -> str:
    """A load position for people: to a thousandth of the length unit (mm, 0.001 ft)."""
    if x is None or not math.isfinite(x):
        return NO_VALUE
    text = f"{float(x) + 0.0:.3f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def verdict_cell(verdict: str | None) -> str:
    """A check's verdict as shown in every output ("—" where nothing is checked)."""
    return NO_VALUE if verdict is None else verdict


def marked(text: str, certified: bool) -> str:
    """A value's text with the mark of a value that is not certified ("495.5 *"), so a
    figure flags it exactly where a table does."""
    return text if certified else f"{text} {NOT_CERTIFIED_MARK}"
