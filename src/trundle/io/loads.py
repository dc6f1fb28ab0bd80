"""Loads in model files (``[[load]]``) and load-model files (``loadmodels/*.toml``).

A ``[[load]]`` entry is one of: a vehicle (``axles``), a train of vehicles (``vehicles``), a
placed uniform live load (``uniform``) or a load model from the library or from a file
(``use``); any of them may carry a dynamic allowance (``impact``) and named multipliers
(``factors``). An entry with ``together = ["truck", "lane"]`` makes other entries of the same
file act at the same time, each where it is worst and with its own impact and factors.
A load-model file holds the same keys as one entry at its top level, plus ``units``,
``description`` and ``source``. The schema is documented in docs/model-file.md.

Every value is converted to the model's base units; a load-model file in other units is
converted exactly (rational arithmetic, one rounding). Every problem is a one-line
:class:`trundle.io.modelfile.ModelFileError` naming the file and the key
(``load[2].spacings[1].min``).
"""

from __future__ import annotations

import dataclasses
import difflib
import hashlib
import math
import re
import tomllib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from pathlib import Path
from types import MappingProxyType
from typing import Any

from trundle.core.beam import ModelError
from trundle.io.limits import LimitError, check_product
from trundle.io.modelfile import Model, ModelFileError, Reader, _syntax_error
from trundle.io.source import SourceError, parse_toml, read_source, resolve_use
from trundle.io.units import (
    SYSTEMS,
    UnitSystem,
    parse_quantity,
    quantities_in,
    registry,
    show_value,
)
from trundle.loads import library
from trundle.loads.cases import LoadCase, Together
from trundle.loads.design_cases import RULE_EFFECTS, RULE_REGIONS, Alternative, DesignCase, Rule
from trundle.loads.patterns import PLACEMENTS, UniformLoad
from trundle.loads.vehicles import AttachedUniform, Train, Vehicle

TABLE = "load"
KINDS = ("vehicle", "train", "uniform", "together")
KIND_NAMES = {"vehicle": "vehicle", "train": "train of vehicles",
              "uniform": "placed uniform load", "together": "set of loads acting together"}

# The key that makes an entry one kind of load, and the keys each kind may have.
_KIND_KEY = {"axles": "vehicle", "vehicles": "train", "uniform": "uniform", "use": "use",
             "together": "together"}
_KIND_KEYS = {
    "vehicle": ("axles", "spacings", "directions"),
    "train": ("vehicles", "gaps", "ahead", "behind", "directions"),
    "uniform": ("uniform", "placement", "point_load"),
    "use": ("use",),
    "together": ("together",),
}
_COMMON_KEYS = ("name", "impact", "factors", "load_factor")
_ENTRY_KEYS = ("name", "axles", "spacings", "vehicles", "gaps", "ahead", "behind", "uniform",
               "placement", "point_load", "directions", "use", "together", "impact", "factors",
               "load_factor")
_LIBRARY_KEYS = ("units", "description", "source", "axles", "spacings", "vehicles", "gaps",
                 "ahead", "behind", "uniform", "placement", "point_load", "directions",
                 "impact", "factors")
_INLINE_VEHICLE_KEYS = ("name", "axles", "spacings")
_ATTACHED_KEYS = ("w", "length", "gap")
DIRECTIONS = ("both", "one way")


@dataclass(frozen=True)
class LoadModelFile:
    """A load model read from a file, in the units of the model that uses it.

    Fields
    ------
    name : the library name (the file name without ``.toml``)
    path : the file read
    kind : "vehicle", "train" or "uniform"
    units : the unit system the file is written in
    description : as written in the file, its numbers with units in the target units
    source : as written in the file
    load : Vehicle, Train or UniformLoad [target units]
    impact : dynamic allowance as a fraction (0 if the file gives none)
    factors : ((name, value), …) as written in the file
    given : the parsed TOML, as written
    sha256 : hex SHA-256 of the bytes parsed
    """

    name: str
    path: Path
    kind: str
    units: UnitSystem
    description: str
    source: str
    load: Any
    impact: float = 0.0
    factors: tuple[tuple[str, float], ...] = ()
    given: Mapping[str, Any] = field(default_factory=dict, repr=False)
    sha256: str = ""

    @property
    def fact(self) -> tuple[Path, str, str]:
        """(path, SHA-256, ``source`` as written): what outputs record of this file."""
        return self.path, self.sha256, str(self.given.get("source", ""))


def _facts(files: Sequence[Path], reader: Reader) -> tuple[tuple[Path, str, str], ...]:
    """The facts of ``files`` recorded by this reader when it read them (none re-read)."""
    known = getattr(reader, "file_facts", {})
    return tuple(known[p] for p in files) if all(p in known for p in files) else ()


