"""Bridge and building design envelopes: spec → :func:`run` → :class:`DesignResult`.

``run(spec)`` computes, at the spec's sections (plus the critical shear sections the spec asks
for): every live case's own envelope (design cases with their rules, plain load cases,
patterned live load, loaded-length lane loads), every permanent load's effects, the design
envelope of every combination with the governing case named, the live-load deflection
checks per span, and where the live load stands for the governing design values of each span
and support (:mod:`trundle.workflows.design_records`). The influence lines of the beam are
prepared once per beam and sections (the envelope's prepared-lines cache, keyed on values) and
shared by every case.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.case_envelopes import CaseEnvelope, case_envelopes
from trundle.analysis.checks import DeflectionCheck, live_load_deflection_checks
from trundle.analysis.combinations import Combination, DesignEnvelope, design_envelope
from trundle.analysis.critical_sections import sections_from_supports
from trundle.analysis.patterns import LaneIntensity, loaded_length_lane, patterned_uniform
from trundle.analysis.permanent import PermanentEffects, PermanentLoad, permanent_effects
from trundle.core.beam import Beam
from trundle.loads.design_cases import DesignCase
from trundle.loads.patterns import UniformLoad
from trundle.workflows.design_records import DesignRecord, LiveLoads, design_records


@dataclass(frozen=True)
class DesignSpec:
    """What the design workflow runs.

    Fields
    ------
    beam : the beam
    sections : x of the model's sections [length]
    design_loads : design cases (``[[design_load]]``)
    loads : plain live load cases (``[[load]]``), each its own case
    live_patterns : (name, w, placement) patterned uniform live loads
    lane_length_loads : (name, w(L), whole adverse segments only?) lane loads
    permanent : permanent loads (always present)
    combinations : factored combinations
    deflection_ratio : live-load deflection limit span / ratio (None: no check)
    critical_shear_distances : distances of critical shear sections from the support faces
    support_face : half-width of the supports (face offset) [length]
    """

    beam: Beam
    sections: NDArray[np.float64]
    design_loads: Sequence[DesignCase] = ()
    loads: Sequence[Any] = ()
    live_patterns: Sequence[tuple[str, float, str]] = ()
    lane_length_loads: Sequence[tuple[str, LaneIntensity, bool]] = ()
    permanent: Sequence[PermanentLoad] = ()
    combinations: Sequence[Combination] = ()
    deflection_ratio: float | None = None
    critical_shear_distances: tuple[float, ...] = ()
    support_face: float = 0.0


@dataclass(frozen=True, eq=False)
class DesignResult:
    """Everything the design envelope of one model computes.

    Fields
    ------
    spec : what was run
    sections : (n_sections,) [length], the model's and the critical shear sections
    critical : the critical shear sections among them [length]
    cases : {name: CaseEnvelope}, each live case's own envelope
    permanent : one PermanentEffects per permanent load
    designs : {combination name: DesignEnvelope}
    deflection : per span, the live-load deflection check (empty without a limit)
    positions : {combination name: its governing design values, each with where the live
        load stands} (:mod:`trundle.workflows.design_records`): per span the largest and
        smallest design moment and the largest design shear, per support the largest
        reaction (and the smallest where it is an uplift)
    """

    spec: DesignSpec
    sections: NDArray[np.float64]
    critical: NDArray[np.float64]
    cases: dict[str, CaseEnvelope]
    permanent: list[PermanentEffects]
    designs: dict[str, DesignEnvelope]
    deflection: list[DeflectionCheck] = field(default_factory=list)
    positions: dict[str, tuple[DesignRecord, ...]] = field(default_factory=dict)


def run(spec: DesignSpec) -> DesignResult:
    """Each case's own envelope, the permanent effects, the design envelopes and checks."""
    beam = spec.beam
    critical = np.unique(np.concatenate([
        sections_from_supports(beam, d, spec.support_face)
        for d in spec.critical_shear_distances] or [np.zeros(0)]))
    sections = np.unique(np.concatenate([np.asarray(spec.sections, dtype=float), critical]))
    live: list[Any] = [*spec.design_loads, *spec.loads]
    for name, w, placement in spec.live_patterns:
        live.append(patterned_uniform(beam, w, sections, placement, name=name))
    for name, intensity, whole in spec.lane_length_loads:
        live.append(loaded_length_lane(beam, intensity, sections, whole, name=name))
    cases = case_envelopes(beam, live, sections)
    permanent = permanent_effects(beam, spec.permanent, sections)
    designs = {c.name: design_envelope(c, permanent, cases) for c in spec.combinations}
    deflection = deflection_checks_of(spec)
    live_loads = LiveLoads(beam, spec.design_loads, spec.loads, spec.live_patterns,
                           spec.lane_length_loads)
    positions = design_records(live_loads, sections, critical, cases, designs)
    return DesignResult(spec, sections, critical, cases, permanent, designs, deflection,
                        positions)


def deflection_checks_of(spec: DesignSpec) -> list[DeflectionCheck]:
    """The live-load deflection checks of a design spec (empty without a limit): what
    :func:`run` checks, without the envelopes (a what-if sweep asks for them at every
    point)."""
    if spec.deflection_ratio is None:
        return []
    movable: list[Any] = [*spec.design_loads, *spec.loads]
    movable += [UniformLoad(w, "spans" if p == "spans" else "anywhere", name=name)
                for name, w, p in spec.live_patterns]
    if not movable:
        return []
    return live_load_deflection_checks(spec.beam, movable, spec.deflection_ratio)
