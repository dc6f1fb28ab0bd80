"""Model files: a TOML description of a beam, read into a :class:`Model`.

The schema is documented in docs/model-file.md. Every value with a unit is converted to the
file's base units (SI: kN, m; US customary: kip, ft) on the way in, so the core only sees
consistent floats. Every problem is a :class:`ModelFileError` whose message is one line:
``<file>: <key>: expected …, found …``.

Later parts of the program add top-level tables (vehicles, cranes, …) with
:func:`register_table`; a top-level key that nobody registered is an error, so a misspelt
table name is never silently ignored.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import re
import tomllib
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any, NoReturn

import numpy as np
from numpy.typing import NDArray

from trundle.core.beam import SUPPORT_KINDS, Beam, ModelError, Spring
from trundle.io.limits import (
    LimitError,
    check_count,
    check_finite,
    check_span_ratio,
    check_text,
)
from trundle.io.source import SourceError, parse_toml, read_source
from trundle.io.units import SYSTEMS, UnitError, UnitSystem, parse_quantity, show_value


class ModelFileError(ValueError):
    """A model file that cannot be read; ``str()`` is one line naming file and key.

    Attributes
    ----------
    file : the file as the user named it
    key : dotted path of the offending key ("beam.spans[1]"), or "line N" for TOML syntax
    detail : what was expected and what was found
    """

    def __init__(self, file: str, key: str, detail: str):
        self.file = file
        self.key = key
        self.detail = " ".join(detail.split())  # one line, always
        super().__init__(f"{file}: {key}: {self.detail}")


@dataclass(frozen=True, eq=False)
class Model:
    """A beam model read from a file.

    Fields
    ------
    title : str
    units : UnitSystem; every number in ``beam`` and ``sections`` is in its base units
    beam : trundle.Beam
    sections : (n,) positions where results are wanted [length], sorted, unique
    source : the file read, or None when read from a string
    stiffness_given : how the file stated EI, one entry per stiffness segment (for reports)
    raw : the parsed TOML, as written
    tables : what the registered readers made of the extra top-level tables, by name
    sha256 : hex SHA-256 of the very bytes that were parsed ("" when read from a string);
        provenance uses it, so the file is never read a second time
    description : the model's description, whitespace collapsed ("" when it has none)
    text : the text that was parsed, as decoded (a UTF-8 byte-order mark dropped); the
        report reproduces it ("" when built from parsed data)
    """

    title: str
    units: UnitSystem
    beam: Beam
    sections: NDArray[np.float64]
    source: Path | None = None
    stiffness_given: tuple[str, ...] = ()
    raw: Mapping[str, Any] = field(default_factory=dict, repr=False)
    tables: Mapping[str, Any] = field(default_factory=dict, repr=False)
    sha256: str = ""
    description: str = ""
    text: str = field(default="", repr=False)

    @property
    def name(self) -> str:
        return str(self.source) if self.source is not None else "<model>"


_PERCENT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*%\s*$")


class Reader:
    """Checks and converts the values of one model file; passed to table readers.

    Every method raises :class:`ModelFileError` naming ``self.file`` and the key.
    """

    def __init__(self, file: str, units: UnitSystem | None = None, beam: Beam | None = None,
                 length: float | None = None):
        self.file = file
        self.units = units
        self.beam = beam
        self.length = beam.length if beam is not None else length
        # the whole parsed file, for a table whose reading depends on another one
        self.raw: Mapping[str, Any] = {}
        # folders outside the model's tree that `use` may read from (--allow-path DIR)
        self.allowed: tuple[Path, ...] = ()

    # --- errors ---------------------------------------------------------------------------

    def fail(self, key: str, detail: str) -> NoReturn:
        raise ModelFileError(self.file, key, detail)

    def expected(self, key: str, expected: str, found: Any) -> NoReturn:
        shown = "nothing (the key is missing)" if found is _MISSING else show_value(found)
        self.fail(key, f"expected {expected}, found {shown}")

    # --- structure ------------------------------------------------------------------------

    def table(self, value: Any, key: str, allowed: Iterable[str],
              required: Iterable[str] = ()) -> dict[str, Any]:
        """``value`` as a table with only ``allowed`` keys and all ``required`` ones."""
        allowed = list(allowed)
        if not isinstance(value, dict):
            self.expected(key, f"a table with keys {', '.join(allowed)}", value)
        for name in value:
            if name not in allowed:
                self.fail(_join(key, name), _unknown_key_detail(name, allowed))
        for name in required:
            if name not in value:
                self.fail(_join(key, name), "expected this key, found nothing (it is required)")
        return value

    def array(self, value: Any, key: str, what: str, example: str) -> list[Any]:
        if not isinstance(value, list):
            self.expected(key, f"a list of {what} such as {example}", value)
        return value

    def text(self, value: Any, key: str, choices: Iterable[str] | None = None) -> str:
        if choices is not None:
            choices = list(choices)
            if not isinstance(value, str) or value not in choices:
                self.expected(key, "one of " + ", ".join(f'"{c}"' for c in choices), value)
            return value
        if not isinstance(value, str):
            self.expected(key, "a string", value)
        return value

    def integer(self, value: Any, key: str, minimum: int) -> int:
        if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
            self.expected(key, f"a whole number of at least {minimum}", value)
        return int(value)

    def fraction(self, value: Any, key: str, what: str, example: float = 0.25) -> float:
        """A fraction from 0 to 1, written 0.25 or "25 %"; a bare number above 1 is refused
        (it is almost always a percentage without its sign)."""
        expected = f'{what} as a fraction ({example:g}) or a percentage ("{100 * example:g} %")'
        if isinstance(value, str):
            match = _PERCENT.match(value)
            if not match:
                self.expected(key, expected, value)
            fraction = float(match.group(1)) / 100.0
        elif isinstance(value, int | float) and not isinstance(value, bool):
            fraction = float(value)
            if fraction > 1.0:
                self.fail(key, f"expected {expected}, found {show_value(value)}, which would "
                          f'be {100 * fraction:g} % (write "{value:g} %" for a percentage)')
        else:
            self.expected(key, expected, value)
        if not (math.isfinite(fraction) and 0.0 <= fraction <= 1.0):
            self.fail(key, f"expected {expected} between 0 and 100 % (0 to 100 %), "
                      f"found {show_value(value)}")
        return fraction

    # --- quantities -----------------------------------------------------------------------

    def quantity(self, value: Any, key: str, quantity: str) -> float:
        """``value`` in base units; see :func:`trundle.io.units.parse_quantity`."""
        if self.units is None:
            raise RuntimeError("the unit system is not known yet")
        if value is _MISSING:
            self.fail(key, "expected this key, found nothing (it is required)")
        try:
            number = parse_quantity(value, quantity, self.units)
            # 1e308 would overflow to inf or vanish to 0 in the analysis: refused here
            return check_finite(key, number, f"a {quantity}")
        except UnitError as error:
            self.fail(key, str(error))
        except LimitError as error:
            self.fail(key, error.detail)

    def limit(self, key: str, name: str, found: Any) -> int:
        """Refuse more than the documented number of ``name`` (trundle.io.limits)."""
        try:
            return check_count(key, name, found)
        except LimitError as error:
            self.fail(key, error.detail)

    def text_limit(self, key: str, text: str, name: str = "text length") -> str:
        try:
            return check_text(key, text, name)
        except LimitError as error:
            self.fail(key, error.detail)

    def positive(self, value: Any, key: str, quantity: str) -> float:
        number = self.quantity(value, key, quantity)
        if not number > 0.0:
            self.fail(key, f"expected a positive {quantity}, found {show_value(value)}")
        return number

    def position(self, value: Any, key: str, interior: bool = False) -> float:
        """A position on the beam [length]: 0 ≤ x ≤ L (or 0 < x < L with ``interior``)."""
        assert self.units is not None and self.length is not None
        x = self.quantity(value, key, "position")
        length = self.length
        tolerance = 1e-9 * length
        unit = self.units.label("length")
        if interior and not (tolerance < x < length - tolerance):
            self.fail(key, f"expected a position inside the beam (0 < x < {length:g} {unit}), "
                           f"found {_shown_length(value, x, unit)}")
        if not (-tolerance <= x <= length + tolerance):
            self.fail(key, f"expected a position on the beam (0 to {length:g} {unit}), "
                           f"found {_shown_length(value, x, unit)}")
        return min(max(x, 0.0), length)


# ------------------------------------------------------------------------------------------
# registry of top-level tables

TableReader = Callable[[Any, Reader], Any]
_CORE_KEYS = ("title", "description", "units", "beam", "sections")
_EXTRA_TABLES: dict[str, TableReader] = {}


def register_table(name: str, reader: TableReader) -> None:
    """Accept a new top-level table ``name`` in model files.

    ``reader(value, reader_context)`` is called after the beam is built (``reader_context`` is
    a :class:`Reader` with ``units`` and ``beam`` set) and must raise through the context's
    methods; what it returns lands in ``Model.tables[name]``.
    """
    if name in _CORE_KEYS:
        raise ValueError(f"{name!r} is a core key of model files")
    if name in _EXTRA_TABLES and _EXTRA_TABLES[name] is not reader:
        raise ValueError(f"a reader for the table {name!r} is already registered")
    _EXTRA_TABLES[name] = reader


def known_top_level_keys() -> tuple[str, ...]:
    return _CORE_KEYS + tuple(sorted(_EXTRA_TABLES))


# ------------------------------------------------------------------------------------------
# entry points


def load_model(path: str | Path, allowed: Iterable[str | Path] = ()) -> Model:
    """Read a model file.

    Parameters
    ----------
    path : str or Path
        A TOML file in the format of docs/model-file.md.
    allowed : folders outside the model file's folder tree from which ``use`` may read
        load-model files (the CLI's ``--allow-path DIR``)

    Raises
    ------
    ModelFileError
        With a one-line message ``<file>: <key>: expected …, found …``.
    """
    name = str(path)
    try:  # regular files only (never blocks on a FIFO), size-limited, UTF-8 (BOM accepted)
        read = read_source(path, "model file")
    except SourceError as error:
        raise ModelFileError(name, error.key, error.detail) from None
    # the hash is of the bytes parsed here: nothing reads the model file again
    return read_model(read.text, name, source=Path(path), allowed=allowed, sha256=read.sha256)


def read_model(text: str, name: str = "<model>", source: Path | None = None,
               allowed: Iterable[str | Path] = (), sha256: str = "") -> Model:
    """Read a model from TOML text; ``name`` is used in error messages, ``allowed`` as in
    :func:`load_model`, ``sha256`` is the hash of the bytes ``text`` was decoded from."""
    try:
        raw = parse_toml(text, name)  # nesting depth bounded before tomllib recurses
    except tomllib.TOMLDecodeError as error:
        raise _syntax_error(name, error) from None
    except SourceError as error:
        raise ModelFileError(name, error.key, error.detail) from None
    model = read_model_data(raw, name, source, allowed=allowed, sha256=sha256)
    return dataclasses.replace(model, text=text)


def read_model_data(raw: dict[str, Any], name: str = "<model>", source: Path | None = None,
                    allowed: Iterable[str | Path] = (), sha256: str = "") -> Model:
    """Read a model from parsed TOML (a dict as ``tomllib`` gives it; a what-if sweep passes
    a copy with one number changed); ``name`` is used in error messages, ``allowed`` and
    ``sha256`` as in :func:`read_model`."""
    reader = Reader(name)
    reader.raw = raw
    reader.allowed = tuple(Path(folder) for folder in allowed)
    for key in raw:
        if key not in known_top_level_keys():
            reader.fail(key, _unknown_key_detail(key, known_top_level_keys(),
                                                 what="top-level key"))
    title = reader.text(raw["title"], "title") if "title" in raw else (
        source.stem if source is not None else "untitled")
    reader.text_limit("title", title)
    description = ""
    if "description" in raw:
        description = reader.text(raw["description"], "description")
        reader.text_limit("description", description, "description length")
    if "units" not in raw:
        reader.expected("units", '"SI" (kN, m) or "US" (kip, ft)', _MISSING)
    units_text = raw["units"]
    if not isinstance(units_text, str) or units_text.upper() not in SYSTEMS:
        reader.expected("units", '"SI" (kN, m) or "US" (kip, ft)', units_text)
    reader.units = SYSTEMS[units_text.upper()]
    if "beam" not in raw:
        reader.expected("beam", "a [beam] table with spans and supports", _MISSING)
    beam, stiffness_given = _read_beam(raw["beam"], reader)
    reader.beam, reader.length = beam, beam.length
    sections = _read_sections(raw.get("sections", _MISSING), reader)
    tables = {}
    for key, value in raw.items():
        if key in _EXTRA_TABLES:
            tables[key] = _EXTRA_TABLES[key](value, reader)
    return Model(title=title, units=reader.units, beam=beam, sections=sections, source=source,
                 stiffness_given=stiffness_given, raw=MappingProxyType(raw),
                 tables=MappingProxyType(tables), sha256=sha256,
                 description=" ".join(description.split()))


# ------------------------------------------------------------------------------------------
# [beam]

_BEAM_KEYS = ("spans", "supports", "hinges", "EI", "E", "I", "stiffness", "haunch_divisions")
_SEGMENT_KEYS = ("from", "to", "EI", "EI_end", "E", "I", "I_end", "shape")
_SHAPES = ("constant", "linear", "parabolic")


def _read_beam(value: Any, reader: Reader) -> tuple[Beam, tuple[str, ...]]:
    assert reader.units is not None
    table = reader.table(value, "beam", _BEAM_KEYS, required=("spans", "supports"))
    length_unit = reader.units.label("length")
    spans_value = reader.array(table["spans"], "beam.spans", "span lengths",
                               '[7.5, "8 m", 7.5]')
    if not spans_value:
        reader.expected("beam.spans", "at least one span length", spans_value)
    reader.limit("beam.spans", "spans", spans_value)
    spans = [reader.positive(s, f"beam.spans[{i}]", "length") for i, s in enumerate(spans_value)]
    try:  # a ratio of 1e9 between spans leaves the stiffness matrix meaningless
        check_span_ratio("beam.spans", spans)
    except LimitError as error:
        reader.fail(error.key, error.detail)
    length = float(sum(spans))

    supports = _read_supports(table["supports"], len(spans), reader)

    hinges_value = reader.array(table.get("hinges", []), "beam.hinges", "hinge positions",
                                '[12.0, "30 m"]')
    reader.limit("beam.hinges", "hinges", hinges_value)
    hinge_reader = Reader(reader.file, reader.units, length=length)
    hinges = [hinge_reader.position(h, f"beam.hinges[{i}]", interior=True)
              for i, h in enumerate(hinges_value)]
    for i, h in enumerate(hinges):
        for j in range(i):
            if abs(hinges[j] - h) <= 1e-9 * length:
                reader.fail(f"beam.hinges[{i}]", f"expected a position different from "
                            f"beam.hinges[{j}], found the same ({h:g} {length_unit})")

    segments, given = _read_stiffness(table, length, reader)
    # absent: each haunch is divided for 1e-8 accuracy on the lines (trundle.core.fem)
    divisions = None
    if "haunch_divisions" in table:
        divisions = reader.integer(table["haunch_divisions"], "beam.haunch_divisions", 1)
        reader.limit("beam.haunch_divisions", "haunch divisions", divisions)
    try:
        beam = Beam(spans=spans, EI=segments, supports=supports, hinges=hinges,
                    haunch_divisions=divisions)
    except ModelError as error:
        reader.fail("beam", f"{error} [positions in {length_unit}]")
    return beam, given


def _read_supports(value: Any, n_spans: int, reader: Reader) -> list[str | Spring]:
    assert reader.units is not None
    count = n_spans + 1
    example = "[" + ", ".join(['"pin"'] * count) + "]"
    items = reader.array(value, "beam.supports", "supports", example)
    if len(items) != count:
        reader.fail("beam.supports", f"expected {count} supports (one at each end of the "
                    f"{n_spans} span(s)), found {len(items)}")
    supports: list[str | Spring] = []
    kinds = ", ".join(f'"{k}"' for k in SUPPORT_KINDS)
    for i, item in enumerate(items):
        key = f"beam.supports[{i}]"
        if isinstance(item, str):
            if item not in SUPPORT_KINDS:
                hint = difflib.get_close_matches(item, SUPPORT_KINDS, n=1)
                extra = f' (did you mean "{hint[0]}"?)' if hint else ""
                reader.fail(key, f"expected {kinds} or a spring table "
                            f'{{spring = "{reader.units.example("spring stiffness")}"}}, '
                            f"found {show_value(item)}{extra}")
            supports.append(item)
            continue
        if not isinstance(item, dict):
            reader.expected(key, f"{kinds} or a spring table", item)
        if "spring" not in item:
            reader.fail(f"{key}.spring", "expected a vertical stiffness (e.g. spring = "
                        f'"{reader.units.example("spring stiffness")}") in the support table, '
                        f"found {show_value(item)}")
        spring = reader.table(item, key, ("spring", "rotational"))
        k = reader.positive(spring["spring"], f"{key}.spring", "spring stiffness")
        kr = (reader.positive(spring["rotational"], f"{key}.rotational", "rotational stiffness")
              if "rotational" in spring else None)
        supports.append(Spring(k, kr))
    return supports


def _read_stiffness(table: dict[str, Any], length: float, reader: Reader
                    ) -> tuple[list[tuple[Any, ...]], tuple[str, ...]]:
    """Stiffness segments (x0, x1, EI0, EI1, shape) and how each was given."""
    whole = [k for k in ("EI", "I") if k in table]
    if "stiffness" in table and whole:
        reader.fail(f"beam.{whole[0]}", "expected either EI (or E and I) for the whole beam or "
                    "[[beam.stiffness]] segments, found both")
    if "EI" in table and "I" in table:
        reader.fail("beam.I", "expected either EI or E and I, found both EI and I")
    if "EI" in table and "E" in table:
        reader.fail("beam.E", "expected either EI or E and I, found both EI and E")
    if "stiffness" in table:
        items = table["stiffness"]
        if not isinstance(items, list) or not all(isinstance(s, dict) for s in items):
            reader.expected("beam.stiffness", "[[beam.stiffness]] tables with from, to and EI",
                            items)
        if not items:
            reader.expected("beam.stiffness", "at least one [[beam.stiffness]] segment", items)
        reader.limit("beam.stiffness", "stiffness segments", items)
        return _read_segments(items, table.get("E", _MISSING), length, reader)
    if "EI" in table:
        EI = reader.positive(table["EI"], "beam.EI", "flexural rigidity")
        return [(0.0, length, EI, EI, "constant")], (f"EI = {show_value(table['EI'])}",)
    if "I" in table:
        if "E" not in table:
            reader.expected("beam.E", "an elastic modulus with its unit since beam.I is given "
                            f'(e.g. "{reader.units.example("modulus")}")', _MISSING)
        E = reader.positive(table["E"], "beam.E", "modulus")
        I = reader.positive(table["I"], "beam.I", "second moment of area")
        return [(0.0, length, E * I, E * I, "constant")], (f"E = {show_value(table['E'])}, "
                                        f"I = {show_value(table['I'])}",)
    if "E" in table:
        reader.expected("beam.I", "a second moment of area since beam.E is given (e.g. "
                        f'"{reader.units.example("second moment of area")}")', _MISSING)
    reader.expected("beam.EI", "the flexural rigidity: EI, or E and I, or "
                    "[[beam.stiffness]] segments", _MISSING)


def _read_segments(items: list[dict[str, Any]], default_E: Any, length: float, reader: Reader
                   ) -> tuple[list[tuple[Any, ...]], tuple[str, ...]]:
    assert reader.units is not None
    unit = reader.units.label("length")
    bounds = Reader(reader.file, reader.units, length=length)
    segments: list[tuple[Any, ...]] = []
    given: list[str] = []
    cursor = 0.0
    tolerance = 1e-9 * length
    for i, item in enumerate(items):
        key = f"beam.stiffness[{i}]"
        seg = reader.table(item, key, _SEGMENT_KEYS)
        last = i == len(items) - 1
        x0 = bounds.position(seg["from"], f"{key}.from") if "from" in seg else cursor
        if "to" not in seg and not last:
            reader.expected(f"{key}.to", "the end of the segment (only the last segment may "
                            "leave it out)", _MISSING)
        x1 = bounds.position(seg["to"], f"{key}.to") if "to" in seg else length
        if abs(x0 - cursor) > tolerance:
            what = "a gap" if x0 > cursor else "an overlap"
            reader.fail(f"{key}.from", f"expected {cursor:g} {unit} (where the previous "
                        f"segment ends; segments must cover the beam end to end), found "
                        f"{x0:g} {unit}, which leaves {what}")
        if not x1 > x0 + tolerance:
            reader.fail(f"{key}.to", f"expected a position beyond from = {x0:g} {unit}, "
                        f"found {x1:g} {unit}")
        if last and abs(x1 - length) > tolerance:
            reader.fail(f"{key}.to", f"expected the last segment to end at the end of the beam "
                        f"({length:g} {unit}), found {x1:g} {unit}")
        has_end = "EI_end" in seg or "I_end" in seg
        shape = reader.text(seg.get("shape", "linear" if has_end else "constant"),
                            f"{key}.shape", _SHAPES)
        if shape == "constant" and has_end:
            end_key = "EI_end" if "EI_end" in seg else "I_end"
            reader.fail(f"{key}.{end_key}", "expected no end value for a constant segment "
                        '(say shape = "linear" or "parabolic"), found one')
        if shape != "constant" and not has_end:
            reader.expected(f"{key}.EI_end", f'an end value (EI_end or I_end) for shape = '
                            f'"{shape}"', _MISSING)
        EI0, EI1, text = _segment_values(seg, key, default_E, reader)
        # always five entries: Beam reads a list of mixed-length tuples badly (np.ndim)
        segments.append((x0, x1, EI0, EI0 if EI1 is None else EI1, shape))
        given.append(text if shape == "constant" else f"{text}, {shape}")
        cursor = x1
    return segments, tuple(given)


def _segment_values(seg: dict[str, Any], key: str, default_E: Any, reader: Reader
                    ) -> tuple[float, float | None, str]:
    if "EI" in seg:
        for other in ("E", "I", "I_end"):
            if other in seg:
                reader.fail(f"{key}.{other}", "expected either EI (with EI_end) or I (with E, "
                            f"I_end), found both EI and {other}")
        EI0 = reader.positive(seg["EI"], f"{key}.EI", "flexural rigidity")
        EI1 = (reader.positive(seg["EI_end"], f"{key}.EI_end", "flexural rigidity")
               if "EI_end" in seg else None)
        text = f"EI = {show_value(seg['EI'])}"
        return EI0, EI1, text + (f" to {show_value(seg['EI_end'])}" if EI1 is not None else "")
    if "I" not in seg:
        reader.expected(f"{key}.EI", "EI, or I (with E here or in [beam])", _MISSING)
    if "EI_end" in seg:
        reader.fail(f"{key}.EI_end", "expected I_end with I, found EI_end")
    if "E" in seg:
        E_value = seg["E"]
        E = reader.positive(E_value, f"{key}.E", "modulus")
    elif default_E is not _MISSING:
        E_value = default_E
        E = reader.positive(E_value, "beam.E", "modulus")
    else:
        reader.expected(f"{key}.E", "an elastic modulus here or in [beam] since I is given",
                        _MISSING)
    I0 = reader.positive(seg["I"], f"{key}.I", "second moment of area")
    I1 = (reader.positive(seg["I_end"], f"{key}.I_end", "second moment of area")
          if "I_end" in seg else None)
    text = f"E = {show_value(E_value)}, I = {show_value(seg['I'])}"
    if I1 is not None:
        text += f" to {show_value(seg['I_end'])}"
    return E * I0, (E * I1 if I1 is not None else None), text


# ------------------------------------------------------------------------------------------
# [sections]

_SECTION_KEYS = ("at", "every")
_NAMED_SECTIONS = ("tenth points", "quarter points", "midspans", "supports")


def _read_sections(value: Any, reader: Reader) -> NDArray[np.float64]:
    beam = reader.beam
    assert beam is not None and reader.units is not None
    if value is _MISSING:
        return beam.tenth_points()
    table = reader.table(value, "sections", _SECTION_KEYS)
    if not table:
        reader.expected("sections.at", 'a list of positions or "tenth points" (or an every '
                        "key)", _MISSING)
    points: list[float] = []
    if "at" in table:
        at = table["at"]
        if isinstance(at, str):
            at = _section_name(at)
            if at not in _NAMED_SECTIONS:
                reader.expected("sections.at", "a list of positions or one of "
                                + ", ".join(f'"{n}"' for n in _NAMED_SECTIONS), at)
            points.extend(_named_sections(beam, at))
        else:
            items = reader.array(at, "sections.at", "positions", '["tenth points", "3.2 m"]')
            if not items:
                reader.expected("sections.at", "at least one position", items)
            reader.limit("sections.at", "sections", items)
            for i, x in enumerate(items):
                if isinstance(x, str) and _section_name(x) in _NAMED_SECTIONS:
                    points.extend(_named_sections(beam, _section_name(x)))
                else:
                    points.append(reader.position(x, f"sections.at[{i}]"))
    if "every" in table:
        step = reader.positive(table["every"], "sections.every", "length")
        # counted before any array is built: "1e-7 m" on a 30 m beam is 3e8 sections
        reader.limit("sections.every", "sections", math.ceil(beam.length / step))
        ends = beam.support_positions
        for a, b in zip(ends[:-1], ends[1:], strict=True):
            count = max(1, math.ceil((b - a) / step - 1e-9))
            points.extend(a + np.arange(count) * step)
            points.append(b)
    found = _unique_sorted(np.asarray(points, dtype=float), beam.length)
    reader.limit("sections", "sections", len(found))
    return found


def _section_name(text: str) -> str:
    """ "Tenth-points", "tenth_points" and "tenth points" all name the tenth points."""
    return " ".join(text.replace("-", " ").replace("_", " ").lower().split())


def _named_sections(beam: Beam, name: str) -> NDArray[np.float64]:
    ends = beam.support_positions
    if name == "tenth points":
        return beam.tenth_points()
    if name == "supports":
        return ends.copy()
    fractions = [0.0, 0.25, 0.5, 0.75, 1.0] if name == "quarter points" else [0.5]
    return np.asarray([a + (b - a) * f for a, b in zip(ends[:-1], ends[1:], strict=True)
                       for f in fractions])


def _unique_sorted(points: NDArray[np.float64], length: float) -> NDArray[np.float64]:
    points = np.sort(np.clip(points, 0.0, length))
    keep = np.concatenate([[True], np.diff(points) > 1e-9 * length])
    return points[keep]


# ------------------------------------------------------------------------------------------
# helpers

class _Missing:
    def __repr__(self) -> str:
        return "<missing>"


_MISSING: Any = _Missing()


def _join(parent: str, name: str) -> str:
    return f"{parent}.{name}" if parent else name


def _unknown_key_detail(name: str, allowed: Iterable[str], what: str = "key") -> str:
    allowed = list(allowed)
    hint = difflib.get_close_matches(name, allowed, n=1, cutoff=0.6)
    if not hint:
        lowered = {a.lower(): a for a in allowed}
        if name.lower() in lowered:
            hint = [lowered[name.lower()]]
    extra = f' (did you mean "{hint[0]}"?)' if hint else ""
    return f"unknown {what}{extra}; expected one of {', '.join(allowed)}"


def _shown_length(value: Any, x: float, unit: str) -> str:
    if isinstance(value, str):
        return f"{show_value(value)} = {x:g} {unit}"
    return f"{x:g} {unit}"


_TOML_POSITION = re.compile(r"\s*\(at line (\d+), column (\d+)\)\s*$")


def _syntax_error(name: str, error: tomllib.TOMLDecodeError) -> ModelFileError:
    message = str(error)
    match = _TOML_POSITION.search(message)
    if match:
        detail = message[: match.start()]
        return ModelFileError(name, f"line {match.group(1)}",
                              f"invalid TOML at column {match.group(2)}: {detail}")
    return ModelFileError(name, "TOML", f"invalid TOML: {message}")

