"""The design-envelope part of ``trundle envelope``: listed in :mod:`trundle.report.sections`,
so the terminal summary, the CSV and JSON files and the HTML report all carry it for a model
with design tables ([[permanent]], [[design_load]], [[live_pattern]], [[lane_length_load]],
[[combination]], [design]).

Renders a :class:`trundle.workflows.design_envelope.DesignResult` computed by the caller: runs
no analysis and reads no file. Numbers are written by :mod:`trundle.report.format`; verdicts
are those of :mod:`trundle.analysis.checks` (via each check's ``verdict``).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from trundle.analysis.combinations import PERMANENT_ONLY
from trundle.report.design_figures import design_figures, figure_stem
from trundle.report.design_positions import (
    drawn,
    positions_caption,
    positions_csv,
    positions_figures,
    positions_json,
    positions_table,
)
from trundle.report.envelope_data import (
    EnvelopeResults,
    ExtraSection,
    TableData,
    display_factor,
    quantity_unit,
)
from trundle.report.envelope_tables import deflection_search_note
from trundle.report.export import csv_text, jsonable
from trundle.report.format import (
    decimals,
    fixed,
    number,
    position_decimals,
    verdict_cell,
)

TITLE = "Design envelope"
FAMILIES = ("moment", "shear_left", "shear_right", "reaction")
CASE_FAMILIES = ("moment", "shear_left", "shear_right", "deflection", "reaction")
FAMILY_WORDS = {"moment": "moment", "shear_left": "shear left", "shear_right": "shear right",
                "deflection": "deflection", "reaction": "reaction"}
DESIGN_CAUTION = (
    "Design envelopes: the published load models are transcribed from memory and the shipped "
    "combinations' factors must be verified against the edition in force; distribution, "
    "multiple presence and resistance are the engineer's.")
NOTES = (
    "Design value = Σ γmax·P where the permanent effect P increases it and γmin·P where it "
    "decreases it, plus γL × the live case's own extreme; every live case is combined on its "
    "own and the worst is shown with its name ('permanent loads only' where no live case "
    "acts). Deflections and the deflection check are at service level (no load factor).",
    "A case whose rule does not name an effect or region does not govern there; the "
    "'excluded by rule' column names the rule.",
)


def _display(result: Any, family: str, values: np.ndarray, units: Any) -> np.ndarray:
    return np.asarray(values, dtype=float) * display_factor(family, units)


def _cells(values: np.ndarray, places: int) -> list[str]:
    return [fixed(float(v), places) if np.isfinite(v) else "—" for v in values]


def _finite(*arrays: Any) -> list[float]:
    return [float(v) for a in arrays for v in np.asarray(a, dtype=float) if np.isfinite(v)]


def design_places(result: Any, name: str) -> dict[str, int]:
    """Decimals of one combination's design values per quantity (moment, shear, reaction),
    from the largest magnitude of each: every column of that quantity, in the tables and
    over the positions figure, writes its values with them."""
    env = result.designs[name]
    return {"moment": decimals(_finite(env.max("moment"), env.min("moment"))),
            "shear": decimals(_finite(*(env.values[f, w] for f in ("shear_left", "shear_right")
                                        for w in ("max", "min")))),
            "reaction": decimals(_finite(env.max("reaction"), env.min("reaction")))}


def _x_cells(x: Any, marked: Any = ()) -> list[str]:
    """A column of section positions, every row with the same decimals (" *" marks)."""
    x = [float(v) for v in x]
    places = position_decimals(x)
    marks = {round(float(m), 9) for m in marked}
    return [fixed(v, places) + (" *" if round(v, 9) in marks else "") for v in x]


def _excluded_at(result: Any, family: str, which: str, j: int) -> str:
    words = []
    for case in result.cases.values():
        text = case.excluded.get((family, which), ())
        if j < len(text) and text[j]:
            words.append(f"{case.name}: {text[j]}" if not text[j].startswith(case.name)
                         else text[j])
    return "; ".join(words)


def _governing_words(result: Any, name: str, family: str, which: str, j: int) -> str:
    """The governing case at a line, with what governs inside it ("hl93 / truck + lane")."""
    case_name = result.designs[name].governing[family, which][j]
    case = result.cases.get(case_name)
    if case is None:
        return case_name
    inner = case.governing.get((family, which), ())
    return f"{case_name} / {inner[j]}" if j < len(inner) and inner[j] else case_name


def _excluded_short(result: Any, j: int) -> str:
    """Which alternatives a rule excluded from the moment at section j, and on which side."""
    sides: dict[str, list[str]] = {}
    for which in ("max", "min"):
        for case in result.cases.values():
            text = case.excluded.get(("moment", which), ())
            if j < len(text) and text[j]:
                for e in text[j].split("; "):
                    sides.setdefault(f"{case.name} / {e.split(': ')[0]}", []).append(which)
    return "; ".join(f"{name} ({', '.join(w)})" for name, w in sides.items()) or "—"


def _rules_note(result: Any) -> str:
    rules = sorted({e for case in result.cases.values() for texts in case.excluded.values()
                    for t in texts for e in t.split("; ") if e})
    return ("Rules: " + "; ".join(rules) + ".") if rules else ""


def design_table(results: EnvelopeResults, name: str) -> TableData:
    """One combination's design envelope of moment and shear at the sections."""
    result, units = results.design, results.units
    env = result.designs[name]
    L = units.label("length")
    M = quantity_unit("moment", units)
    V = quantity_unit("shear_left", units)
    moment = [env.max("moment"), env.min("moment")]
    shear = [np.where(np.abs(env.max("shear_left")) > np.abs(env.max("shear_right")),
                      env.max("shear_left"), env.max("shear_right")),
             np.where(np.abs(env.min("shear_left")) > np.abs(env.min("shear_right")),
                      env.min("shear_left"), env.min("shear_right"))]
    places = design_places(result, name)
    dm, dv = places["moment"], places["shear"]
    critical = set(np.round(result.critical, 9))
    x_cells = _x_cells(result.sections, result.critical)
    rows = []
    for j in range(result.sections.size):
        rows.append((x_cells[j],
                     _cells(moment[0][j:j + 1], dm)[0],
                     _governing_words(result, name, "moment", "max", j),
                     _cells(moment[1][j:j + 1], dm)[0],
                     _governing_words(result, name, "moment", "min", j),
                     _cells(shear[0][j:j + 1], dv)[0], _cells(shear[1][j:j + 1], dv)[0],
                     _excluded_short(result, j)))
    return TableData(
        f"{name}: design envelope (factored) at the sections",
        (f"x\n[{L}]", f"M max\n[{M}]", "governing", f"M min\n[{M}]", "governing",
         f"V max\n[{V}]", f"V min\n[{V}]", "excluded by rule (moment)"), tuple(rows),
        (True, True, False, True, False, True, True, False),
        note=" ".join(t for t in (
            env.combination.describe() + ".", env.combination.provenance or "",
            "* critical shear section." if critical else "", _rules_note(result)) if t))


