"""Cranes in model files: ``[[crane]]`` tables and the ``[runway]`` table.

A ``[[crane]]`` describes one overhead travelling crane as its data sheet does (capacity and
weights as forces or masses, span, hook approach, wheel spacings, buffer length, type of
operation, optional overrides of the default percentages and the maker's wheel loads); the
``[runway]`` table says how the runway is checked (crane combinations, service class, lateral
stiffness of the top flange, deflection limits, fatigue data). Both are read into the objects
of :mod:`trundle.loads.cranes` and :mod:`trundle.workflows.crane_runway`; the schema is
documented in docs/model-file.md.

A mass ("20 t", "40000 lb") is turned into its weight with standard gravity,
g = 9.80665 m/s² exactly (the conventional value of the SI). Every problem is a one-line
:class:`trundle.io.modelfile.ModelFileError` naming the file and the key (``crane[1].span``).
"""

from __future__ import annotations

import dataclasses
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from trundle.analysis.checks import DETAIL_CATEGORIES
from trundle.core.beam import ModelError
from trundle.io.limits import LimitError, check_finite
from trundle.io.modelfile import _MISSING, Model, ModelFileError, Reader
from trundle.io.unit_guard import guard_unit_text
from trundle.io.units import UnitError, UnitSystem, parse_quantity, registry, show_value
from trundle.loads.cranes import OPERATIONS, Crane
from trundle.workflows.crane_runway import COMBINATIONS, SERVICE_CLASSES, RunwaySpec

CRANE_TABLE = "crane"
RUNWAY_TABLE = "runway"

_CRANE_KEYS = ("name", "capacity", "bridge_weight", "trolley_weight", "span", "hook_approach",
               "wheel_spacings", "buffer_length", "operation", "impact", "lateral",
               "longitudinal", "lateral_share", "wheel_loads")
_CRANE_REQUIRED = ("name", "capacity", "bridge_weight", "trolley_weight", "span",
                   "hook_approach", "wheel_spacings", "operation")
_WHEEL_LOAD_KEYS = ("maximum", "minimum", "unloaded")
_RUNWAY_KEYS = ("combinations", "service_class", "lateral_EI", "lateral_I", "vertical_limit",
                "lateral_limit", "section_modulus", "detail_category", "fatigue_cycles",
                "end_stops")

# The conventional value of standard gravity (exact by definition, 9.80665 m/s²): a mass
# written for a crane weight or capacity becomes the force it exerts at rest.
STANDARD_GRAVITY = "9.80665 m/s^2"


@dataclass(frozen=True)
class CraneEntry:
    """One ``[[crane]]`` of a model file.

    Fields
    ------
    crane : the Crane, in the model's base units
    given : the table as written in the model file
    """

    crane: Crane
    given: Mapping[str, Any] = field(default_factory=dict, repr=False)

    @property
    def name(self) -> str:
        return self.crane.name


def cranes_of(model: Model) -> tuple[CraneEntry, ...]:
    """The ``[[crane]]`` entries of a model, in the order written (empty if none)."""
    return tuple(model.tables.get(CRANE_TABLE, ()))


def runway_settings_of(model: Model) -> RunwaySpec | None:
    """The ``[runway]`` table as read: a RunwaySpec without its cranes (None without one)."""
    return model.tables.get(RUNWAY_TABLE)


def one_ksi(units: UnitSystem) -> float:
    """One ksi in the model's stress unit (force/length²), converted exactly by pint."""
    return parse_quantity("1 ksi", "modulus", units)


def runway_spec(model: Model) -> RunwaySpec | None:
    """The RunwaySpec of a model with cranes, or None for a model without."""
    entries = cranes_of(model)
    settings = runway_settings_of(model)
    if not entries or settings is None:
        return None
    if settings.end_stops:
        # between end stops every wheel stays on the beam: a crane longer than the beam
        # cannot stand on it at all (refused, not reported as an empty envelope)
        length = model.beam.length
        for j, entry in enumerate(entries):
            if entry.crane.wheelbase > length * (1.0 + 1e-12):
                raise ModelFileError(
                    model.name, f"{RUNWAY_TABLE}.end_stops",
                    f"crane[{j}] {entry.crane.name!r}: its wheelbase {entry.crane.wheelbase:g} "
                    f"is longer than the beam ({length:g}; lengths in the model's base "
                    "units), so between end stops it cannot stand on the beam; expected "
                    "end_stops = false or the whole runway as the beam")
    try:
        return dataclasses.replace(settings, cranes=tuple(e.crane for e in entries))
    except ModelError as error:  # everything is checked on reading; never a traceback anyway
        raise ModelFileError(model.name, RUNWAY_TABLE, str(error)) from None


