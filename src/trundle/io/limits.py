"""The documented maxima of model files, and checks that refuse input beyond them.

Every limit is far above any real structure (a continuous girder has a handful of spans, a
crane a handful of wheels per rail); they exist so that a hostile or mistaken file is refused
at once with one line naming the key and the limit, instead of running for minutes or
exhausting memory. docs/model-file.md lists them; keep the two in step.

All checks raise :class:`LimitError` (a ``ValueError``) whose message is one line without the
file name: ``<key>: expected at most 200 spans, found 10000``. The model-file reader adds the
file name (it turns the error into its own one-line error).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sized
from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class Limit:
    """One documented maximum.

    Fields
    ------
    name : what is counted ("spans")
    maximum : the largest value accepted
    why : a short reason shown in the docs
    """

    name: str
    maximum: float
    why: str


# The maxima, by the name the checks use. Counts are whole numbers; sizes are in bytes or
# characters; magnitudes are absolute values in the model's base units (kN, m or kip, ft).
LIMITS: dict[str, Limit] = {limit.name: limit for limit in (
    Limit("spans", 200, "a continuous girder has a few spans; 200 is far beyond any"),
    Limit("hinges", 200, "one per span is already unusual"),
    Limit("stiffness segments", 2_000, "a stepped or haunched beam needs a few per span"),
    Limit("haunch divisions", 200, "an explicit override; by default a haunch is divided "
          "for 1e-8 accuracy on the lines"),
    Limit("sections", 5_000, "tenth points of 200 spans are 2,001 sections"),
    Limit("loads", 100, "[[load]] tables in one model file"),
    Limit("axles", 200, "axles of one vehicle"),
    Limit("vehicles", 50, "vehicles in one train"),
    Limit("searched dimensions", 8, "searched spacings and gaps of one load (the exact search "
          "tries up to 3^n link assignments per line)"),
    Limit("design table entries", 100, "entries of one design table ([[permanent]], "
          "[[combination]], [[design_load]], [[live_pattern]], [[lane_length_load]])"),
    Limit("cranes", 10, "[[crane]] tables in one model file"),
    Limit("wheels", 32, "wheel spacings of one crane (wheels per rail minus one)"),
    Limit("text length", 2_000, "characters of a title, name or other string value"),
    Limit("description length", 20_000, "characters of a description"),
    Limit("unit text length", 100, "characters of one value with a unit"),
    Limit("file size", 4 * 1024 * 1024, "bytes of a model or load-model file"),
    Limit("nesting depth", 32, "levels of TOML tables and arrays inside one another"),
    Limit("magnitude", 1e15, "absolute value of any number in base units"),
    Limit("factor product", 1e4, "product of a load's impact, factors and load factor"),
    Limit("span ratio", 1e6, "longest span over shortest span"),
)}

# A nonzero magnitude below this (in base units) is refused: 1e-300 m is no structure.
SMALLEST_MAGNITUDE = 1e-12


class LimitError(ValueError):
    """A value beyond a documented limit; ``str()`` is one line naming the key and the limit.

    Attributes
    ----------
    key : the dotted key ("beam.spans")
    limit : the Limit exceeded (None for a non-finite number)
    """

    def __init__(self, key: str, detail: str, limit: Limit | None = None):
        self.key = key
        self.detail = " ".join(detail.split())
        self.limit = limit
        super().__init__(f"{key}: {self.detail}")


def limit(name: str) -> float:
    """The maximum named ``name`` (see :data:`LIMITS`)."""
    return LIMITS[name].maximum


def _shown(number: float) -> str:
    if float(number).is_integer() and abs(number) < 1e9:
        return f"{int(number):,}"
    return f"{number:g}"


def check_count(key: str, name: str, found: int | Sized) -> int:
    """Refuse more than the documented number of ``name``; return the count.

    ``found`` is a count or anything with a length (the list itself).
    """
    count = len(found) if isinstance(found, Sized) and not isinstance(found, int) else found
    assert isinstance(count, int)
    maximum = LIMITS[name]
    if count > maximum.maximum:
        raise LimitError(key, f"expected at most {_shown(maximum.maximum)} {name} (the "
                         f"documented limit), found {_shown(count)}", maximum)
    return count


def check_text(key: str, text: str, name: str = "text length") -> str:
    """Refuse a string longer than the documented limit (without quoting it)."""
    maximum = LIMITS[name]
    if len(text) > maximum.maximum:
        raise LimitError(key, f"expected at most {_shown(maximum.maximum)} characters (the "
                         f"documented limit), found a string of {_shown(len(text))}", maximum)
    return text


def check_size(key: str, size: int) -> int:
    """Refuse a file larger than the documented limit [bytes]."""
    maximum = LIMITS["file size"]
    if size > maximum.maximum:
        raise LimitError(key, f"expected a file of at most {_mebibytes(maximum.maximum)} (the "
                         f"documented limit), found {_mebibytes(size)}", maximum)
    return size


def _mebibytes(size: float) -> str:
    if size < 1024 * 1024:
        return f"{size / 1024:.0f} KiB" if size >= 1024 else f"{size:.0f} bytes"
    return f"{size / (1024 * 1024):.1f} MiB".replace(".0 MiB", " MiB")


def check_finite(key: str, value: float, what: str = "a finite number") -> float:
    """Refuse NaN, ±inf and magnitudes beyond the documented limit (or a nonzero one below
    :data:`SMALLEST_MAGNITUDE`); return ``float(value)``.

    ``value`` is in base units; ``what`` names what was expected ("a force").
    """
    try:
        number = float(value)
    except (OverflowError, TypeError, ValueError):
        raise LimitError(key, f"expected {what}, found a value that is not a finite "
                         "number") from None
    if not math.isfinite(number):
        raise LimitError(key, f"expected {what}, found {number} (not a finite number)")
    maximum = LIMITS["magnitude"]
    if abs(number) > maximum.maximum:
        raise LimitError(key, f"expected {what} of magnitude at most {maximum.maximum:g} in "
                         f"base units (the documented limit), found {number:g}", maximum)
    if number != 0.0 and abs(number) < SMALLEST_MAGNITUDE:
        raise LimitError(key, f"expected {what} of magnitude at least "
                         f"{SMALLEST_MAGNITUDE:g} in base units (or zero), found {number:g}")
    return number


def check_product(key: str, factors: Iterable[float], what: str = "the product of the "
                  "factors") -> float:
    """The product of ``factors``, refused when it is not finite, overflows or exceeds the
    documented factor-product limit (each factor must be finite)."""
    product = 1.0
    maximum = LIMITS["factor product"]
    for factor in factors:
        try:
            number = float(factor)
        except (OverflowError, TypeError, ValueError):
            number = math.nan
        if not math.isfinite(number):
            raise LimitError(key, f"expected finite factors, found {number}")
        product *= number
        if not math.isfinite(product) or abs(product) > maximum.maximum:
            shown = "an overflow" if not math.isfinite(product) else f"{product:g}"
            raise LimitError(key, f"expected {what} to be at most {maximum.maximum:g} (the "
                             f"documented limit), found {shown}", maximum)
    return product


def check_nesting(key: str, value: Any, depth: int = 0) -> None:
    """Refuse parsed TOML nested deeper than the documented limit (walks without recursion
    into Python's own limit: the walk itself stops at the limit)."""
    maximum = int(LIMITS["nesting depth"].maximum)
    stack: list[tuple[Any, int]] = [(value, depth)]
    while stack:
        item, level = stack.pop()
        if level > maximum:
            raise LimitError(key, f"expected tables and arrays nested at most {maximum} deep "
                             "(the documented limit), found deeper nesting",
                             LIMITS["nesting depth"])
        if isinstance(item, dict):
            stack.extend((v, level + 1) for v in item.values())
        elif isinstance(item, list):
            stack.extend((v, level + 1) for v in item)


def search_grid_points(dimensions: int, per_dimension: int = 2) -> float:
    """Number of points of a full search grid over ``dimensions`` searched ranges (as a float,
    so a huge exponent cannot build a huge integer)."""
    return float(per_dimension) ** dimensions


def check_search(key: str, dimensions: int) -> int:
    """Refuse a load whose searched spacings and gaps are beyond the documented limit."""
    return check_count(key, "searched dimensions", dimensions)


def check_span_ratio(key: str, spans: Iterable[float]) -> None:
    """Refuse spans whose longest-to-shortest ratio makes the stiffness matrix meaningless."""
    values = [abs(float(s)) for s in spans]
    if not values or min(values) <= 0.0:
        return
    ratio = max(values) / min(values)
    maximum = LIMITS["span ratio"]
    if ratio > maximum.maximum:
        raise LimitError(key, f"expected the longest span to be at most {maximum.maximum:g} "
                         f"times the shortest (the documented limit), found {ratio:.3g} times",
                         maximum)


def documented_limits() -> list[tuple[str, str, str]]:
    """(name, maximum, why) of every limit, for the docs and ``--help``."""
    rows = []
    for item in LIMITS.values():
        if item.name == "file size":
            shown = _mebibytes(item.maximum)
        elif item.maximum >= 1e6 and not item.name.endswith(("length", "size")):
            shown = f"{item.maximum:g}"
        else:
            shown = _shown(item.maximum)
        rows.append((item.name, shown, item.why))
    return rows
