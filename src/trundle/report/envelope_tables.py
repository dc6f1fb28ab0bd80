"""Envelope tables: the summary (terminal and HTML), envelope.csv, reactions.csv, envelope.json.

Builders return :class:`TableData` (text cells, units in the headers) so the terminal and the
HTML report show the same numbers; writers return finished text for atomic writing.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from rich import box
from rich.table import Table
from rich.text import Text

from trundle.analysis.envelope import kind_and_side
from trundle.core.beam import Spring
from trundle.io.loads import LoadEntry, LoadModelFile, loads_of
from trundle.io.modelfile import Model
from trundle.io.units import UnitSystem
from trundle.loads.cases import Together
from trundle.loads.patterns import UniformLoad
from trundle.loads.vehicles import Train, Vehicle
from trundle.report import CAUTION, LOAD_MODEL_CAUTION
from trundle.report.envelope_data import (
    FAMILY_NAMES,
    SECTION_FAMILIES,
    SIGN_CONVENTIONS,
    EnvelopeResults,
    Extreme,
    TableData,
    concurrent_shear,
    describe_load,
    direction_arrow,
    direction_ascii,
    display_factor,
    factors_words,
    impact_words,
    kind_words,
    load_definition,
    parameter_labels,
    product_words,
    quantity_unit,
    section_extremes,
    span_of_section,
    span_summaries,
    support_extremes,
    support_kind_words,
)
from trundle.report.export import csv_text, input_values, json_text, jsonable
from trundle.report.format import decimals as _decimals
from trundle.report.format import fixed as _fixed
from trundle.report.format import length as _length
from trundle.report.format import number as _number
from trundle.report.format import position as _position
from trundle.report.format import position_decimals as _position_decimals
from trundle.report.format import significant
from trundle.report.safe_text import clean_text, terminal_text

CAUTIONS = (CAUTION, LOAD_MODEL_CAUTION)


def _where(extreme: Extreme, length_unit: str) -> str:
    """Lead axle or placement with the loaded stretches, as one cell."""
    if not extreme.governed:
        return "empty beam"
    if extreme.placement:
        if extreme.loaded:
            stretches = "; ".join(f"{_position(a)}–{_position(b)}" for a, b in extreme.loaded)
            return f"{extreme.placement}; loaded {stretches}"
        return extreme.placement
    return f"lead axle at {_position(extreme.lead_x)}"


def _searched(extreme: Extreme) -> str:
    return "; ".join(f"{label} = {_position(v)}" for label, v in extreme.searched)


def _governing_cells(extreme: Extreme, length_unit: str) -> list[str]:
    if not extreme.governed:
        return ["(no load)", "", "empty beam", ""]
    notes = [_searched(extreme)] if extreme.searched else []
    if extreme.side_note:
        notes.append(extreme.side_note)
    return [extreme.load, direction_arrow(extreme.direction), _where(extreme, length_unit),
            "; ".join(notes)]


_GOVERNING_COLUMNS = ("load", "travel", "lead axle x or placement, loaded stretches [{L}]",
                      "searched [{L}] / notes")


def _governing_headers(length_unit: str) -> tuple[str, ...]:
    return tuple(c.format(L=length_unit) for c in _GOVERNING_COLUMNS)


# ------------------------------------------------------------------------------------------
# summary tables


def loads_table(results: EnvelopeResults) -> TableData:
    """The loads as read, with their impact and factors."""
    return loads_table_of(results.loads, results.units)


def model_loads_table(model: Model) -> TableData:
    return loads_table_of(loads_of(model), model.units)


def loads_table_of(entries: Sequence[LoadEntry], units: UnitSystem) -> TableData:
    rows = []
    for entry in entries:
        rows.append((entry.name, kind_words(entry.kind), load_definition(entry, units),
                     impact_words(entry), factors_words(entry), product_words(entry),
                     entry.origin))
    return TableData("Loads (results include the impact on axle loads and the product of the "
                     "factors)",
                     ("load", "kind", "definition", "impact", "factors", "product",
                      "defined in"), tuple(rows),
                     (False, False, False, True, False, True, False))


def library_table(models: Sequence[LoadModelFile]) -> TableData:
    """The library: one row per load model."""
    rows = tuple((m.name, kind_words(m.kind), m.description, m.source) for m in models)
    return TableData("Load models in the library", ("name", "kind", "description", "source"),
                     rows, note='Use one in a model file: [[load]] use = "NAME". Show one: '
                     "trundle library NAME.")


def library_detail(model: LoadModelFile) -> list[TableData | str]:
    """One load model in full, in the units its file is written in."""
    units = model.units
    force, L = units.label("force"), units.label("length")
    out: list[TableData | str] = [
        f"{model.name} ({kind_words(model.kind)})",
        f"file {model.path}; units {units.name}",
        f"description: {model.description}",
        f"source: {model.source}",
        f"definition: {describe_load(model.load, units)}",
    ]
    vehicles = []
    if isinstance(model.load, Vehicle):
        vehicles = [("", model.load)]
    elif isinstance(model.load, Train):
        vehicles = [(f"vehicle {i + 1} ({v.name}): ", v)
                    for i, v in enumerate(model.load.vehicles)]
    for prefix, vehicle in vehicles:
        rows = []
        position = 0.0
        for i, load in enumerate(vehicle.loads):
            spacing = vehicle.spacings[i] if i < len(vehicle.spacings) else None
            if spacing is None:
                gap = ""
            elif isinstance(spacing, tuple):
                gap = f"{_length(spacing[0])} to {_length(spacing[1])} (searched)"
            else:
                gap = _length(spacing)
            shown = _length(position) + (" (with the shortest spacings)" if any(
                isinstance(sp, tuple) for sp in vehicle.spacings[:i]) else "")
            rows.append((str(i + 1), f"{load:.6g}", gap, shown))
            if spacing is not None:
                position += spacing[0] if isinstance(spacing, tuple) else spacing
        out.append(TableData(f"{prefix}axles, front to back", (
            "axle", f"load [{force}]", f"spacing to the next [{L}]",
            f"distance from the first axle [{L}]"), tuple(rows), (True, True, True, True),
            note=f"total {sum(vehicle.loads):.6g} {force}"))
    extras = []
    if model.impact:
        extras.append(f"impact {100 * model.impact:.4g} % (a [[load]] may override it)")
    if model.factors:
        extras.append("factors " + ", ".join(f"{n} × {v:g}" for n, v in model.factors))
    out.extend(extras)
    table = "[[design_load]]" if model.kind == "design case" else "[[load]]"
    out.append(f'use in a model file:  {table}  use = "{model.name}"')
    return out


def table_decimals(results: EnvelopeResults, kind: str) -> int:
    """The decimals the summary table of ``kind`` ("moment", "shear", "deflection",
    "reaction", "support_moment") writes its values with: figures label values with them too,
    so a label reads exactly as the table cell."""
    summaries = span_summaries(results)
    if kind == "moment":
        return _decimals([e.value for s in summaries for e in (s.moment_max, s.moment_min)])
    if kind == "shear":
        return _decimals([e.value for s in summaries for e in (s.shear_max, s.shear_min)])
    if kind == "deflection":
        return _decimals([s.deflection_max.value for s in summaries])
    tops = support_extremes(results, kind, "max")
    bottoms = support_extremes(results, kind, "min")
    return _decimals([e.value for e in (*tops.values(), *bottoms.values())])


def moment_table(results: EnvelopeResults) -> TableData:
    units = results.units
    L = units.label("length")
    unit = quantity_unit("moment", units)
    force = units.label("force")
    rows, groups = [], []
    summaries = span_summaries(results)
    d = table_decimals(results, "moment")
    # the shear on each face of the section under the configuration of the extreme moment
    concurrent = {w: concurrent_shear(results, w) for w in ("max", "min")}
    d_shear = _decimals([v for w in concurrent.values() for side in w for v in side])
    for s in summaries:
        groups.append(len(rows))
        entries = [("max at sections", s.moment_max, "max"),
                   (anywhere_label("max", s.absolute_max), s.absolute_max, None),
                   ("min at sections", s.moment_min, "min"),
                   (anywhere_label("min", s.absolute_min), s.absolute_min, None)]
        for label, e, which in entries:
            if e is None:
                continue
            with_it = ["", ""]
            at = np.flatnonzero(results.sections == e.x) if which else np.array([])
            if at.size:
                left, right = concurrent[which]
                with_it = [_fixed(left[at[0]], d_shear), _fixed(right[at[0]], d_shear)]
            rows.append((str(s.span + 1), label, _fixed(e.value, d), _position(e.x),
                         *with_it, *_governing_cells(e, L)))
    return TableData(f"Bending moment per span [{unit}] (sagging +)",
                     ("span", "extreme", f"M [{unit}]", f"at x [{L}]",
                      f"V left with it [{force}]", f"V right with it [{force}]",
                      *_governing_headers(L)), tuple(rows),
                     (True, False, True, True, True, True, False, False, False, False),
                     note=anywhere_note([e for s in summaries
                                         for e in (s.absolute_max, s.absolute_min)])
                     + " 'V left/right with it': the shear just left and just "
                          "right of the section under the load that gives the moment (an axle "
                          "on the section is right of the cut for the left face, left of it "
                          "for the right face).", groups=tuple(groups))


def shear_table(results: EnvelopeResults) -> TableData:
    units = results.units
    L = units.label("length")
    unit = quantity_unit("shear_left", units)
    summaries = span_summaries(results)
    d = table_decimals(results, "shear")
    rows, groups = [], []
    for s in summaries:
        groups.append(len(rows))
        for label, e in (("max", s.shear_max), ("min", s.shear_min)):
            side = "left of" if e.family == "shear_left" else "right of"
            rows.append((str(s.span + 1), label, _fixed(e.value, d), f"{side} {_position(e.x)}",
                         *_governing_cells(e, L)))
    return TableData(f"Shear per span [{unit}] (upward on the left part +)",
                     ("span", "extreme", f"V [{unit}]", f"section x [{L}]",
                      *_governing_headers(L)), tuple(rows),
                     (True, False, True, True, False, False, False, False),
                     groups=tuple(groups))


def deflection_table(results: EnvelopeResults) -> TableData:
    units = results.units
    L = units.label("length")
    unit = quantity_unit("deflection", units)
    to_display = display_factor("deflection", units)
    summaries = span_summaries(results)
    d = table_decimals(results, "deflection")
    rows = []
    for s in summaries:
        e = s.deflection_max
        span_length = (s.end - s.start) * to_display
        ratio = f"L/{span_length / e.value:.0f}" if e.value > 0 else "—"
        rows.append((str(s.span + 1), _fixed(e.value, d), ratio, _position(e.x),
                     *_governing_cells(e, L)))
    return TableData(f"Largest downward deflection per span [{unit}]",
                     ("span", f"max δ [{unit}]", "span / δ", f"at x [{L}]",
                      *_governing_headers(L)), tuple(rows),
                     (True, True, True, True, False, False, False, False),
                     note="At the sections; with the dynamic allowance and factors of each load, "
                     "without its load factor (service level).")


def _support_table(results: EnvelopeResults, family: str, title: str, symbol: str
                   ) -> TableData:
    """Max and min of a support family (reaction, support moment) at each support."""
    units = results.units
    L = units.label("length")
    unit = quantity_unit(family, units)
    tops = support_extremes(results, family, "max")
    bottoms = support_extremes(results, family, "min")
    d = table_decimals(results, family)
    rows, groups = [], []
    for k in sorted(tops):
        groups.append(len(rows))
        for label, e in (("max", tops[k]), ("min", bottoms[k])):
            rows.append((str(k), _position(e.x), label, _fixed(e.value, d),
                         *_governing_cells(e, L)))
    return TableData(title.format(unit=unit),
                     ("support", f"x [{L}]", "extreme", f"{symbol} [{unit}]",
                      *_governing_headers(L)),
                     tuple(rows), (True, True, False, True, False, False, False, False),
                     groups=tuple(groups))


def reactions_table(results: EnvelopeResults) -> TableData:
    return _support_table(results, "reaction", "Reactions per support [{unit}] (upward +)", "R")


def support_moment_table(results: EnvelopeResults) -> TableData | None:
    if not results.env.index["support_moment"].size:
        return None
    return _support_table(results, "support_moment", "Support moments [{unit}] (couple on the "
                          "beam, counter-clockwise +)", "M")


def summary_tables(results: EnvelopeResults) -> list[TableData]:
    """The summary, in the order the terminal and the report show it (none without loads)."""
    if not results.has_loads:
        return []
    tables = [moment_table(results), shear_table(results), deflection_table(results),
              reactions_table(results)]
    support_moments = support_moment_table(results)
    if support_moments is not None:
        tables.append(support_moments)
    return tables


def sections_table(results: EnvelopeResults) -> TableData:
    """The envelope at every section, values only (what governs each is in envelope.csv)."""
    units = results.units
    L = units.label("length")
    M, V, D = (quantity_unit(f, units) for f in ("moment", "shear_left", "deflection"))
    columns = [("moment", "max"), ("moment", "min"), ("shear_left", "max"),
               ("shear_left", "min"), ("shear_right", "max"), ("shear_right", "min"),
               ("deflection", "max"), ("deflection", "min")]
    arrays = {}
    for family in ("moment", "shear_left", "shear_right", "deflection"):
        arrays[(family, "max")], arrays[(family, "min")] = max_min_arrays(results, family)
    decimals = {
        family: _decimals([v for w in ("max", "min") for v in arrays[(family, w)]])
        for family in ("moment", "shear_left", "shear_right", "deflection")}
    decimals["shear_left"] = decimals["shear_right"] = max(decimals["shear_left"],
                                                           decimals["shear_right"])
    rows = []
    x_places = _position_decimals(results.sections)  # every row of the column alike
    for i, x in enumerate(results.sections):
        span, support = span_of_section(results.beam, float(x))
        where = f"{span + 1}, support {support}" if support is not None else str(span + 1)
        rows.append((_fixed(float(x), x_places), where,
                     *(_fixed(arrays[c][i], decimals[c[0]]) for c in columns)))
    headers = (f"x\n[{L}]", "span", f"M max\n[{M}]", f"M min\n[{M}]", f"V max left\n[{V}]",
               f"V min left\n[{V}]", f"V max right\n[{V}]", f"V min right\n[{V}]",
               f"δ max\n[{D}]", f"δ min\n[{D}]")
    return TableData("Maximum and minimum at each section", headers, tuple(rows),
                     (True, False) + (True,) * 8,
                     note="V left / right: shear just left / right of the section (they differ "
                          "at supports). The governing load of every value is in envelope.csv.")


def input_tables(results: EnvelopeResults) -> list[TableData]:
    """The beam as read: spans, supports, stiffness, hinges."""
    model, beam, units = results.model, results.beam, results.units
    L = units.label("length")
    ends = beam.support_positions
    spans = TableData("Spans", ("span", f"from [{L}]", f"to [{L}]", f"length [{L}]"),
                      tuple((str(i + 1), _length(a), _length(b), _length(b - a))
                            for i, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True))),
                      (True, True, True, True))
    k_unit = units.label("spring stiffness")
    kr_unit = units.label("rotational stiffness")
    support_rows = []
    for i, support in enumerate(beam.supports):
        if isinstance(support, Spring):
            rotation = significant(support.kr) if support.kr is not None else "free"
            support_rows.append((str(i), _length(ends[i]), "spring", significant(support.k),
                                 rotation))
        else:
            vertical = {"pin": "rigid", "fixed": "rigid", "free": "none"}[str(support)]
            rotation = {"pin": "free", "fixed": "rigid", "free": "free"}[str(support)]
            support_rows.append((str(i), _length(ends[i]), str(support), vertical, rotation))
    supports = TableData("Supports", ("support", f"x [{L}]", "kind",
                                      f"vertical stiffness [{k_unit}]",
                                      f"rotational stiffness [{kr_unit}]"),
                         tuple(support_rows), (True, True, False, True, True))
    EI = units.label("flexural rigidity")
    given = list(model.stiffness_given) + [""] * len(beam.stiffness_segments)
    stiffness = TableData(
        "Flexural stiffness", (f"from [{L}]", f"to [{L}]", f"EI [{EI}]", f"EI at end [{EI}]",
                               "shape", "as given"),
        tuple((_length(seg.x0), _length(seg.x1), significant(seg.EI0),
               significant(seg.EI1) if seg.shape != "constant" else "", seg.shape, text)
              for seg, text in zip(beam.stiffness_segments, given, strict=False)),
        (True, True, True, True, False, False))
    tables = [spans, supports, stiffness]
    if beam.hinges:
        tables.append(TableData("Internal hinges", (f"x [{L}]", "in span"),
                                tuple((_length(h), str(beam.span_of(h) + 1))
                                      for h in beam.hinges), (True, True)))
    return tables


def to_rich(table: TableData, compact: bool = False) -> Table:
    """A TableData for the terminal; cells are plain text, never markup. ``compact``: no
    frame above and below and no rules between groups, a rule under the headings only (the
    short default view of ``trundle envelope``)."""
    # names and titles come from model files: no control character reaches the terminal
    out = Table(title=Text(terminal_text(table.title), style="bold"), title_justify="left",
                caption=Text(terminal_text(table.note)) if table.note else None,
                caption_justify="left",
                **({"box": box.SIMPLE_HEAD, "show_edge": False, "padding": (0, 1, 0, 0),
                    "pad_edge": False} if compact else {}))
    numeric = table.numeric or (False,) * len(table.columns)
    for name, right in zip(table.columns, numeric, strict=True):
        # fold, never cut: a truncated name or number in a calculation is worse than a wrap
        out.add_column(Text(clean_text(name, keep_newlines=True)),
                       justify="right" if right else "left",
                       overflow="fold")
    starts = set() if compact else set(table.groups[1:])
    for i, row in enumerate(table.rows):
        if i in starts:
            out.add_section()
        out.add_row(*(Text(clean_text(cell, keep_newlines=True)) for cell in row))
    return out


# ------------------------------------------------------------------------------------------
# envelope.csv and reactions.csv


def _stretches(extreme: Extreme) -> str:
    return " ".join(f"{_number(a)}..{_number(b)}" for a, b in extreme.loaded)


def _extreme_columns(name: str, unit: str, L: str, sided: bool) -> list[str]:
    columns = [f"{name} [{unit}]", f"{name}: load", f"{name}: direction",
               f"{name}: lead axle or point load x [{L}]", f"{name}: loaded stretches [{L}]",
               f"{name}: searched [{L}]"]
    if sided:
        columns.append(f"{name}: side note")
    return columns


def _extreme_cells(e: Extreme, sided: bool) -> list[str]:
    cells = [_number(e.value), e.load if e.governed else "(no load)",
             direction_ascii(e.direction) if e.governed else "",
             _number(e.lead_x), _stretches(e),
             "; ".join(f"{label}={_number(v)}" for label, v in e.searched)]
    if sided:
        cells.append(e.side_note)
    return cells


def envelope_csv(results: EnvelopeResults) -> str:
    """One row per section: x, span, support, every max/min with what governs it, and the
    shear acting together with the max and min moment."""
    units = results.units
    L = units.label("length")  # headings spell units as every other output does
    header = [f"x [{L}]", "span", "support"]
    columns: list[tuple[str, str, bool]] = []
    for family in SECTION_FAMILIES:
        for which in ("max", "min"):
            sided = family.startswith("shear")
            name = f"{FAMILY_NAMES[family]} {which}"
            header += _extreme_columns(name, quantity_unit(family, units), L, sided)
            columns.append((family, which, sided))
            if family == "moment":
                force = units.label("force")
                header += [f"{name}: concurrent shear left [{force}]",
                           f"{name}: concurrent shear right [{force}]"]
    extremes = {(f, w): section_extremes(results, f, w) for f, w, _ in columns}
    concurrent = {w: concurrent_shear(results, w) for w in ("max", "min")}
    rows = []
    for i, x in enumerate(results.sections):
        span, support = span_of_section(results.beam, float(x))
        row = [_number(x), str(span + 1), "" if support is None else str(support)]
        for family, which, sided in columns:
            row += _extreme_cells(extremes[(family, which)][i], sided)
            if family == "moment":
                left, right = concurrent[which]
                row += [_number(left[i]), _number(right[i])]
        rows.append(row)
    return csv_text(header, rows)


def reactions_csv(results: EnvelopeResults) -> str:
    """One row per support: max and min reaction (and support moment where there is one)."""
    units = results.units
    L = units.label("length")
    beam = results.beam
    families = ["reaction"] + (["support_moment"]
                               if results.env.index["support_moment"].size else [])
    header = ["support", f"x [{L}]", "kind"]
    for family in families:
        for which in ("max", "min"):
            header += _extreme_columns(f"{FAMILY_NAMES[family]} {which}",
                                       quantity_unit(family, units), L, False)
    extremes = {(f, w): support_extremes(results, f, w) for f in families
                for w in ("max", "min")}
    rows = []
    for k, support in enumerate(beam.supports):
        row = [str(k), _number(beam.support_positions[k]), support_kind_words(support)]
        for family in families:
            for which in ("max", "min"):
                e = extremes[(family, which)].get(k)
                row += _extreme_cells(e, False) if e is not None else [""] * 6
        rows.append(row)
    return csv_text(header, rows)


# ------------------------------------------------------------------------------------------
# envelope.json


def anywhere_label(which: str, e: Extreme | None) -> str:
    """The row label of an extreme anywhere in a span: marked where it is not certified."""
    return f"{which} anywhere" + ("" if e is None or e.certified else " (not certified)")


def anywhere_note(extremes: Sequence[Extreme | None]) -> str:
    """What 'anywhere' means, and what 'not certified' means where some row is."""
    text = ("'anywhere': the worst section of the span, exact like the values at sections "
            "(the largest moment stands under an axle of the governing load or at an end of "
            "the span, the smallest at an end of the span).")
    if any(e is not None and not e.certified for e in extremes):
        text += (" 'not certified': no exact method yet for that load (searched spacings or "
                 "gaps, uniform load, loads acting together); found by a search over 40 "
                 "sections per span refined around the best of them, which assumes one peak "
                 "between neighbouring samples and may read low: check it where it governs.")
    return text


def deflection_search_note(checks) -> str:
    """What the 'anywhere' deflection of a check is, and what a span marked * is."""
    text = ("The worst section of each span is certified to 1e-9 of the span's largest "
            "deflection (branch and bound with a bound on the curvature M/EI).")
    if any(not c.certified for c in checks):
        text += (" * not certified: the bound could not close in its budget (a flat "
                 "stretch, or searched spacings at a free end); the value comes from a "
                 "search over 40 sections per span refined around the best of them, which "
                 "assumes one peak between neighbouring samples and may read low: check it "
                 "where it governs.")
    return text


def anywhere_json(e: Extreme | None) -> dict[str, Any] | None:
    return None if e is None else {**extreme_json(e), "certified": e.certified}


def extreme_json(e: Extreme) -> dict[str, Any]:
    """One extreme as JSON values (numbers made plain by :func:`export.jsonable`)."""
    return jsonable({
        "value": e.value,
        "x": e.x,
        "load": e.load or None,
        "direction": e.direction,
        "lead_axle_or_point_load_x": e.lead_x,
        "load_positions": e.axles,
        "loaded_stretches": e.loaded,
        "placement": e.placement or None,
        "side_note": e.side_note or None,
        "searched": dict(e.searched),
    })


def shear_json(e: Extreme) -> dict[str, Any]:
    """A shear extreme with the face it is on ("left" or "right" of its section)."""
    return {**extreme_json(e), "side": kind_and_side(e.family)[1]}


def envelope_document(results: EnvelopeResults) -> dict[str, Any]:
    """Everything, as one JSON-able document."""
    units, beam, model = results.units, results.beam, results.model
    L = units.ascii_label("length")
    sections, spans, supports = (_load_parts(results) if results.has_loads else ([], [], []))
    loads = []
    for entry in results.loads:
        together = entry.kind == "together"  # impact and factors: each part's own
        loads.append({
            "name": entry.name, "kind": entry.kind, "defined_in": entry.origin,
            "definition": load_definition(entry, units),
            "description": entry.description or None, "source": entry.source or None,
            "impact": None if together else entry.case.impact,
            "factors": None if together else [{"name": n, "value": v}
                                              for n, v in entry.case.factors],
            "product_of_factors": None if together else entry.case.multiplier,
            "load_factor": None if together else entry.case.load_factor,
            "product_of_factors_for_deflection": (None if together
                                                  else entry.case.service_multiplier),
            "searched": parameter_labels(entry.load),
            "load": load_json(entry.load),
            "as_given": input_values(dict(entry.given)),
            "files": [{"path": str(p), "sha256": sha} for p, sha, _ in entry.file_facts],
        })
    extra_cautions = [c for s in results.extra for c in s.cautions]
    return {
        "title": model.title,
        "generator": f"trundle {results.version}",
        "trundle_version": results.version,
        "date": results.date,
        "model": {"file": results.model_file, "sha256": results.sha256,
                  "inputs": input_values(dict(model.raw))},
        "cautions": list(CAUTIONS) + extra_cautions,
        "sign_conventions": dict(SIGN_CONVENTIONS),
        "units": {"length": L, "force": units.ascii_label("force"),
                  "moment": units.ascii_label("moment"),
                  "shear": units.ascii_label("force"),
                  "reaction": units.ascii_label("force"),
                  "support_moment": units.ascii_label("moment"),
                  "deflection": units.deflection,
                  "distributed_load": units.ascii_label("distributed load")},
        "notes": ["Values include each load's dynamic allowance (axle loads only) and the "
                  "product of its factors; deflections leave out its load factor.",
                  "An extreme with load null is the empty beam (no load makes it worse than 0).",
                  "lead_axle_or_point_load_x: x of the first axle as listed (it leads in the "
                  "direction of travel), or of a placed load's point load; direction +1 "
                  "towards +x, -1 towards -x, 0 placed."],
        "beam": {"spans": [float(s) for s in beam.spans],
                 "supports": [support_kind_words(s) for s in beam.supports],
                 "support_positions": [float(x) for x in beam.support_positions],
                 "hinges": [float(h) for h in beam.hinges],
                 "stiffness_as_given": list(model.stiffness_given)},
        "loads": loads,
        "sections": sections,
        "spans": spans,
        "supports": supports,
        "extra": {s.title: input_values(s.data) for s in results.extra if s.data is not None},
    }


def _load_parts(results: EnvelopeResults) -> tuple[list[Any], list[Any], list[Any]]:
    """The sections, spans and supports parts of envelope.json (the loads' envelope)."""
    beam = results.beam
    extremes = {(f, w): section_extremes(results, f, w) for f in SECTION_FAMILIES
                for w in ("max", "min")}
    concurrent = {w: concurrent_shear(results, w) for w in ("max", "min")}
    sections = []
    for i, x in enumerate(results.sections):
        span, support = span_of_section(beam, float(x))
        entry: dict[str, Any] = {"x": float(x), "span": span + 1, "support": support}
        for family in SECTION_FAMILIES:
            entry[family] = {w: extreme_json(extremes[(family, w)][i]) for w in ("max", "min")}
        for w in ("max", "min"):
            left, right = concurrent[w]
            entry["moment"][w]["concurrent_shear"] = jsonable({"left": left[i],
                                                                "right": right[i]})
        sections.append(entry)
    spans = []
    for s in span_summaries(results):
        spans.append({
            "span": s.span + 1, "from": s.start, "to": s.end,
            "moment": {"max": extreme_json(s.moment_max), "min": extreme_json(s.moment_min),
                       "max_anywhere": anywhere_json(s.absolute_max),
                       "min_anywhere": anywhere_json(s.absolute_min)},
            "shear": {"max": shear_json(s.shear_max), "min": shear_json(s.shear_min)},
            "deflection": {"max": extreme_json(s.deflection_max),
                           "min": extreme_json(s.deflection_min)},
        })
    supports = []
    families = ["reaction", "support_moment"]
    by_support = {(f, w): support_extremes(results, f, w) for f in families
                  for w in ("max", "min")}
    for k, support in enumerate(beam.supports):
        item: dict[str, Any] = {"support": k, "x": float(beam.support_positions[k]),
                                "kind": support_kind_words(support)}
        for family in families:
            if k in by_support[(family, "max")]:
                item[family] = {w: extreme_json(by_support[(family, w)][k])
                                for w in ("max", "min")}
        supports.append(item)
    return sections, spans, supports


def load_json(load: Any) -> dict[str, Any]:
    """A load's numbers in the model's base units (before impact and factors); loads acting
    together name their parts (each has its own entry)."""
    def spacing(value: Any) -> Any:
        return {"min": value[0], "max": value[1]} if isinstance(value, tuple) else value

    if isinstance(load, Together):
        return {"together": [part.name for part in load.parts]}
    if isinstance(load, Vehicle):
        return {"axles": list(load.loads), "spacings": [spacing(v) for v in load.spacings],
                "directions": "both" if load.reversible else "one way"}
    if isinstance(load, Train):
        attached = {}
        for label, part in (("ahead", load.ahead), ("behind", load.behind)):
            if part is not None:
                attached[label] = {"w": part.w, "gap": part.gap,
                                   "length": None if math.isinf(part.length) else part.length}
        return {"vehicles": [{"name": v.name, **load_json(v)} for v in load.vehicles],
                "gaps": [spacing(v) for v in load.gaps], **attached,
                "directions": "both" if load.reversible else "one way"}
    if isinstance(load, UniformLoad):
        return {"uniform": load.w, "placement": load.placement, "point_load": load.point_load}
    return {}




def envelope_json(results: EnvelopeResults) -> str:
    return json_text(envelope_document(results))


def max_min_arrays(results: EnvelopeResults, family: str) -> tuple[np.ndarray, np.ndarray]:
    """Max and min per section (or per support) in display units."""
    kind, side = kind_and_side(family)
    factor = display_factor(family, results.units)
    return (results.env.max(kind, side) * factor + 0.0,
            results.env.min(kind, side) * factor + 0.0)