@dataclass(frozen=True)
class LoadEntry:
    """One ``[[load]]`` of a model file, ready for :func:`trundle.analysis.envelope`.

    Fields
    ------
    name : unique within the model
    kind : "vehicle", "train", "uniform" or "together"
    case : the LoadCase (load, impact, factors), in the model's base units; for loads acting
        together a :class:`trundle.Together` of the other entries' cases
    origin : "model file", or where a ``use`` found the load model (library name or path)
    description, source : from the load-model file ("" when defined in the model file)
    given : the entry as written in the model file
    files : every load-model file the entry reads (its ``use``, a train's library vehicles;
        for loads acting together, those of its parts)
    file_facts : per file, (path, SHA-256, its ``source``), recorded when the model is read so
        that no output has to read a file again
    """

    name: str
    kind: str
    case: LoadCase | Together
    origin: str = "model file"
    description: str = ""
    source: str = ""
    given: Mapping[str, Any] = field(default_factory=dict, repr=False)
    files: tuple[Path, ...] = ()
    file_facts: tuple[tuple[Path, str, str], ...] = field(default=(), repr=False)

    def __post_init__(self) -> None:
        if self.files and not self.file_facts:
            object.__setattr__(self, "file_facts", tuple(_file_fact(p) for p in self.files))

    @property
    def load(self) -> Any:
        """The Vehicle, Train or UniformLoad (for loads acting together: the Together)."""
        return self.case if isinstance(self.case, Together) else self.case.load

    @property
    def parts(self) -> tuple[str, ...]:
        """For loads acting together: the names of the entries that act together."""
        return tuple(p.name for p in self.case.parts) if isinstance(self.case, Together) else ()


def _file_fact(path: Path) -> tuple[Path, str, str]:
    """(path, SHA-256, source) of a load-model file that has just been read."""
    try:
        data = path.read_bytes()
        source = str(tomllib.loads(data.decode("utf-8")).get("source", ""))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return path, "(not readable)", ""
    return path, hashlib.sha256(data).hexdigest(), source


def loads_of(model: Model) -> tuple[LoadEntry, ...]:
    """The loads of a model file, in the order written (empty if it has none)."""
    return tuple(model.tables.get(TABLE, ()))


def require_loads(model: Model) -> tuple[LoadEntry, ...]:
    """The loads of a model; a one-line error naming the file if there are none."""
    entries = loads_of(model)
    if not entries:
        raise ModelFileError(model.name, TABLE, "expected at least one [[load]] table (a "
                             "vehicle, a train, a placed uniform load or a library load "
                             "model, see docs/model-file.md), found nothing")
    return entries


# ------------------------------------------------------------------------------------------
# [[load]] in a model file


def read_loads(value: Any, reader: Reader) -> tuple[LoadEntry, ...]:
    """Reader of the top-level ``[[load]]`` array (registered with the model-file reader)."""
    if not isinstance(value, list) or not all(isinstance(item, dict) for item in value):
        reader.expected(TABLE, "[[load]] tables, each with axles, vehicles, uniform, use or "
                        "together",
                        value)
    if not value:
        reader.expected(TABLE, "at least one [[load]] table", value)
    reader.limit(TABLE, "loads", value)
    base = _base_folder(reader.file)
    entries: list[LoadEntry | _Pending] = []
    seen: dict[str, int] = {}
    for i, item in enumerate(value):
        key = f"{TABLE}[{i}]"
        entry = _read_entry(item, key, reader, base)
        if entry.name in seen:
            where = "name" if "name" in item else "use"
            reader.fail(_sub(key, where), f"expected a name different from that of "
                        f"{TABLE}[{seen[entry.name]}] (names identify loads in the results), "
                        f'found "{entry.name}" again')
        seen[entry.name] = i
        entries.append(entry)
    # loads acting together name other entries, which may come later in the file
    return tuple(_together(e, entries, seen, reader) if isinstance(e, _Pending) else e
                 for e in entries)


@dataclass(frozen=True)
class _Pending:
    """A ``together`` entry read but not yet resolved (its parts may come later)."""

    name: str
    key: str
    parts: tuple[str, ...]
    given: Mapping[str, Any]


def _read_together(table: dict[str, Any], key: str, reader: Reader) -> _Pending:
    for name in ("impact", "factors", "load_factor"):
        if name in table:
            reader.fail(_sub(key, name), f"expected no {name} on loads acting together (each "
                        f"part keeps its own: write it in that part's [[load]]), found "
                        f"{show_value(table[name])}")
    if "name" not in table:
        reader.fail(_sub(key, "name"), "expected a name for these loads acting together "
                    '(e.g. "truck + lane"; names identify loads in the results), found nothing')
    name = _nonblank(reader.text(table["name"], _sub(key, "name")), _sub(key, "name"), reader)
    items = reader.array(table["together"], _sub(key, "together"), "names of other [[load]] "
                         "entries of this file", '["truck", "lane"]')
    if len(items) < 2:
        reader.expected(_sub(key, "together"), "the names of two or more other [[load]] "
                        "entries of this file", items)
    parts: list[str] = []
    for j, item in enumerate(items):
        pkey = _sub(key, f"together[{j}]")
        if not isinstance(item, str) or not item.strip():
            reader.expected(pkey, "the name of another [[load]] entry of this file", item)
        part = item.strip()
        if part in parts:
            reader.fail(pkey, f'expected each load once, found "{part}" again (a load acts '
                        "once; to double it, use factors on its own entry)")
        parts.append(part)
    return _Pending(name, key, tuple(parts), MappingProxyType(dict(table)))


