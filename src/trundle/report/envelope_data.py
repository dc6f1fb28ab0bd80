"""The envelope of a model file's loads, gathered for presentation: one place that decides
what every table, figure, CSV/JSON file and the HTML report shows.

:func:`collect` runs the envelope (every ``[[load]]`` over the model's sections) and the
absolute moment extremes per span, and keeps what traceability needs: the trundle version, the
model file's SHA-256, the date. :func:`describe_extreme` turns one governing configuration into
words and display units. Other workflows (the crane runway) add their own part of the outputs as
section providers passed to :func:`collect` (composed in :mod:`trundle.report.sections`);
every output renders the extra sections it is given.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.envelope import AbsoluteExtreme, Envelope, Governing, kind_and_side
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

# The section families of the envelope, in the order of the CSV columns.
SECTION_FAMILIES = ("moment", "shear_left", "shear_right", "deflection")
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
    model_file : the file as the user named it
    sha256 : SHA-256 of the model file's bytes (hex)
    date : when the results were computed (UTC, ISO 8601)
    version : trundle version
    loads : the model's [[load]] entries (their cases are ``env.cases``); may be empty when
        the model has cranes
    env : the envelope of the loads over the model's sections (None without loads)
    absolute : per span and per "max"/"min", the worst absolute moment over all loads
    extra : sections added by other workflows
    runway : the crane runway result (analyse_runway, run by the caller) or None
    design : the design-envelope result (workflows.design_envelope.run, run by the caller)
        or None
    """

    model: Model
    model_file: str
    sha256: str
    date: str
    version: str
    loads: tuple[LoadEntry, ...]
    env: Envelope | None
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
    def provenance(self) -> Provenance:
        return Provenance(self.model_file, self.sha256, self.version, self.date)

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
    results = EnvelopeResults(model, provenance.model_file, provenance.sha256, provenance.date,
                              provenance.version, entries, env, absolute, runway=runway,
                              design=design)
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


def parameter_labels(load: Any) -> list[str]:
    """Names of the searched dimensions of a load, in the order of ``load.parameters()``
    (for loads acting together: those of each part, labelled with the part's name)."""
    if isinstance(load, Together):
        return [f"{part.name}: {label}" for part in load.parts
                for label in parameter_labels(part.load)]
    if isinstance(load, Vehicle):
        return [f"spacing {i + 1}-{i + 2}" for i, s in enumerate(load.spacings)
                if isinstance(s, tuple)]
    if isinstance(load, Train):
        labels = []
        for i, vehicle in enumerate(load.vehicles):
            labels.extend(f"vehicle {i + 1} {label}" for label in parameter_labels(vehicle))
            if i < len(load.gaps) and isinstance(load.gaps[i], tuple):
                labels.append(f"gap {i + 1}-{i + 2}")
        return labels
    return []


def describe_extreme(results: EnvelopeResults, family: str, which: str, g: Governing,
                     x: float) -> Extreme:
    """``g`` (a Governing of the envelope) in words and display units."""
    env = results.env
    value = g.value * display_factor(family, results.units) + 0.0
    if g.case < 0:
        return Extreme(family, which, value, x)
    case = env.cases[g.case]
    if isinstance(case, Together):
        return _describe_together(results, family, which, g, x, case, value)
    return _describe_case(results, family, which, g, g, x, case, value)


def _describe_case(results: EnvelopeResults, family: str, which: str, own: Governing,
                   asked: Governing, x: float, case: Any, value: float) -> Extreme:
    """One load case in words: ``own`` is its own Governing (reference, side, searched …),
    ``asked`` the Governing of the envelope to ask for its positions (the same, or a
    Together's with only this part)."""
    env, beam = results.env, results.beam
    g = own
    load = case.load
    side_note = ""
    if isinstance(load, UniformLoad):
        stretches, point_x = env.loaded_stretches(asked)
        loaded = tuple((float(a), float(b)) for a, b in _merged(stretches, beam.length))
        placement = _placement_words(load.placement, which, loaded, beam)
        if point_x is not None and load.point_load:
            placement += f"; point load at {_length(point_x)}"
            if family.startswith("shear") and g.side:
                side_note = f"point load just {'right' if g.side > 0 else 'left'} of the section"
        return Extreme(family, which, value, x, case.name, 0,
                       point_x if load.point_load else None,
                       (point_x,) if point_x is not None and load.point_load else (), loaded,
                       placement, side_note)
    if family in ("moment", "shear_left", "shear_right", "deflection"):
        face = env.axle_face(asked, x, kind_and_side(family)[0], own.side)
        side_note = {"on": "axle on the section", "left": "axle just left of the section",
                     "right": "axle just right of the section", "": ""}[face]
    axles = tuple(float(a) for a in env.axle_positions(asked))
    searched = tuple(zip(parameter_labels(load), g.searched, strict=False))
    return Extreme(family, which, value, x, case.name, int(g.direction), float(g.reference),
                   axles, (), "", side_note, searched)


