"""What-if sweeps: vary one or two numbers of a model file and follow the governing effects.

A sweep is a :class:`SweepSpec` (the model, one or two :class:`~trundle.io.model_paths.SweepRange`
and the effects asked for), :func:`run` turns it into a :class:`SweepResult`: at every point
the model is read again from its parsed TOML with the swept numbers replaced (so every value is
checked exactly as in a model file) and the envelope of the asked-for effects is computed
exactly, as ``trundle envelope`` would for that model. :func:`sweep` does both from a path.

Reuse: the influence lines depend on the beam, the sections and the effects only. They are
cached on their *values* (spans, supports, hinges, stiffness, sections, effects), so a sweep of
a load parameter (an axle spacing, a crane's wheel base) builds them once.

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

import math
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.crane_runway import combination_load, crane_combinations
from trundle.cranefile import cranes_of, runway_spec
from trundle.envelope import Envelope, PreparedLines, absolute_extremes, envelope, prepare_lines
from trundle.io.model_paths import (
    MAX_POINTS_PER_AXIS,
    ModelPathError,
    SweepRange,
    apply,
    parse_range,
    resolve,
    split_vary,
)
from trundle.loadfile import loads_of
from trundle.loads.cases import LoadCase
from trundle.model import Beam, Spring
from trundle.modelfile import Model, ModelFileError, load_model, read_model_data
from trundle.units import UnitError, parse_quantity

MAX_AXES = 2
MAX_POINTS = 20_000
"""The most points of a two-parameter sweep (each range has at most MAX_POINTS_PER_AXIS)."""
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
    """

    text: str
    kind: str
    which: str
    source: str = ""
    span: int | None = None
    anywhere: bool = False
    support: int | None = None
    at: str | None = None

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
        raise SweepError(f'--effect "{shown}": {grammar}')
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
    raise SweepError(f'--effect "{shown}": {grammar}; found "{place}"')


# ------------------------------------------------------------------------------------------
# the spec


@dataclass(frozen=True)
class SweepSpec:
    """What to sweep.

    Fields
    ------
    model : the model as read from its file
    ranges : one or two SweepRange (the first varies slowest)
    effects : the EffectSelector followed
    notes : what the reader of the results must know about the sweep (e.g. that hinges
        written as positions stay put while a span changes)
    """

    model: Model
    ranges: tuple[SweepRange, ...]
    effects: tuple[EffectSelector, ...]
    notes: tuple[str, ...] = ()

    @property
    def shape(self) -> tuple[int, ...]:
        return tuple(len(r.values) for r in self.ranges)

    @property
    def n_points(self) -> int:
        return math.prod(self.shape)


def build_spec(model: Model, vary: Mapping[str, str] | Iterable[str],
               effects: Sequence[str] = DEFAULT_EFFECTS, check_points: bool = True
               ) -> SweepSpec:
    """Check a sweep before running it.

    Parameters
    ----------
    model : the model read from its file
    vary : ``{path: "START:STOP:STEP"}`` or ``["PATH=START:STOP:STEP", …]``; one or two
    effects : effect phrases (see :func:`parse_effect`)
    check_points : read the model at every value of each range (the others at their first
        value) so a value the model refuses is reported before the sweep starts

    Raises SweepError (or ModelPathError) with one line.
    """
    if isinstance(vary, str):
        vary = [vary]
    pairs = list(vary.items()) if isinstance(vary, Mapping) else \
        [split_vary(item) for item in vary]
    if not pairs:
        raise SweepError("--vary: expected one or two PATH=START:STOP:STEP, found none")
    if len(pairs) > MAX_AXES:
        raise SweepError(f"--vary: expected at most {MAX_AXES} parameters, found {len(pairs)}")
    ranges: list[SweepRange] = []
    for text, range_text in pairs:
        path = resolve(model.raw, text)
        if any(r.path.location == path.location for r in ranges):
            raise SweepError(f"--vary {path.text}: expected each path once, found it twice")
        ranges.append(parse_range(path, range_text, model.units))
    total = math.prod(len(r.values) for r in ranges)
    if total > MAX_POINTS:
        raise SweepError(f"--vary: expected at most {MAX_POINTS:,} points in all, found "
                         f"{' x '.join(str(len(r.values)) for r in ranges)} = {total:,} "
                         "(use larger steps)")
    effects = list(effects) or list(DEFAULT_EFFECTS)
    if len(effects) > MAX_EFFECTS:
        raise SweepError(f"--effect: expected at most {MAX_EFFECTS}, found {len(effects)}")
    selectors = tuple(parse_effect(e) for e in effects)
    spec = SweepSpec(model, tuple(ranges), selectors, _span_notes(model, ranges))
    for selector in selectors:
        _check_selector(model, selector)
    if check_points:
        first = tuple(r.values[0] for r in ranges)
        for axis, r in enumerate(ranges):
            for value in r.values:
                point = list(first)
                point[axis] = value
                _model_at(spec, tuple(point))
    return spec


