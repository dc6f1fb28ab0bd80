"""The structure: the beam, its finite-element model, exact influence lines, fixed-load statics.

The convenience methods ``Beam.influence``, ``Beam.influence_set`` and ``Beam.static`` are bound
here, one level above the modules they join, so that no module of the layer imports another in
a cycle (beam.py is imported by fem, influence and statics and imports none of them).
"""

from __future__ import annotations

from typing import Any, Literal

from trundle.core.beam import Beam
from trundle.core.influence import Effect, InfluenceLine, InfluenceSet, influence_set
from trundle.core.statics import StaticResult, solve_static


def _influence(beam: Beam, effect: str, at: float | None = None, support: int | None = None,
               side: Literal["left", "right"] | None = None) -> InfluenceLine:
    """Influence line of one effect for a unit downward load moving along the beam.

    ``effect`` is ``"reaction"`` or ``"support_moment"`` (with ``support=``), or
    ``"moment"``, ``"shear"`` (``side=``), ``"deflection"``, ``"rotation"`` (with ``at=``).
    """
    return influence_set(beam, [Effect(effect, at=at, support=support, side=side)]).line(0)


def _influence_set(beam: Beam, effects: Any) -> InfluenceSet:
    """Many influence lines from one factorisation; all share the same knots."""
    return influence_set(beam, effects)


def _static(beam: Beam, loads: Any) -> StaticResult:
    """Reactions and exact diagrams for fixed loads (see :mod:`trundle.core.statics`)."""
    return solve_static(beam, loads)


Beam.influence = _influence
Beam.influence_set = _influence_set
Beam.static = _static