def _together(pending: _Pending, entries: list[Any], seen: Mapping[str, int],
              reader: Reader) -> LoadEntry:
    """A ``together`` entry with its parts looked up among the file's other entries."""
    cases = []
    files: list[Path] = []
    for j, part in enumerate(pending.parts):
        pkey = _sub(pending.key, f"together[{j}]")
        if part == pending.name:
            reader.fail(pkey, f'expected the name of another [[load]] entry, found "{part}", '
                        "the name of this entry itself")
        if part not in seen:
            names = [n for n, i in seen.items() if not isinstance(entries[i], _Pending)]
            hint = difflib.get_close_matches(part, names, n=1, cutoff=0.5)
            extra = f' (did you mean "{hint[0]}"?)' if hint else ""
            known = ", ".join(f'"{n}"' for n in names) or "none"
            reader.fail(pkey, f"expected the name of a [[load]] entry of this file (one of "
                        f'{known}), found "{part}"{extra}')
        other = entries[seen[part]]
        if isinstance(other, _Pending):
            reader.fail(pkey, f'expected a vehicle, train, placed uniform load or library '
                        f'load model, found "{part}", itself loads acting together (list its '
                        "parts here instead)")
        cases.append(other.case)
        files.extend(other.files)
    case = _build(Together, pending.key, reader, parts=tuple(cases), name=pending.name)
    files = list(dict.fromkeys(files))
    return LoadEntry(pending.name, "together", case, given=pending.given, files=tuple(files),
                     file_facts=_facts(files, reader))


def _read_entry(item: dict[str, Any], key: str, reader: Reader, base: Path
                ) -> LoadEntry | _Pending:
    table = reader.table(item, key, _ENTRY_KEYS)
    kind = _kind_of(table, key, reader, _ENTRY_KEYS)
    if kind == "together":
        return _read_together(table, key, reader)
    given = MappingProxyType(dict(table))
    if kind == "use":
        extra = [k for k in table if k not in ("use", *_COMMON_KEYS)]
        if extra:
            reader.fail(_sub(key, extra[0]), "expected only name, impact, factors and "
                        "load_factor beside use "
                        "(the load model defines the rest), found "
                        f"{extra[0]} = {show_value(table[extra[0]])}")
        found = _use(table["use"], _sub(key, "use"), reader, base)
        if found.kind == "design case":
            reader.fail(_sub(key, "use"), f'expected a vehicle, train or placed uniform load, '
                        f'found "{found.name}", a design case (the worst of its alternatives, '
                        "with rules), which [[load]] cannot run yet: use its parts (see "
                        f"'trundle library {found.name}') until the design envelope is wired in")
        name = reader.text(table["name"], _sub(key, "name")) if "name" in table else found.name
        _nonblank(name, _sub(key, "name"), reader)
        impact = (_impact(table["impact"], _sub(key, "impact"), reader) if "impact" in table
                  else found.impact)
        factors = dict(found.factors)
        if "factors" in table:
            factors.update(_factors(table["factors"], _sub(key, "factors"), reader))
        if found.kind == "uniform" and impact:
            reader.fail(_sub(key, "impact"), f'expected no impact for "{found.name}", a placed '
                        "uniform load (the dynamic allowance applies to axle loads only), "
                        f"found {show_value(table['impact'])}")
        load = dataclasses.replace(found.load, name=name)
        origin = (f"library model {found.name}" if library.is_library_file(found.path)
                  else f"load-model file {found.path}")
        return LoadEntry(name, found.kind,
                         _case(load, impact, factors, _load_factor(table, key, reader), key,
                               reader),
                         origin, found.description, found.source, given, (found.path,),
                         _facts([found.path], reader))
    if "name" not in table:
        reader.fail(_sub(key, "name"), f"expected a name for this {KIND_NAMES[kind]} (names "
                    "identify loads in the results), found nothing")
    name = _nonblank(reader.text(table["name"], _sub(key, "name")), _sub(key, "name"), reader)
    files: list[Path] = []
    load = _definition(kind, table, key, reader, name, base, files)
    impact = _impact(table["impact"], _sub(key, "impact"), reader) if "impact" in table else 0.0
    if kind == "uniform" and "impact" in table:
        reader.fail(_sub(key, "impact"), "expected no impact for a placed uniform load (the "
                    "dynamic allowance applies to axle loads only), found "
                    f"{show_value(table['impact'])}")
    factors = _factors(table["factors"], _sub(key, "factors"), reader) if "factors" in table else {}
    files = list(dict.fromkeys(files))
    return LoadEntry(name, kind,
                     _case(load, impact, factors, _load_factor(table, key, reader), key, reader),
                     given=given, files=tuple(files), file_facts=_facts(files, reader))


def _load_factor(table: Mapping[str, Any], key: str, reader: Reader) -> float:
    """The strength load factor: on forces and moments, not on deflection."""
    if "load_factor" not in table:
        return 1.0
    value = table["load_factor"]
    if isinstance(value, bool) or not isinstance(value, int | float) or not value > 0 or \
            not math.isfinite(value):
        reader.expected(_sub(key, "load_factor"), "a positive number such as 1.5 (it multiplies "
                        "forces and moments, not deflection)", value)
    return float(value)


def _case(load: Any, impact: float, factors: Mapping[str, float], load_factor: float, key: str,
          reader: Reader) -> LoadCase:
    try:  # 1e308 × 1.5 overflows to inf, and inf × 0 gives the silent zeros of an empty beam
        check_product(key or "file", [1.0 + impact, *factors.values(), load_factor],
                      "the product of the impact, factors and load factor")
    except LimitError as error:
        reader.fail(error.key, error.detail)
    try:
        return LoadCase(load, impact=impact, factors=tuple(factors.items()), name=load.name,
                        load_factor=load_factor)
    except ModelError as error:  # checked above; kept so a core change cannot leak a traceback
        reader.fail(key or "file", str(error))


