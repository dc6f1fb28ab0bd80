"""The envelope of a model file's loads, gathered for presentation: one place that decides
what every table, figure, CSV/JSON file and the HTML report shows.

:func:`collect` gathers the model, its :class:`~trundle.io.outputs.Provenance` and the results
the workflows computed (the moving-load result with its records, the crane runway, the design
envelope); it runs no analysis. :func:`describe` turns one record
(:class:`trundle.analysis.records.ExtremeRecord`: numbers and names) into words and display
units (:class:`Extreme`). Other workflows (the crane runway, the design envelope) add their own
part of the outputs as section providers passed to :func:`collect` (composed in
:mod:`trundle.report.sections`); every output renders the extra sections it is given.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.envelope import AbsoluteExtreme, Envelope
from trundle.analysis.records import (
    SECTION_FAMILIES,
    EnvelopeRecords,
    ExtremeRecord,
    searched_names,
    span_faces,
)
from trundle.core.beam import Beam, Spring
from trundle.io.cranes import cranes_of
from trundle.io.loads import LoadEntry, loads_of
from trundle.io.modelfile import Model, ModelFileError
from trundle.io.outputs import Provenance
from trundle.io.units import UnitSystem
from trundle.loads.cases import Together
from trundle.loads.patterns import UniformLoad
from trundle.loads.vehicles import Train, Vehicle
from trundle.report.format import length as _length
from trundle.report.format import position as _position
from trundle.workflows.crane_runway import RunwayResult
from trundle.workflows.design_envelope import DesignResult
from trundle.workflows.moving_loads import MovingLoadsResult

FAMILY_NAMES = {"moment": "moment", "shear_left": "shear left", "shear_right": "shear right",
                "deflection": "deflection", "reaction": "reaction",
                "support_moment": "support moment"}
SIGN_CONVENTIONS = (
    ("x", "from 0 at the left end of the beam; supports numbered 0, 1, 2 … from the left"),
    ("loads", "downward positive"),
    ("moment", "positive sagging"),
    ("shear", "V(x) = upward resultant of everything left of the section; at a jump, "
              "'left' and 'right' are the limits just left and right of the section"),
    ("deflection", "positive downward"),
    ("reaction", "positive upward"),
    ("support moment", "the couple the support applies to the beam, positive "
                       "counter-clockwise"),
    ("direction of travel", "→ towards +x (the first axle as listed leads), ← towards −x"),
)


# ------------------------------------------------------------------------------------------
# extra sections (cranes and later features add theirs)


@dataclass(frozen=True)
class ExtraSection:
    """A part of the envelope outputs contributed by another feature.

    Fields
    ------
    title : heading in the terminal and the HTML report
    tables : tables shown in the terminal and the report
    notes : short paragraphs shown under the tables
    figures : name -> matplotlib Figure; written as ``<name>.<format>`` and embedded
    files : extra output files, name -> finished content
    data : JSON-able content, stored under ``extra[title]`` in envelope.json
    detail_tables : long tables shown in the HTML report only (the terminal would scroll
        past them; their numbers are in the section's files too)
    captions : figure name -> caption in the HTML report (default: the name)
    cautions : added to the cautions of every output (terminal, JSON, report)
    detail_files : detail table title -> the file that has every row of it (the report
        shows a per-section table at the tenth points and supports and says where the rest is)
    terminal : what ``trundle envelope`` prints of this section by default, in order (tables
        and lines; see :mod:`trundle.report.terminal_view`); None: its tables, per-section
        ones cut to the tenth points and supports and check tables summarised
    figure_tables : figure name -> a table the HTML report shows right under that figure
        (its key: what each panel shows, in words and numbers)
    """

    title: str
    tables: tuple[TableData, ...] = ()
    notes: tuple[str, ...] = ()
    figures: dict[str, Any] = field(default_factory=dict)
    files: dict[str, bytes | str] = field(default_factory=dict)
    data: Any = None
    detail_tables: tuple[TableData, ...] = ()
    captions: dict[str, str] = field(default_factory=dict)
    cautions: tuple[str, ...] = ()
    detail_files: dict[str, str] = field(default_factory=dict)
    terminal: tuple[Any, ...] | None = None
    figure_tables: dict[str, TableData] = field(default_factory=dict)


SectionProvider = Callable[["EnvelopeResults"], "ExtraSection | None"]


@dataclass(frozen=True)
class TableData:
    """A table as text cells, rendered by the terminal and by the HTML report alike.

    Fields
    ------
    title : caption
    columns : headers, each with its unit in brackets where it has one
    rows : cells as text
    numeric : per column, True if right-aligned (numbers)
    note : a line under the table
    groups : optional index of the first row of each group (for rules between spans)
    """

    title: str
    columns: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    numeric: tuple[bool, ...] = ()
    note: str = ""
    groups: tuple[int, ...] = ()


# ------------------------------------------------------------------------------------------
# results


@dataclass(frozen=True, eq=False)
class EnvelopeResults:
    """Everything the envelope outputs show.

    Fields
    ------
    model : the model read from the file
    provenance : where the results come from (model file as the user named it, its SHA-256,
        trundle version, date, the model's title and description)
    loads : the model's [[load]] entries (their cases are ``env.cases``); may be empty when
        the model has cranes
    env : the envelope of the loads over the model's sections (None without loads)
    records : the records of ``env`` (what governs each extreme; None without loads)
    absolute : per span and per "max"/"min", the worst absolute moment over all loads
    extra : sections added by other workflows
    runway : the crane runway result (analyse_runway, run by the caller) or None
    design : the design-envelope result (workflows.design_envelope.run, run by the caller)
        or None
    """

    model: Model
    provenance: Provenance
    loads: tuple[LoadEntry, ...]
    env: Envelope | None
    records: EnvelopeRecords | None
    absolute: tuple[dict[str, AbsoluteExtreme | None], ...]
    extra: tuple[ExtraSection, ...] = ()
    runway: RunwayResult | None = None
    design: DesignResult | None = None
    cache: dict[Any, Any] = field(default_factory=dict, repr=False, compare=False)

    @property
    def units(self) -> UnitSystem:
        return self.model.units

    @property
    def beam(self) -> Beam:
        return self.model.beam

    @property
    def sections(self) -> NDArray[np.float64]:
        return self.env.sections if self.env is not None else self.model.sections

    @property
    def model_file(self) -> str:
        return self.provenance.model_file

    @property
    def sha256(self) -> str:
        return self.provenance.sha256

    @property
    def date(self) -> str:
        return self.provenance.date

    @property
    def version(self) -> str:
        return self.provenance.version

    @property
    def has_loads(self) -> bool:
        """Whether the model has [[load]] tables (and so an envelope of them)."""
        return self.env is not None


def collect(model: Model, provenance: Provenance, moving: MovingLoadsResult | None = None,
            providers: Sequence[SectionProvider] = (), runway: RunwayResult | None = None,
            design: DesignResult | None = None) -> EnvelopeResults:
    """Gather what the outputs show: the model, where it comes from, the moving-load result
    (computed by :func:`trundle.workflows.moving_loads.run`; None for a model without
    ``[[load]]`` tables) and the sections the ``providers`` add. Runs no analysis of its own.

    Raises ModelFileError if the model has neither ``[[load]]`` nor ``[[crane]]`` tables.
    """
    entries = loads_of(model)
    if not entries and not cranes_of(model) and design is None:
        raise ModelFileError(model.name, "load", "expected at least one [[load]] table (a "
                             "vehicle, a train, a placed uniform load or a library load "
                             "model), [[crane]] tables with a [runway] table, or design tables "
                             "([[design_load]], [[permanent]], …), see "
                             "docs/model-file.md; found nothing")
    if bool(entries) != (moving is not None):
        raise ValueError("collect: a moving-load result is needed exactly when the model has "
                         "[[load]] tables")
    env = moving.env if moving is not None else None
    absolute = moving.absolute if moving is not None else ()
    records = moving.records if moving is not None else None
    results = EnvelopeResults(model, provenance, entries, env, records, absolute,
                              runway=runway, design=design)
    extra = tuple(s for s in (p(results) for p in providers) if s is not None)
    if extra:
        results = dataclasses.replace(results, extra=extra)
    return results


# ------------------------------------------------------------------------------------------
# one extreme in words


@dataclass(frozen=True)
class Extreme:
    """One extreme and what governs it, in display units.

    Fields
    ------
    family : moment, shear_left, shear_right, deflection, reaction, support_moment
    which : "max" or "min"
    value : in display units (deflection in mm or in)
    x : the section (or the support's position) [length]
    load : the governing load's name; "" when no load makes it worse than the empty beam
    direction : +1 towards +x, −1 towards −x, 0 placed load or empty beam
    lead_x : x of the lead (first listed) axle, or of a placed load's point load [length]
    axles : x of every concentrated load of the governing position [length]
    loaded : stretches loaded by a placed uniform load [(x0, x1), …] [length]
    placement : how a placed load was placed, in words ("spans 1, 3", "where the line is
        positive")
    side_note : where an axle standing at the section stands: on it, or just left or right of
        it (for shear, whose line jumps there); "" when no axle stands at the section
    searched : ((label, value), …) the searched spacings and gaps found [length]
    certified : for an extreme anywhere in a span: True when it is the exact extreme (see
        ``AbsoluteExtreme.certified``), False when a sampled search found it; True elsewhere
    """

    family: str
    which: str
    value: float
    x: float
    load: str = ""
    direction: int = 0
    lead_x: float | None = None
    axles: tuple[float, ...] = ()
    loaded: tuple[tuple[float, float], ...] = ()
    placement: str = ""
    side_note: str = ""
    searched: tuple[tuple[str, float], ...] = ()
    certified: bool = True

    @property
    def governed(self) -> bool:
        return bool(self.load)


def display_factor(family: str, units: UnitSystem) -> float:
    """Core value × factor = displayed value (deflection m → mm, ft → in)."""
    if family == "deflection":
        return units.factor(units.length, units.deflection)
    return 1.0


def quantity_unit(family: str, units: UnitSystem, ascii_only: bool = False) -> str:
    if family == "deflection":
        return units.deflection
    quantity = "moment" if family in ("moment", "support_moment") else "force"
    return units.ascii_label(quantity) if ascii_only else units.label(quantity)


parameter_labels = searched_names  # the names of a load's searched spacings and gaps


def describe(record: ExtremeRecord, units: UnitSystem, beam: Beam) -> Extreme:
    """A record (numbers and names) in words and display units."""
    value = record.value * display_factor(record.family, units) + 0.0
    if not record.governed:
        return Extreme(record.family, record.which, value, record.x)
    if record.together:
        return _describe_together(record, value, beam)
    return _describe_case(record, value, beam)


def _side_note(record: ExtremeRecord) -> str:
    if record.placement:
        return (f"point load just {'right' if record.point_side > 0 else 'left'} of the "
                "section" if record.point_side else "")
    return {"on": "axle on the section", "left": "axle just left of the section",
            "right": "axle just right of the section", "": ""}[record.face]


def _describe_case(record: ExtremeRecord, value: float, beam: Beam) -> Extreme:
    r = record
    if r.placement:  # a placed uniform load
        placement = _placement_words(r.placement, r.which, r.loaded, beam)
        if r.lead_x is not None:
            placement += f"; point load at {_position(r.lead_x)}"
        return Extreme(r.family, r.which, value, r.x, r.case, 0, r.lead_x, r.axles, r.loaded,
                       placement, _side_note(r))
    return Extreme(r.family, r.which, value, r.x, r.case, r.direction, r.lead_x, r.axles, (),
                   "", _side_note(r), r.searched)


def _describe_together(record: ExtremeRecord, value: float, beam: Beam) -> Extreme:
    """Loads acting together: each part in words, then merged (direction and lead axle from
    the first moving part, every axle, every loaded stretch)."""
    r = record
    if not r.parts:
        return Extreme(r.family, r.which, value, r.x, r.case, placement="not loaded")
    words, notes = [], []
    for part in r.parts:
        e = _describe_case(part, value, beam)
        if part.placement:
            words.append(f"{part.case}: {e.placement.removeprefix('placed: ')}")
        else:
            words.append(f"{part.case} {direction_arrow(e.direction)} lead axle at "
                         f"{_position(e.lead_x)}")
        if e.side_note:
            notes.append(f"{part.case}: {e.side_note}")
    return Extreme(r.family, r.which, value, r.x, r.case, r.direction, r.lead_x, r.axles,
                   r.loaded, "; ".join(words), "; ".join(notes), r.searched)


def _placement_words(placement: str, which: str, loaded: Sequence[tuple[float, float]],
                     beam: Beam) -> str:
    if placement == "anywhere":
        return f"where the line is {'positive' if which == 'max' else 'negative'}"
    spans = loaded_spans(loaded, beam)
    if not spans:
        return "not loaded"
    if len(spans) == beam.n_spans:
        return "placed: all spans"
    label = "span" if len(spans) == 1 else "spans"
    return f"placed: {label} " + ", ".join(str(s + 1) for s in spans)


def loaded_spans(loaded: Sequence[tuple[float, float]], beam: Beam) -> list[int]:
    """Indices of the spans covered by ``loaded`` (whole spans, as placed span by span)."""
    ends = beam.support_positions
    tolerance = 1e-9 * beam.length
    out = []
    for i, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        middle = 0.5 * (a + b)
        if any(x0 - tolerance <= middle <= x1 + tolerance for x0, x1 in loaded):
            out.append(i)
    return out


def direction_arrow(direction: int) -> str:
    return {1: "→", -1: "←"}.get(direction, "placed")


def direction_ascii(direction: int) -> str:
    return {1: "towards +x", -1: "towards -x"}.get(direction, "placed")


def searched_text(extreme: Extreme, unit: str = "") -> str:
    suffix = f" {unit}" if unit else ""
    return "; ".join(f"{label} = {_position(v)}{suffix}" for label, v in extreme.searched)


# ------------------------------------------------------------------------------------------
# per section, per span, per support


def section_extremes(results: EnvelopeResults, family: str, which: str) -> list[Extreme]:
    """One Extreme per section for a section family (described once per results)."""
    key = ("sections", family, which)
    if key not in results.cache:
        results.cache[key] = [describe(r, results.units, results.beam)
                              for r in results.records.at_sections(family, which)]
    return results.cache[key]


def support_extremes(results: EnvelopeResults, family: str, which: str
                     ) -> dict[int, Extreme]:
    """Per support that has the effect: its Extreme (reaction or support moment)."""
    return {k: describe(r, results.units, results.beam)
            for k, r in results.records.at_supports(family, which).items()}


def span_of_section(beam: Beam, x: float) -> tuple[int, int | None]:
    """(span index, support index or None): a support belongs to the span on its left."""
    tolerance = 1e-9 * beam.length
    support = None
    for k, xs in enumerate(beam.support_positions):
        if abs(xs - x) <= tolerance:
            support = k
    return beam.span_of(x), support


@dataclass(frozen=True)
class SpanSummary:
    """The governing extremes in one span (sections from its left to its right support).

    Fields
    ------
    span : index
    start, end : x of its supports [length]
    moment_max, moment_min : at the sections
    absolute_max, absolute_min : anywhere in the span (None if not computed)
    shear_max, shear_min : at the sections, right of the left support and left of the right
    deflection_max, deflection_min : at the sections
    """

    span: int
    start: float
    end: float
    moment_max: Extreme
    moment_min: Extreme
    absolute_max: Extreme | None
    absolute_min: Extreme | None
    shear_max: Extreme
    shear_min: Extreme
    deflection_max: Extreme
    deflection_min: Extreme


def span_summaries(results: EnvelopeResults) -> list[SpanSummary]:
    """One SpanSummary per span (computed once per results)."""
    if "span_summaries" in results.cache:
        return results.cache["span_summaries"]
    beam = results.beam
    ends = beam.support_positions
    per_family = {(f, w): section_extremes(results, f, w) for f in SECTION_FAMILIES
                  for w in ("max", "min")}
    out = []
    for span, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        # shear inside the span: right of its left support, left of its right support
        inside, rights, lefts = span_faces(beam, results.sections, span)
        if inside.size == 0:  # sections chosen elsewhere: nothing to report for this span
            continue
        shear = {w: _worst([_worst([per_family[("shear_right", w)][i] for i in rights], w),
                            _worst([per_family[("shear_left", w)][i] for i in lefts], w)], w)
                 for w in ("max", "min")}
        at = {(f, w): _worst([per_family[(f, w)][i] for i in inside], w)
              for f in ("moment", "deflection") for w in ("max", "min")}
        absolute = {w: (describe_absolute(results, results.absolute[span][w])
                        if results.absolute[span][w] is not None else None)
                    for w in ("max", "min")}
        out.append(SpanSummary(span, float(a), float(b), at[("moment", "max")],
                               at[("moment", "min")], absolute["max"], absolute["min"],
                               shear["max"], shear["min"], at[("deflection", "max")],
                               at[("deflection", "min")]))
    results.cache["span_summaries"] = out
    return out


def _worst(candidates: Sequence[Extreme | None], which: str) -> Extreme | None:
    """The largest (max) or smallest (min) of the candidates; the first of equals."""
    present = [c for c in candidates if c is not None]
    if not present:
        return None
    sign = 1.0 if which == "max" else -1.0
    return max(present, key=lambda e: sign * e.value)


def describe_absolute(results: EnvelopeResults, extreme: AbsoluteExtreme) -> Extreme:
    return dataclasses.replace(describe(results.records.absolute(extreme), results.units,
                                        results.beam), certified=extreme.certified)


def concurrent_shear(results: EnvelopeResults, which: str) -> tuple[NDArray[np.float64],
                                                                     NDArray[np.float64]]:
    """Shear just left and just right of each section under the load that gives its max (or
    min) moment [force]."""
    return results.records.concurrent_shear(which)


# ------------------------------------------------------------------------------------------
# loads in words


def load_definition(entry: LoadEntry, units: UnitSystem) -> str:
    """The load as an engineer would write it down, in the model's units."""
    return describe_load(entry.load, units)


def describe_load(load: Any, units: UnitSystem) -> str:
    force, length = units.label("force"), units.label("length")
    if isinstance(load, Together):  # its parts are described in their own rows
        return " + ".join(part.name for part in load.parts)
    if isinstance(load, Vehicle):
        return _vehicle_words(load, force, length) + _directions_words(load)
    if isinstance(load, Train):
        parts = []
        for i, vehicle in enumerate(load.vehicles):
            parts.append(f"vehicle {i + 1} ({vehicle.name}): "
                         + _vehicle_words(vehicle, force, length))
            if i < len(load.gaps):
                gap = load.gaps[i]
                parts.append(f"gap {_number(gap[0])} to {_number(gap[1])} {length} (searched)"
                             if isinstance(gap, tuple) else f"gap {_number(gap)} {length}")
        for label, part in (("ahead", load.ahead), ("behind", load.behind)):
            if part is not None:
                extent = "unlimited" if math.isinf(part.length) else \
                    f"over {_length(part.length)} {length}"
                parts.append(f"uniform {_number(part.w)} {units.label('distributed load')} "
                             f"{label}, {extent}, {_length(part.gap)} {length} clear of the "
                             "nearest axle")
        return "; ".join(parts) + _directions_words(load)
    if isinstance(load, UniformLoad):
        where = {"anywhere": "placed wherever the influence line is adverse",
                 "spans": "placed span by span, the worst pattern of whole spans",
                 "everywhere": "on the whole beam or nowhere"}[load.placement]
        text = f"{_number(load.w)} {units.label('distributed load')} {where}"
        if load.point_load:
            text += f", with {_number(load.point_load)} {force} at the worst point"
        return text
    return str(load)


def _vehicle_words(vehicle: Vehicle, force: str, length: str) -> str:
    axles = ", ".join(_number(p) for p in vehicle.loads)
    text = f"axles {axles} {force}"
    if vehicle.spacings:
        text += "; spacings " + ", ".join(_spacing_words(s) for s in vehicle.spacings)
        text += f" {length}"
    return text


def _spacing_words(value: float | tuple[float, float]) -> str:
    if isinstance(value, tuple):
        return f"{_number(value[0])} to {_number(value[1])} (searched)"
    return _number(value)


def _directions_words(load: Any) -> str:
    return "; both directions" if load.reversible else "; one way, towards +x"


def _number(value: float) -> str:
    return f"{float(value) + 0.0:.5g}"


def factors_words(entry: LoadEntry) -> str:
    if entry.kind == "together":
        return "each part's own"
    words = [f"{name} × {value:g}" for name, value in entry.case.factors]
    if entry.case.load_factor != 1.0:
        words.append(f"load factor × {entry.case.load_factor:g} (not on deflection)")
    return ", ".join(words) if words else "none"


def impact_words(entry: LoadEntry) -> str:
    if entry.kind == "uniform":
        return "—"
    if entry.kind == "together":
        return "each part's own"
    return f"{100 * entry.case.impact:.4g} %"


def product_words(entry: LoadEntry) -> str:
    """The product of the factors, as shown in the loads table."""
    if entry.kind == "together":
        return "each part's own"
    return f"{entry.case.multiplier:.4g}"


def kind_words(kind: str) -> str:
    return {"vehicle": "vehicle", "train": "train", "uniform": "placed uniform",
            "together": "acting together", "design case": "design case"}[kind]


def support_kind_words(support: Any) -> str:
    if isinstance(support, Spring):
        return "spring" + (" (with rotational spring)" if support.kr is not None else "")
    return str(support)