# ------------------------------------------------------------------------------------------
# [[crane]]


def read_cranes(value: Any, reader: Reader) -> tuple[CraneEntry, ...]:
    """Reader of the top-level ``[[crane]]`` array (registered with the model-file reader)."""
    if not isinstance(value, list) or not all(isinstance(item, dict) for item in value):
        reader.expected(CRANE_TABLE, "[[crane]] tables, each with name, capacity, "
                        "bridge_weight, trolley_weight, span, hook_approach, wheel_spacings "
                        "and operation", value)
    if not value:
        reader.expected(CRANE_TABLE, "at least one [[crane]] table", value)
    reader.limit(CRANE_TABLE, "cranes", value)
    if RUNWAY_TABLE not in _raw(reader):
        reader.expected(RUNWAY_TABLE, 'a [runway] table with at least service_class (e.g. '
                        '[runway] service_class = "C") to go with the [[crane]] tables',
                        _MISSING)
    entries: list[CraneEntry] = []
    seen: dict[str, int] = {}
    for i, item in enumerate(value):
        key = f"{CRANE_TABLE}[{i}]"
        entry = _read_crane(item, key, reader, several=len(value) > 1)
        if entry.name in seen:
            reader.fail(f"{key}.name", f"expected a name different from that of "
                        f"{CRANE_TABLE}[{seen[entry.name]}] (names identify cranes in the "
                        f'results), found "{entry.name}" again')
        seen[entry.name] = i
        entries.append(entry)
    return tuple(entries)


def _read_crane(item: dict[str, Any], key: str, reader: Reader, several: bool) -> CraneEntry:
    assert reader.units is not None
    table = reader.table(item, key, _CRANE_KEYS, required=_CRANE_REQUIRED)
    name = reader.text_limit(f"{key}.name", reader.text(table["name"], f"{key}.name").strip())
    if not name:
        reader.expected(f"{key}.name", "a name that is not blank", table["name"])
    capacity = _force_or_mass(table["capacity"], f"{key}.capacity", reader)
    bridge = _force_or_mass(table["bridge_weight"], f"{key}.bridge_weight", reader)
    trolley = _force_or_mass(table["trolley_weight"], f"{key}.trolley_weight", reader)
    span = reader.positive(table["span"], f"{key}.span", "length")
    unit = reader.units.label("length")
    approach = reader.quantity(table["hook_approach"], f"{key}.hook_approach", "length")
    if approach < 0:
        reader.expected(f"{key}.hook_approach", "a length of zero or more",
                        table["hook_approach"])
    if approach > 0.5 * span:
        reader.fail(f"{key}.hook_approach", f"expected at most half the crane span "
                    f"({0.5 * span:g} {unit}), found {show_value(table['hook_approach'])}")
    items = reader.array(table["wheel_spacings"], f"{key}.wheel_spacings",
                         "distances between consecutive wheels on one rail",
                         f'["{reader.units.example("length")}"]')
    if not items:
        reader.expected(f"{key}.wheel_spacings", "at least one spacing (two wheels per rail "
                        "or more)", items)
    reader.limit(f"{key}.wheel_spacings", "wheels", items)
    spacings = tuple(reader.positive(s, f"{key}.wheel_spacings[{j}]", "length")
                     for j, s in enumerate(items))
    buffer_length = None
    if "buffer_length" in table:
        buffer_length = reader.positive(table["buffer_length"], f"{key}.buffer_length",
                                        "length")
        if buffer_length < sum(spacings) * (1 - 1e-12):
            reader.fail(f"{key}.buffer_length", f"expected at least the wheelbase "
                        f"({sum(spacings):g} {unit}: the wheels stand between the buffers), "
                        f"found {show_value(table['buffer_length'])}")
    elif several:
        reader.expected(f"{key}.buffer_length", "the length over the crane's buffers (needed "
                        "when two or more cranes share the runway: they can meet at their "
                        "buffers)", _MISSING)
    operation = reader.text(table["operation"], f"{key}.operation", OPERATIONS)
    impact = _fraction(table, "impact", key, reader, "a vertical impact")
    lateral = _fraction(table, "lateral", key, reader, "a lateral force fraction")
    longitudinal = _fraction(table, "longitudinal", key, reader,
                             "a longitudinal force fraction")
    share = _fraction(table, "lateral_share", key, reader, "a share of the lateral force")
    wheel_loads = None
    if "wheel_loads" in table:
        wheel_loads = _wheel_loads(table["wheel_loads"], f"{key}.wheel_loads", reader)
    try:
        crane = Crane(name=name, capacity=capacity, bridge_weight=bridge,
                      trolley_weight=trolley, span=span, hook_approach=approach,
                      wheel_spacings=spacings, buffer_length=buffer_length,
                      operation=operation, impact=impact, lateral_fraction=lateral,
                      longitudinal_fraction=longitudinal,
                      lateral_share=0.5 if share is None else share, wheel_loads=wheel_loads)
    except ModelError as error:  # checked above; kept so a core change cannot leak a traceback
        reader.fail(key, str(error))
    return CraneEntry(crane, MappingProxyType(dict(table)))