def _span_notes(model: Model, ranges: Sequence[SweepRange]) -> tuple[str, ...]:
    """A span sweep leaves positions written in the file where they are: say which."""
    if not any(r.path.location[:2] == ("beam", "spans") for r in ranges):
        return ()
    beam = model.raw.get("beam", {})
    fixed = []
    if beam.get("hinges"):
        fixed.append("hinges")
    if any(isinstance(seg, Mapping) and ("from" in seg or "to" in seg)
           for seg in beam.get("stiffness", []) or []):
        fixed.append("stiffness segment ends")
    sections = model.raw.get("sections", {})
    at = sections.get("at", []) if isinstance(sections, Mapping) else []
    if isinstance(at, list) and any(not (isinstance(a, str) and a.replace("-", " ").replace(
            "_", " ").strip().lower() in ("tenth points", "quarter points", "midspans",
                                          "supports")) for a in at):
        fixed.append("sections given as positions")
    if not fixed:
        return ()
    return (f"a span changes while the {', '.join(fixed)} of the model file stay at the "
            "positions written there (measured from the left end): check that the structure "
            "at each point is the one intended",)


def _source(model: Model, selector: EffectSelector) -> str:
    if selector.source:
        return selector.source
    return "loads" if loads_of(model) or not cranes_of(model) else "cranes"


def _check_selector(model: Model, selector: EffectSelector) -> None:
    beam = model.beam
    source = _source(model, selector)
    if source == "loads" and not loads_of(model):
        raise SweepError(f'--effect "{selector.text}": expected a model with [[load]] tables, '
                         f"found none in {model.name}")
    if source == "cranes" and runway_spec(model) is None:
        raise SweepError(f'--effect "{selector.text}": expected a model with [[crane]] and '
                         f"[runway] tables, found none in {model.name}")
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
    _position(beam, model, selector)


def _has(kind: str, support: Any) -> bool:
    if kind == "reaction":
        return support != "free"
    return support == "fixed" or (isinstance(support, Spring) and support.kr is not None)


def _position(beam: Beam, model: Model, selector: EffectSelector) -> float | None:
    if selector.at is None:
        return None
    try:
        x = parse_quantity(selector.at, "position", model.units)
    except UnitError as error:
        raise SweepError(f'--effect "{selector.text}": {error}') from None
    tolerance = 1e-9 * beam.length
    if not -tolerance <= x <= beam.length + tolerance:
        raise SweepError(f'--effect "{selector.text}": expected a position on the beam (0 to '
                         f"{beam.length:g} {model.units.label('length')}), found "
                         f'"{selector.at}"')
    return min(max(x, 0.0), beam.length)


def _model_at(spec: SweepSpec, point: tuple[float, ...]) -> Model:
    """The model with the swept numbers set to ``point``; one line naming the values when
    the model refuses them."""
    values = {r.path: r.text(v) for r, v in zip(spec.ranges, point, strict=True)}
    raw = apply(spec.model.raw, values)
    try:
        return read_model_data(raw, spec.model.name, spec.model.source)
    except ModelFileError as error:
        where = ", ".join(f"{r.path.text} = {v:g} {r.label}"
                          for r, v in zip(spec.ranges, point, strict=True))
        raise SweepError(f"at {where}: {error}") from None


# ------------------------------------------------------------------------------------------
# the result


