"""Readers of the design tables of a model file: ``[[permanent]]``, ``[[combination]]``,
``[[design_load]]``, ``[[live_pattern]]``, ``[[lane_length_load]]`` and ``[design]``
(see docs/model-file.md, "Design envelopes").

Each reader takes the parsed TOML value and a :class:`trundle.io.modelfile.Reader` (which knows
the file, the units and the beam length) and returns analysis objects; every problem is a
one-line :class:`trundle.io.modelfile.ModelFileError` naming the file, the key, what was expected
and what was found. :data:`READERS` are registered with the model-file reader in
:mod:`trundle.io` (where the schema is composed).
"""

from __future__ import annotations

import difflib
import math
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from trundle.analysis.combinations import SHIPPED, Combination
from trundle.analysis.critical_sections import parse_from_supports
from trundle.analysis.patterns import LaneIntensity
from trundle.analysis.permanent import PermanentLoad
from trundle.core.beam import ModelError
from trundle.io.loads import loads_of, read_design_case_file, read_load_model_file
from trundle.io.modelfile import _MISSING, ModelFileError, Reader, load_model
from trundle.io.source import SourceError, resolve_use
from trundle.io.units import show_value
from trundle.loads import library
from trundle.loads.cases import LoadCase
from trundle.loads.design_cases import Alternative, DesignCase
from trundle.workflows.design_envelope import DesignSpec

LIVE_CATEGORIES = ("LL", "L")  # the factor on the live load in a combination
_PERMANENT_KIND_KEYS = {"self_weight": "self weight", "superimposed": "superimposed dead",
                        "uniform": "partial uniform", "point": "point", "couple": "couple"}
_PERMANENT_KEYS = ("name", "category", *_PERMANENT_KIND_KEYS, "from", "to", "at")
_COMBINATION_KEYS = ("name", "factors", "provenance", "use")
_PATTERN_KEYS = ("name", "uniform", "placement")
_LANE_KEYS = ("name", "intensity", "loaded_set")
_INTENSITY_TABLE_KEYS = ("lengths", "intensities")
_INTENSITY_LAW_KEYS = ("w_ref", "L_ref", "exponent", "min", "max")
_DESIGN_KEYS = ("deflection_limit", "critical_shear", "effective_depth", "support_face")


@dataclass(frozen=True)
class DesignSettings:
    """``[design]``: deflection limit ratio (span / ratio; None: no check) and the critical
    shear distance from the support faces (None: none) with the face offset [length]."""

    deflection_ratio: float | None = None
    critical_shear_distances: tuple[float, ...] = ()
    support_face: float = 0.0


def _array_of_tables(value: Any, key: str, reader: Reader, what: str) -> list[dict]:
    if not isinstance(value, list) or not value or not all(isinstance(v, dict) for v in value):
        reader.expected(key, f"one or more [[{key}]] tables ({what})", value)
    reader.limit(key, "design table entries", value)
    return value


def _name(table: Mapping[str, Any], key: str, reader: Reader, seen: dict[str, int]) -> str:
    if "name" not in table:
        reader.fail(f"{key}.name", "expected a name (names identify it in the results), found "
                    "nothing")
    name = reader.text(table["name"], f"{key}.name").strip()
    if not name:
        reader.expected(f"{key}.name", "a name that is not blank", table["name"])
    if name in seen:
        reader.fail(f"{key}.name", f'expected a name different from that of entry {seen[name]}, '
                    f'found "{name}" again')
    seen[name] = len(seen)
    return name