def _kind_of(table: dict[str, Any], key: str, reader: Reader, allowed: tuple[str, ...]) -> str:
    present = [k for k in _KIND_KEY if k in table]
    options = [k for k in _KIND_KEY if k in allowed]
    if not present:
        described = {"axles": "axles (a vehicle)", "vehicles": "vehicles (a train)",
                     "uniform": "uniform (a placed uniform load)",
                     "use": "use (a load model from the library or a file)",
                     "together": "together (other loads acting at the same time)"}
        reader.fail(key or "file", "expected one of "
                    + ", ".join(described[k] for k in options)
                    + f", found {show_value(table)}")
    if len(present) > 1:
        first, second = present[:2]
        reader.fail(_sub(key, second), f"expected one kind of load per entry, found both "
                    f"{first} and {second} (write two entries)")
    kind = _KIND_KEY[present[0]]
    for name in table:
        owner = next((k for k, keys in _KIND_KEYS.items() if name in keys), None)
        if owner is not None and name not in _KIND_KEYS[kind] and kind != "use":
            if name == "directions" and kind in ("vehicle", "train"):
                continue
            reader.fail(_sub(key, name), f"expected no {name} in a {KIND_NAMES[kind]} (it "
                        f"belongs to a {_owner_name(name)}), found {show_value(table[name])}")
    return kind


def _sub(key: str, name: str) -> str:
    """The dotted key of ``name`` inside ``key`` (a load-model file's keys are top level)."""
    return f"{key}.{name}" if key else name


def _owner_name(key: str) -> str:
    owners = [KIND_NAMES[k] for k, keys in _KIND_KEYS.items() if key in keys and k != "use"]
    return " or ".join(owners)


def _nonblank(name: str, key: str, reader: Reader) -> str:
    if not name.strip():
        reader.expected(key, "a name that is not blank", name)
    return reader.text_limit(key, name.strip())


def _definition(kind: str, table: dict[str, Any], key: str, reader: Reader, name: str,
                base: Path, files: list[Path]) -> Any:
    """The load an entry defines; load-model files it reads are appended to ``files``."""
    if kind == "vehicle":
        axles, spacings = _axles_and_spacings(table, key, reader)
        return _build(Vehicle, key, reader, loads=axles, spacings=spacings, name=name,
                      reversible=_directions(table, key, reader))
    if kind == "train":
        return _train(table, key, reader, name, base, files)
    w = reader.positive(table["uniform"], _sub(key, "uniform"), "distributed load")
    placement = (reader.text(table["placement"], _sub(key, "placement"), PLACEMENTS)
                 if "placement" in table else "anywhere")
    point = (reader.positive(table["point_load"], _sub(key, "point_load"), "force")
             if "point_load" in table else 0.0)
    return _build(UniformLoad, key, reader, w=w, placement=placement, point_load=point,
                  name=name)


def _build(cls: type, key: str, reader: Reader, **values: Any) -> Any:
    try:
        return cls(**values)
    except ModelError as error:  # everything is checked before; never a traceback anyway
        reader.fail(key or "file", str(error))


def _axles_and_spacings(table: dict[str, Any], key: str, reader: Reader
                        ) -> tuple[tuple[float, ...], tuple[float | tuple[float, float], ...]]:
    assert reader.units is not None
    example = f'["{reader.units.example("force")}", "{reader.units.example("force")}"]'
    items = reader.array(table["axles"], _sub(key, "axles"), "axle loads (front to back)", example)
    if not items:
        reader.expected(_sub(key, "axles"), "at least one axle load", items)
    reader.limit(_sub(key, "axles"), "axles", items)
    axles = tuple(reader.positive(p, _sub(key, f"axles[{i}]"), "force")
                  for i, p in enumerate(items))
    needed = len(axles) - 1
    if "spacings" not in table:
        if needed:
            reader.fail(_sub(key, "spacings"), f"expected {needed} spacing(s), one between each "
                        f"pair of the {len(axles)} axles, found nothing")
        return axles, ()
    length_example = reader.units.example("length")
    spacing_items = reader.array(table["spacings"], _sub(key, "spacings"), "axle spacings",
                                 f'["{length_example}", {{min = "…", max = "…"}}]')
    if len(spacing_items) != needed:
        reader.fail(_sub(key, "spacings"), f"expected {needed} spacing(s), one between each pair "
                    f"of the {len(axles)} axles, found {len(spacing_items)}")
    spacings = tuple(_spacing(s, _sub(key, f"spacings[{i}]"), reader)
                     for i, s in enumerate(spacing_items))
    # the search grid grows as 2^n in the searched ranges: refused before any work
    reader.limit(_sub(key, "spacings"), "searched dimensions",
                 sum(isinstance(s, tuple) for s in spacings))
    return axles, spacings


def _spacing(value: Any, key: str, reader: Reader) -> float | tuple[float, float]:
    """A length, or ``{min, max}``: a range searched for its worst value."""
    assert reader.units is not None
    if isinstance(value, dict):
        table = reader.table(value, key, ("min", "max"), required=("min", "max"))
        low = reader.positive(table["min"], _sub(key, "min"), "length")
        high = reader.positive(table["max"], _sub(key, "max"), "length")
        unit = reader.units.label("length")
        if not high > low:
            reader.fail(_sub(key, "max"), f"expected more than min = {low:g} {unit} (write one "
                        f"length for a fixed value), found {show_value(table['max'])}")
        return (low, high)
    if isinstance(value, list):
        reader.expected(key, 'a length or a range {min = "…", max = "…"}', value)
    return reader.positive(value, key, "length")


