"""Critical load positions of the design envelope: per combination, the governing design
values of each span and support drawn on the beam with the live load where it stands.

Turns the design workflow's records (:class:`trundle.workflows.design_records.DesignRecord`:
the design value, the governing case, and the live configuration as an
:class:`~trundle.analysis.records.ExtremeRecord`) into words and the panels of
:mod:`trundle.report.positions_figure` (the same elevation, arrows and hatching as the
moving-load report). Runs no analysis. The value over each panel is the design table's, to the
decimals of its column (``places``), so the drawing and the tables cannot disagree.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from matplotlib.figure import Figure

from trundle.analysis.combinations import PERMANENT_ONLY
from trundle.analysis.records import ExtremeRecord
from trundle.report.envelope_data import (
    EnvelopeResults,
    Extreme,
    TableData,
    direction_arrow,
    quantity_unit,
)
from trundle.report.export import csv_text
from trundle.report.format import fixed, number, position, position_decimals
from trundle.report.positions_figure import Panel, positions_figure
from trundle.workflows.design_records import DesignRecord

QUANTITY = {"moment": "moment", "shear_left": "shear", "shear_right": "shear",
            "reaction": "reaction"}
SYMBOL = {"moment": "M", "shear_left": "V left", "shear_right": "V right", "reaction": "R"}


def quantity(record: DesignRecord) -> str:
    """The design-table quantity a record's value belongs to: moment, shear or reaction."""
    return QUANTITY[record.family]


def label(record: DesignRecord) -> str:
    """Where the value is: "span 2", "spans 2, 3" or "support 1"."""
    if record.family == "reaction":
        return f"support {record.index}"
    spans = ", ".join(str(s + 1) for s in record.spans)
    return f"{'spans' if len(record.spans) > 1 else 'span'} {spans}"


def value_text(record: DesignRecord, places: Mapping[str, int]) -> str:
    """The design value as its design-table column writes it."""
    return fixed(record.value, places[quantity(record)])


def _stretches(loaded: Sequence[tuple[float, float]]) -> str:
    return ", ".join(f"{position(a)}–{position(b)}" for a, b in loaded) or "nothing"


def load_words(load: ExtremeRecord, length_unit: str) -> str:
    """Where the governing load stands: a moving load's direction and lead axle, a placed or
    lane load's loaded stretches [length]; loads acting together part by part, each named."""
    if load.placement == "not loaded":
        return "not loaded"
    parts = load.parts or (load,)
    words = []
    for part in parts:
        name = f"{part.case} " if load.parts else ""
        if part.placement:
            text = f"{name}loaded {_stretches(part.loaded)}"
            if part.lead_x is not None:
                text += f", point load at {position(part.lead_x)}"
        else:
            text = (f"{name}{direction_arrow(part.direction)} lead axle at "
                    f"{position(part.lead_x)}")
            if part.attached:
                text += ", its uniform load on " + _stretches(
                    [(a, b) for a, b, _ in part.attached])
        words.append(text)
    return "; ".join(words) + f" [{length_unit}]"


def searched_words(load: ExtremeRecord) -> str:
    return "; ".join(f"{name} = {position(v)}" for name, v in load.searched)


def governing_words(record: DesignRecord) -> str:
    """The governing live case, with what governs inside it ("hl93 / truck + lane")."""
    return f"{record.case} / {record.alternative}" if record.alternative else record.case


def _extreme(record: DesignRecord, words: str) -> Extreme:
    """The record as the positions figure draws it (the value is the design value)."""
    load = record.load
    assert load is not None
    loaded = tuple(sorted([*load.loaded, *((a, b) for a, b, _ in load.attached)]))
    return Extreme(record.family, record.which, record.value, record.x, governing_words(record),
                   load.direction, load.lead_x, load.axles, loaded, words)


def drawn(records: Sequence[DesignRecord]) -> list[DesignRecord]:
    """The records a live load governs (a value of permanent loads only has nothing to draw)."""
    return [r for r in records if r.governed]


def panels(results: EnvelopeResults, records: Sequence[DesignRecord],
           places: Mapping[str, int]) -> list[Panel]:
    """One panel per record a live load governs, lettered (a), (b) … as in its table."""
    units = results.units
    L = units.label("length")
    out = []
    for letter, record in zip(_letters(), drawn(records), strict=False):
        unit = quantity_unit(record.family, units)
        heading = (f"({letter}) {label(record)}: {SYMBOL[record.family]} {record.which} = "
                   f"{value_text(record, places)} {unit} at x = {position(record.x)} {L}")
        assert record.load is not None
        words = load_words(record.load, L)
        if not record.reproduced:
            words = "NOT REPRODUCED, check by hand: " + words
        mark = (f"R {record.which}" if record.family == "reaction"
                else f"{SYMBOL[record.family].split()[0]} {record.which}")
        out.append(Panel(heading, _extreme(record, words), f"({letter}) {mark}"))
    return out


def _letters() -> list[str]:
    single = [chr(c) for c in range(ord("a"), ord("z") + 1)]
    return single + [a + b for a in single for b in single]


PANELS_PER_FIGURE = 8  # four rows of two: one figure stays on one printed page