def reactions_table(results: EnvelopeResults, name: str) -> TableData:
    result, units = results.design, results.units
    env = result.designs[name]
    R = quantity_unit("reaction", units)
    high, low = env.max("reaction"), env.min("reaction")
    d = design_places(result, name)["reaction"]
    rows = tuple((str(k), _cells(high[k:k + 1], d)[0],
                  _governing_words(result, name, "reaction", "max", k),
                  _cells(low[k:k + 1], d)[0],
                  _governing_words(result, name, "reaction", "min", k))
                 for k in range(high.size))
    return TableData(f"{name}: design reactions", ("support", f"R max\n[{R}]", "governing",
                     f"R min\n[{R}]", "governing"), rows, (True, True, False, True, False))


def cases_table(results: EnvelopeResults) -> TableData:
    """Every live case's own extremes (unfactored, with its factors and impact)."""
    result, units = results.design, results.units
    M, V, R = (quantity_unit(f, units) for f in ("moment", "shear_left", "reaction"))
    D = units.deflection
    numbers_of, rest_of = [], []
    for case in result.cases.values():
        def worst(family: str, which: str, case: Any = case) -> float:
            values = _display(result, family, case.values[family, which], units)
            finite = values[np.isfinite(values)]
            if not finite.size:
                return float("nan")
            return float(finite.max() if which == "max" else finite.min())
        numbers = [worst("moment", "max"), worst("moment", "min"),
                   max(worst("shear_left", "max"), worst("shear_right", "max")),
                   min(worst("shear_left", "min"), worst("shear_right", "min")),
                   worst("deflection", "max"), worst("reaction", "max")]
        excluded = sorted({e for texts in case.excluded.values() for t in texts
                           for e in t.split("; ") if e})
        numbers_of.append(numbers)
        rest_of.append((case.rule or "—", "; ".join(excluded) or "—"))
    places = _quantity_places(numbers_of, ((0, 1), (2, 3), (4,), (5,)))
    rows = [(case_name, *[fixed(v, d) if np.isfinite(v) else "—"
                          for v, d in zip(numbers, places, strict=True)], *rest)
            for case_name, numbers, rest in zip(result.cases, numbers_of, rest_of, strict=True)]
    return TableData(
        "Every live case's own envelope (unfactored; impact and case factors included)",
        ("case", f"M max\n[{M}]", f"M min\n[{M}]", f"V max\n[{V}]", f"V min\n[{V}]",
         f"δ max\n[{D}]", f"R max\n[{R}]", "placement rule", "excluded by rule"), tuple(rows),
        (False, True, True, True, True, True, True, False, False),
        note="Every case's values at every section, with what governs inside the case (the "
             "alternative, the loaded spans) and the rule that excluded an alternative: "
             "design-envelope.csv and envelope.json.")