def read_permanent(value: Any, reader: Reader) -> tuple[PermanentLoad, ...]:
    """``[[permanent]]``: one kind key each (self_weight, superimposed, uniform with from/to,
    point or couple with at), a name and a category."""
    out = []
    seen: dict[str, int] = {}
    for i, item in enumerate(_array_of_tables(value, "permanent", reader, "permanent loads")):
        key = f"permanent[{i}]"
        table = reader.table(item, key, _PERMANENT_KEYS, required=("category",))
        name = _name(table, key, reader, seen)
        category = reader.text(table["category"], f"{key}.category").strip()
        if not category:
            reader.expected(f"{key}.category", 'a category such as "DC", "DW" or "D"',
                            table["category"])
        kinds = [k for k in _PERMANENT_KIND_KEYS if k in table]
        if len(kinds) != 1:
            found = ", ".join(kinds) if kinds else "none of them"
            reader.fail(key, "expected exactly one of self_weight, superimposed, uniform, point, "
                        f"couple, found {found}")
        kind_key = kinds[0]
        kind = _PERMANENT_KIND_KEYS[kind_key]
        vkey = f"{key}.{kind_key}"
        extra = {"from", "to"} if kind == "partial uniform" else (
            {"at"} if kind in ("point", "couple") else set())
        for other in ("from", "to", "at"):
            if other in table and other not in extra:
                reader.fail(f"{key}.{other}", f"expected no {other} for {kind_key}, found "
                            f"{show_value(table[other])}")
        for needed in sorted(extra):
            if needed not in table:
                reader.fail(f"{key}.{needed}", f"expected a position for {kind_key}, found "
                            "nothing")
        quantity = {"point": "force", "couple": "moment"}.get(kind, "distributed load")
        number = reader.quantity(table[kind_key], vkey, quantity)
        if kind != "couple" and number < 0:
            reader.expected(vkey, f"a downward {quantity} >= 0 (an upward permanent load: write "
                            "it as a separate entry and check its sign)", table[kind_key])
        start = reader.position(table["from"], f"{key}.from") if "from" in table else None
        end = reader.position(table["to"], f"{key}.to") if "to" in table else None
        at = reader.position(table["at"], f"{key}.at") if "at" in table else None
        if kind == "partial uniform" and not end > start:  # type: ignore[operator]
            reader.fail(f"{key}.to", f"expected a position beyond from = {start:g}, found "
                        f"{show_value(table['to'])}")
        try:
            out.append(PermanentLoad(name, category, kind, number, start, end, at))
        except ModelError as error:
            reader.fail(key, str(error))
    return tuple(out)


def _factor_pair(value: Any, key: str, reader: Reader) -> tuple[float, float]:
    def one(v: Any, k: str) -> float:
        if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v) \
                or v < 0:
            reader.expected(k, "a factor >= 0 such as 1.25", v)
        return float(v)

    if isinstance(value, list):
        if len(value) != 2:
            reader.expected(key, "[maximum, minimum] factors such as [1.25, 0.90] or one "
                            "factor", value)
        high, low = one(value[0], f"{key}[0]"), one(value[1], f"{key}[1]")
        if low > high:
            reader.fail(key, f"expected [maximum, minimum] with the minimum not above the "
                        f"maximum, found {show_value(value)}")
        return high, low
    v = one(value, key)
    return v, v


def read_combinations(value: Any, reader: Reader, categories: tuple[str, ...]
                      ) -> tuple[Combination, ...]:
    """``[[combination]]``: ``factors = { DC = [1.25, 0.90], DW = [1.50, 0.65], LL = 1.75 }``
    (LL or L: the live-load factor) with ``provenance``, or ``use`` = a shipped combination.
    ``categories`` are those of the model's permanent loads: each needs a factor, and a
    factor for any other category is refused."""
    out = []
    seen: dict[str, int] = {}
    for i, item in enumerate(_array_of_tables(value, "combination", reader, "combinations")):
        key = f"combination[{i}]"
        table = reader.table(item, key, _COMBINATION_KEYS)
        if "use" in table:
            shipped = reader.text(table["use"], f"{key}.use")
            if shipped not in SHIPPED:
                hint = difflib.get_close_matches(shipped, list(SHIPPED), n=1, cutoff=0.5)
                extra = f' (did you mean "{hint[0]}"?)' if hint else ""
                reader.fail(f"{key}.use", "expected one of " + ", ".join(
                    f'"{n}"' for n in SHIPPED) + f', found "{shipped}"{extra}')
            if "factors" in table:
                reader.fail(f"{key}.factors", "expected no factors beside use (the shipped "
                            "combination defines them), found "
                            f"{show_value(table['factors'])}")
            combination = SHIPPED[shipped]
            if "name" in table:
                combination = Combination(_name(table, key, reader, seen),
                                          combination.permanent, combination.live,
                                          combination.provenance)
            else:
                seen[combination.name] = len(seen)
            factors_used = combination.permanent
            base_key = f"{key}.use"
        else:
            name = _name(table, key, reader, seen)
            if "factors" not in table or not isinstance(table["factors"], dict) or \
                    not table["factors"]:
                reader.expected(f"{key}.factors", "a table of factors such as { DC = [1.25, "
                                "0.90], DW = [1.50, 0.65], LL = 1.75 }",
                                table.get("factors", _MISSING))
            permanent: dict[str, tuple[float, float]] = {}
            live = 0.0
            for category, given in table["factors"].items():
                fkey = f"{key}.factors.{category}"
                if category in LIVE_CATEGORIES:
                    if isinstance(given, list):
                        reader.expected(fkey, "one live-load factor such as 1.75", given)
                    live = _factor_pair(given, fkey, reader)[0]
                    continue
                permanent[category] = _factor_pair(given, fkey, reader)
            provenance = (reader.text(table["provenance"], f"{key}.provenance")
                          if "provenance" in table else "")
            try:
                combination = Combination(name, permanent, live, provenance)
            except ModelError as error:
                reader.fail(f"{key}.factors", str(error))
            factors_used = permanent
            base_key = f"{key}.factors"
        for category in factors_used:
            if category not in categories:
                known = ", ".join(categories) or "none"
                hint = difflib.get_close_matches(category, categories, n=1, cutoff=0.5)
                extra = f' (did you mean "{hint[0]}"?)' if hint else ""
                reader.fail(f"{base_key}.{category}" if base_key.endswith("factors") else
                            base_key, f"expected factors for the categories of the [[permanent]]"
                            f" loads ({known}) or {' or '.join(LIVE_CATEGORIES)} for live load, "
                            f'found "{category}"{extra}')
        for category in categories:
            if category not in factors_used:
                reader.fail(base_key, f'expected a factor for category "{category}" (used by '
                            f"[[permanent]] loads), found none")
        out.append(combination)
    return tuple(out)


