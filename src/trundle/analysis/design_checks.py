"""Design checks: the verdict of a value against its limit, decided in one place.

``verdict`` is deliberately one small function so that it can move into the central checks
module unchanged; everything else that reports PASS/EXCEEDS calls it.
"""

from __future__ import annotations

import math

PASS = "PASS"
EXCEEDS = "EXCEEDS"


def verdict(value: float, limit: float) -> tuple[float, str]:
    """(utilisation |value| / limit, "PASS" or "EXCEEDS") for a positive ``limit``.

    A utilisation above 1 (beyond rounding of 1e-12) exceeds; NaN input never passes.
    """
    if not (limit > 0) or math.isnan(value):
        return math.nan, EXCEEDS
    utilisation = abs(value) / limit
    return utilisation, PASS if utilisation <= 1.0 + 1e-12 else EXCEEDS
