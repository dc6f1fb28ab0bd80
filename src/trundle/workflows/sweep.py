"""What-if sweeps: vary one or two numbers of a model and follow the governing effects.

A sweep is a :class:`SweepSpec`: the swept numbers (:class:`SweepAxis`, one or two), the
effects asked for (:class:`EffectSelector`) and a callable ``subject_at(point)`` that gives
what to analyse at one point (:class:`SweepSubject`: beam, sections, named load cases, crane
runway). :func:`run` turns it into a :class:`SweepResult`, computing at every point the exact
envelope of the asked-for effects as ``trundle envelope`` would for that model. This module
reads no file: :mod:`trundle.io.sweeps` builds the spec from a model file (its
``subject_at`` reads the model again from its parsed TOML with the swept numbers replaced, so
every value is checked exactly as in a model file) and offers ``trundle.sweep()``.

Reuse: the influence lines depend on the beam, the sections and the effects only, and
:func:`trundle.analysis.envelope.envelope` keeps them by their *values*; a sweep of a load
parameter (an axle spacing, a crane's wheel base) therefore builds them once.

Effects are chosen with a short phrase (:func:`parse_effect`)::

    [loads|cranes] KIND WHICH [span N [anywhere] | support K | at X]

KIND is moment, shear, deflection, reaction or support_moment; WHICH is max or min. ``span N``
(spans numbered from 1, as in the tables) takes the model's sections in that span (shear just
right of its left support to just left of its right one); ``anywhere`` adds a search between
the sections (moment and deflection only; slower: no reuse). ``support K`` (supports numbered
from 0) picks one reaction; ``at X`` one section (added to the sections if the model has none
there). Without a place the worst over the whole beam (every section, or every support) is
taken. Loads are the model's ``[[load]]`` entries, the worst of them governing, as in
``trundle envelope``; with ``cranes`` (the default when the model has cranes only) the crane
combinations of ``[runway]``: with vertical impact for moment, shear and reactions, without for
deflection (as the runway results are reported).
"""

from __future__ import annotations

import difflib
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.checks import EXCEEDS, PASS, DeflectionCheck
from trundle.analysis.envelope import Envelope, absolute_extremes, envelope
from trundle.core.beam import Beam, Spring
from trundle.loads.cases import LoadCase
from trundle.workflows.crane_runway import (
    RunwaySpec,
    combination_load,
    crane_combinations,
    fatigue_worst_per_span,
    runway_checks,
)
from trundle.workflows.design_envelope import DesignSpec, deflection_checks_of

MAX_AXES = 2
MAX_POINTS = 20_000
"""The most points of a two-parameter sweep."""
MAX_EFFECTS = 24
KINDS = ("moment", "shear", "deflection", "reaction", "support_moment")
SECTION_KINDS = ("moment", "shear", "deflection")
SUPPORT_KINDS = ("reaction", "support_moment")
SOURCES = ("loads", "cranes")
DEFAULT_EFFECTS = ("moment max", "moment min", "reaction max")

Progress = Callable[[int, int], None]


class SweepError(ValueError):
    """A sweep that cannot run as asked; ``str()`` is one line."""


# ------------------------------------------------------------------------------------------
# effects asked for


@dataclass(frozen=True)
class EffectSelector:
    """One governing effect followed over the sweep.

    Fields
    ------
    text : as written
    kind : moment, shear, deflection, reaction or support_moment
    which : "max" or "min"
    source : "loads", "cranes" or "" (the model's [[load]] entries if it has any, else its
        cranes)
    span : span number from 1, or None
    anywhere : with ``span``: also search between the sections
    support : support number from 0, or None
    at : the text of a position, or None
    position : ``at`` in the model's length unit [length] (set by whoever reads the units:
        :func:`trundle.io.sweeps.build_spec`; None until then)
    """

    text: str
    kind: str
    which: str
    source: str = ""
    span: int | None = None
    anywhere: bool = False
    support: int | None = None
    at: str | None = None
    position: float | None = None

    @property
    def label(self) -> str:
        """For tables and figures: "max moment, span 2"."""
        kind = self.kind.replace("_", " ")
        where = ""
        if self.span is not None:
            where = f", span {self.span}" + (" (anywhere)" if self.anywhere else "")
        elif self.support is not None:
            where = f", support {self.support}"
        elif self.at is not None:
            where = f", at {self.at}"
        source = f" ({self.source})" if self.source else ""
        return f"{self.which} {kind}{where}{source}"


