"""The design load model that fleet and permit results are compared with.

The design model is a parameter: a text naming load models from the library or load-model
files (docs/model-file.md); ``a+b`` makes loads act together (each where it is worst, e.g. a
design vehicle with its lane load), ``a,b`` envelopes alternatives. The io layer
(``trundle.io.design_models.design_model``) reads it into load cases in the units of each
bridge; this module only takes the exact envelope of those cases. Once a published design
case (e.g. ``hl93``) is in the library it is named the same way; until then any library or
file model serves.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from trundle.analysis.envelope import envelope
from trundle.core.influence import Effect
from trundle.loads.cases import LoadCase, Together
from trundle.workflows.bridges import Bridge


@dataclass(frozen=True)
class DesignModel:
    """A design load model: ``text`` as the user named it, and ``cases`` giving its load cases
    in a bridge's unit system (the io layer reads the files: ``trundle.io.design_models``).

    Generic on purpose: any library model, load-model file or (once it lands) published
    design case is named by text and resolved by the reader; the ratio code never reads a
    file.
    """

    text: str
    cases: Callable[[Any], Sequence[LoadCase | Together]]


def design_extremes(bridge: Bridge, design: DesignModel) -> NDArray[np.float64]:
    """(n_effects, 2): max and min of each of the bridge's effects under the design model
    (exact envelope: trundle.analysis.envelope), in the bridge's units."""
    xs = sorted({float(e.at) for e in bridge.effects if e.at is not None})
    kinds = sorted({e.kind for e in bridge.effects})
    env = envelope(bridge.beam, list(design.cases(bridge.units)), sections=xs or None,
                   effects=tuple(k for k in kinds))
    where = {e: j for j, e in enumerate(env.effects)}
    out = np.empty((len(bridge.effects), 2))
    for i, effect in enumerate(bridge.effects):
        j = where[_as_listed(effect)]
        out[i] = env.maximum[j], env.minimum[j]
    return out


def _as_listed(effect: Effect) -> Effect:
    """The effect as the envelope lists it (moment without a side)."""
    if effect.kind == "moment":
        return Effect("moment", at=effect.at)
    return effect


def ratio(traffic: NDArray[np.float64], design: NDArray[np.float64]) -> NDArray[np.float64]:
    """traffic / design where the design value is not zero (NaN elsewhere: no ratio)."""
    traffic = np.asarray(traffic, dtype=float)
    design = np.asarray(design, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(design != 0.0, traffic / np.where(design != 0.0, design, 1.0), np.nan)