def read_live_patterns(value: Any, reader: Reader) -> tuple[tuple[str, float, str], ...]:
    """``[[live_pattern]]``: (name, w, placement "spans" | "adverse") for patterned live load."""
    out = []
    seen: dict[str, int] = {}
    for i, item in enumerate(_array_of_tables(value, "live_pattern", reader, "patterned live "
                                              "loads")):
        key = f"live_pattern[{i}]"
        table = reader.table(item, key, _PATTERN_KEYS, required=("uniform",))
        name = _name(table, key, reader, seen)
        w = reader.positive(table["uniform"], f"{key}.uniform", "distributed load")
        placement = (reader.text(table["placement"], f"{key}.placement", ("spans", "adverse"))
                     if "placement" in table else "spans")
        out.append((name, w, placement))
    return tuple(out)


def read_lane_intensity(value: Any, key: str, reader: Reader) -> LaneIntensity:
    """A w(L) table ``{ lengths = […], intensities = […] }`` or a power law
    ``{ w_ref, L_ref, exponent, min, max }`` (w = w_ref · (L / L_ref)^exponent)."""
    if not isinstance(value, dict):
        reader.expected(key, "a table { lengths = […], intensities = […] } or { w_ref = …, "
                        "L_ref = …, exponent = … }", value)
    if "lengths" in value or "intensities" in value:
        table = reader.table(value, key, _INTENSITY_TABLE_KEYS, required=_INTENSITY_TABLE_KEYS)
        lengths = [reader.quantity(v, f"{key}.lengths[{j}]", "length")
                   for j, v in enumerate(reader.array(table["lengths"], f"{key}.lengths",
                                                      "loaded lengths", '["0 m", "50 m"]'))]
        intensities = [reader.quantity(v, f"{key}.intensities[{j}]", "distributed load")
                       for j, v in enumerate(reader.array(table["intensities"],
                                                          f"{key}.intensities", "intensities",
                                                          '["12 kN/m", "9 kN/m"]'))]
        try:
            return LaneIntensity(tuple(lengths), tuple(intensities))
        except ModelError as error:
            reader.fail(key, str(error))
    table = reader.table(value, key, _INTENSITY_LAW_KEYS, required=("w_ref", "L_ref",
                                                                    "exponent"))
    w_ref = reader.positive(table["w_ref"], f"{key}.w_ref", "distributed load")
    L_ref = reader.positive(table["L_ref"], f"{key}.L_ref", "length")
    exponent = table["exponent"]
    if isinstance(exponent, bool) or not isinstance(exponent, int | float) or \
            not math.isfinite(exponent):
        reader.expected(f"{key}.exponent", "a number such as -0.2", exponent)
    low = reader.positive(table["min"], f"{key}.min", "distributed load") if "min" in table \
        else None
    high = reader.positive(table["max"], f"{key}.max", "distributed load") if "max" in table \
        else None
    try:
        return LaneIntensity(coefficient=w_ref / L_ref ** exponent, exponent=float(exponent),
                             lower=low, upper=high)
    except ModelError as error:
        reader.fail(key, str(error))