def _directions(table: dict[str, Any], key: str, reader: Reader) -> bool:
    if "directions" not in table:
        return True
    return reader.text(table["directions"], _sub(key, "directions"), DIRECTIONS) == "both"


def _train(table: dict[str, Any], key: str, reader: Reader, name: str, base: Path,
           files: list[Path]) -> Train:
    items = reader.array(table["vehicles"], _sub(key, "vehicles"), "vehicles (library names or "
                         "inline tables)", '["demo-service-truck", {axles = […], spacings = […]}]')
    if not items:
        reader.expected(_sub(key, "vehicles"), "at least one vehicle", items)
    reader.limit(_sub(key, "vehicles"), "vehicles", items)
    vehicles = []
    for j, item in enumerate(items):
        vkey = _sub(key, f"vehicles[{j}]")
        if isinstance(item, str):
            found = _use(item, vkey, reader, base)
            if found.kind != "vehicle":
                reader.fail(vkey, f"expected a vehicle, found \"{item}\", which is a "
                            f"{KIND_NAMES[found.kind]}")
            vehicles.append(found.load)
            files.append(found.path)
            continue
        if not isinstance(item, dict):
            reader.expected(vkey, "a library name or an inline table {axles = […], "
                            "spacings = […]}", item)
        inline = reader.table(item, vkey, _INLINE_VEHICLE_KEYS, required=("axles",))
        name_key = _sub(vkey, "name")
        vname = (_nonblank(reader.text(inline["name"], name_key), name_key, reader)
                 if "name" in inline else f"vehicle {j + 1}")
        axles, spacings = _axles_and_spacings(inline, vkey, reader)
        vehicles.append(_build(Vehicle, vkey, reader, loads=axles, spacings=spacings,
                               name=vname))
    needed = len(vehicles) - 1
    gap_items = []
    if "gaps" in table:
        gap_items = reader.array(table["gaps"], _sub(key, "gaps"), "clear gaps (last axle of one "
                                 "vehicle to the first axle of the next)",
                                 f'["{reader.units.example("length")}"]')
    if len(gap_items) != needed:
        found = f"{len(gap_items)}" if "gaps" in table else "nothing"
        reader.fail(_sub(key, "gaps"), f"expected {needed} gap(s), one between each pair of the "
                    f"{len(vehicles)} vehicles, found {found}")
    gaps = tuple(_spacing(g, _sub(key, f"gaps[{i}]"), reader) for i, g in enumerate(gap_items))
    reader.limit(_sub(key, "gaps"), "searched dimensions",
                 sum(isinstance(s, tuple) for s in gaps) +
                 sum(isinstance(s, tuple) for v in vehicles for s in v.spacings))
    ahead = _attached(table["ahead"], _sub(key, "ahead"), reader) if "ahead" in table else None
    behind = _attached(table["behind"], _sub(key, "behind"), reader) if "behind" in table else None
    return _build(Train, key, reader, vehicles=tuple(vehicles), gaps=gaps, ahead=ahead,
                  behind=behind, name=name, reversible=_directions(table, key, reader))


def _attached(value: Any, key: str, reader: Reader) -> AttachedUniform:
    table = reader.table(value, key, _ATTACHED_KEYS, required=("w",))
    w = reader.positive(table["w"], _sub(key, "w"), "distributed load")
    length = math.inf
    if "length" in table:
        given = table["length"]
        if isinstance(given, str) and given.strip() == "unlimited":
            length = math.inf
        else:
            try:
                length = reader.positive(given, _sub(key, "length"), "length")
            except ModelFileError:
                assert reader.units is not None
                reader.expected(_sub(key, "length"), 'a positive length (e.g. "'
                                f'{reader.units.example("length")}") or "unlimited"', given)
    gap = 0.0
    if "gap" in table:
        gap = reader.quantity(table["gap"], _sub(key, "gap"), "length")
        if gap < 0:
            reader.expected(_sub(key, "gap"), "a clear distance of zero or more", table["gap"])
    return _build(AttachedUniform, key, reader, w=w, length=length, gap=gap)


def _impact(value: Any, key: str, reader: Reader) -> float:
    """A dynamic allowance: 0.33 or "33 %"; between 0 and 1."""
    return reader.fraction(value, key, "a dynamic allowance", example=0.33)


def _factors(value: Any, key: str, reader: Reader) -> dict[str, float]:
    """Named multipliers, in the order written: {"load factor" = 1.75, …}."""
    if not isinstance(value, dict):
        reader.expected(key, 'a table of named multipliers such as { "multiple presence" = '
                        '1.2, "load factor" = 1.75 }', value)
    factors: dict[str, float] = {}
    for name, number in value.items():
        bare = re.fullmatch(r"[A-Za-z0-9_-]+", name)
        fkey = _sub(key, name if bare else f'"{name}"')
        if isinstance(number, bool) or not isinstance(number, int | float) or \
                not math.isfinite(number) or number <= 0:
            reader.expected(fkey, "a positive number (a plain multiplier)", number)
        if not name.strip():
            reader.fail(fkey, "expected a factor name that is not blank, found a blank one")
        factors[name] = float(number)
    return factors


# ------------------------------------------------------------------------------------------
# use = "library name" or "path/to/model.toml"


def _base_folder(file: str) -> Path:
    return Path(file).parent if not file.startswith("<") else Path.cwd()