def _quantity_places(numbers_of: list[list[float]], quantities: tuple[tuple[int, ...], ...]
                     ) -> list[int]:
    """Decimals per column, shared by the columns of one quantity (M max and M min): the
    policy of :mod:`trundle.report.format`, so a zero reads "0" or "0.0" alike in both."""
    places = [0] * sum(len(q) for q in quantities)
    for columns in quantities:
        d = decimals([n[i] for n in numbers_of for i in columns])
        for i in columns:
            places[i] = d
    return places


def permanent_table(results: EnvelopeResults) -> TableData | None:
    result, units = results.design, results.units
    if not result.permanent:
        return None
    M, R = quantity_unit("moment", units), quantity_unit("reaction", units)
    numbers_of = [[float(np.nanmax(p.values["moment"])), float(np.nanmin(p.values["moment"])),
                   float(np.nanmax(p.values["reaction"]))] for p in result.permanent]
    places = _quantity_places(numbers_of, ((0, 1), (2,)))
    rows = [(p.name, p.category, *[fixed(v, d) for v, d in zip(n, places, strict=True)])
            for p, n in zip(result.permanent, numbers_of, strict=True)]
    return TableData("Permanent loads (unfactored, always present)",
                     ("load", "category", f"M max\n[{M}]", f"M min\n[{M}]", f"R max\n[{R}]"),
                     tuple(rows), (False, False, True, True, True))


def deflection_table(results: EnvelopeResults) -> TableData | None:
    result, units = results.design, results.units
    if not result.deflection:
        return None
    L, D = units.label("length"), units.deflection
    to_display = display_factor("deflection", units)
    d = decimals([v * to_display for c in result.deflection for v in (c.limit, c.value)])
    xd = position_decimals([c.x for c in result.deflection])
    rows = tuple((str(c.span + 1) + ("" if c.certified else " *"),
                  fixed(c.value * to_display, d), fixed(c.x, xd),
                  f"span/{c.ratio:g}", fixed(c.limit * to_display, d),
                  fixed(c.utilisation, 3) if np.isfinite(c.utilisation) else "—",
                  verdict_cell(c.verdict), c.governing or "—") for c in result.deflection)
    return TableData(
        f"Live-load deflection per span against the limit [{D}] (verify the limit)",
        ("span", f"δ\n[{D}]", f"at x\n[{L}]", "limit", f"allowable\n[{D}]", "utilisation",
         "verdict", "governing case"), rows,
        (True, True, True, False, True, True, False, False),
        note="Service level: no load factor. " + deflection_search_note(result.deflection)
             + " Loads acting together are summed each at its own worst (conservative).")


