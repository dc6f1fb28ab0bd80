"""Crane runway tables (terminal and HTML), CSV files and the JSON part.

Builders return :class:`TableData` so the terminal and the HTML report show the same numbers;
CSV writers return finished text for atomic writing. Forces and lengths are in the model's
units, deflections in mm or in, stresses in MPa or ksi.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from typing import Any

from trundle.analysis.checks import DeflectionCheck, FatigueSection
from trundle.analysis.envelope import kind_and_side
from trundle.io.cranes import CraneEntry, cranes_of, given_text, mass_given
from trundle.io.modelfile import Model
from trundle.io.units import UnitSystem
from trundle.loads.cranes import LATERAL_FRACTION, Crane
from trundle.report.crane_data import (
    VERIFY,
    CranePlacement,
    RunwayReport,
    crane_value_source,
    defaults_in_use,
    fatigue_by_crane,
    fatigue_life_cycles,
    fatigue_worst_per_span,
    lateral_placements,
    runway_spans,
    section_placements,
    support_reactions,
)
from trundle.report.envelope_data import (
    TableData,
    direction_arrow,
    direction_ascii,
    span_of_section,
)
from trundle.report.envelope_tables import (
    anywhere_label,
    anywhere_note,
    deflection_search_note,
    extreme_json,
)
from trundle.report.export import csv_text, jsonable
from trundle.report.format import decimals as _decimals
from trundle.report.format import fixed as _fixed
from trundle.report.format import length as _length
from trundle.report.format import number as _number
from trundle.report.format import position as _position
from trundle.report.format import position_decimals, significant, verdict_cell
from trundle.workflows.crane_runway import COMBINATIONS, lateral_extremes

# ------------------------------------------------------------------------------------------
# cells


def _force_cell(value: float, given: Any, decimals: int) -> str:
    """A force, with the mass it was written as: "196.1 (20 t)"."""
    text = _fixed(value, decimals)
    if mass_given(given):
        text += f" ({given_text(given)})"
    return text


def _gap_text(p: CranePlacement) -> str:
    parts = []
    for gap, touching in zip(p.gaps, p.touching, strict=True):
        parts.append(f"{_position(gap)}" + (" (buffers touching)" if touching else ""))
    return "; ".join(parts)


def _governing_cells(p: CranePlacement) -> list[str]:
    e = p.extreme
    if not e.governed:
        return ["(no crane)", "", "", ""]
    return [e.load, direction_arrow(e.direction), _position(e.lead_x), _gap_text(p)]


def _governing_headers(L: str) -> tuple[str, ...]:
    return ("combination", "travel", f"lead wheel\nx [{L}]",
            f"wheel to wheel\nbetween cranes [{L}]")


def _without_empty_gaps(table: TableData) -> TableData:
    """The table without its crane-gap column when no placement has a gap (one crane)."""
    index = next((i for i, c in enumerate(table.columns) if c.startswith("wheel to wheel")), None)
    if index is None or any(row[index] for row in table.rows):
        return table

    def drop(items: Sequence[Any]) -> tuple[Any, ...]:
        return tuple(item for i, item in enumerate(items) if i != index)

    return dataclasses.replace(table, columns=drop(table.columns),
                               rows=tuple(drop(row) for row in table.rows),
                               numeric=drop(table.numeric) if table.numeric else ())


def _ratio(ratio: float) -> str:
    return f"span / {ratio:g}"


def _fraction_cell(value: float, source: str) -> str:
    return f"{100 * value:.4g} % ({source})"


# ------------------------------------------------------------------------------------------
# the cranes


def cranes_table(entries: Sequence[CraneEntry], units: UnitSystem) -> TableData:
    F, L = units.label("force"), units.label("length")
    rows = []
    d = _decimals([v for e in entries for v in (e.crane.capacity, e.crane.bridge_weight,
                                                e.crane.trolley_weight)])
    for entry in entries:
        c, given = entry.crane, entry.given
        rows.append((c.name, c.operation,
                     _force_cell(c.capacity, given.get("capacity"), d),
                     _force_cell(c.bridge_weight, given.get("bridge_weight"), d),
                     _force_cell(c.trolley_weight, given.get("trolley_weight"), d),
                     _length(c.span), _length(c.hook_approach), str(c.wheels_per_rail),
                     ", ".join(_length(s) for s in c.wheel_spacings),
                     _length(c.buffer_length) if c.buffer_length is not None else "—"))
    return TableData(
        "Cranes as given", ("crane", "operation", f"rated\ncapacity [{F}]",
                            f"bridge\nweight [{F}]", f"trolley +\nhoist [{F}]",
                            f"crane\nspan [{L}]", f"hook\napproach [{L}]", "wheels\nper rail",
                            f"wheel\nspacings [{L}]", f"length over\nbuffers [{L}]"),
        tuple(rows), (False, False, True, True, True, True, True, True, True, True),
        note="A mass (in brackets as written) is turned into its weight with standard gravity "
             "g = 9.80665 m/s².")


def wheel_decimals(cranes: Sequence[Crane]) -> int:
    """The decimals of the wheel-load table (and of the wheel loads the crane figures
    write): from the largest maximum, minimum or unloaded wheel load."""
    wheels = [c.wheels() for c in cranes]
    return _decimals([v for w in wheels for v in (w.maximum, w.minimum, w.unloaded)])


def wheel_loads_table(entries: Sequence[CraneEntry], units: UnitSystem) -> TableData:
    F = units.label("force")
    wheels = {e.name: e.crane.wheels() for e in entries}
    d = wheel_decimals([e.crane for e in entries])
    rows = []
    for entry in entries:
        c, w = entry.crane, wheels[entry.name]
        n = c.wheels_per_rail
        source = ("maker's data" if crane_value_source(entry, "wheel loads") == "given"
                  else "crane statics")
        rows.append((c.name, str(n), _fixed(w.maximum, d), _fixed(w.minimum, d),
                     _fixed(w.unloaded, d), _fixed(n * w.maximum, d),
                     _fraction_cell(w.impact, crane_value_source(entry, "impact")),
                     _fixed(w.maximum * (1 + w.impact), d), source))
    return TableData(
        f"Vertical wheel loads on this runway rail [{F} per wheel]",
        ("crane", "wheels", "maximum", "minimum", "unloaded", "rail total,\nmaximum",
         "vertical\nimpact", "maximum\nwith impact", "wheel\nloads from"),
        tuple(rows), (False, True, True, True, True, True, True, True, False),
        note="maximum: trolley with the rated load at the minimum hook approach on this side; "
             "minimum: trolley and load at the far rail; unloaded: trolley on this side, no "
             "lifted load. Crane statics: bridge shared equally by the two rails, trolley and "
             "load shared by lever arms, equal wheels.")


def horizontal_forces_table(entries: Sequence[CraneEntry], units: UnitSystem) -> TableData:
    F = units.label("force")
    wheels = {e.name: e.crane.wheels() for e in entries}

    def lateral_fraction(c: Crane) -> float:
        return LATERAL_FRACTION if c.lateral_fraction is None else c.lateral_fraction

    d = _decimals([v for e in entries for v in (
        lateral_fraction(e.crane) * (e.crane.capacity + e.crane.trolley_weight),
        wheels[e.name].lateral * e.crane.wheels_per_rail, wheels[e.name].longitudinal)])
    rows = []
    for entry in entries:
        c, w = entry.crane, wheels[entry.name]
        n = c.wheels_per_rail
        fraction = lateral_fraction(c)
        longitudinal_fraction = w.longitudinal / (n * w.maximum) if w.maximum else 0.0
        rows.append((c.name,
                     _fraction_cell(fraction, crane_value_source(entry, "lateral")),
                     _fixed(fraction * (c.capacity + c.trolley_weight), d),
                     f"{c.lateral_share:g} ({crane_value_source(entry, 'lateral share')})",
                     _fixed(w.lateral * n, d), _fixed(w.lateral, d),
                     _fraction_cell(longitudinal_fraction,
                                    crane_value_source(entry, "longitudinal")),
                     _fixed(w.longitudinal, d)))
    return TableData(
        f"Horizontal crane forces [{F}]",
        ("crane", "lateral\nfraction", "lateral,\nwhole crane", "share on\nthis runway",
         "lateral on\nthis rail", "lateral\nper wheel", "longitudinal\nfraction",
         "longitudinal\non this rail"),
        tuple(rows), (False, True, True, True, True, True, True, True),
        note="Lateral fraction: of (rated capacity + trolley weight); longitudinal fraction: of "
             "the maximum wheel loads on this rail. Lateral forces act at the top of the rail, "
             "either way, on the lateral stiffness of the top flange; the longitudinal force "
             "goes to the runway's longitudinal bracing and end stops.")


def model_cranes_tables(model: Model) -> list[TableData]:
    """The cranes of a model file and their wheel loads (no runway analysis)."""
    entries = cranes_of(model)
    return [cranes_table(entries, model.units), wheel_loads_table(entries, model.units),
            horizontal_forces_table(entries, model.units)]


def defaults_table(report: RunwayReport) -> TableData:
    rows = tuple((d.item, d.applies_to, d.value, d.basis, VERIFY)
                 for d in defaults_in_use(report))
    return TableData("Defaults in use (not given in the model file)",
                     ("item", "applies to", "value", "basis", "status"), rows,
                     note="Every default must be verified against the governing guide/code "
                          "in force before the results are used.")


def runway_settings_table(report: RunwayReport) -> TableData:
    spec, settings, units = report.spec, report.settings, report.units
    EI = units.label("flexural rigidity")
    rows = [("crane combinations", "; ".join(c.name for c in report.runway.combinations),
             "given" if "combinations" in settings.given else
             "all of " + ", ".join(f'"{c}"' for c in COMBINATIONS)),
            ("service class", spec.service_class, "given"),
            ("crane travel", "between end stops at the beam's ends: every wheel on the beam"
             if spec.end_stops else "wheels may stand beyond the beam's ends (a girder of a "
             "longer runway; conservative)", "given" if "end_stops" in settings.given
             else "default (end_stops = false)"),
            ("vertical deflection limit (without impact)", _ratio(spec.vertical_limit_ratio),
             "given" if spec.vertical_ratio is not None else f"default; {VERIFY}")]
    if spec.lateral_EI is not None:
        rows.append(("lateral stiffness of the top flange", f"{significant(spec.lateral_EI)} {EI}",
                     settings.lateral_EI_given))
        rows.append(("lateral deflection limit", _ratio(spec.lateral_limit_ratio),
                     "given" if spec.lateral_ratio is not None else f"default; {VERIFY}"))
    else:
        rows.append(("lateral stiffness of the top flange", "not given",
                     "no lateral analysis (give lateral_EI or lateral_I)"))
    if spec.section_modulus is not None:
        shown = "cm" if units.name == "SI" else "in"
        modulus = spec.section_modulus * units.factor(f"{units.length}**3", f"{shown}**3")
        rows.append(("section modulus at the fatigue detail", f"{significant(modulus)} {shown}³",
                     given_text(settings.given.get("section_modulus"))))
        cycles = spec.cycles
        rows.append(("loaded passages of each crane over the life",
                     "unlimited" if math.isinf(cycles) else f"{cycles:,.0f}",
                     "given" if spec.fatigue_cycles is not None else
                     f"default for service class {spec.service_class}; {VERIFY}"))
    if spec.detail_category is not None:
        rows.append(("fatigue detail category", spec.detail_category, "given"))
    return TableData("Runway checks as set up", ("item", "value", "from"), tuple(rows))


# ------------------------------------------------------------------------------------------
# results


def runway_decimals(report: RunwayReport, kind: str) -> int:
    """The decimals the runway table of ``kind`` ("reaction", "moment", "shear",
    "deflection", "lateral_moment") writes its values with: the crane figures label values
    with them too, so a label reads exactly as the table cell."""
    if kind == "reaction":
        items = support_reactions(report)
        return _decimals([v for r in items for v in (r.max_with_impact.extreme.value,
                                                     r.min_with_impact.extreme.value)])
    spans = runway_spans(report)
    if kind == "moment":
        return _decimals([p.extreme.value for s in spans for p in (s.moment_max, s.moment_min)])
    if kind == "shear":
        return _decimals([p.extreme.value for s in spans for p in (s.shear_max, s.shear_min)])
    if kind == "deflection":
        to_display = report.units.factor(report.units.length, report.units.deflection)
        checks = list(report.runway.vertical_checks) + list(report.runway.lateral_checks)
        return _decimals([c.limit * to_display for c in checks])
    return _decimals([s.lateral_moment.extreme.value for s in spans if s.lateral_moment])


def reactions_table(report: RunwayReport) -> TableData:
    units = report.units
    F, L = units.label("force"), units.label("length")
    items = support_reactions(report)
    d = runway_decimals(report, "reaction")
    rows = []
    for r in items:
        rows.append((str(r.support), _position(r.x),
                     _fixed(r.max_with_impact.extreme.value, d),
                     _fixed(r.max_without_impact.extreme.value, d),
                     _fixed(r.min_with_impact.extreme.value, d),
                     *_governing_cells(r.max_with_impact)))
    return _without_empty_gaps(TableData(
        f"Vertical reactions per support from one rail [{F}] (upward +): what the bracket and "
        "column receive",
        ("support", f"x [{L}]", "max with\nimpact", "max without\nimpact", "min with\nimpact",
         *(f"{h}\n(max with impact)" if i == 0 else h
           for i, h in enumerate(_governing_headers(L)))),
        tuple(rows), (True, True, True, True, True, False, False, True, False),
        note="With impact: for the runway girder, its bearings and brackets; without impact: "
             "usually for columns and foundations (common practice; verify against the "
             "governing guide/code in force). A negative minimum is uplift."))


def moment_table(report: RunwayReport) -> TableData:
    units = report.units
    M, L = units.label("moment"), units.label("length")
    spans = runway_spans(report)
    d = runway_decimals(report, "moment")
    rows, groups = [], []
    for s in spans:
        groups.append(len(rows))
        for label, p in (("max at sections", s.moment_max),
                         (anywhere_label("max", s.moment_anywhere.extreme
                                         if s.moment_anywhere else None), s.moment_anywhere),
                         ("min at sections", s.moment_min)):
            if p is None:
                continue
            rows.append((str(s.span + 1), label, _fixed(p.extreme.value, d),
                         _position(p.extreme.x), *_governing_cells(p)))
    return _without_empty_gaps(TableData(
        f"Bending moment per span with impact [{M}] (sagging +)",
        ("span", "extreme", f"M [{M}]", f"at x [{L}]", *_governing_headers(L)), tuple(rows),
        (True, False, True, True, False, False, True, False), groups=tuple(groups),
        note=anywhere_note([s.moment_anywhere.extreme for s in spans
                            if s.moment_anywhere is not None])))


def shear_table(report: RunwayReport) -> TableData:
    units = report.units
    F, L = units.label("force"), units.label("length")
    spans = runway_spans(report)
    d = runway_decimals(report, "shear")
    rows, groups = [], []
    for s in spans:
        groups.append(len(rows))
        for label, p in (("max", s.shear_max), ("min", s.shear_min)):
            side = "left of" if p.extreme.family == "shear_left" else "right of"
            rows.append((str(s.span + 1), label, _fixed(p.extreme.value, d),
                         f"{side} {_position(p.extreme.x)}", *_governing_cells(p)))
    return _without_empty_gaps(TableData(
        f"Shear per span with impact [{F}] (upward on the left part +)",
        ("span", "extreme", f"V [{F}]", f"section x [{L}]", *_governing_headers(L)),
        tuple(rows), (True, False, True, True, False, False, True, False),
        groups=tuple(groups)))


def _check_rows(checks: Sequence[DeflectionCheck], kind: str, to_display: float,
                decimals: int) -> list[tuple[str, ...]]:
    rows = []
    for c in checks:
        rows.append((str(c.span + 1) + ("" if c.certified else " *"), kind,
                     _length(c.span_length),
                     _fixed(c.value * to_display, decimals), _position(c.x),
                     _ratio(c.ratio), _fixed(c.limit * to_display, decimals),
                     f"{c.utilisation:.3f}", verdict_cell(c.verdict), c.governing))
    return rows


def deflection_table(report: RunwayReport) -> TableData:
    units = report.units
    D, L = units.deflection, units.label("length")
    to_display = units.factor(units.length, units.deflection)
    runway = report.runway
    checks = list(runway.vertical_checks) + list(runway.lateral_checks)
    d = runway_decimals(report, "deflection")
    rows = _check_rows(runway.vertical_checks, "vertical", to_display, d)
    rows += _check_rows(runway.lateral_checks, "lateral (±)", to_display, d)
    groups = (0, len(runway.vertical_checks)) if runway.lateral_checks else ()
    return TableData(
        f"Deflection per span against the limits [{D}], wheel loads without impact",
        ("span", "direction", f"span\n[{L}]", f"δ\n[{D}]", f"at x\n[{L}]", "limit",
         f"allowable\n[{D}]", "utilisation", "verdict", "combination"), tuple(rows),
        (True, False, True, True, True, False, True, True, False, False), groups=groups,
        note="Vertical: downward deflection under the vertical wheel loads; lateral: the top "
             "flange under the lateral wheel forces acting either way. "
             + deflection_search_note(checks))


def lateral_table(report: RunwayReport) -> TableData | None:
    if report.runway.lateral is None:
        return None
    units = report.units
    M, L = units.label("moment"), units.label("length")
    spans = [s for s in runway_spans(report) if s.lateral_moment is not None]
    d = runway_decimals(report, "lateral_moment")
    rows = []
    for s in spans:
        p = s.lateral_moment
        assert p is not None
        rows.append((str(s.span + 1), "± " + _fixed(p.extreme.value, d),
                     _position(p.extreme.x), *_governing_cells(p)))
    return _without_empty_gaps(TableData(
        f"Lateral bending moment in the top flange per span [{M}], either way",
        ("span", f"M lateral [{M}]", f"at x [{L}]", *_governing_headers(L)), tuple(rows),
        (True, True, True, False, False, True, False),
        note="On the lateral stiffness of the top flange, at the sections; the lateral wheel "
             "forces carry no impact."))


def longitudinal_table(report: RunwayReport) -> TableData:
    units = report.units
    F = units.label("force")
    values = [report.runway.longitudinal[c.name] for c in report.cranes]
    d = _decimals(values)
    rows = tuple((c.name, _fixed(report.runway.longitudinal[c.name], d))
                 for c in report.cranes)
    return TableData(f"Longitudinal force per rail [{F}]", ("crane", f"force on this rail [{F}]"),
                     rows, (False, True),
                     note="Each crane's own tractive or braking force, to the longitudinal "
                          "bracing of the runway and the end stops; whether cranes act "
                          "together is for the governing guide/code.")


def fatigue_table(report: RunwayReport) -> TableData | None:
    if not report.runway.fatigue:
        return None
    units = report.units
    M, L = units.label("moment"), units.label("length")
    S = report.stress_unit
    worst = fatigue_worst_per_span(report)
    items = [item for _, item in worst]
    d = _decimals([item.moment_range for item in items])
    ds = _decimals([(item.stress_range or 0.0) * report.stress_factor for item in items])
    rows, groups = [], []
    current = None
    for span, item in worst:
        if item.crane != current:
            groups.append(len(rows))
            current = item.crane
        rows.append(_fatigue_cells(report, span, item, d, ds))
    return TableData(
        "Fatigue per span and crane, the worst section (loaded passages, no impact)"
        + (f" [{S}]" if report.spec.section_modulus is not None else
           " (give section_modulus in [runway] for stress ranges)"),
        _fatigue_headers(M, L, S), tuple(rows), (False,) + (True,) * 8 + (False, True, False),
        groups=tuple(groups),
        note="Rainflow count of one passage (half cycles count ½); Δσ equivalent = "
             "(Σ n·Δσ³ / Σ n)^(1/3). A detail passes by 'threshold' (Δσ max / the detail's "
             "threshold ≤ 1) or by 'finite life' (Δσ equivalent / allowable for the cycles "
             "over the life, passages × cycles per passage, no threshold floor, ≤ 1); the "
             "lower utilisation is shown. Every section: runway-fatigue.csv.")


def _fatigue_headers(M: str, L: str, S: str) -> tuple[str, ...]:
    return ("crane", "span", f"x\n[{L}]", f"ΔM per\npassage [{M}]", "cycles per\npassage",
            f"Δσ max\n[{S}]", f"Δσ\nequivalent [{S}]", "cycles over\nthe life",
            f"allowable\n[{S}]", "basis", "utilisation", "verdict")


def _fatigue_cells(report: RunwayReport, span: int, item: FatigueSection, d: int, ds: int
                   ) -> tuple[str, ...]:
    factor = report.stress_factor

    def stress(value: float | None) -> str:
        return "—" if value is None else _fixed(value * factor, ds)

    life = fatigue_life_cycles(report, item)
    return (item.crane, str(span + 1), _position(item.x), _fixed(item.moment_range, d),
            f"{item.cycles_per_passage:g}", stress(item.stress_range),
            stress(item.equivalent_range),
            "unlimited" if math.isinf(life) else f"{life:,.0f}", stress(item.allowable),
            item.check or "—",
            "—" if item.utilisation is None else f"{item.utilisation:.3f}",
            verdict_cell(item.verdict))


def fatigue_sections_table(report: RunwayReport) -> TableData | None:
    """Every section, every crane (HTML only)."""
    if not report.runway.fatigue:
        return None
    units = report.units
    M, L = units.label("moment"), units.label("length")
    S = report.stress_unit
    items = list(report.runway.fatigue)
    d = _decimals([item.moment_range for item in items])
    ds = _decimals([(item.stress_range or 0.0) * report.stress_factor for item in items])
    rows, groups = [], []
    for per_crane in fatigue_by_crane(report).values():
        groups.append(len(rows))
        for item in per_crane:
            span, _ = span_of_section(report.beam, item.x)
            rows.append(_fatigue_cells(report, span, item, d, ds))
    return TableData(
        f"Fatigue at every section [{S}]",
        _fatigue_headers(M, L, S), tuple(rows), (False,) + (True,) * 8 + (False, True, False),
        groups=tuple(groups))


def sections_table(report: RunwayReport) -> TableData:
    """The runway envelope at every section, values only (HTML only; the governing
    combination of every value is in runway-sections.csv)."""
    units = report.units
    M, F, L, D = (units.label("moment"), units.label("force"), units.label("length"),
                  units.deflection)
    runway = report.runway
    to_display = units.factor(units.length, units.deflection)
    columns = [runway.strength.max("moment"), runway.strength.min("moment"),
               runway.strength.max("shear", "left"), runway.strength.min("shear", "left"),
               runway.strength.max("shear", "right"), runway.strength.min("shear", "right"),
               runway.service.max("deflection") * to_display]
    headers = [f"M max\n[{M}]", f"M min\n[{M}]", f"V max left\n[{F}]", f"V min left\n[{F}]",
               f"V max right\n[{F}]", f"V min right\n[{F}]", f"δ max, no impact\n[{D}]"]
    decimals = [_decimals(list(columns[0]) + list(columns[1]))] * 2 + \
        [_decimals([v for c in columns[2:6] for v in c])] * 4 + [_decimals(list(columns[6]))]
    if runway.lateral is not None:
        lateral_moment, _ = lateral_extremes(runway, "moment")
        lateral_deflection, _ = lateral_extremes(runway, "deflection")
        columns += [lateral_moment, lateral_deflection * to_display]
        headers += [f"M lateral ±\n[{M}]", f"δ lateral ±\n[{D}]"]
        decimals += [_decimals(list(columns[7])), _decimals(list(columns[8]))]
    rows = []
    x_places = position_decimals(report.sections)  # every row of the column alike
    for i, x in enumerate(report.sections):
        span, support = span_of_section(report.beam, float(x))
        where = f"{span + 1}, support {support}" if support is not None else str(span + 1)
        rows.append((_fixed(float(x), x_places), where, *(_fixed(float(c[i]), d)
                                          for c, d in zip(columns, decimals, strict=True))))
    return TableData("Runway envelope at every section (moment and shear with impact)",
                     (f"x\n[{L}]", "span", *headers), tuple(rows),
                     (True, False) + (True,) * len(headers),
                     note="The governing combination of every value is in runway-sections.csv.")


# ------------------------------------------------------------------------------------------
# CSV


def _placement_columns(name: str, unit: str, L: str) -> list[str]:
    return [f"{name} [{unit}]", f"{name}: combination", f"{name}: direction",
            f"{name}: lead wheel x [{L}]", f"{name}: wheel x [{L}]",
            f"{name}: wheel-to-wheel distances between cranes [{L}]"]


def _placement_cells(p: CranePlacement) -> list[str]:
    e = p.extreme
    if not e.governed:
        return [_number(e.value), "(no crane)", "", "", "", ""]
    return [_number(e.value), e.load, direction_ascii(e.direction), _number(e.lead_x),
            " ".join(_number(a) for a in e.axles),
            " ".join(_number(g) + (" (buffers touching)" if t else "")
                     for g, t in zip(p.gaps, p.touching, strict=True))]


def reactions_csv(report: RunwayReport) -> str:
    units = report.units
    F, L = units.label("force"), units.label("length")
    header = ["support", f"x [{L}]"]
    names = ("max with impact", "min with impact", "max without impact", "min without impact")
    for name in names:
        header += _placement_columns(f"reaction {name}", F, L)
    rows = []
    for r in support_reactions(report):
        row = [str(r.support), _number(r.x)]
        for p in (r.max_with_impact, r.min_with_impact, r.max_without_impact,
                  r.min_without_impact):
            row += _placement_cells(p)
        rows.append(row)
    return csv_text(header, rows)


def sections_csv(report: RunwayReport) -> str:
    units = report.units
    M, F, L = (units.label(q) for q in ("moment", "force", "length"))
    D = units.deflection
    families = [("moment", "max", M, True), ("moment", "min", M, True),
                ("shear_left", "max", F, True), ("shear_left", "min", F, True),
                ("shear_right", "max", F, True), ("shear_right", "min", F, True),
                ("deflection", "max", D, False)]
    header = [f"x [{L}]", "span", "support"]
    for family, which, unit, strength in families:
        label = family.replace("_", " ") + f" {which}" + (" with impact" if strength
                                                          else " without impact")
        header += _placement_columns(label, unit, L)
    lateral = report.runway.lateral is not None
    if lateral:
        header += _placement_columns("lateral moment (either way)", M, L)
        header += _placement_columns("lateral deflection (either way)", D, L)
    columns = [section_placements(report, f, w, strength=s) for f, w, _, s in families]
    if lateral:
        columns += [lateral_placements(report, "moment"),
                    lateral_placements(report, "deflection")]
    rows = []
    for i, x in enumerate(report.sections):
        span, support = span_of_section(report.beam, float(x))
        row = [_number(x), str(span + 1), "" if support is None else str(support)]
        for column in columns:
            row += _placement_cells(column[i])
        rows.append(row)
    return csv_text(header, rows)


def deflection_csv(report: RunwayReport) -> str:
    units = report.units
    L, D = units.label("length"), units.deflection
    to_display = units.factor(units.length, units.deflection)
    header = ["direction", "span", f"span length [{L}]", f"deflection [{D}]", f"x [{L}]",
              "limit span ratio", f"allowable [{D}]", "utilisation", "verdict", "combination"]
    rows = []
    for kind, checks in (("vertical", report.runway.vertical_checks),
                         ("lateral either way", report.runway.lateral_checks)):
        for c in checks:
            rows.append([kind, str(c.span + 1), _number(c.span_length),
                         _number(c.value * to_display), _number(c.x), _number(c.ratio),
                         _number(c.limit * to_display), _number(c.utilisation),
                         verdict_cell(c.verdict), c.governing])
    return csv_text(header, rows)


def fatigue_csv(report: RunwayReport) -> str:
    units = report.units
    M, L = units.label("moment"), units.label("length")
    S = report.stress_unit
    factor = report.stress_factor
    header = ["crane", "span", f"x [{L}]", f"moment range per passage [{M}]",
              "cycles per passage", f"rainflow cycles of one passage (range [{M}] x count)",
              f"stress range max [{S}]", f"equivalent stress range [{S}]",
              "cycles over the life", f"allowable stress range [{S}]", "basis", "utilisation",
              "verdict"]
    rows = []
    for item in report.runway.fatigue:
        span, _ = span_of_section(report.beam, item.x)

        def stress(value: float | None) -> str:
            return "" if value is None else _number(value * factor)

        life = fatigue_life_cycles(report, item)
        rows.append([item.crane, str(span + 1), _number(item.x), _number(item.moment_range),
                     _number(item.cycles_per_passage),
                     "; ".join(f"{_number(r)} x {_number(n)}" for r, n in item.cycles),
                     stress(item.stress_range), stress(item.equivalent_range),
                     "unlimited" if math.isinf(life) else _number(life),
                     stress(item.allowable), item.check or "",
                     "" if item.utilisation is None else _number(item.utilisation),
                     verdict_cell(item.verdict)])
    return csv_text(header, rows)


def runway_csv_files(report: RunwayReport) -> dict[str, str]:
    files = {"runway-reactions.csv": reactions_csv(report),
             "runway-sections.csv": sections_csv(report),
             "runway-deflection.csv": deflection_csv(report)}
    if report.runway.fatigue:
        files["runway-fatigue.csv"] = fatigue_csv(report)
    return files


# ------------------------------------------------------------------------------------------
# JSON


def placement_json(p: CranePlacement) -> dict[str, Any]:
    data = extreme_json(p.extreme)
    data.pop("loaded_stretches", None)
    data.pop("placement", None)
    data["combination"] = data.pop("load")
    data["lead_wheel_x"] = data.pop("lead_axle_or_point_load_x")
    data["wheel_positions"] = data.pop("load_positions")
    data.pop("searched", None)
    data["wheel_loads"] = [jsonable(w) for w in p.wheel_loads]
    data["cranes"] = [{"name": n, "state": s, "wheels": k} for n, s, k in p.cranes]
    data["clear_gaps"] = [jsonable(g) for g in p.gaps]
    data["buffers_touching"] = list(p.touching)
    return data


def _check_json(c: DeflectionCheck, to_display: float) -> dict[str, Any]:
    return {"span": c.span + 1, "span_length": jsonable(c.span_length),
            "deflection": jsonable(c.value * to_display), "x": jsonable(c.x),
            "limit_span_ratio": jsonable(c.ratio), "allowable": jsonable(c.limit * to_display),
            "utilisation": jsonable(c.utilisation), "verdict": c.verdict,
            "combination": c.governing}


def _crane_json(report: RunwayReport, entry: CraneEntry) -> dict[str, Any]:
    crane, given = entry.crane, entry.given
    w = report.runway.wheels[crane.name]
    n = crane.wheels_per_rail
    return {
        "name": crane.name, "operation": crane.operation, "as_given": dict(given),
        "capacity": crane.capacity, "bridge_weight": crane.bridge_weight,
        "trolley_weight": crane.trolley_weight, "span": crane.span,
        "hook_approach": crane.hook_approach, "wheel_spacings": list(crane.wheel_spacings),
        "buffer_length": crane.buffer_length, "wheels_per_rail": n,
        "wheel_loads": {"maximum": w.maximum, "minimum": w.minimum, "unloaded": w.unloaded,
                        "from": crane_value_source(entry, "wheel loads")},
        "impact": {"fraction": w.impact, "from": crane_value_source(entry, "impact")},
        "lateral": {"per_wheel": w.lateral, "on_this_rail": w.lateral * n,
                    "share": crane.lateral_share,
                    "from": crane_value_source(entry, "lateral")},
        "longitudinal": {"on_this_rail": w.longitudinal,
                         "from": crane_value_source(entry, "longitudinal")},
    }


def runway_json(report: RunwayReport, cautions: Sequence[str]) -> dict[str, Any]:
    units = report.units
    spec, runway = report.spec, report.runway
    to_display = units.factor(units.length, units.deflection)
    factor = report.stress_factor
    spans = []
    for s in runway_spans(report):
        spans.append({
            "span": s.span + 1, "from": s.start, "to": s.end,
            "moment_with_impact": {
                "max": placement_json(s.moment_max), "min": placement_json(s.moment_min),
                "max_anywhere": ({**placement_json(s.moment_anywhere),
                                  "certified": s.moment_anywhere.extreme.certified}
                                 if s.moment_anywhere is not None else None)},
            "shear_with_impact": {"max": {**placement_json(s.shear_max),
                                          "side": kind_and_side(s.shear_max.extreme.family)[1]},
                                  "min": {**placement_json(s.shear_min),
                                          "side": kind_and_side(s.shear_min.extreme.family)[1]}},
            "lateral_moment_either_way": (placement_json(s.lateral_moment)
                                          if s.lateral_moment is not None else None),
        })
    sections = []
    lateral = runway.lateral is not None
    families = {(f, w): section_placements(report, f, w)
                for f in ("moment", "shear_left", "shear_right") for w in ("max", "min")}
    deflection = section_placements(report, "deflection", "max", strength=False)
    lateral_m = lateral_placements(report, "moment") if lateral else []
    lateral_d = lateral_placements(report, "deflection") if lateral else []
    for i, x in enumerate(report.sections):
        span, support = span_of_section(report.beam, float(x))
        entry: dict[str, Any] = {"x": float(x), "span": span + 1, "support": support}
        for family in ("moment", "shear_left", "shear_right"):
            entry[f"{family}_with_impact"] = {w: placement_json(families[(family, w)][i])
                                              for w in ("max", "min")}
        entry["deflection_without_impact"] = {"max": placement_json(deflection[i])}
        if lateral:
            entry["lateral_moment_either_way"] = placement_json(lateral_m[i])
            entry["lateral_deflection_either_way"] = placement_json(lateral_d[i])
        sections.append(entry)
    fatigue = []
    for item in runway.fatigue:
        life = fatigue_life_cycles(report, item)
        fatigue.append({
            "crane": item.crane, "x": item.x, "moment_range": item.moment_range,
            "cycles_per_passage": item.cycles_per_passage,
            "rainflow_cycles": [[r, n] for r, n in item.cycles],
            "stress_range": jsonable(None if item.stress_range is None
                                 else item.stress_range * factor),
            "equivalent_range": jsonable(None if item.equivalent_range is None
                                     else item.equivalent_range * factor),
            "cycles_over_life": None if math.isinf(life) else life,
            "allowable": jsonable(None if item.allowable is None else item.allowable * factor),
            "basis": item.check,
            "utilisation": jsonable(item.utilisation),
            "verdict": item.verdict,
        })
    return {
        "cautions": list(cautions),
        "units": {"force": units.ascii_label("force"), "length": units.ascii_label("length"),
                  "moment": units.ascii_label("moment"), "deflection": units.deflection,
                  "stress": report.stress_unit},
        "notes": ["Strength values (moment, shear, reactions 'with impact') include each "
                  "crane's vertical impact; deflection, reactions 'without impact', lateral "
                  "values and fatigue do not.",
                  "lead_wheel_x: x of the first wheel of the first crane of the combination; "
                  "direction +1 towards +x, -1 towards -x.",
                  "clear_gaps: last wheel of one crane to the first wheel of the next."],
        "cranes": [_crane_json(report, e) for e in report.entries],
        "runway": {"combinations": [c.name for c in runway.combinations],
                   "service_class": spec.service_class,
                   "vertical_limit_span_ratio": spec.vertical_limit_ratio,
                   "lateral_EI": spec.lateral_EI,
                   "lateral_limit_span_ratio": (spec.lateral_limit_ratio
                                                if spec.lateral_EI is not None else None),
                   "section_modulus": spec.section_modulus,
                   "detail_category": spec.detail_category,
                   "loaded_passages": None if math.isinf(spec.cycles) else spec.cycles,
                   "as_given": dict(report.settings.given)},
        "defaults_in_use": [{"item": d.item, "applies_to": d.applies_to, "value": d.value,
                             "basis": d.basis, "status": VERIFY}
                            for d in defaults_in_use(report)],
        "reactions": [{"support": r.support, "x": r.x,
                       "max_with_impact": placement_json(r.max_with_impact),
                       "min_with_impact": placement_json(r.min_with_impact),
                       "max_without_impact": placement_json(r.max_without_impact),
                       "min_without_impact": placement_json(r.min_without_impact)}
                      for r in support_reactions(report)],
        "spans": spans,
        "sections": sections,
        "vertical_deflection": [_check_json(c, to_display) for c in runway.vertical_checks],
        "lateral_deflection": [_check_json(c, to_display) for c in runway.lateral_checks],
        "longitudinal": {name: force for name, force in runway.longitudinal.items()},
        "fatigue": fatigue,
    }


__all__ = ["cranes_table", "deflection_table", "defaults_table", "fatigue_sections_table",
           "fatigue_table", "horizontal_forces_table", "lateral_table", "longitudinal_table",
           "moment_table", "reactions_table", "runway_csv_files", "runway_json",
           "runway_settings_table", "sections_table", "shear_table", "wheel_loads_table"]