def _use(value: Any, key: str, reader: Reader, base: Path) -> LoadModelFile:
    assert reader.units is not None
    if not isinstance(value, str) or not value.strip():
        reader.expected(key, "the name of a library load model (see 'trundle library') or "
                        "the path of a load-model file", value)
    text = value.strip()
    if "/" in text or "\\" in text or text.endswith(".toml") or text.startswith("~"):
        # inside the model's folder tree (or the library) only; never opened otherwise
        try:
            path = resolve_use(text, base, library.folder(), allowed=reader.allowed,
                               shown=reader.file, key=key)
        except SourceError as error:
            reader.fail(key, error.detail)
        chain = getattr(reader, "chain", ())
        if path.resolve() in chain:
            reader.fail(key, f'expected a load-model file that does not refer back to itself, '
                        f'found "{text}", which is already being read (a cycle of load-model '
                        "files)")
        try:
            return _recorded(read_load_model_file(path, reader.units, chain=chain), reader)
        except ModelFileError as error:
            if error.key != "file":  # a problem inside the file: named by that file
                raise
            reader.fail(key, f'{error.detail} (reading "{text}")')
    names = library.names()
    if text not in names:
        hint = difflib.get_close_matches(text, names, n=1, cutoff=0.5)
        lowered = {n.lower(): n for n in names}
        if not hint and text.lower() in lowered:
            hint = [lowered[text.lower()]]
        extra = f' (did you mean "{hint[0]}"?)' if hint else ""
        valid = ", ".join(names) or "none"
        reader.fail(key, f"expected a load model from the library ({valid}) or "
                    f'the path of a load-model file, found "{text}"{extra}')
    return _recorded(read_load_model_file(library.path_of(text), reader.units), reader)


def _recorded(found: LoadModelFile, reader: Reader) -> LoadModelFile:
    """Note the file's facts on the reader (the entry records them; nothing reads it again)."""
    if not hasattr(reader, "file_facts"):
        reader.file_facts = {}  # type: ignore[attr-defined]
    reader.file_facts[found.path] = found.fact  # type: ignore[attr-defined]
    return found


# ------------------------------------------------------------------------------------------
# load-model files


class _ConvertingReader(Reader):
    """Checks values in a file's own units and returns them in the target units, exactly."""

    def __init__(self, file: str, units: UnitSystem, target: UnitSystem):
        super().__init__(file, units)
        self.target = target

    def quantity(self, value: Any, key: str, quantity: str) -> float:
        number = super().quantity(value, key, quantity)
        assert self.units is not None
        if self.target == self.units:
            return number
        if isinstance(value, str) and not _is_bare_number(value):
            return parse_quantity(value, quantity, self.target)
        converted = registry().Quantity(Fraction(number), self.units.pint_unit(quantity))
        return float(converted.to(self.target.pint_unit(quantity)).magnitude)


def _is_bare_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def read_load_model_file(path: str | Path, target: UnitSystem | None = None,
                         chain: tuple[Path, ...] = ()) -> LoadModelFile:
    """Read a load-model file; values come back in ``target``'s units (default: its own).

    ``chain`` holds the load-model files being read already (a cycle is refused).

    Raises
    ------
    ModelFileError
        One line naming this file and the key.
    """
    path = Path(path)
    name = str(path)
    read, raw = _read_toml_file(path)
    if is_design_case_file(raw):
        return _design_case_file(path, read.sha256, raw, target)
    plain = Reader(name)
    if "name" in raw:
        plain.fail("name", f'expected no name in a load-model file (it is called by its file '
                   f'name, "{path.stem}"), found {show_value(raw["name"])}')
    if "use" in raw:
        plain.fail("use", "expected a load defined in this file (axles, vehicles or uniform), "
                   "found use: a load-model file cannot refer to another")
    table = plain.table(raw, "", _LIBRARY_KEYS, required=("units", "description", "source"))
    units_text = table["units"]
    if not isinstance(units_text, str) or units_text.upper() not in SYSTEMS:
        plain.expected("units", '"SI" (kN, m) or "US" (kip, ft)', units_text)
    units = SYSTEMS[units_text.upper()]
    # the description's numbers in the units the model is used in (never kN in a US
    # report); the source is a citation and stays as written
    description = quantities_in(" ".join(plain.text(table["description"], "description")
                                         .split()), units, target or units)
    source = " ".join(plain.text(table["source"], "source").split())
    reader = _ConvertingReader(name, units, target or units)
    reader.chain = (*chain, path.resolve())  # type: ignore[attr-defined]
    kind = _kind_of(table, "", reader, _LIBRARY_KEYS)
    load = _definition(kind, table, "", reader, path.stem, path.parent, [])
    impact = _impact(table["impact"], "impact", reader) if "impact" in table else 0.0
    if kind == "uniform" and impact:
        reader.fail("impact", "expected no impact for a placed uniform load (the dynamic "
                    f"allowance applies to axle loads only), found {show_value(table['impact'])}")
    factors = _factors(table["factors"], "factors", reader) if "factors" in table else {}
    return LoadModelFile(path.stem, path, kind, units, description, source, load, impact,
                         tuple(factors.items()), MappingProxyType(raw), read.sha256)


def read_library_model(name: str, units: UnitSystem | None = None) -> LoadModelFile:
    """The built-in load model ``name`` in ``units`` (default: the units of its file)."""
    return read_load_model_file(library.path_of(name), units)


def read_library(units: UnitSystem | None = None) -> list[LoadModelFile]:
    """Every built-in load model, sorted by name."""
    return [read_library_model(name, units) for name in library.names()]


