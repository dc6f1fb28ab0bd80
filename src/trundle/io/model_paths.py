"""Paths to one number of a model file, and ranges of values to put there.

A *model path* names one number of a model file the way trundle's error messages name keys,
dotted, with list indices counted from 0; a ``[[load]]`` or ``[[crane]]`` may also be named
by its ``name`` (bare when it is a plain word, in double quotes otherwise)::

    beam.spans[1]                      the second span
    beam.supports[3].spring            support 3 as (or made) an elastic support
    beam.EI                            whole-beam stiffness (also beam.E, beam.I when given)
    load.truck.spacings[2]             a vehicle's third axle spacing (a searched range
                                       {min, max} becomes the one value swept)
    load[0].axles[1]                   a load by its index
    load."floor live load".uniform     a name with spaces, quoted
    load.convoy.gaps[0]                a train's gap
    crane."20 t process crane".buffer_length
    crane.hoist.wheel_spacings[0]

:func:`valid_paths` lists every path a given model has; :func:`resolve` turns the text of a
path into a :class:`ModelPath` (an unknown path is one line listing the valid ones);
:func:`apply` writes a value into a copy of the parsed TOML. Paths are read by a small
tokenizer, never evaluated.

A range is ``START:STOP:STEP``: the values START, START + STEP, … and STOP itself (the last
interval may be shorter). A unit is written on each of the three (``"4 m:9 m:50 cm"``) or
once at the end for all (``"4:9:0.5 m"``); without one, the values take the unit of the value
they replace as written in the file (or the model's base unit where it is a bare number).
At most :data:`MAX_POINTS_PER_AXIS` values per range.
"""

from __future__ import annotations

import copy
import difflib
import math
import re
from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass
from typing import Any

from trundle.io.units import UnitError, UnitSystem, describe_dimension, parse_quantity, registry

MAX_POINTS_PER_AXIS = 2001
"""The most values one range may give (start and stop included)."""

#: quantity kinds of the numbers a path can address; "force or mass" is a crane weight
KINDS = ("length", "position", "force", "force or mass", "distributed load",
         "spring stiffness", "rotational stiffness", "flexural rigidity", "modulus",
         "second moment of area")


class ModelPathError(ValueError):
    """A path or a range that cannot be used; ``str()`` is one line."""


@dataclass(frozen=True)
class ModelPath:
    """One addressable number of a model file.

    Fields
    ------
    text : the canonical path ("load.truck.spacings[2]")
    location : keys and indices into the parsed TOML, ("load", 0, "spacings", 2)
    kind : the quantity (one of KINDS)
    given : the value as written in the file (None where the file has none yet, as for the
        spring of a pin support)
    note : what the path changes, for the list of valid paths ("" when plain)
    """

    text: str
    location: tuple[str | int, ...]
    kind: str
    given: Any = None
    note: str = ""


# ------------------------------------------------------------------------------------------
# the tokenizer: segment ('.' segment)*, segment = (word | "quoted") ('[' digits ']')*

_WORD = re.compile(r"[A-Za-z_][A-Za-z0-9_\-]*")
_INDEX = re.compile(r"\[\s*(\d+)\s*\]")
_MAX_PATH_LENGTH = 300