_ALIASES = {"support-moment": "support_moment", "support moment": "support_moment",
            "moments": "moment", "reactions": "reaction", "crane": "cranes", "load": "loads",
            "maximum": "max", "minimum": "min"}


def parse_effect(text: str) -> EffectSelector:
    """Read ``[loads|cranes] KIND WHICH [span N [anywhere] | support K | at X]``; KIND and
    WHICH may come in either order. SweepError (one line) when it is not that."""
    if not isinstance(text, str) or not text.strip():
        raise SweepError("--effect: expected e.g. \"moment max span 2\", found nothing")
    shown = " ".join(text.split())
    original = shown.replace(",", " ").split()
    words = [_ALIASES.get(w.lower(), w.lower()) for w in original]
    grammar = ("expected [loads|cranes] KIND WHICH [span N [anywhere] | support K | at X] "
               f"with KIND one of {', '.join(KINDS)} and WHICH max or min")
    source = ""
    if words and words[0] in SOURCES:
        source = words.pop(0)
        original.pop(0)
    head = words[:2]
    kind = next((w for w in head if w in KINDS), None)
    which = next((w for w in head if w in ("max", "min")), None)
    if kind is None or which is None or len(set(head)) != 2:
        raise SweepError(f'--effect "{shown}": {_did_you_mean(words, original, source)}'
                         f"{grammar}")
    rest = words[2:]
    selector = EffectSelector(shown, kind, which, source)
    if not rest:
        return selector
    place, *tail = rest
    if place == "span":
        if not tail or not tail[0].isdigit() or int(tail[0]) < 1:
            raise SweepError(f'--effect "{shown}": expected a span number from 1 after "span"')
        if kind in SUPPORT_KINDS:
            raise SweepError(f'--effect "{shown}": expected "support K" with {kind}, found '
                             '"span"')
        anywhere = tail[1:] == ["anywhere"]
        if tail[1:] and not anywhere:
            raise SweepError(f'--effect "{shown}": expected nothing or "anywhere" after the '
                             f'span number, found "{" ".join(tail[1:])}"')
        if anywhere and kind not in ("moment", "deflection"):
            raise SweepError(f'--effect "{shown}": "anywhere" is offered for moment and '
                             f"deflection, found {kind}")
        return EffectSelector(shown, kind, which, source, span=int(tail[0]), anywhere=anywhere)
    if place == "support":
        if len(tail) != 1 or not tail[0].isdigit():
            raise SweepError(f'--effect "{shown}": expected a support number from 0 after '
                             '"support"')
        if kind not in SUPPORT_KINDS:
            raise SweepError(f'--effect "{shown}": expected "span N" or "at X" with {kind}, '
                             'found "support"')
        return EffectSelector(shown, kind, which, source, support=int(tail[0]))
    if place == "at":
        if not tail:
            raise SweepError(f'--effect "{shown}": expected a position after "at"')
        if kind not in SECTION_KINDS:
            raise SweepError(f'--effect "{shown}": expected "support K" with {kind}, found '
                             '"at"')
        # the position keeps its case: units are case-sensitive ("MN" is not "mN")
        return EffectSelector(shown, kind, which, source, at=" ".join(original[3:]))
    hint = _closest(place, ("span", "support", "at"))
    raise SweepError(f'--effect "{shown}": {grammar}; found "{place}"'
                     + (f' (did you mean "{hint}"?)' if hint else ""))


def _closest(word: str, choices: Sequence[str]) -> str | None:
    found = difflib.get_close_matches(word, choices, n=1, cutoff=0.6)
    return found[0] if found else None


def _did_you_mean(words: Sequence[str], original: Sequence[str], source: str) -> str:
    """'did you mean "moment max", "moment min"?' for a phrase whose first words are close to
    a kind and a max/min (misspelt or missing); "" when nothing is close."""
    head = list(words[:2])
    kind = next((w for w in head if w in KINDS), None)
    which = next((w for w in head if w in ("max", "min")), None)
    unknown = [w for w in head if w not in KINDS and w not in ("max", "min")]
    for w in unknown:
        if kind is None and (guess := _closest(w, KINDS)):
            kind = guess
        elif which is None and (guess := _closest(w, ("max", "min"))):
            which = guess
    if kind is None:
        return ""
    prefix = f"{source} " if source else ""
    rest = " ".join(original[2:])  # as written: a position keeps the case of its unit
    tail = f" {rest}" if rest else ""
    options = [f'"{prefix}{kind} {w}{tail}"' for w in ((which,) if which else ("max", "min"))]
    return f"did you mean {' or '.join(options)}? "