def _wheel_loads(value: Any, key: str, reader: Reader) -> tuple[float, float, float]:
    table = reader.table(value, key, _WHEEL_LOAD_KEYS, required=_WHEEL_LOAD_KEYS)
    maximum, minimum, unloaded = (_force_or_mass(table[k], f"{key}.{k}", reader)
                                  for k in _WHEEL_LOAD_KEYS)
    if maximum <= 0:
        reader.expected(f"{key}.maximum", "a positive wheel load", table["maximum"])
    for name, number in (("minimum", minimum), ("unloaded", unloaded)):
        if number > maximum * (1 + 1e-12):
            reader.fail(f"{key}.{name}", f"expected at most the maximum wheel load "
                        f"({show_value(table['maximum'])}), found {show_value(table[name])}")
    return maximum, minimum, unloaded


def _force_or_mass(value: Any, key: str, reader: Reader) -> float:
    """A force in base units, or a mass turned into its weight with standard gravity."""
    assert reader.units is not None
    units = reader.units
    expected = (f"a force or a mass (a number in {units.label('force')}, or a string such as "
                f'"{units.example("force")}" or "{_MASS_EXAMPLE[units.name]}")')
    if isinstance(value, bool) or not isinstance(value, int | float | str):
        reader.expected(key, expected, value)
    number: float | None = None
    # guard_unit_text: never hand pint "2**(2**40) t" (the force reader words the refusal)
    if isinstance(value, str) and not _is_number(value) and \
            guard_unit_text(value.strip()) is None:
        ureg = registry()
        try:
            parsed = ureg.Quantity(value.strip())
        except Exception:  # pint's parser raises many kinds; the force reader words it below
            parsed = None
        if parsed is not None and parsed.dimensionality == ureg.Quantity(1, "kg").dimensionality:
            weight = parsed * ureg.Quantity(STANDARD_GRAVITY)
            try:
                number = float(weight.to(units.force).magnitude)
            except (OverflowError, ValueError, ZeroDivisionError):
                number = math.nan  # refused below as not finite
    if number is None:
        try:
            number = parse_quantity(value, "force", units)
        except UnitError as error:
            # keep the reason ("which is a length", "unknown unit …"), word the expectation
            found = f"found {show_value(value)}"
            message = str(error)
            reason = message[message.find(found) + len(found):] if found in message else ""
            reader.fail(key, f"expected {expected}, {found}{reason}")
    if not (math.isfinite(number) and number >= 0):
        reader.expected(key, f"{expected} of zero or more", value)
    try:
        return check_finite(key, number, "a force or a mass")
    except LimitError as error:
        reader.fail(key, error.detail)


_MASS_EXAMPLE = {"SI": "20 t", "US": "15 ton"}