def tokens(text: str) -> list[str | int]:
    """The keys (str) and indices (int) of a path; ModelPathError when it is malformed."""
    if not isinstance(text, str) or not text.strip():
        raise ModelPathError("expected a model path such as beam.spans[1], found nothing")
    source = text.strip()
    if len(source) > _MAX_PATH_LENGTH:
        raise ModelPathError(f"expected a model path, found {len(source)} characters")
    out: list[str | int] = []
    i = 0
    expect_key = True
    while i < len(source):
        if expect_key:
            if source[i] == '"':
                end = source.find('"', i + 1)
                if end < 0:
                    raise ModelPathError(f"{text}: expected a closing \" after column {i + 1}")
                name = source[i + 1:end]
                if not name.strip():
                    raise ModelPathError(f"{text}: expected a name between the quotes, found "
                                         "nothing")
                out.append(name)
                i = end + 1
            else:
                match = _WORD.match(source, i)
                if not match:
                    raise ModelPathError(f'{text}: expected a key (a word or a "quoted name") '
                                         f"at column {i + 1}, found {source[i]!r}")
                out.append(match.group())
                i = match.end()
            expect_key = False
            continue
        match = _INDEX.match(source, i)
        if match:
            out.append(int(match.group(1)))
            i = match.end()
        elif source[i] == ".":
            expect_key = True
            i += 1
        else:
            raise ModelPathError(f"{text}: expected '.', '[index]' or the end at column "
                                 f"{i + 1}, found {source[i]!r}")
    if expect_key:
        raise ModelPathError(f"{text}: expected a key after the last '.'")
    return out


# ------------------------------------------------------------------------------------------
# what a model offers

# Extra top-level tables add their numbers here: name -> lister(raw) yielding ModelPaths.
PathLister = Callable[[Mapping[str, Any]], Iterator[ModelPath]]
_LISTERS: dict[str, PathLister] = {}


def register_paths(table: str, lister: PathLister) -> None:
    """Make the numbers of a top-level table addressable (e.g. a ``[[permanent]]`` table)."""
    _LISTERS[table] = lister


def _quantity_like(value: Any) -> bool:
    return (isinstance(value, int | float) and not isinstance(value, bool)) or \
        isinstance(value, str)


def _named(table: str, index: int, item: Mapping[str, Any]) -> str:
    """How an entry of an array of tables is written in a canonical path."""
    name = item.get("name")
    if isinstance(name, str) and name.strip():
        name = name.strip()
        if _WORD.fullmatch(name) and name not in ("beam",):
            return f"{table}.{name}"
        if '"' not in name:
            return f'{table}."{name}"'
    return f"{table}[{index}]"


def _beam_paths(raw: Mapping[str, Any]) -> Iterator[ModelPath]:
    beam = raw.get("beam")
    if not isinstance(beam, Mapping):
        return
    spans = beam.get("spans")
    if isinstance(spans, list):
        for i, value in enumerate(spans):
            if _quantity_like(value):
                yield ModelPath(f"beam.spans[{i}]", ("beam", "spans", i), "length", value)
    supports = beam.get("supports")
    if isinstance(supports, list):
        for i, value in enumerate(supports):
            where = ("beam", "supports", i)
            if value == "pin":
                yield ModelPath(f"beam.supports[{i}].spring", (*where, "spring"),
                                "spring stiffness", None, "makes the pin an elastic support")
            elif isinstance(value, Mapping) and "spring" in value:
                yield ModelPath(f"beam.supports[{i}].spring", (*where, "spring"),
                                "spring stiffness", value["spring"])
                if "rotational" in value:
                    yield ModelPath(f"beam.supports[{i}].rotational", (*where, "rotational"),
                                    "rotational stiffness", value["rotational"])
    for key, kind in (("EI", "flexural rigidity"), ("E", "modulus"),
                      ("I", "second moment of area")):
        if _quantity_like(beam.get(key)):
            yield ModelPath(f"beam.{key}", ("beam", key), kind, beam[key])
    hinges = beam.get("hinges")
    if isinstance(hinges, list):
        for i, value in enumerate(hinges):
            if _quantity_like(value):
                yield ModelPath(f"beam.hinges[{i}]", ("beam", "hinges", i), "position", value)
    segments = beam.get("stiffness")
    if isinstance(segments, list):
        for i, segment in enumerate(segments):
            if not isinstance(segment, Mapping):
                continue
            for key, kind in (("EI", "flexural rigidity"), ("EI_end", "flexural rigidity"),
                              ("E", "modulus"), ("I", "second moment of area"),
                              ("I_end", "second moment of area")):
                if _quantity_like(segment.get(key)):
                    yield ModelPath(f"beam.stiffness[{i}].{key}", ("beam", "stiffness", i, key),
                                    kind, segment[key])