# ------------------------------------------------------------------------------------------
# design-case files: a load-model file whose top level has [[alternative]] tables (see
# docs/model-file.md, "Design cases"). Read here, applied by trundle.analysis.

_CASE_FILE_KEYS = ("units", "description", "source", "parameters", "alternative")
_ALTERNATIVE_KEYS = ("name", "parts", "factor", "rule")
_RULE_KEYS = ("effects", "region")
_PART_KEYS = (*_ENTRY_KEYS, "pressure", "axle_by_lane", "axle_count", "scale_by")
_PARAMETER_KINDS = {"lane_width": "length", "lane": "integer"}
BEAM_LENGTH = "beam length"
_UNBOUNDED = 1.0e6  # placeholder for a gap up to "beam length", replaced by design_cases.for_beam


def is_design_case_file(raw: Mapping[str, Any]) -> bool:
    """Whether a parsed load-model file is a design case (it has ``[[alternative]]``)."""
    return "alternative" in raw


def _case_parameters(table: Mapping[str, Any], overrides: Mapping[str, Any],
                     reader: Reader) -> dict[str, float]:
    given = dict(table)
    for name, value in overrides.items():
        if name not in given:
            known = ", ".join(given) or "none"
            reader.fail(f"parameters.{name}", f"expected one of the parameters this load model "
                        f"declares ({known}), found {name}")
        given[name] = value
    out: dict[str, float] = {}
    for name, value in given.items():
        key = f"parameters.{name}"
        kind = _PARAMETER_KINDS.get(name)
        if kind == "length":
            out[name] = reader.positive(value, key, "length")
        elif kind == "integer":
            out[name] = float(reader.integer(value, key, 1))
        else:
            if isinstance(value, bool) or not isinstance(value, int | float) or \
                    not math.isfinite(value) or value <= 0:
                reader.expected(key, "a positive number (a plain multiplier such as 0.9)", value)
            out[name] = float(value)
    return out


def _case_part(item: Any, key: str, reader: Reader, base: Path, parameters: Mapping[str, float]
               ) -> tuple[LoadCase | None, tuple[int, ...], tuple[Path, ...]]:
    """One part of an alternative: (case or None when absent for this lane, gaps up to the
    beam length, files read)."""
    assert reader.units is not None
    if isinstance(item, str):
        found = _use(item, key, reader, base)
        if found.kind == "design case":
            reader.fail(key, f'expected a vehicle, train or placed uniform load, found "{item}", '
                        "itself a design case (list its parts here instead)")
        case = _case(dataclasses.replace(found.load, name=found.name), found.impact,
                     dict(found.factors), 1.0, key, reader)
        return case, (), (found.path,)
    table = dict(reader.table(item, key, _PART_KEYS))
    factors: dict[str, float] = {}
    for j, pname in enumerate(table.pop("scale_by", [])):
        if pname not in parameters:
            reader.expected(_sub(key, f"scale_by[{j}]"), "the name of a parameter of this file "
                            f"({', '.join(parameters) or 'none declared'})", pname)
        factors[pname] = parameters[pname]
    lane = int(parameters.get("lane", 1))
    if "pressure" in table:  # a load per area over the lane width
        if "lane_width" not in parameters:
            reader.fail(_sub(key, "pressure"), "expected parameters.lane_width for a pressure, "
                        "found none")
        values = table.pop("pressure")
        values = values if isinstance(values, list) else [values]
        if not values:
            reader.expected(_sub(key, "pressure"), 'a pressure or a list of them per lane such '
                            'as ["9 kN/m^2", "2.5 kN/m^2"]', values)
        pressure = reader.positive(values[min(lane, len(values)) - 1], _sub(key, "pressure"),
                                   "modulus")
        table["uniform"] = pressure * parameters["lane_width"]
    if "axle_by_lane" in table:
        values = reader.array(table.pop("axle_by_lane"), _sub(key, "axle_by_lane"),
                              "axle loads of lanes 1, 2, …", '["300 kN", "200 kN", "100 kN"]')
        if lane > len(values):
            return None, (), ()
        count = reader.integer(table.pop("axle_count", 1), _sub(key, "axle_count"), 1)
        table["axles"] = [values[lane - 1]] * count
    unlimited: list[int] = []
    for i, gap in enumerate(table.get("gaps", [])):
        if isinstance(gap, dict) and gap.get("max") == BEAM_LENGTH:
            table["gaps"] = list(table["gaps"])
            table["gaps"][i] = {**gap, "max": _UNBOUNDED}
            unlimited.append(i)
    if "name" not in table:
        reader.fail(_sub(key, "name"), "expected a name for this part, found nothing")
    name = _nonblank(reader.text(table["name"], _sub(key, "name")), _sub(key, "name"), reader)
    kind = _kind_of(table, key, reader, _ENTRY_KEYS)
    if kind in ("use", "together"):
        reader.fail(_sub(key, kind), "expected axles, vehicles, uniform, pressure or "
                    "axle_by_lane in a part (a library part is written as its name)")
    files: list[Path] = []
    load = _definition(kind, table, key, reader, name, base, files)
    impact = _impact(table["impact"], _sub(key, "impact"), reader) if "impact" in table else 0.0
    if "factors" in table:
        factors.update(_factors(table["factors"], _sub(key, "factors"), reader))
    return (_case(load, impact, factors, 1.0, key, reader), tuple(unlimited),
            tuple(dict.fromkeys(files)))