def _describe_together(results: EnvelopeResults, family: str, which: str, g: Governing,
                       x: float, together: Together, value: float) -> Extreme:
    """Loads acting together: each part described on its own, then merged (direction and
    lead axle from the first moving part, every axle, every loaded stretch)."""
    described = []
    for k, part in enumerate(g.parts):
        if part.case < 0:  # this part makes nothing worse than the empty beam
            continue
        case = together.parts[part.case]
        only = dataclasses.replace(g, parts=tuple(
            p if i == k else Governing(0.0) for i, p in enumerate(g.parts)))
        described.append((case, _describe_case(results, family, which, part, only, x, case,
                                               value)))
    if not described:
        return Extreme(family, which, value, x, together.name, placement="not loaded")
    moving = [e for case, e in described if not isinstance(case.load, UniformLoad)]
    lead = moving[0] if moving else described[0][1]
    words, notes = [], []
    for case, e in described:
        if isinstance(case.load, UniformLoad):
            words.append(f"{case.name}: {e.placement.removeprefix('placed: ')}")
        else:
            words.append(f"{case.name} {direction_arrow(e.direction)} lead axle at "
                         f"{_position(e.lead_x)}")
        if e.side_note:
            notes.append(f"{case.name}: {e.side_note}")
    loaded = tuple((float(a), float(b)) for a, b in
                   _merged([s for _, e in described for s in e.loaded], results.beam.length))
    searched = tuple((f"{case.name}: {label}", v) for case, e in described
                     for label, v in e.searched)
    return Extreme(family, which, value, x, together.name, lead.direction, lead.lead_x,
                   tuple(a for _, e in described for a in e.axles), loaded, "; ".join(words),
                   "; ".join(notes), searched)


def _merged(stretches: Sequence[tuple[float, float]], length: float
            ) -> list[tuple[float, float]]:
    """Adjacent stretches joined (whole spans side by side read as one stretch)."""
    out: list[list[float]] = []
    tolerance = 1e-9 * length
    for a, b in sorted(stretches):
        if b - a <= tolerance:
            continue
        if out and a <= out[-1][1] + tolerance:
            out[-1][1] = max(out[-1][1], b)
        else:
            out.append([a, b])
    return [(a, b) for a, b in out]


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
    return "; ".join(f"{label} = {_length(v)}{suffix}" for label, v in extreme.searched)


# ------------------------------------------------------------------------------------------
# per section, per span, per support


def section_extremes(results: EnvelopeResults, family: str, which: str) -> list[Extreme]:
    """One Extreme per section for a section family (computed once per results)."""
    key = ("sections", family, which)
    if key not in results.cache:
        kind, side = kind_and_side(family)
        governing = results.env.governing(kind, which, side)
        results.cache[key] = [describe_extreme(results, family, which, g, float(x))
                              for g, x in zip(governing, results.sections, strict=True)]
    return results.cache[key]


def support_extremes(results: EnvelopeResults, family: str, which: str
                     ) -> dict[int, Extreme]:
    """Per support that has the effect: its Extreme (reaction or support moment)."""
    env, beam = results.env, results.beam
    source = env.governing_max if which == "max" else env.governing_min
    out = {}
    for line in env.index[family]:
        support = env.effects[line].support
        x = float(beam.support_positions[support])
        out[support] = describe_extreme(results, family, which, source[line], x)
    return out


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
    tolerance = 1e-9 * beam.length
    x = results.sections
    per_family = {(f, w): section_extremes(results, f, w) for f in SECTION_FAMILIES
                  for w in ("max", "min")}
    out = []
    for span, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        inside = beam.sections_in_span(x, span)
        if inside.size == 0:  # sections chosen elsewhere: nothing to report for this span
            continue
        # shear inside the span: right of its left support, left of its right support
        rights = [i for i in inside if x[i] < b - tolerance]
        lefts = [i for i in inside if x[i] > a + tolerance]
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
    return describe_extreme(results, "moment", extreme.which, extreme.governing, extreme.x)


def concurrent_shear(results: EnvelopeResults, which: str) -> tuple[NDArray[np.float64],
                                                                     NDArray[np.float64]]:
    """Shear just left and just right of each section under the load that gives its max (or
    min) moment [force]."""
    values = results.env.concurrent("moment", which)
    left = np.diagonal(values["shear_left"]).copy()
    right = np.diagonal(values["shear_right"]).copy()
    return left + 0.0, right + 0.0


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
