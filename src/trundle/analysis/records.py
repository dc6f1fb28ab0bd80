"""Result records: every extreme of an envelope as numbers and names, for the outputs.

An :class:`ExtremeRecord` says what governs one extreme — the value (core units), the
section, the governing load case by name (not an index), its direction, where its loads
stand, the stretches a placed uniform load covers, the spacings and gaps found — with no
words and no display units: :mod:`trundle.report` turns records into tables, CSV, JSON and
figures and asks the envelope for nothing. :class:`EnvelopeRecords` gives the records of one
:class:`~trundle.analysis.envelope.Envelope` per section, per support and the shear acting
with each moment extreme; workflow results hand them out (``MovingLoadsResult.records``,
``RunwayResult.records``).

Families name an effect with its side: ``moment``, ``shear_left``, ``shear_right``,
``deflection`` at sections; ``reaction``, ``support_moment`` at supports
(:func:`trundle.analysis.envelope.kind_and_side` maps a family to (kind, side)).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.concurrent import concurrent_matching
from trundle.analysis.envelope import AbsoluteExtreme, Envelope, Governing, kind_and_side
from trundle.core.beam import Beam
from trundle.loads.cases import LoadCase, Together
from trundle.loads.patterns import UniformLoad
from trundle.loads.vehicles import Train, Vehicle
from trundle.scan.engine import TermGroup

# The section families of an envelope, in the order of the CSV columns.
SECTION_FAMILIES = ("moment", "shear_left", "shear_right", "deflection")
SUPPORT_FAMILIES = ("reaction", "support_moment")


@dataclass(frozen=True)
class ExtremeRecord:
    """One extreme and what governs it: numbers and names only, in the core's units.

    Fields
    ------
    family : moment, shear_left, shear_right, deflection, reaction, support_moment
    which : "max" or "min"
    value : the extreme [the family's unit]
    x : the section (or the support's position) [length]
    case : the governing load case's name; "" for the empty beam
    direction : +1 towards +x, −1 towards −x, 0 placed load or empty beam
    lead_x : x of the lead (first listed) axle, or of a placed load's point load [length]
    axles : x of every concentrated load of the governing position [length]
    point_loads : the concentrated loads standing at ``axles`` (impact included; one moving
        case only, empty otherwise) [force]
    loaded : stretches loaded by a placed uniform load, adjacent ones joined [(x0, x1), …]
    placement : how a placed uniform load is placed ("anywhere", "spans", "everywhere"; "loaded
        length" for a lane load w(L) on its worst loaded set); "" for a moving load
    point_side : for a placed load's point load standing at a shear section: −1 just left,
        +1 just right of it, 0 otherwise
    face : where an axle standing at the section stands: "on", "left", "right" (just left or
        right of it, for shear, whose line jumps there) or "" when none stands there
    searched : ((name, value), …) the searched spacings and gaps found [length]
    parts : for loads acting together, the record of each part that is loaded
    certified : for an extreme anywhere in a span: False when a sampled search found it (see
        ``AbsoluteExtreme.certified``); True otherwise
    attached : stretches of the beam covered by a moving load's attached uniform load (a
        train's load ahead or behind), cut to the beam, with its intensity [(x0, x1, w), …]
        [length, force/length]; for loads acting together, those of every part
    """

    family: str
    which: str
    value: float
    x: float
    case: str = ""
    direction: int = 0
    lead_x: float | None = None
    axles: tuple[float, ...] = ()
    point_loads: tuple[float, ...] = ()
    loaded: tuple[tuple[float, float], ...] = ()
    placement: str = ""
    point_side: int = 0
    face: str = ""
    searched: tuple[tuple[str, float], ...] = ()
    parts: tuple[ExtremeRecord, ...] = field(default=())
    certified: bool = True
    attached: tuple[tuple[float, float, float], ...] = ()

    @property
    def governed(self) -> bool:
        """Whether a load makes it worse than the empty beam."""
        return bool(self.case)

    @property
    def together(self) -> bool:
        """Whether it is an extreme of loads acting together (see ``parts``)."""
        return bool(self.parts) or self.placement == "not loaded"


def span_faces(beam: Beam, x: NDArray[np.float64], span: int
               ) -> tuple[NDArray[np.int64], NDArray[np.int64], NDArray[np.int64]]:
    """The sections ``x`` of ``span`` (both supports included) and which of their shear faces
    lie inside it: (all, right faces — every section but the right support, left faces —
    every section but the left support), as indices into ``x``."""
    inside = beam.sections_in_span(x, span)
    a, b = beam.support_positions[span], beam.support_positions[span + 1]
    tolerance = 1e-9 * beam.length
    return inside, inside[x[inside] < b - tolerance], inside[x[inside] > a + tolerance]


def searched_names(load: Any) -> list[str]:
    """Names of the searched dimensions of a load, in the order of ``load.parameters()``
    (for loads acting together: those of each part, labelled with the part's name)."""
    if isinstance(load, Together):
        return [f"{part.name}: {label}" for part in load.parts
                for label in searched_names(part.load)]
    if isinstance(load, Vehicle):
        return [f"spacing {i + 1}-{i + 2}" for i, s in enumerate(load.spacings)
                if isinstance(s, tuple)]
    if isinstance(load, Train):
        labels = []
        for i, vehicle in enumerate(load.vehicles):
            labels.extend(f"vehicle {i + 1} {label}" for label in searched_names(vehicle))
            if i < len(load.gaps) and isinstance(load.gaps[i], tuple):
                labels.append(f"gap {i + 1}-{i + 2}")
        return labels
    return []


def joined_stretches(stretches: Sequence[tuple[float, float]], length: float
                     ) -> tuple[tuple[float, float], ...]:
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
    return tuple((float(a), float(b)) for a, b in out)


class _Groups:
    """The TermGroup of each (load case, direction, searched values) an envelope's records
    meet, made once: thousands of sections share a few, and making one costs more than the
    rest of a record. The case is named by where it is (its index in the envelope, and in
    its Together), not by identity."""

    def __init__(self, env: Envelope) -> None:
        self.env = env
        self._found: dict[tuple, tuple[TermGroup, NDArray[np.float64], tuple[float, ...],
                                       tuple[str, ...]]] = {}

    def of(self, where: tuple[int, ...], case: LoadCase, g: Governing
           ) -> tuple[TermGroup, NDArray[np.float64], tuple[float, ...], tuple[str, ...]]:
        """(group, its point offsets u, its point loads, the load's searched names)."""
        key = (where, g.direction, g.searched)
        found = self._found.get(key)
        if found is None:
            group = self.env._group(case, g)
            found = (group, np.asarray(group.point_u, dtype=float),
                     tuple(float(p) for p in group.point_P), tuple(searched_names(case.load)))
            self._found[key] = found
        return found


def extreme_record(env: Envelope, family: str, which: str, g: Governing, x: float,
                   groups: _Groups | None = None) -> ExtremeRecord:
    """``g`` (a Governing of ``env``) at ``x`` as a record (``groups``: kept between the
    records of one envelope)."""
    if g.case < 0:
        return ExtremeRecord(family, which, g.value, x)
    groups = _Groups(env) if groups is None else groups
    case = env.cases[g.case]
    if isinstance(case, Together):
        return _together_record(env, family, which, g, x, case, groups)
    return _case_record(env, family, which, g, x, case, (g.case,), groups, g.value, True)


def _case_record(env: Envelope, family: str, which: str, own: Governing, x: float,
                 case: LoadCase, where: tuple[int, ...], groups: _Groups, value: float,
                 alone: bool) -> ExtremeRecord:
    """One load case: ``own`` is its own Governing (reference, side, searched …) and
    ``value`` the value the record states (a Together's, for one of its parts); ``alone``:
    not a part of loads acting together (only then are the point loads listed)."""
    load = case.load
    if isinstance(load, UniformLoad):
        stretches, point_x = env.loaded_stretches(own)
        point = point_x if load.point_load else None
        side = int(own.side) if (point is not None and family.startswith("shear")) else 0
        return ExtremeRecord(family, which, value, x, case.name, 0, point,
                             (point,) if point is not None else (), (),
                             joined_stretches(stretches, env.beam.length), load.placement,
                             side)
    group, point_u, point_P, names = groups.of(where, case, own)
    positions = own.reference - point_u
    face = ""
    if family in SECTION_FAMILIES:
        face = env.axle_face(own, x, kind_and_side(family)[0], own.side, positions)
    axles = tuple(positions.tolist())
    searched = tuple(zip(names, own.searched, strict=False))
    return ExtremeRecord(family, which, value, x, case.name, int(own.direction),
                         float(own.reference), axles, point_P if alone else (), face=face,
                         searched=searched, attached=_attached(env, group, own))


def _attached(env: Envelope, group: TermGroup, own: Governing
              ) -> tuple[tuple[float, float, float], ...]:
    """Where a moving load's attached uniform loads lie on the beam (x = reference − u, as
    for its axles), cut to the beam; empty when it has none or none reaches the beam."""
    if not group.uniform:
        return ()
    length = env.beam.length
    out = []
    for u0, u1, w in group.uniform:
        a, b = max(0.0, own.reference - u1), min(length, own.reference - u0)
        if b - a > 1e-9 * length and w > 0:
            out.append((float(a), float(b), float(w)))
    return tuple(sorted(out))


def _together_record(env: Envelope, family: str, which: str, g: Governing, x: float,
                     together: Together, groups: _Groups) -> ExtremeRecord:
    """Loads acting together: each loaded part on its own (the value is the sum's); the
    direction and lead axle those of the first moving part, every axle, every stretch."""
    parts = []
    for part in g.parts:
        if part.case < 0:  # this part makes nothing worse than the empty beam
            continue
        parts.append(_case_record(env, family, which, part, x, together.parts[part.case],
                                  (g.case, part.case), groups, g.value, False))
    if not parts:
        return ExtremeRecord(family, which, g.value, x, together.name, placement="not loaded")
    moving = [p for p in parts if not p.placement]
    lead = moving[0] if moving else parts[0]
    return ExtremeRecord(
        family, which, g.value, x, together.name, lead.direction, lead.lead_x,
        tuple(a for p in parts for a in p.axles), (),
        joined_stretches([s for p in parts for s in p.loaded], env.beam.length),
        searched=tuple((f"{p.case}: {name}", v) for p in parts for name, v in p.searched),
        parts=tuple(parts), attached=tuple(a for p in parts for a in p.attached))


class EnvelopeRecords:
    """The records of one envelope, each made once when first asked for."""

    def __init__(self, env: Envelope) -> None:
        self.env = env
        self._cache: dict[Any, Any] = {}
        self._groups = _Groups(env)

    def at_sections(self, family: str, which: str) -> list[ExtremeRecord]:
        """One record per section of a section family."""
        key = ("sections", family, which)
        if key not in self._cache:
            kind, side = kind_and_side(family)
            governing = self.env.governing(kind, which, side)
            self._cache[key] = [extreme_record(self.env, family, which, g, x, self._groups)
                                for g, x in zip(governing, self.env.sections.tolist(),
                                                strict=True)]
        return self._cache[key]

    def at_supports(self, family: str, which: str) -> dict[int, ExtremeRecord]:
        """Per support that has the effect (reaction or support moment): its record."""
        key = ("supports", family, which)
        if key not in self._cache:
            env = self.env
            source = env.governing_max if which == "max" else env.governing_min
            out = {}
            for line in env.index[family]:
                support = env.effects[line].support
                x = float(env.beam.support_positions[support])
                out[support] = extreme_record(env, family, which, source[line], x,
                                              self._groups)
            self._cache[key] = out
        return self._cache[key]

    def absolute(self, extreme: AbsoluteExtreme) -> ExtremeRecord:
        """An absolute moment extreme (anywhere in a span) as a record."""
        record = extreme_record(self.env, "moment", extreme.which, extreme.governing, extreme.x,
                                self._groups)
        return dataclasses.replace(record, certified=extreme.certified)

    def concurrent_shear(self, which: str) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Shear just left and just right of each section under the load that gives its max
        (or min) moment [force]."""
        key = ("concurrent shear", which)
        if key not in self._cache:
            # every section at once (the same numbers as env.concurrent_matching)
            values = concurrent_matching(self.env, "moment", which,
                                         ("shear_left", "shear_right"))
            left = values["shear_left"] + 0.0
            right = values["shear_right"] + 0.0
            self._cache[key] = (left, right)
        return self._cache[key]