def _fraction(table: dict[str, Any], name: str, key: str, reader: Reader, what: str
              ) -> float | None:
    """An optional fraction: 0.25 or "25 %", from 0 to 1."""
    if name not in table:
        return None
    return reader.fraction(table[name], f"{key}.{name}", what)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


# ------------------------------------------------------------------------------------------
# [runway]


def read_runway(value: Any, reader: Reader) -> RunwaySpec:
    """Reader of the top-level ``[runway]`` table (registered with the model-file reader)."""
    assert reader.units is not None
    table = reader.table(value, RUNWAY_TABLE, _RUNWAY_KEYS, required=("service_class",))
    if CRANE_TABLE not in _raw(reader):
        reader.fail(RUNWAY_TABLE, "expected [[crane]] tables (the cranes on this runway) to go "
                    "with [runway], found none")
    key = RUNWAY_TABLE
    combinations = COMBINATIONS
    if "combinations" in table:
        quoted = ", ".join(f'"{c}"' for c in COMBINATIONS)
        items = reader.array(table["combinations"], f"{key}.combinations", "crane "
                             f"combinations ({quoted})", f'["{COMBINATIONS[0]}"]')
        if not items:
            reader.expected(f"{key}.combinations", f"at least one of {quoted}", items)
        for j, item in enumerate(items):
            reader.text(item, f"{key}.combinations[{j}]", COMBINATIONS)
            if item in items[:j]:
                reader.fail(f"{key}.combinations[{j}]", f'expected each combination once, '
                            f'found "{item}" again')
        combinations = tuple(items)
    service_class = reader.text(table["service_class"], f"{key}.service_class", SERVICE_CLASSES)
    lateral_EI, lateral_given = _lateral_stiffness(table, reader)
    vertical = _span_ratio(table, "vertical_limit", reader)
    lateral = _span_ratio(table, "lateral_limit", reader)
    modulus = None
    if "section_modulus" in table:
        modulus = _section_modulus(table["section_modulus"], f"{key}.section_modulus", reader)
    category = None
    if "detail_category" in table:
        category = reader.text(table["detail_category"], f"{key}.detail_category",
                               DETAIL_CATEGORIES)
        if modulus is None:
            reader.expected(f"{key}.section_modulus", "the elastic section modulus at the "
                            f'fatigue detail (e.g. "{_MODULUS_EXAMPLE[reader.units.name]}"), '
                            "needed with detail_category", _MISSING)
    cycles = None
    if "fatigue_cycles" in table:
        cycles = _cycles(table["fatigue_cycles"], f"{key}.fatigue_cycles", reader)
    end_stops = False
    if "end_stops" in table:
        end_stops = table["end_stops"]
        if not isinstance(end_stops, bool):
            reader.expected(f"{key}.end_stops", "true (the beam is the whole runway: wheels "
                            "stay on it) or false (wheels may stand beyond its ends)", end_stops)
    try:
        return RunwaySpec(combinations=combinations, lateral_EI=lateral_EI,
                          service_class=service_class, vertical_ratio=vertical,
                          lateral_ratio=lateral, section_modulus=modulus,
                          detail_category=category, fatigue_cycles=cycles,
                          ksi=one_ksi(reader.units), end_stops=end_stops,
                          lateral_EI_given=lateral_given, given=MappingProxyType(dict(table)))
    except ModelError as error:  # everything is checked above; never a traceback anyway
        reader.fail(RUNWAY_TABLE, str(error))


_MODULUS_EXAMPLE = {"SI": "3120 cm^3", "US": "190 in^3"}


def _lateral_stiffness(table: dict[str, Any], reader: Reader) -> tuple[float | None, str]:
    assert reader.units is not None
    key = RUNWAY_TABLE
    if "lateral_EI" in table and "lateral_I" in table:
        reader.fail(f"{key}.lateral_I", "expected either lateral_EI or lateral_I, found both")
    if "lateral_EI" in table:
        EI = reader.positive(table["lateral_EI"], f"{key}.lateral_EI", "flexural rigidity")
        return EI, f"lateral_EI = {show_value(table['lateral_EI'])}"
    if "lateral_I" not in table:
        return None, ""
    I = reader.positive(table["lateral_I"], f"{key}.lateral_I", "second moment of area")
    beam = _raw(reader).get("beam")
    E_given = beam.get("E") if isinstance(beam, dict) else None
    if E_given is None:
        reader.fail(f"{key}.lateral_I", "expected E in [beam] to turn lateral_I into a "
                    "flexural rigidity (or give lateral_EI), found no E in [beam]")
    E = reader.positive(E_given, "beam.E", "modulus")
    return E * I, f"lateral_I = {show_value(table['lateral_I'])} × E = {show_value(E_given)}"