def critical_table(results: EnvelopeResults) -> TableData | None:
    result, units = results.design, results.units
    if not result.critical.size or not result.designs:
        return None
    L, V = units.label("length"), quantity_unit("shear_left", units)
    index = [int(np.argmin(np.abs(result.sections - x))) for x in result.critical]
    # one column of |V| for every combination: its decimals from the largest of them all
    d = decimals([max(abs(env.max(f)[j]), abs(env.min(f)[j]))
                  for env in result.designs.values() for j in index
                  for f in ("shear_left", "shear_right")])
    x_cells = _x_cells(result.critical)
    rows = []
    for name, env in result.designs.items():
        for x_cell, j in zip(x_cells, index, strict=True):
            left = max(abs(env.max("shear_left")[j]), abs(env.min("shear_left")[j]))
            right = max(abs(env.max("shear_right")[j]), abs(env.min("shear_right")[j]))
            family = "shear_left" if left >= right else "shear_right"
            which = "max" if abs(env.max(family)[j]) >= abs(env.min(family)[j]) else "min"
            rows.append((name, x_cell, fixed(max(left, right), d),
                         env.governing[family, which][j]))
    return TableData("Critical shear sections (design |V|, worse side)",
                     ("combination", f"x\n[{L}]", f"|V|\n[{V}]", "governing"), tuple(rows),
                     (False, True, True, False))


# ------------------------------------------------------------------------------------------
# files


def design_csv(results: EnvelopeResults) -> str:
    """Per section and support: every combination's design max/min with the governing case
    and the rules that excluded cases there, then every case's own max/min."""
    result, units = results.design, results.units
    rows: list[list[str]] = []
    row = rows.append

    for name, env in result.designs.items():
        for family in FAMILIES:
            unit = quantity_unit(family, units)
            for which in ("max", "min"):
                values = _display(result, family, env.values[family, which], units)
                for j, v in enumerate(values):
                    where = str(j) if family == "reaction" else number(result.sections[j])
                    excluded = "" if family == "reaction" else _excluded_at(result, family,
                                                                            which, j)
                    row([name, "design", where, family, which, number(v), unit,
                         env.governing[family, which][j], excluded])
    for case in result.cases.values():
        for family in CASE_FAMILIES:
            unit = quantity_unit(family, units)
            for which in ("max", "min"):
                values = _display(result, family, case.values[family, which], units)
                gov = case.governing.get((family, which), ())
                exc = case.excluded.get((family, which), ())
                for j, v in enumerate(values):
                    where = str(j) if family == "reaction" else number(result.sections[j])
                    row([case.name, "case", where, family, which, number(v), unit,
                         gov[j] if j < len(gov) else "", exc[j] if j < len(exc) else ""])
    return csv_text(["combination_or_case", "kind", "x_or_support", "family", "which", "value",
                     "unit", "governing", "excluded_by_rule"], rows)


def deflection_csv(results: EnvelopeResults) -> str:
    result, units = results.design, results.units
    to_display = display_factor("deflection", units)
    return csv_text(
        ["span", "deflection", "x", "ratio", "allowable", "utilisation", "verdict",
         "governing_case", "unit"],
        ([str(c.span + 1), number(c.value * to_display), number(c.x), number(c.ratio),
          number(c.limit * to_display), number(c.utilisation), verdict_cell(c.verdict),
          c.governing, units.deflection] for c in result.deflection))


def design_json(results: EnvelopeResults) -> dict[str, Any]:
    result, units = results.design, results.units
    return {
        "sections": jsonable(result.sections),
        "critical_shear_sections": jsonable(result.critical),
        "units": {f: quantity_unit(f, units, ascii_only=True) for f in CASE_FAMILIES},
        "combinations": {
            name: {"description": env.combination.describe(),
                   "provenance": env.combination.provenance,
                   "values": {f"{f} {w}": jsonable(_display(result, f, env.values[f, w],
                                                                 units))
                              for f in FAMILIES for w in ("max", "min")},
                   "governing": {f"{f} {w}": list(env.governing[f, w])
                                 for f in FAMILIES for w in ("max", "min")}}
            for name, env in result.designs.items()},
        "cases": {
            case.name: {"rule": case.rule,
                        "values": {f"{f} {w}": jsonable(_display(result, f,
                                                                      case.values[f, w], units))
                                   for f in CASE_FAMILIES for w in ("max", "min")},
                        "governing": {f"{f} {w}": list(case.governing.get((f, w), ()))
                                      for f in CASE_FAMILIES for w in ("max", "min")},
                        "excluded_by_rule": {f"{f} {w}": list(case.excluded.get((f, w), ()))
                                             for f in CASE_FAMILIES for w in ("max", "min")}}
            for case in result.cases.values()},
        "permanent": [{"name": p.name, "category": p.category} for p in result.permanent],
        "governing_positions": {name: positions_json(records)
                                for name, records in result.positions.items()},
        "deflection_checks": [
            {"span": c.span + 1, "deflection": c.value * display_factor("deflection", units),
             "x": c.x, "limit": f"span/{c.ratio:g}",
             "allowable": c.limit * display_factor("deflection", units),
             "utilisation": c.utilisation if np.isfinite(c.utilisation) else None,
             "verdict": c.verdict, "governing_case": c.governing}
            for c in result.deflection],
    }