def positions_figures(results: EnvelopeResults, records: Sequence[DesignRecord],
                      places: Mapping[str, int]) -> list[Figure]:
    """The panels of one combination, two to a row, at most :data:`PANELS_PER_FIGURE` to a
    figure (none when no live load governs)."""
    items = panels(results, records, places)
    return [positions_figure(results, list(items[i:i + PANELS_PER_FIGURE]))
            for i in range(0, len(items), PANELS_PER_FIGURE)]


def positions_caption(results: EnvelopeResults, combination: str, part: int = 1,
                      parts: int = 1) -> str:
    L = results.units.label("length")
    of = f" (part {part} of {parts})" if parts > 1 else ""
    return (f"{combination}: critical load positions{of} [{L}] for the governing design values "
            "of each span (largest and smallest moment, largest shear) and each support "
            "(largest reaction; smallest where it lifts): the live load of the governing "
            "case where it stands (arrows: concentrated loads, showing position not size; "
            "hatched: loaded stretches; hollow dashed arrow: a load beyond an end of the "
            "beam; dashed line: the section or support). Values are the design table's; the "
            "table after the last part splits each into its permanent and live parts.")


def positions_table(results: EnvelopeResults, combination: str,
                    records: Sequence[DesignRecord], places: Mapping[str, int]
                    ) -> TableData | None:
    """The key to the panels: each governing design value, its parts and where the live load
    stands in words (every row a live load governs is drawn, lettered as its panel)."""
    rows_of = drawn(records)
    if not rows_of:
        return None
    units = results.units
    L = units.label("length")
    x_places = position_decimals([r.x for r in rows_of])
    rows = []
    for letter, r in zip(_letters(), rows_of, strict=False):
        d = places[quantity(r)]
        unit = quantity_unit(r.family, units)
        load = r.load
        assert load is not None
        words = load_words(load, L)
        if not r.reproduced:
            words += " (NOT REPRODUCED: the configuration found again differs from the case's " \
                     "value; check by hand)"
        searched = searched_words(load)
        live = fixed(r.live, d)
        sums = (f"{fixed(r.value, d)} = {fixed(r.permanent, d)} + {r.live_factor:g} × "
                + (f"({live})" if live.startswith("-") else live))
        rows.append((f"({letter})", label(r), f"{SYMBOL[r.family]} {r.which} [{unit}]",
                     fixed(r.x, x_places), sums, governing_words(r),
                     words + (f"; {searched}" if searched else "")))
    return TableData(
        f"{combination}: governing design values and where the live load stands",
        ("", "where", "effect", f"x\n[{L}]", "design = permanent + γL × live",
         "governing case", "live load position"), tuple(rows),
        (False, False, False, True, False, False, False),
        note="The design value is the design table's; the permanent part is factored; 'live' "
             "is the governing case's own extreme (impact and case factors included). → "
             "travels towards +x, ← towards −x; the lead axle is the first axle as listed. "
             "Every position and axle: design-positions.csv.")


def positions_csv(results: EnvelopeResults) -> str:
    """Every governing design value with its parts and where the live load stands."""
    units = results.units
    rows = []
    for combination, records in results.design.positions.items():
        for r in records:
            load = r.load
            unit = quantity_unit(r.family, units)
            where = str(r.index) if r.family == "reaction" else number(r.x)
            rows.append([
                combination, r.family, r.which, where, number(r.x), number(r.value), unit,
                number(r.permanent), number(r.live_factor), number(r.live),
                r.case, r.alternative, number(r.alternative_factor),
                " ".join(str(s + 1) for s in r.spans),
                "" if load is None else str(load.direction),
                "" if load is None else number(load.lead_x),
                "" if load is None else " ".join(number(a) for a in load.axles),
                "" if load is None else " ".join(f"{number(a)}..{number(b)}"
                                                  for a, b in load.loaded),
                "" if load is None else " ".join(f"{number(a)}..{number(b)}@{number(w)}"
                                                  for a, b, w in load.attached),
                "" if load is None else "; ".join(f"{n}={number(v)}" for n, v in load.searched),
                "" if r.case == PERMANENT_ONLY else ("yes" if r.reproduced else "NO")])
    return csv_text(["combination", "family", "which", "x_or_support", "x", "value", "unit",
                     "permanent_factored", "live_factor", "live", "governing_case",
                     "alternative", "alternative_factor", "spans", "direction", "lead_x",
                     "axles", "loaded_stretches", "attached_uniform", "searched",
                     "reproduced"], rows)


def positions_json(records: Sequence[DesignRecord]) -> list[dict]:
    out = []
    for r in records:
        load = r.load
        out.append({
            "family": r.family, "which": r.which, "x": r.x, "index": r.index,
            "spans": [s + 1 for s in r.spans], "value": r.value, "permanent": r.permanent,
            "live_factor": r.live_factor, "live": r.live, "case": r.case,
            "alternative": r.alternative, "alternative_factor": r.alternative_factor,
            "reproduced": r.reproduced,
            "load": None if load is None else {
                "direction": load.direction, "lead_x": load.lead_x, "axles": list(load.axles),
                "loaded": [list(s) for s in load.loaded],
                "attached_uniform": [list(s) for s in load.attached],
                "searched": {n: v for n, v in load.searched},
                "parts": [{"case": p.case, "axles": list(p.axles),
                           "loaded": [list(s) for s in p.loaded]} for p in load.parts]}})
    return out