@dataclass(frozen=True, eq=False)
class SweepResult:
    """The governing effects at every point of a sweep.

    Fields
    ------
    spec : the SweepSpec run
    points : (n_points, n_axes) values of the swept numbers, in each range's unit; the first
        axis varies slowest
    values : (n_points, n_effects) the effects, in the model's base units (deflection in
        length units, not yet in mm or in)
    x : (n_points, n_effects) the section where each occurs [length] (NaN for reactions)
    support : (n_points, n_effects) the support of a reaction (−1 for section effects)
    load : per point and effect, the name of the governing load ("" when no load makes it
        other than zero)
    reused_lines : how many points reused influence lines built for an earlier point
    """

    spec: SweepSpec
    points: NDArray[np.float64]
    values: NDArray[np.float64]
    x: NDArray[np.float64]
    support: NDArray[np.int64]
    load: tuple[tuple[str, ...], ...]
    reused_lines: int = 0

    @property
    def ranges(self) -> tuple[SweepRange, ...]:
        return self.spec.ranges

    @property
    def effects(self) -> tuple[EffectSelector, ...]:
        return self.spec.effects

    @property
    def units(self) -> Any:
        return self.spec.model.units

    @property
    def shape(self) -> tuple[int, ...]:
        return self.spec.shape

    def grid(self, effect: int) -> NDArray[np.float64]:
        """The values of one effect shaped like the ranges (n1,) or (n1, n2)."""
        return self.values[:, effect].reshape(self.shape)

    def worst(self, effect: int) -> int:
        """Index of the point where the effect is worst (largest max, smallest min)."""
        sign = 1.0 if self.effects[effect].which == "max" else -1.0
        return int(np.argmax(sign * self.values[:, effect]))


# ------------------------------------------------------------------------------------------
# running


@dataclass
class _LineCache:
    """Influence lines keyed on the values that define them (never on object identity)."""

    found: dict[tuple, PreparedLines] = field(default_factory=dict)
    reused: int = 0

    def get(self, beam: Beam, sections: NDArray[np.float64], effects: tuple[str, ...]
            ) -> PreparedLines:
        key = (_beam_key(beam), np.round(sections, 12).tobytes(), effects)
        if key in self.found:
            self.reused += 1
            return self.found[key]
        if len(self.found) > 64:  # a span sweep makes new lines at every point: keep few
            self.found.clear()
        prepared = prepare_lines(beam, sections, effects)
        self.found[key] = prepared
        return prepared


def _beam_key(beam: Beam) -> tuple:
    return (beam.spans, beam.supports, beam.hinges, beam.stiffness_segments,
            beam.haunch_divisions)


def run(spec: SweepSpec, progress: Progress | None = None) -> SweepResult:
    """Compute every point of a sweep; ``progress(done, total)`` is called after each."""
    n_effects = len(spec.effects)
    grids = np.meshgrid(*[np.asarray(r.values) for r in spec.ranges], indexing="ij")
    points = np.stack([g.ravel() for g in grids], axis=1)
    total = len(points)
    values = np.full((total, n_effects), np.nan)
    xs = np.full((total, n_effects), np.nan)
    supports = np.full((total, n_effects), -1, dtype=np.int64)
    names: list[tuple[str, ...]] = []
    cache = _LineCache()
    for p, point in enumerate(points):
        model = _model_at(spec, tuple(float(v) for v in point))
        found = _evaluate(model, spec.effects, cache)
        for e, (value, x, support, _load) in enumerate(found):
            values[p, e], xs[p, e], supports[p, e] = value, x, support
        names.append(tuple(f[3] for f in found))
        if progress is not None:
            progress(p + 1, total)
    return SweepResult(spec, points, values, xs, supports, tuple(names), cache.reused)


def sweep(model: str | Path | Model, vary: Mapping[str, str] | Iterable[str],
          effects: Sequence[str] = DEFAULT_EFFECTS, progress: Progress | None = None
          ) -> SweepResult:
    """Vary one or two numbers of a model file and compute the governing effects.

    Parameters
    ----------
    model : a model file (path) or a Model read from one
    vary : ``{"load.truck.spacings[2]": "4.3:9:0.1 m"}`` or ``["PATH=START:STOP:STEP", …]``
    effects : phrases such as "moment max span 2", "reaction max support 1"
    progress : called as ``progress(done, total)`` after each point

    Example
    -------
    >>> result = trundle.sweep("bridge.toml", {"load.truck.spacings[1]": "4.3:9:0.1"},
    ...                        ["reaction max support 1", "moment max span 2"])
    >>> result.points[:, 0], result.values[:, 0]
    """
    if not isinstance(model, Model):
        model = load_model(model)
    return run(build_spec(model, vary, effects), progress)