def read_lane_length_loads(value: Any, reader: Reader
                           ) -> tuple[tuple[str, LaneIntensity, bool], ...]:
    """``[[lane_length_load]]``: (name, intensity, whole segments?)."""
    out = []
    seen: dict[str, int] = {}
    for i, item in enumerate(_array_of_tables(value, "lane_length_load", reader,
                                              "loaded-length-dependent lane loads")):
        key = f"lane_length_load[{i}]"
        table = reader.table(item, key, _LANE_KEYS, required=("intensity",))
        name = _name(table, key, reader, seen)
        intensity = read_lane_intensity(table["intensity"], f"{key}.intensity", reader)
        loaded = (reader.text(table["loaded_set"], f"{key}.loaded_set",
                              ("exact", "whole segments")) if "loaded_set" in table else "exact")
        out.append((name, intensity, loaded == "whole segments"))
    return tuple(out)


def read_design_settings(value: Any, reader: Reader) -> DesignSettings:
    """``[design]``: ``deflection_limit = "L/800"`` (or 800), ``critical_shear =
    ["d from supports"]``, ``effective_depth``, ``support_face``."""
    table = reader.table(value, "design", _DESIGN_KEYS)
    ratio = None
    if "deflection_limit" in table:
        given = table["deflection_limit"]
        text = given.replace(" ", "") if isinstance(given, str) else given
        if isinstance(text, str) and text.upper().startswith("L/"):
            text = text[2:]
        try:
            ratio = float(text)
        except (TypeError, ValueError):
            ratio = math.nan
        if isinstance(given, bool) or not math.isfinite(ratio) or ratio <= 0:
            reader.expected("design.deflection_limit", 'a span ratio such as "L/800" or 800',
                            given)
    depth = (reader.positive(table["effective_depth"], "design.effective_depth", "length")
             if "effective_depth" in table else None)
    face = (reader.quantity(table["support_face"], "design.support_face", "length")
            if "support_face" in table else 0.0)
    if face < 0:
        reader.expected("design.support_face", "a distance >= 0 from the support's centreline "
                        "to its face", table["support_face"])
    distances = []
    if "critical_shear" in table:
        items = reader.array(table["critical_shear"], "design.critical_shear", "section specs",
                             '["d from supports"]')
        for j, item in enumerate(items):
            jkey = f"design.critical_shear[{j}]"
            text = reader.text(item, jkey)

            def length(s: str, jkey: str = jkey) -> float:
                return reader.quantity(s, jkey, "length")

            try:
                distance = parse_from_supports(text, depth, length)
            except ModelError as error:
                reader.fail(jkey, str(error))
            except ModelFileError:
                raise
            if distance is None:
                reader.expected(jkey, '"d from supports" or "<length> from supports"', item)
            distances.append(distance)
    return DesignSettings(ratio, tuple(distances), face)


# ------------------------------------------------------------------------------------------
# [[design_load]]: a design case (or any library load model) as a live case of the envelope

_DESIGN_LOAD_KEYS = ("use", "name", "parameters", "factors")


def read_design_loads(value: Any, reader: Reader) -> tuple[DesignCase, ...]:
    """``[[design_load]]``: ``use`` = a library name or a path (a design case, or a plain load
    model taken as a case of one alternative), optional ``name``, ``parameters`` (overriding
    those the design case declares, e.g. ``{ lane_width = "3.5 m", alpha_Q = 0.9 }``) and
    ``factors`` (named multipliers on every alternative, e.g. ``{ "per rail" = 0.5 }``)."""
    out = []
    seen: dict[str, int] = {}
    base = Path(reader.file).parent if not reader.file.startswith("<") else Path.cwd()
    for i, item in enumerate(_array_of_tables(value, "design_load", reader, "design loads")):
        key = f"design_load[{i}]"
        table = reader.table(item, key, _DESIGN_LOAD_KEYS, required=("use",))
        text = reader.text(table["use"], f"{key}.use").strip()
        if "/" in text or "\\" in text or text.endswith(".toml") or text.startswith("~"):
            # inside the model's folder tree, the library or an --allow-path folder only
            try:
                path = resolve_use(text, base, library.folder(), allowed=reader.allowed,
                                   shown=reader.file, key=f"{key}.use")
            except SourceError as error:
                reader.fail(f"{key}.use", error.detail)
            if not path.is_file():
                reader.fail(f"{key}.use", f'expected an existing load-model file, found "{text}"'
                            f" ({path} does not exist)")
        else:
            names = library.names()
            if text not in names:
                hint = difflib.get_close_matches(text, names, n=1, cutoff=0.5)
                extra = f' (did you mean "{hint[0]}"?)' if hint else ""
                reader.fail(f"{key}.use", f"expected a load model from the library "
                            f'({", ".join(names)}) or a path, found "{text}"{extra}')
            path = library.path_of(text)
        parameters = table.get("parameters", {})
        if not isinstance(parameters, dict):
            reader.expected(f"{key}.parameters", "a table of parameters such as { lane = 2 }",
                            parameters)
        found = read_load_model_file(path, reader.units)
        if found.kind == "design case":
            if parameters:
                found = read_design_case_file(path, reader.units, parameters)
            case = found.load
        else:
            if parameters:
                reader.fail(f"{key}.parameters", f'expected no parameters for "{text}" (it '
                            "declares none), found "
                            f"{show_value(parameters)}")
            single = _as_single_case(found)
            case = DesignCase(found.name, (Alternative(found.name, single),))
        factor = 1.0
        named: list[tuple[str, float]] = []
        if "factors" in table:
            if not isinstance(table["factors"], dict):
                reader.expected(f"{key}.factors", 'a table of named multipliers such as '
                                '{ "per rail" = 0.5 }', table["factors"])
            for fname, number in table["factors"].items():
                if isinstance(number, bool) or not isinstance(number, int | float) or \
                        not math.isfinite(number) or number <= 0:
                    reader.expected(f'{key}.factors."{fname}"', "a positive number (a plain "
                                    "multiplier)", number)
                factor *= float(number)
                named.append((fname, float(number)))
        name = case.name
        if "name" in table:
            name = reader.text(table["name"], f"{key}.name").strip()
        if name in seen:
            reader.fail(f"{key}.name", f'expected a name different from that of design_load['
                        f'{seen[name]}], found "{name}" again')
        seen[name] = i
        alternatives = tuple(Alternative(a.name, a.case, a.factor * factor, a.rule,
                                         a.unlimited_gaps) for a in case.alternatives)
        out.append(DesignCase(name, alternatives, (*case.parameters, *named)))
    return tuple(out)