def _list_of(prefix: str, where: tuple[str | int, ...], values: Any, kind: str,
             ranged: bool = False) -> Iterator[ModelPath]:
    """``prefix[i]`` for each value of a list; a searched range {min, max} is addressable as
    a whole (it becomes the one value swept) and by its ends."""
    if not isinstance(values, list):
        return
    for i, value in enumerate(values):
        if ranged and isinstance(value, Mapping):
            yield ModelPath(f"{prefix}[{i}]", (*where, i), kind, None,
                            "replaces the searched range by one value")
            for end in ("min", "max"):
                if _quantity_like(value.get(end)):
                    yield ModelPath(f"{prefix}[{i}].{end}", (*where, i, end), kind, value[end])
        elif _quantity_like(value):
            yield ModelPath(f"{prefix}[{i}]", (*where, i), kind, value)


def _load_paths(raw: Mapping[str, Any]) -> Iterator[ModelPath]:
    entries = raw.get("load")
    if not isinstance(entries, list):
        return
    for k, entry in enumerate(entries):
        if not isinstance(entry, Mapping) or "use" in entry or "together" in entry:
            continue  # a library model's numbers live in its own file
        prefix = _named("load", k, entry)
        where = ("load", k)
        yield from _list_of(f"{prefix}.axles", (*where, "axles"), entry.get("axles"), "force")
        yield from _list_of(f"{prefix}.spacings", (*where, "spacings"), entry.get("spacings"),
                            "length", ranged=True)
        for key, kind in (("uniform", "distributed load"), ("point_load", "force")):
            if _quantity_like(entry.get(key)):
                yield ModelPath(f"{prefix}.{key}", (*where, key), kind, entry[key])
        yield from _list_of(f"{prefix}.gaps", (*where, "gaps"), entry.get("gaps"), "length",
                            ranged=True)
        vehicles = entry.get("vehicles")
        if isinstance(vehicles, list):
            for j, vehicle in enumerate(vehicles):
                if not isinstance(vehicle, Mapping):
                    continue  # a library vehicle
                vprefix = f"{prefix}.vehicles[{j}]"
                vwhere = (*where, "vehicles", j)
                yield from _list_of(f"{vprefix}.axles", (*vwhere, "axles"),
                                    vehicle.get("axles"), "force")
                yield from _list_of(f"{vprefix}.spacings", (*vwhere, "spacings"),
                                    vehicle.get("spacings"), "length", ranged=True)
        for end in ("ahead", "behind"):
            attached = entry.get(end)
            if not isinstance(attached, Mapping):
                continue
            for key, kind in (("w", "distributed load"), ("gap", "length"),
                              ("length", "length")):
                value = attached.get(key)
                if _quantity_like(value) and value != "unlimited":
                    yield ModelPath(f"{prefix}.{end}.{key}", (*where, end, key), kind, value)


def _crane_paths(raw: Mapping[str, Any]) -> Iterator[ModelPath]:
    entries = raw.get("crane")
    if not isinstance(entries, list):
        return
    for k, entry in enumerate(entries):
        if not isinstance(entry, Mapping):
            continue
        prefix = _named("crane", k, entry)
        where = ("crane", k)
        for key, kind in (("capacity", "force or mass"), ("bridge_weight", "force or mass"),
                          ("trolley_weight", "force or mass"), ("span", "length"),
                          ("hook_approach", "length"), ("buffer_length", "length")):
            if _quantity_like(entry.get(key)):
                yield ModelPath(f"{prefix}.{key}", (*where, key), kind, entry[key])
        yield from _list_of(f"{prefix}.wheel_spacings", (*where, "wheel_spacings"),
                            entry.get("wheel_spacings"), "length")


register_paths("beam", _beam_paths)
register_paths("load", _load_paths)
register_paths("crane", _crane_paths)


def valid_paths(raw: Mapping[str, Any]) -> list[ModelPath]:
    """Every addressable number of a parsed model file, in the order of the file's tables."""
    found: list[ModelPath] = []
    for lister in _LISTERS.values():
        found.extend(lister(raw))
    return found