# ------------------------------------------------------------------------------------------
# the spec


@dataclass(frozen=True)
class SweepAxis:
    """One swept number.

    Fields
    ------
    name : how the user named it (a model path such as "load.truck.spacings[1]")
    values : the values it takes, in ``unit``
    unit : the unit of ``values`` for people ("m", "kN·m²")
    """

    name: str
    values: tuple[float, ...]
    unit: str


@dataclass(frozen=True)
class SweepSubject:
    """What one point of a sweep analyses.

    Fields
    ------
    beam : the Beam at this point
    sections : x of the model's sections [length]
    loads : the model's loads as named load cases (its ``[[load]]`` entries), the worst of
        them governing
    runway : the crane runway (cranes and combinations), or None
    design : the design tables (their live-load deflection check), or None
    """

    beam: Beam
    sections: NDArray[np.float64]
    loads: tuple[LoadCase, ...] = ()
    runway: RunwaySpec | None = None
    design: DesignSpec | None = None


@dataclass(frozen=True)
class SweepSpec:
    """What to sweep.

    Fields
    ------
    axes : one or two SweepAxis (the first varies slowest)
    effects : the EffectSelector followed (positions resolved)
    subject_at : the subject at one point (a tuple with one value per axis, in each axis'
        unit); raises SweepError (one line) when the point is not a valid model
    title : the model's title
    notes : what the reader of the results must know about the sweep (e.g. that hinges
        written as positions stay put while a span changes)
    units : the model's unit system (labels of the outputs; the sweep itself is unit-free)
    """

    axes: tuple[SweepAxis, ...]
    effects: tuple[EffectSelector, ...]
    subject_at: Callable[[tuple[float, ...]], SweepSubject]
    title: str = ""
    notes: tuple[str, ...] = ()
    units: Any = None

    @property
    def shape(self) -> tuple[int, ...]:
        return tuple(len(a.values) for a in self.axes)

    @property
    def n_points(self) -> int:
        return math.prod(self.shape)


def source_of(subject: SweepSubject, selector: EffectSelector) -> str:
    """"loads" or "cranes": where the selector's loads come from."""
    if selector.source:
        return selector.source
    return "loads" if subject.loads or subject.runway is None else "cranes"


def check_selector(subject: SweepSubject, selector: EffectSelector, where: str = "this model"
                   ) -> None:
    """SweepError (one line) unless the subject can give the selector's effect."""
    beam = subject.beam
    source = source_of(subject, selector)
    if source == "loads" and not subject.loads:
        raise SweepError(f'--effect "{selector.text}": expected a model with [[load]] tables, '
                         f"found none in {where}")
    if source == "cranes" and subject.runway is None:
        raise SweepError(f'--effect "{selector.text}": expected a model with [[crane]] and '
                         f"[runway] tables, found none in {where}")
    if selector.span is not None and selector.span > beam.n_spans:
        raise SweepError(f'--effect "{selector.text}": expected a span number 1 to '
                         f"{beam.n_spans}, found {selector.span}")
    if selector.kind in SUPPORT_KINDS:
        holding = [k for k, s in enumerate(beam.supports) if _has(selector.kind, s)]
        if selector.support is not None and selector.support not in holding:
            what = "supports" if selector.kind == "reaction" else "supports that restrain rotation"
            raise SweepError(f'--effect "{selector.text}": expected one of the {what} '
                             f"({', '.join(map(str, holding)) or 'none'}), found "
                             f"{selector.support}")
        if not holding:
            raise SweepError(f'--effect "{selector.text}": expected a support with a '
                             f"{selector.kind.replace('_', ' ')}, found none in this model")
    _position(beam, selector)


def _has(kind: str, support: Any) -> bool:
    if kind == "reaction":
        return support != "free"
    return support == "fixed" or (isinstance(support, Spring) and support.kr is not None)