def design_section(results: EnvelopeResults) -> ExtraSection | None:
    """The design-envelope section of the envelope outputs (None without design tables)."""
    if results.design is None:
        return None
    result = results.design
    tables: list[TableData | None] = [permanent_table(results), cases_table(results)]
    for name in result.designs:
        tables.append(design_table(results, name))
        tables.append(reactions_table(results, name))
    tables += [critical_table(results), deflection_table(results)]
    files: dict[str, bytes | str] = {"design-envelope.csv": design_csv(results)}
    if result.deflection:
        files["design-deflection.csv"] = deflection_csv(results)
    if result.positions:
        files["design-positions.csv"] = positions_csv(results)
    figures, captions, figure_tables = _figures(results)
    failing = [c for c in result.deflection if c.verdict != "PASS"]
    notes = list(NOTES)
    if failing:
        notes.insert(0, "FAILING CHECK: live-load deflection EXCEEDS the limit in span(s) "
                     + ", ".join(str(c.span + 1) for c in failing) + ".")
    if not result.designs:
        notes.append("No [[combination]]: only each case's own envelope is shown.")
    for name, records in result.positions.items():
        if records and not drawn(records):
            notes.append(f"{name}: permanent loads only govern (no live load), so there are "
                         "no live-load positions to draw.")
    unreproduced = [r for records in result.positions.values() for r in records
                    if r.governed and not r.reproduced]
    if unreproduced:
        notes.insert(0, "NOT REPRODUCED: the live-load position found again for "
                     f"{len(unreproduced)} governing value(s) does not give the case's "
                     "tabulated value; the values stand, their drawings are marked; check "
                     "by hand.")
    if any(PERMANENT_ONLY in g for env in result.designs.values()
           for g in env.governing.values()):
        notes.append("'permanent loads only': no live case applies or makes it worse there.")
    return ExtraSection(TITLE, tables=tuple(t for t in tables if t is not None),
                        notes=tuple(notes), figures=figures, files=files,
                        data=design_json(results), captions=captions,
                        cautions=(DESIGN_CAUTION,), figure_tables=figure_tables)


def _figures(results: EnvelopeResults) -> tuple[dict[str, Any], dict[str, str],
                                                 dict[str, TableData]]:
    """Per combination: its moment and shear figures, then its critical load positions
    (with the table that is their key)."""
    result = results.design
    drawn_figures, captions = design_figures(results)
    figures: dict[str, Any] = {}
    tables: dict[str, TableData] = {}
    for name in result.designs:
        for kind in ("moment", "shear"):
            stem = figure_stem(name, kind)
            if stem in drawn_figures:
                figures[stem] = drawn_figures[stem]
        records = result.positions.get(name, ())
        places = design_places(result, name)
        drawn_parts = positions_figures(results, records, places)
        stem = ""
        for k, figure in enumerate(drawn_parts, start=1):
            stem = figure_stem(name, "positions" + (f"-{k}" if k > 1 else ""))
            figures[stem] = figure
            captions[stem] = positions_caption(results, name, k, len(drawn_parts))
        table = positions_table(results, name, records, places)
        if stem and table is not None:  # the key under the last part
            tables[stem] = table
    for stem, figure in drawn_figures.items():  # anything not yet placed keeps its place
        figures.setdefault(stem, figure)
    return figures, captions, tables