def _span_ratio(table: dict[str, Any], name: str, reader: Reader) -> float | None:
    """span / limit: 600, or "L/600"."""
    if name not in table:
        return None
    value, key = table[name], f"{RUNWAY_TABLE}.{name}"
    expected = 'a span ratio such as 600 or "L/600" (the limit is span / 600)'
    number = math.nan
    if isinstance(value, str):
        match = re.fullmatch(r"\s*(?:L|span)\s*/\s*([0-9.eE+]+)\s*", value)
        if match and _is_number(match.group(1)):
            number = float(match.group(1))
    elif isinstance(value, int | float) and not isinstance(value, bool):
        number = float(value)
    if not (math.isfinite(number) and number > 1.0):
        if isinstance(value, int | float) and not isinstance(value, bool) and 0 < value < 1:
            reader.fail(key, f"expected {expected}, found {show_value(value)} (write "
                        f"{1 / value:.0f} for span / {1 / value:.0f})")
        reader.expected(key, expected, value)
    return number


def _section_modulus(value: Any, key: str, reader: Reader) -> float:
    assert reader.units is not None
    units = reader.units
    expected = (f'an elastic section modulus with its unit (e.g. '
                f'"{_MODULUS_EXAMPLE[units.name]}")')
    if not isinstance(value, str) or _is_number(value):
        reader.expected(key, expected, value)
    ureg = registry()
    target = f"{units.length}**3"
    refused = guard_unit_text(value.strip())
    if refused is not None:
        reader.fail(key, f"expected {expected}, found a value that cannot be read ({refused})")
    try:
        parsed = ureg.Quantity(value.strip())
    except Exception:  # pint's parser raises many kinds (undefined unit, syntax, …)
        reader.fail(key, f"expected {expected}, found {show_value(value)} (not a number "
                    "followed by a unit)")
    if parsed.dimensionality != ureg.Quantity(1, target).dimensionality:
        reader.fail(key, f"expected {expected}, found {show_value(value)}, which is not a "
                    "length cubed")
    try:
        number = float(parsed.to(target).magnitude)
    except (OverflowError, ValueError, ZeroDivisionError):
        number = math.nan  # "1e400 cm^3": refused below as not finite
    if not (math.isfinite(number) and number > 0):
        reader.expected(key, f"{expected} greater than zero", value)
    try:
        return check_finite(key, number, "a section modulus")
    except LimitError as error:
        reader.fail(key, error.detail)


def _cycles(value: Any, key: str, reader: Reader) -> float:
    expected = 'a number of crane passages such as 2000000 (or 2e6), or "unlimited"'
    if isinstance(value, str) and value.strip() == "unlimited":
        return math.inf
    if isinstance(value, bool) or not isinstance(value, int | float) or \
            not (math.isfinite(value) and value >= 1):
        reader.expected(key, expected, value)
    return float(value)


def _raw(reader: Reader) -> Mapping[str, Any]:
    return getattr(reader, "raw", None) or {}


def given_text(value: Any) -> str:
    """A value as written in the file, for reports ("20 t", 196.1)."""
    if isinstance(value, str):
        return " ".join(value.split())
    if isinstance(value, float) and value.is_integer():
        return f"{value:g}"
    return str(value)


def mass_given(value: Any) -> bool:
    """Whether ``value`` was written as a mass (and so converted with standard gravity)."""
    if not isinstance(value, str) or _is_number(value) or guard_unit_text(value.strip()):
        return False
    ureg = registry()
    try:
        parsed = ureg.Quantity(value.strip())
    except Exception:  # not a quantity at all: read as a force (and refused there)
        return False
    return parsed.dimensionality == ureg.Quantity(1, "kg").dimensionality


__all__ = ["CraneEntry", "cranes_of", "one_ksi", "read_cranes",
           "read_runway", "runway_settings_of", "runway_spec"]