def _position(beam: Beam, selector: EffectSelector) -> float | None:
    if selector.at is None:
        return None
    x = selector.position
    if x is None:
        raise SweepError(f'--effect "{selector.text}": the position was not read (build the '
                         "spec with trundle.io.sweeps.build_spec)")
    tolerance = 1e-9 * beam.length
    if not -tolerance <= x <= beam.length + tolerance:
        raise SweepError(f'--effect "{selector.text}": expected a position on the beam (0 to '
                         f'{beam.length:g}), found "{selector.at}"')
    return min(max(x, 0.0), beam.length)


# ------------------------------------------------------------------------------------------
# the checks of the model at each point


@dataclass(frozen=True)
class PointCheck:
    """One check of the model at one point of a sweep, as ``trundle envelope`` makes it.

    Fields
    ------
    name : what is checked ("vertical deflection, span 1", "fatigue, 20 t crane, span 2")
    quantity : "deflection" or "stress" (the unit family of demand and allowable)
    demand, allowable : in the model's base units (deflection in length units)
    utilisation : demand / allowable
    verdict : PASS or EXCEEDS, from :func:`trundle.analysis.checks.verdict` (through the
        check's own ``verdict``; nothing is decided here)
    governing : the load or combination that governs it
    certified : False where a deflection searched between the sections was found by the
        sampled search, which may read low (as ``DeflectionCheck.certified``)
    """

    name: str
    quantity: str
    demand: float
    allowable: float
    utilisation: float
    verdict: str
    governing: str = ""
    certified: bool = True


def checks_of(subject: SweepSubject) -> tuple[PointCheck, ...]:
    """Every check the model defines at this point — those ``trundle envelope`` reports for
    it: a crane runway's vertical and lateral deflection per span and its fatigue per crane
    and span (worst section), and the live-load deflection of the design tables."""
    out: list[PointCheck] = []

    def deflection(kind: str, checks: Sequence[DeflectionCheck]) -> None:
        for c in checks:
            out.append(PointCheck(f"{kind}, span {c.span + 1}", "deflection", abs(c.value),
                                  c.limit, c.utilisation, c.verdict, c.governing,
                                  c.certified))

    if subject.runway is not None:
        found = runway_checks(subject.beam, subject.runway, subject.sections)
        deflection("vertical deflection", found.vertical_checks)
        deflection("lateral deflection", found.lateral_checks)
        cranes = [c.name for c in subject.runway.cranes]
        for span, item in fatigue_worst_per_span(subject.beam, cranes, found.fatigue):
            if item.utilisation is None or item.verdict is None:
                continue  # no detail category: no check (envelope shows none either)
            demand = (item.stress_range if item.check == "threshold"
                      else item.equivalent_range)
            out.append(PointCheck(f"fatigue, {item.crane}, span {span + 1}", "stress",
                                  float(demand or 0.0), float(item.allowable or 0.0),
                                  float(item.utilisation), item.verdict, item.crane))
    if subject.design is not None:
        deflection("live-load deflection", deflection_checks_of(subject.design))
    return tuple(out)


# ------------------------------------------------------------------------------------------
# the result


