"""Bridge and building design envelopes (draft of the workflow; the wiring phase connects it
to the model-file reader, the CLI and the report).

``run(design_model)`` computes, at the model's sections (plus critical shear sections when
``[design] critical_shear`` asks for them): every live case's own envelope (design cases with
their rules, ``[[load]]`` entries, patterned live load, loaded-length lane loads), every
permanent load's effects, the design envelope of every combination with the governing case
named, and the live-load deflection checks per span.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.case_envelopes import CaseEnvelope, case_envelopes
from trundle.analysis.combinations import DesignEnvelope, design_envelope
from trundle.analysis.critical_sections import sections_from_supports
from trundle.analysis.deflection_limits import DeflectionCheck, live_load_deflection_checks
from trundle.analysis.patterns import loaded_length_lane, patterned_uniform
from trundle.analysis.permanent import PermanentEffects, permanent_effects
from trundle.io.design_tables import DesignModel
from trundle.loadfile import loads_of
from trundle.loads.patterns import UniformLoad


@dataclass(frozen=True, eq=False)
class DesignResult:
    """Everything the design envelope of one model computes.

    Fields
    ------
    sections : (n_sections,) [length], the model's and the critical shear sections
    critical : the critical shear sections among them [length]
    cases : {name: CaseEnvelope}, each live case's own envelope
    permanent : one PermanentEffects per permanent load
    designs : {combination name: DesignEnvelope}
    deflection : per span, the live-load deflection check (empty without a limit)
    """

    sections: NDArray[np.float64]
    critical: NDArray[np.float64]
    cases: dict[str, CaseEnvelope]
    permanent: list[PermanentEffects]
    designs: dict[str, DesignEnvelope]
    deflection: list[DeflectionCheck] = field(default_factory=list)


def run(design: DesignModel) -> DesignResult:
    model = design.model
    beam = model.beam
    settings = design.settings
    critical = np.unique(np.concatenate([
        sections_from_supports(beam, d, settings.support_face)
        for d in settings.critical_shear_distances] or [np.zeros(0)]))
    sections = np.unique(np.concatenate([np.asarray(model.sections, dtype=float), critical]))
    live: list[Any] = [*design.design_loads, *(e.case for e in loads_of(model))]
    for name, w, placement in design.live_patterns:
        live.append(patterned_uniform(beam, w, sections, placement, name=name))
    for name, intensity, whole in design.lane_length_loads:
        live.append(loaded_length_lane(beam, intensity, sections, whole, name=name))
    cases = case_envelopes(beam, live, sections)
    permanent = permanent_effects(beam, design.permanent, sections)
    designs = {c.name: design_envelope(c, permanent, cases) for c in design.combinations}
    deflection: list[DeflectionCheck] = []
    if settings.deflection_ratio is not None:
        movable: list[Any] = [*design.design_loads, *(e.case for e in loads_of(model))]
        movable += [UniformLoad(w, "spans" if p == "spans" else "anywhere", name=name)
                    for name, w, p in design.live_patterns]
        if movable:
            deflection = live_load_deflection_checks(beam, movable, settings.deflection_ratio)
    return DesignResult(sections, critical, cases, permanent, designs, deflection)
