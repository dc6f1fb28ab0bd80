"""What-if sweeps from a model file: paths and ranges read, the model read again per point.

:func:`build_spec` checks a sweep asked for by model paths and ranges
(:mod:`trundle.io.model_paths`) and effect phrases, and returns the
:class:`~trundle.workflows.sweep.SweepSpec` the workflow runs: its ``subject_at`` writes the
swept values into a copy of the parsed TOML and reads the model again, so every value is
checked exactly as in a model file. :func:`sweep` does both and runs it (``trundle.sweep``).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path

from trundle.io.cranes import runway_spec
from trundle.io.design_tables import design_model_of, design_spec_of, has_design_tables
from trundle.io.loads import loads_of
from trundle.io.model_paths import (
    ModelPathError,
    SweepRange,
    apply,
    parse_range,
    resolve,
    split_vary,
)
from trundle.io.modelfile import Model, ModelFileError, load_model, read_model_data
from trundle.io.units import UnitError, parse_quantity
from trundle.workflows.sweep import (
    DEFAULT_EFFECTS,
    MAX_AXES,
    MAX_EFFECTS,
    MAX_POINTS,
    EffectSelector,
    Progress,
    SweepAxis,
    SweepError,
    SweepResult,
    SweepSpec,
    SweepSubject,
    check_selector,
    parse_effect,
    run,
)


def subject_of(model: Model) -> SweepSubject:
    """What a sweep analyses in a model read from a file."""
    try:
        runway = runway_spec(model)
        design = design_spec_of(design_model_of(model)) if has_design_tables(model) else None
    except ModelFileError as error:
        raise SweepError(str(error)) from None
    return SweepSubject(model.beam, model.sections,
                        tuple(entry.case for entry in loads_of(model)), runway, design)


def model_at(model: Model, ranges: Sequence[SweepRange], point: Sequence[float]) -> Model:
    """The model with the swept numbers set to ``point``; SweepError (one line naming the
    values) when the model refuses them."""
    values = {r.path: r.text(v) for r, v in zip(ranges, point, strict=True)}
    raw = apply(model.raw, values)
    try:
        return read_model_data(raw, model.name, model.source)
    except ModelFileError as error:
        where = ", ".join(f"{r.path.text} = {v:g} {r.label}"
                          for r, v in zip(ranges, point, strict=True))
        raise SweepError(f"at {where}: {error}") from None


@dataclasses.dataclass(frozen=True)
class _SubjectAt:
    """``subject_at`` of a spec built from a model file (a picklable callable)."""

    model: Model
    ranges: tuple[SweepRange, ...]

    def __call__(self, point: tuple[float, ...]) -> SweepSubject:
        changed = model_at(self.model, self.ranges, point)
        try:
            return subject_of(changed)
        except SweepError as error:
            where = ", ".join(f"{r.path.text} = {v:g} {r.label}"
                              for r, v in zip(self.ranges, point, strict=True))
            raise SweepError(f"at {where}: {error}") from None


def build_spec(model: Model, vary: Mapping[str, str] | Iterable[str],
               effects: Sequence[str] = DEFAULT_EFFECTS, check_points: bool = True
               ) -> SweepSpec:
    """Check a sweep before running it.

    Parameters
    ----------
    model : the model read from its file
    vary : ``{path: "START:STOP:STEP"}`` or ``["PATH=START:STOP:STEP", …]``; one or two
    effects : effect phrases (see :func:`trundle.workflows.sweep.parse_effect`)
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
    selectors = tuple(_with_position(model, parse_effect(e)) for e in effects)
    subject = subject_of(model)
    for selector in selectors:
        check_selector(subject, selector, model.name)
    axes = tuple(SweepAxis(r.path.text, r.values, r.label) for r in ranges)
    subject_at = _SubjectAt(model, tuple(ranges))
    spec = SweepSpec(axes, selectors, subject_at, model.title, _span_notes(model, ranges),
                     model.units)
    if check_points:
        first = tuple(r.values[0] for r in ranges)
        for axis, r in enumerate(ranges):
            for value in r.values:
                point = list(first)
                point[axis] = value
                subject_at(tuple(point))
    return spec


def _with_position(model: Model, selector: EffectSelector) -> EffectSelector:
    """The selector with its ``at`` read in the model's units."""
    if selector.at is None:
        return selector
    try:
        x = parse_quantity(selector.at, "position", model.units)
    except UnitError as error:
        raise SweepError(f'--effect "{selector.text}": {error}') from None
    beam = model.beam
    tolerance = 1e-9 * beam.length
    if not -tolerance <= x <= beam.length + tolerance:
        raise SweepError(f'--effect "{selector.text}": expected a position on the beam (0 to '
                         f"{beam.length:g} {model.units.label('length')}), found "
                         f'"{selector.at}"')
    return dataclasses.replace(selector, position=x)


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


def sweep(model: str | Path | Model, vary: Mapping[str, str] | Iterable[str],
          effects: Sequence[str] = DEFAULT_EFFECTS, progress: Progress | None = None
          ) -> SweepResult:
    """Vary one or two numbers of a model file and compute the governing effects.

    Parameters
    ----------
    model : a model file (path) or a Model read from one
    vary : ``{"load.truck.spacings[1]": "4.3:9:0.1 m"}`` or ``["PATH=START:STOP:STEP", …]``
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


__all__ = ["ModelPathError", "SweepError", "build_spec", "model_at", "subject_of", "sweep"]