@dataclass(frozen=True, eq=False)
class SweepResult:
    """The governing effects at every point of a sweep.

    Fields
    ------
    spec : the SweepSpec run
    points : (n_points, n_axes) values of the swept numbers, in each axis' unit; the first
        axis varies slowest
    values : (n_points, n_effects) the effects, in the model's base units (deflection in
        length units, not yet in mm or in)
    x : (n_points, n_effects) the section where each occurs [length] (NaN for reactions)
    support : (n_points, n_effects) the support of a reaction (−1 for section effects)
    load : per point and effect, the name of the governing load ("" when no load makes it
        other than zero)
    reused_lines : how many points found the influence lines of the point before them
        already built (same beam, sections and effects: only loads changed)
    checks : per point, every check the model defines (:func:`checks_of`)
    """

    spec: SweepSpec
    points: NDArray[np.float64]
    values: NDArray[np.float64]
    x: NDArray[np.float64]
    support: NDArray[np.int64]
    load: tuple[tuple[str, ...], ...]
    reused_lines: int = 0
    checks: tuple[tuple[PointCheck, ...], ...] = ()

    @property
    def axes(self) -> tuple[SweepAxis, ...]:
        return self.spec.axes

    @property
    def effects(self) -> tuple[EffectSelector, ...]:
        return self.spec.effects

    @property
    def units(self) -> Any:
        return self.spec.units

    @property
    def shape(self) -> tuple[int, ...]:
        return self.spec.shape

    def grid(self, effect: int) -> NDArray[np.float64]:
        """The values of one effect shaped like the axes (n1,) or (n1, n2)."""
        return self.values[:, effect].reshape(self.shape)

    def worst(self, effect: int) -> int:
        """Index of the point where the effect is worst (largest max, smallest min); of
        points equal to it within rounding (:data:`SAME_WITHIN`), the first."""
        sign = 1.0 if self.effects[effect].which == "max" else -1.0
        signed = sign * self.values[:, effect]
        if not np.isfinite(signed).any():
            return 0
        best = float(np.nanmax(signed))
        near = signed >= best - SAME_WITHIN * max(abs(best), _scale(self.values[:, effect]))
        return int(np.flatnonzero(near)[0])

    def constant(self, effect: int) -> bool:
        """Whether the effect is the same at every point, within rounding
        (:data:`SAME_WITHIN` of its largest magnitude)."""
        values = self.values[:, effect]
        if not np.isfinite(values).all():
            return False
        return bool(np.ptp(values) <= SAME_WITHIN * _scale(values))

    @property
    def check_names(self) -> tuple[str, ...]:
        """Every check met at some point, in the order first met."""
        names: dict[str, None] = {}
        for point in self.checks:
            for c in point:
                names.setdefault(c.name, None)
        return tuple(names)

    def point_verdict(self, p: int) -> str | None:
        """EXCEEDS when any check at point ``p`` exceeds, PASS when all pass, None when the
        model defines no check."""
        if not self.checks or not self.checks[p]:
            return None
        return EXCEEDS if any(c.verdict != PASS for c in self.checks[p]) else PASS

    def exceeding(self) -> list[int]:
        """The points where some check EXCEEDS."""
        return [p for p in range(len(self.points)) if self.point_verdict(p) == EXCEEDS]

    def worst_check(self, p: int) -> PointCheck | None:
        """The check of largest utilisation at point ``p`` (an EXCEEDS first; the first of
        equals)."""
        if not self.checks or not self.checks[p]:
            return None
        checks = self.checks[p]
        failing = [c for c in checks if c.verdict != PASS] or list(checks)
        top = max(_finite(c.utilisation) for c in failing)
        # of checks equal within rounding (a symmetric structure), always the first
        return next(c for c in failing
                    if _finite(c.utilisation) >= top - SAME_WITHIN * abs(top))

    def records(self) -> list[dict[str, Any]]:
        """One dict per point: the swept values by name, then per effect its value, where
        it occurs and the governing load (``pandas.DataFrame(result.records())``)."""
        out = []
        for p, point in enumerate(self.points):
            row: dict[str, Any] = {a.name: float(v) for a, v in zip(self.axes, point,
                                                                    strict=True)}
            for e, selector in enumerate(self.effects):
                row[selector.label] = float(self.values[p, e])
                if selector.kind in SUPPORT_KINDS:
                    row[f"{selector.label}: support"] = int(self.support[p, e])
                else:
                    row[f"{selector.label}: x"] = float(self.x[p, e])
                row[f"{selector.label}: load"] = self.load[p][e]
            for c in self.checks[p] if self.checks else ():
                row[f"{c.name}: utilisation"] = float(c.utilisation)
                row[f"{c.name}: verdict"] = c.verdict
            out.append(row)
        return out

    def __repr__(self) -> str:
        swept = "; ".join(f"{a.name} {a.values[0]:g}..{a.values[-1]:g} {a.unit} "
                          f"({len(a.values)})" for a in self.axes)
        worst = "; ".join(f"{s.label} {self.values[self.worst(e), e]:.5g}"
                          for e, s in enumerate(self.effects))
        return (f"<SweepResult {len(self.points)} points: {swept}; worst: {worst}; "
                f"{self._checks_text()}>")

    def _checks_text(self) -> str:
        if not self.check_names:
            return "no checks"
        return (f"checks: {len(self.exceeding())} of {len(self.points)} points EXCEED"
                if self.exceeding() else f"checks: all {len(self.points)} points PASS")

    def _repr_html_(self) -> str:
        from html import escape

        rows = []
        for e, selector in enumerate(self.effects):
            p = self.worst(e)
            where = ", ".join(f"{a.name} = {self.points[p, k]:g} {a.unit}"
                              for k, a in enumerate(self.axes))
            rows.append(f"<tr><td>{escape(selector.label)}</td>"
                        f"<td style='text-align:right'>{self.values[p, e]:.5g}</td>"
                        f"<td>{escape(where)}</td><td>{escape(self.load[p][e] or '—')}</td>"
                        "</tr>")
        swept = "; ".join(f"{a.name} from {a.values[0]:g} to {a.values[-1]:g} {a.unit}"
                          for a in self.axes)
        return (f"<div><b>What-if sweep</b>: {len(self.points)} points; {escape(swept)}; "
                f"<b>{escape(self._checks_text())}</b>"
                "<table><tr><th>effect</th><th>worst value</th><th>at</th><th>load</th></tr>"
                + "".join(rows) + "</table></div>")


