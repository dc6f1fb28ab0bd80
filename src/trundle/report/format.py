"""How numbers, units and verdicts are written: the one place outputs format them.

- :func:`number` — a value in a CSV cell or wherever full precision is wanted: 12 significant
  digits, no "-0", empty for a missing or non-finite value.
- :func:`verdict_cell` — the verdict of a check (decided in :mod:`trundle.analysis.checks`,
  never here) as every output shows it: "PASS", "EXCEEDS", or "—" where there is no check.
"""

from __future__ import annotations

import math

NO_CHECK = "—"


def number(value: float | None) -> str:
    """Full precision for files: 12 significant digits; "" for None, inf or NaN."""
    if value is None or not math.isfinite(value):
        return ""
    return format(float(value) + 0.0, ".12g")


def verdict_cell(verdict: str | None) -> str:
    """A check's verdict as shown in every output ("—" where nothing is checked)."""
    return NO_CHECK if verdict is None else verdict