def _as_single_case(found: Any) -> Any:
    return LoadCase(found.load, impact=found.impact, factors=found.factors, name=found.name)


# ------------------------------------------------------------------------------------------
# a whole model file with its design tables (until the model-file reader knows them)

DESIGN_TABLES = ("permanent", "combination", "design_load", "live_pattern", "lane_length_load",
                 "design")


@dataclass(frozen=True)
class DesignModel:
    """A model file read with its design tables.

    Fields
    ------
    model : the :class:`trundle.io.modelfile.Model` (beam, sections, [[load]] entries)
    permanent, combinations, design_loads : as read
    live_patterns : (name, w, placement) tuples; lane_length_loads : (name, w(L), whole?)
    settings : ``[design]``
    """

    model: Any
    permanent: tuple[PermanentLoad, ...] = ()
    combinations: tuple[Combination, ...] = ()
    design_loads: tuple[DesignCase, ...] = ()
    live_patterns: tuple[tuple[str, float, str], ...] = ()
    lane_length_loads: tuple[tuple[str, LaneIntensity, bool], ...] = ()
    settings: DesignSettings = DesignSettings()


def _categories(reader: Reader) -> tuple[str, ...]:
    if "permanent" not in reader.raw:
        return ()
    return tuple(dict.fromkeys(p.category for p in read_permanent(reader.raw["permanent"],
                                                                  reader)))


READERS = {
    "permanent": read_permanent,
    "combination": lambda value, reader: read_combinations(value, reader, _categories(reader)),
    "design_load": read_design_loads,
    "live_pattern": read_live_patterns,
    "lane_length_load": read_lane_length_loads,
    "design": read_design_settings,
}


def has_design_tables(model: Any) -> bool:
    """Whether a model read by :func:`trundle.io.load_model` carries any design table."""
    return any(name in model.tables for name in DESIGN_TABLES)


def design_model_of(model: Any) -> DesignModel:
    """The design tables of a model read by :func:`trundle.io.load_model`."""
    tables = model.tables
    return DesignModel(model, tables.get("permanent", ()), tables.get("combination", ()),
                       tables.get("design_load", ()), tables.get("live_pattern", ()),
                       tables.get("lane_length_load", ()), tables.get("design",
                                                                      DesignSettings()))


def design_spec_of(design: DesignModel) -> DesignSpec:
    """The design workflow's spec for a model with design tables: its [[load]] entries are
    live cases of their own beside the design loads, patterns and lane loads."""
    model, settings = design.model, design.settings
    return DesignSpec(model.beam, model.sections, design.design_loads,
                      tuple(e.case for e in loads_of(model)), design.live_patterns,
                      design.lane_length_loads, design.permanent, design.combinations,
                      settings.deflection_ratio, settings.critical_shear_distances,
                      settings.support_face)


def read_design_model(path: Any) -> DesignModel:
    """Read a model file with its design tables (beam, sections and loads exactly as
    ``trundle.load_model`` reads them; errors are the same one-liners)."""
    return design_model_of(load_model(path))