# ------------------------------------------------------------------------------------------
# running


def run(spec: SweepSpec, progress: Progress | None = None) -> SweepResult:
    """Compute every point of a sweep; ``progress(done, total)`` is called after each."""
    n_effects = len(spec.effects)
    grids = np.meshgrid(*[np.asarray(a.values) for a in spec.axes], indexing="ij")
    points = np.stack([g.ravel() for g in grids], axis=1)
    total = len(points)
    values = np.full((total, n_effects), np.nan)
    xs = np.full((total, n_effects), np.nan)
    supports = np.full((total, n_effects), -1, dtype=np.int64)
    names: list[tuple[str, ...]] = []
    reused = 0
    previous: set[tuple] = set()
    checks: list[tuple[PointCheck, ...]] = []
    for p, point in enumerate(points):
        subject = spec.subject_at(tuple(float(v) for v in point))
        found, keys = _evaluate(subject, spec.effects)
        checks.append(checks_of(subject))
        reused += bool(keys) and keys <= previous
        previous = keys
        for e, (value, x, support, _load) in enumerate(found):
            values[p, e], xs[p, e], supports[p, e] = value, x, support
        names.append(tuple(f[3] for f in found))
        if progress is not None:
            progress(p + 1, total)
    return SweepResult(spec, points, values, xs, supports, tuple(names), reused,
                       tuple(checks))


_Found = tuple[float, float, int, str]


def _evaluate(subject: SweepSubject, selectors: Sequence[EffectSelector]
              ) -> tuple[list[_Found], set[tuple]]:
    """Every selector's value at one point of the sweep, and the keys of the lines used
    (the values the envelope's own cache of lines is keyed on)."""
    beam = subject.beam
    groups: dict[tuple[str, str], list[int]] = {}
    for i, selector in enumerate(selectors):
        source = source_of(subject, selector)
        level = "service" if (source == "cranes" and selector.kind == "deflection") else ""
        groups.setdefault((source, level), []).append(i)
    out: list[_Found | None] = [None] * len(selectors)
    keys: set[tuple] = set()
    for (source, level), members in groups.items():
        cases = _cases(subject, source, level)
        chosen = [selectors[i] for i in members]
        sections = _sections(subject, chosen)
        kinds = tuple(k for k in KINDS if any(s.kind == k for s in chosen))
        keys.add((beam._value_key, sections.tobytes(), kinds))
        env = envelope(beam, cases, sections=sections, effects=kinds)
        for i in members:
            out[i] = _pick(env, selectors[i], cases)
    return [f for f in out if f is not None], keys


def _cases(subject: SweepSubject, source: str, level: str) -> list[Any]:
    if source == "loads":
        return list(subject.loads)
    spec = subject.runway
    if spec is None:
        raise SweepError("cranes: expected a model with [[crane]] and [runway] tables")
    length = subject.beam.length
    return [LoadCase(combination_load(c, length, with_impact=level != "service",
                                      confined=spec.end_stops), name=c.name)
            for c in crane_combinations(spec.cranes, spec.combinations)]


def _sections(subject: SweepSubject, selectors: Sequence[EffectSelector]
              ) -> NDArray[np.float64]:
    """The model's sections the selectors look at, and any ``at`` positions."""
    beam = subject.beam
    if not any(s.kind in SECTION_KINDS for s in selectors):
        return np.zeros(0)
    chosen: list[NDArray[np.float64]] = []
    for s in selectors:
        if s.kind not in SECTION_KINDS:
            continue
        if s.at is not None:
            chosen.append(np.array([_position(beam, s)]))
        elif s.span is not None:
            chosen.append(subject.sections[_in_span(beam, subject.sections, s.span - 1)])
        else:
            chosen.append(np.asarray(subject.sections, dtype=float))
    points = np.sort(np.concatenate(chosen))
    keep = np.concatenate([[True], np.diff(points) > 1e-9 * beam.length])
    return points[keep]