def read_design_case(raw: Mapping[str, Any], name: str, reader: Reader, base: Path,
                     overrides: Mapping[str, Any] | None = None) -> DesignCase:
    """A :class:`trundle.loads.design_cases.DesignCase` from a parsed design-case file."""
    declared = raw.get("parameters", {})
    if not isinstance(declared, dict):
        reader.expected("parameters", "a [parameters] table of named values", declared)
    if not isinstance(overrides or {}, Mapping):
        reader.expected("parameters", "a table of parameters such as { lane = 2 }", overrides)
    parameters = _case_parameters(declared, overrides or {}, reader)
    items = raw["alternative"]
    if not isinstance(items, list) or not items or not all(isinstance(i, dict) for i in items):
        reader.expected("alternative", "one or more [[alternative]] tables", items)
    alternatives = []
    for i, item in enumerate(items):
        key = f"alternative[{i}]"
        table = reader.table(item, key, _ALTERNATIVE_KEYS, required=("name", "parts"))
        aname = _nonblank(reader.text(table["name"], f"{key}.name"), f"{key}.name", reader)
        parts_given = reader.array(table["parts"], f"{key}.parts", "library names or inline "
                                   "loads", '["hl93-truck", "hl93-lane"]')
        cases, unlimited = [], []
        for j, part in enumerate(parts_given):
            case, gaps, _files = _case_part(part, f"{key}.parts[{j}]", reader, base, parameters)
            if case is not None:
                cases.append(case)
                unlimited.extend(gaps)
        if not cases:
            reader.fail(f"{key}.parts", "expected at least one load, found none (for this lane)")
        factor = 1.0
        if "factor" in table:
            value = table["factor"]
            if isinstance(value, bool) or not isinstance(value, int | float) or \
                    not math.isfinite(value) or value <= 0:
                reader.expected(f"{key}.factor", "a positive number such as 0.9", value)
            factor = float(value)
        rule = None
        if "rule" in table:
            rtable = reader.table(table["rule"], f"{key}.rule", _RULE_KEYS, required=("effects",))
            effects = reader.array(rtable["effects"], f"{key}.rule.effects", "effect names",
                                   '["negative moment", "interior reactions"]')
            for j, effect in enumerate(effects):
                if effect not in RULE_EFFECTS:
                    hint = difflib.get_close_matches(str(effect), RULE_EFFECTS, n=1, cutoff=0.5)
                    extra = f' (did you mean "{hint[0]}"?)' if hint else ""
                    reader.fail(f"{key}.rule.effects[{j}]", "expected one of " + ", ".join(
                        f'"{e}"' for e in RULE_EFFECTS) + f", found {show_value(effect)}{extra}")
            region = (reader.text(rtable["region"], f"{key}.rule.region", RULE_REGIONS)
                      if "region" in rtable else "anywhere")
            rule = _build(Rule, f"{key}.rule", reader, effects=tuple(effects), region=region)
        case = cases[0] if len(cases) == 1 else _build(Together, f"{key}.parts", reader,
                                                       parts=tuple(cases), name=aname)
        alternatives.append(_build(Alternative, key, reader, name=aname, case=case,
                                   factor=factor, rule=rule,
                                   unlimited_gaps=tuple(sorted(set(unlimited)))))
    return _build(DesignCase, "alternative", reader, name=name,
                  alternatives=tuple(alternatives), parameters=tuple(parameters.items()))


def _read_toml_file(path: Path) -> tuple[Any, dict[str, Any]]:
    """A load-model or design-case file read once: regular files only, size-limited, UTF-8,
    nesting bounded before tomllib recurses; (what was read, its parsed TOML)."""
    name = str(path)
    try:
        read = read_source(path, "load-model file")
        return read, parse_toml(read.text, name)
    except SourceError as error:
        raise ModelFileError(name, error.key, error.detail) from None
    except tomllib.TOMLDecodeError as error:
        raise _syntax_error(name, error) from None


def read_design_case_file(path: str | Path, target: UnitSystem | None = None,
                          parameters: Mapping[str, Any] | None = None) -> LoadModelFile:
    """A design-case file (``[[alternative]]`` tables) as a LoadModelFile of kind
    "design case" whose ``load`` is a DesignCase; ``parameters`` override the file's."""
    path = Path(path)
    read, raw = _read_toml_file(path)
    return _design_case_file(path, read.sha256, raw, target, parameters)


def _design_case_file(path: Path, sha256: str, raw: dict[str, Any],
                      target: UnitSystem | None = None,
                      parameters: Mapping[str, Any] | None = None) -> LoadModelFile:
    """The design case of a file already read (its parsed TOML and the hash of its bytes)."""
    name = str(path)
    plain = Reader(name)
    table = plain.table(raw, "", _CASE_FILE_KEYS, required=("units", "description", "source",
                                                             "alternative"))
    units_text = table["units"]
    if not isinstance(units_text, str) or units_text.upper() not in SYSTEMS:
        plain.expected("units", '"SI" (kN, m) or "US" (kip, ft)', units_text)
    units = SYSTEMS[units_text.upper()]
    # the description's numbers in the units the model is used in (never kN in a US
    # report); the source is a citation and stays as written
    description = quantities_in(" ".join(plain.text(table["description"], "description")
                                         .split()), units, target or units)
    source = " ".join(plain.text(table["source"], "source").split())
    reader = _ConvertingReader(name, units, target or units)
    case = read_design_case(table, path.stem, reader, path.parent, parameters)
    return LoadModelFile(path.stem, path, "design case", units, description, source, case,
                         given=MappingProxyType(raw), sha256=sha256)