def _normalised(raw: Mapping[str, Any], parts: list[str | int]) -> tuple[str | int, ...]:
    """Names of ``[[load]]``/``[[crane]]`` entries replaced by their index."""
    if len(parts) >= 2 and isinstance(parts[0], str) and isinstance(parts[1], str):
        entries = raw.get(parts[0])
        if isinstance(entries, list) and parts[0] != "beam":
            for k, entry in enumerate(entries):
                if isinstance(entry, Mapping) and isinstance(entry.get("name"), str) and \
                        entry["name"].strip() == parts[1]:
                    return (parts[0], k, *parts[2:])
    return tuple(parts)


def resolve(raw: Mapping[str, Any], text: str) -> ModelPath:
    """The ModelPath written ``text`` in this model; ModelPathError (one line listing every
    valid path of the model) when the model has no such number."""
    location = _normalised(raw, tokens(text))
    paths = valid_paths(raw)
    for path in paths:
        if path.location == location:
            return path
    names = [p.text for p in paths]
    hint = difflib.get_close_matches(text.strip(), names, n=1, cutoff=0.6)
    extra = f' (did you mean "{hint[0]}"?)' if hint else ""
    listed = ", ".join(names) if names else "none"
    raise ModelPathError(f"{text.strip()}: expected a number of this model{extra}; valid "
                         f"paths: {listed}")


def apply(raw: Mapping[str, Any], values: Mapping[ModelPath, str]) -> dict[str, Any]:
    """A deep copy of ``raw`` with each path's number replaced by the text given for it."""
    out = copy.deepcopy(dict(raw))
    for path, value in values.items():
        node: Any = out
        *inner, last = path.location
        for key in inner:
            node = node[key]
        if path.location[:2] == ("beam", "supports") and isinstance(node, str):
            # a pin support made elastic: the entry itself becomes a spring table
            out["beam"]["supports"][path.location[2]] = {"spring": value}
        else:  # a searched range {min, max} addressed as a whole becomes the one value
            node[last] = value
    return out


# ------------------------------------------------------------------------------------------
# ranges

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


@dataclass(frozen=True)
class SweepRange:
    """The values one path takes.

    Fields
    ------
    path : the ModelPath swept
    values : the values, in ``unit`` (as floats)
    unit : the pint unit of ``values`` as written ("m", "kN", "t", "MN/m")
    label : the unit for people ("m", "kN·m²")
    """

    path: ModelPath
    values: tuple[float, ...]
    unit: str
    label: str

    def text(self, value: float) -> str:
        """``value`` written for the model file: a number and its unit."""
        return f"{value!r} {self.unit}"


def _unit_of_given(given: Any) -> str | None:
    if isinstance(given, str):
        match = _NUMBER.match(given)
        if match and match.group(2):
            return match.group(2)
    return None


def _check_unit(unit: str, kind: str, units: UnitSystem, what: str) -> None:
    """A one-line error unless ``1 unit`` is the quantity ``kind``."""
    trial = f"1 {unit}"
    try:
        if kind == "force or mass":
            try:
                parse_quantity(trial, "force", units)
            except UnitError:
                dimension = registry().Quantity(trial).dimensionality
                if dimension != registry().Quantity(1, "kg").dimensionality:
                    raise UnitError(f"expected a force or a mass, found \"{unit}\", which is "
                                    f"{describe_dimension(dimension)}") from None
        else:
            parse_quantity(trial, kind, units)
    except UnitError as error:
        raise ModelPathError(f"{what}: {_unit_message(error, unit)}") from None
    except Exception:  # pint's parser raises many kinds
        raise ModelPathError(f'{what}: expected a unit, found "{unit}"') from None


def _unit_message(error: UnitError, unit: str) -> str:
    return str(error).replace(f'"1 {unit}"', f'"{unit}"')