def _in_span(beam: Beam, x: NDArray[np.float64], span: int) -> NDArray[np.int64]:
    a, b = beam.support_positions[span], beam.support_positions[span + 1]
    tolerance = 1e-9 * beam.length
    return np.flatnonzero((x >= a - tolerance) & (x <= b + tolerance))


def _name(env: Envelope, g: Any) -> str:
    return env.cases[g.case].name if g.case >= 0 else ""


def _pick(env: Envelope, selector: EffectSelector, cases: Sequence[Any]) -> _Found:
    beam = env.beam
    which = selector.which
    sign = 1.0 if which == "max" else -1.0
    extreme = env.max if which == "max" else env.min
    if selector.kind in SUPPORT_KINDS:
        lines = env.lines_of(selector.kind)
        governing = env.governing(selector.kind, which)
        candidates = [(governing[j].value, env.effects[line].support, _name(env, governing[j]))
                      for j, line in enumerate(lines)
                      if selector.support is None or env.effects[line].support == selector.support]
        value, support, name = max(candidates, key=lambda c: sign * c[0])
        return float(value), math.nan, int(support), name
    x = env.sections
    tolerance = 1e-9 * beam.length
    if selector.at is not None:
        target = _position(beam, selector)
        rows = np.flatnonzero(np.abs(x - target) <= tolerance)
    elif selector.span is not None:
        rows = _in_span(beam, x, selector.span - 1)
    else:
        rows = np.arange(len(x))
    candidates: list[tuple[float, float, str]] = []
    sides: Sequence[str | None] = ("left", "right") if selector.kind == "shear" else (None,)
    for side in sides:
        values = extreme(selector.kind, side)
        governing = env.governing(selector.kind, which, side)
        for r in rows:
            if selector.span is not None and side is not None:
                a = beam.support_positions[selector.span - 1]
                b = beam.support_positions[selector.span]
                # inside the span: right of its left support, left of its right support
                if (side == "right" and x[r] >= b - tolerance) or \
                        (side == "left" and x[r] <= a + tolerance):
                    continue
            candidates.append((float(values[r]), float(x[r]), _name(env, governing[r])))
    value, where, name = max(candidates, key=lambda c: sign * c[0])
    if selector.anywhere:
        certified = True
        for c, case in enumerate(cases):
            for found in absolute_extremes(beam, case, selector.span - 1, selector.kind,
                                           case_index=c, extremes=(which,)):
                certified &= found.certified
                # never less than at the sections: the search adds, it does not replace
                if sign * found.value > sign * value:
                    value, where = found.value, found.x
                    name = case.name if found.governing.case >= 0 else ""
        if not certified:
            # some load's worst section was found by the sampled search, which may read
            # low: the mark travels with the load's name into every output
            name = f"{name} {NOT_CERTIFIED}".strip()
    return value, where, -1, name


SAME_WITHIN = 1e-9
"""Values of an effect closer than this fraction of its largest magnitude are the same
(floating-point rounding: an effect another parameter does not change, such as a moment of a
beam whose stiffness is uniform, differs only in its last digits)."""


def _scale(values: NDArray[np.float64]) -> float:
    finite = np.abs(values[np.isfinite(values)])
    return float(finite.max()) if finite.size else 0.0


def _finite(value: float) -> float:
    return value if math.isfinite(value) else math.inf


# appended to the governing load of an "anywhere" effect that is not certified (see
# ``analysis.envelope.absolute_extremes``)
NOT_CERTIFIED = "(anywhere: not certified)"


def effect_family(selector: EffectSelector) -> str:
    """The envelope family whose units the effect is in (for labels)."""
    return "shear_left" if selector.kind == "shear" else selector.kind


__all__ = ["DEFAULT_EFFECTS", "MAX_AXES", "MAX_EFFECTS", "MAX_POINTS", "NOT_CERTIFIED",
           "SAME_WITHIN", "EffectSelector", "PointCheck", "checks_of",
           "SweepAxis", "SweepError", "SweepResult", "SweepSpec", "SweepSubject",
           "check_selector", "parse_effect", "run", "source_of"]