_Found = tuple[float, float, int, str]


def _evaluate(model: Model, selectors: Sequence[EffectSelector], cache: _LineCache
              ) -> list[_Found]:
    """Every selector's value at one point of the sweep."""
    beam = model.beam
    groups: dict[tuple[str, str], list[int]] = {}
    for i, selector in enumerate(selectors):
        source = _source(model, selector)
        level = "service" if (source == "cranes" and selector.kind == "deflection") else ""
        groups.setdefault((source, level), []).append(i)
    out: list[_Found | None] = [None] * len(selectors)
    for (source, level), members in groups.items():
        cases = _cases(model, source, level)
        chosen = [selectors[i] for i in members]
        sections = _sections(model, beam, chosen)
        kinds = tuple(k for k in KINDS if any(s.kind == k for s in chosen))
        prepared = cache.get(beam, sections, kinds)
        env = envelope(prepared.beam, cases, prepared=prepared)
        for i in members:
            out[i] = _pick(env, model, selectors[i], cases)
    return [f for f in out if f is not None]


def _cases(model: Model, source: str, level: str) -> list[Any]:
    if source == "loads":
        return [entry.case for entry in loads_of(model)]
    spec = runway_spec(model)
    assert spec is not None  # checked by build_spec
    length = model.beam.length
    return [LoadCase(combination_load(c, length, with_impact=level != "service",
                                      confined=spec.end_stops), name=c.name)
            for c in crane_combinations(spec.cranes, spec.combinations)]


def _sections(model: Model, beam: Beam, selectors: Sequence[EffectSelector]
              ) -> NDArray[np.float64]:
    """The model's sections the selectors look at, and any ``at`` positions."""
    if not any(s.kind in SECTION_KINDS for s in selectors):
        return np.zeros(0)
    chosen: list[NDArray[np.float64]] = []
    for s in selectors:
        if s.kind not in SECTION_KINDS:
            continue
        if s.at is not None:
            chosen.append(np.array([_position(beam, model, s)]))
        elif s.span is not None:
            chosen.append(model.sections[_in_span(beam, model.sections, s.span - 1)])
        else:
            chosen.append(model.sections)
    points = np.sort(np.concatenate(chosen))
    keep = np.concatenate([[True], np.diff(points) > 1e-9 * beam.length])
    return points[keep]


def _in_span(beam: Beam, x: NDArray[np.float64], span: int) -> NDArray[np.int64]:
    a, b = beam.support_positions[span], beam.support_positions[span + 1]
    tolerance = 1e-9 * beam.length
    return np.flatnonzero((x >= a - tolerance) & (x <= b + tolerance))


def _name(env: Envelope, g: Any) -> str:
    return env.cases[g.case].name if g.case >= 0 else ""


def _pick(env: Envelope, model: Model, selector: EffectSelector, cases: Sequence[Any]
          ) -> _Found:
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
        target = _position(beam, model, selector)
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
        for c, case in enumerate(cases):
            for found in absolute_extremes(beam, case, selector.span - 1, selector.kind,
                                           case_index=c, extremes=(which,)):
                # never less than at the sections: the search adds, it does not replace
                if sign * found.value > sign * value:
                    value, where = found.value, found.x
                    name = case.name if found.governing.case >= 0 else ""
    return value, where, -1, name


def effect_family(selector: EffectSelector) -> str:
    """The envelope family whose units the effect is in (for labels)."""
    return "shear_left" if selector.kind == "shear" else selector.kind


__all__ = ["DEFAULT_EFFECTS", "MAX_AXES", "MAX_POINTS", "MAX_POINTS_PER_AXIS", "EffectSelector",
           "ModelPathError", "SweepError", "SweepResult", "SweepSpec", "build_spec",
           "parse_effect", "run", "sweep"]