def _base_unit(kind: str, units: UnitSystem) -> tuple[str, str]:
    quantity = "force" if kind == "force or mass" else kind
    return units.pint_unit(quantity), units.label(quantity)


def parse_range(path: ModelPath, text: str, units: UnitSystem,
                max_points: int = MAX_POINTS_PER_AXIS) -> SweepRange:
    """``START:STOP:STEP`` for ``path``, in the model's unit system; ModelPathError when the
    range is malformed, has a unit of the wrong kind, a step ≤ 0, STOP < START, or more than
    ``max_points`` values."""
    what = f"{path.text}={text.strip()}"
    parts = text.split(":")
    if len(parts) != 3:
        raise ModelPathError(f"{what}: expected START:STOP:STEP (e.g. 4.3:9.0:0.1 m), found "
                             f"{len(parts)} part(s)")
    numbers: list[float] = []
    given_units: list[str] = []
    for name, part in zip(("START", "STOP", "STEP"), parts, strict=True):
        match = _NUMBER.match(part)
        if not match:
            raise ModelPathError(f"{what}: expected a number for {name}, found "
                                 f'"{part.strip()}"')
        number = float(match.group(1))
        if not math.isfinite(number):
            raise ModelPathError(f"{what}: expected a finite number for {name}, found "
                                 f'"{part.strip()}"')
        numbers.append(number)
        given_units.append(match.group(2))
    written = [u for u in given_units if u]
    if written and not (len(written) == 3 or (len(written) == 1 and given_units[2])):
        raise ModelPathError(f"{what}: expected the unit once at the end (4:9:0.5 m) or on each "
                             "of START, STOP and STEP (4 m:9 m:50 cm), found it on some only")
    if len(written) == 1:
        given_units = [written[0]] * 3
    if written:
        for name, unit in zip(("START", "STOP", "STEP"), given_units, strict=True):
            _check_unit(unit, path.kind, units, f"{what}: {name}")
        unit = given_units[0]
        ureg = registry()
        numbers = [numbers[0]] + [float(ureg.Quantity(n, u).to(unit).magnitude)
                                  for n, u in zip(numbers[1:], given_units[1:], strict=True)]
        label = unit
    else:
        given_unit = _unit_of_given(path.given)
        if given_unit is not None:
            unit = label = given_unit
        else:
            unit, label = _base_unit(path.kind, units)
    start, stop, step = numbers
    if not step > 0:
        raise ModelPathError(f"{what}: expected a STEP greater than zero, found {step:g}")
    if stop < start:
        raise ModelPathError(f"{what}: expected STOP at least START ({start:g}), found "
                             f"{stop:g}")
    count = math.floor((stop - start) / step + 1e-9) + 1
    if count > max_points:
        raise ModelPathError(f"{what}: expected at most {max_points:,} values, found "
                             f"{count:,} or more (use a larger STEP)")
    values = [start + k * step for k in range(count)]
    if stop - values[-1] > 1e-9 * step:
        values.append(stop)  # stop itself; the last interval is shorter
    else:
        values[-1] = stop
    if len(values) > max_points:
        raise ModelPathError(f"{what}: expected at most {max_points:,} values, found "
                             f"{len(values):,} (use a larger STEP)")
    return SweepRange(path, tuple(values), unit, label)


def split_vary(text: str) -> tuple[str, str]:
    """``PATH=START:STOP:STEP`` -> (path, range); the path may contain quoted names."""
    if not isinstance(text, str) or "=" not in text:
        raise ModelPathError(f'{text}: expected PATH=START:STOP:STEP (e.g. '
                             f'"load.truck.spacings[2]=4.3:9:0.1 m"), found no "="')
    # the last '=' outside quotes splits path from range
    quoted = False
    split = -1
    for i, char in enumerate(text):
        if char == '"':
            quoted = not quoted
        elif char == "=" and not quoted:
            split = i
    if split < 0:
        raise ModelPathError(f'{text}: expected PATH=START:STOP:STEP, found no "=" outside '
                             "quotes")
    return text[:split].strip(), text[split + 1:].strip()
