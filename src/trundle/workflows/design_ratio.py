"""The design load model that fleet and permit results are compared with.

The design model is a parameter: a text naming load models from the library or load-model
files (docs/model-file.md); ``a+b`` makes loads act together (each where it is worst, e.g. a
design vehicle with its lane load), ``a,b`` envelopes alternatives. Each is read in the units
of the bridge it is applied to. Once a published model exists in the library it is named the
same way (e.g. ``hl93``); until then any library or file model serves.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from trundle.envelope import envelope
from trundle.influence import Effect
from trundle.io.inventory import Bridge
from trundle.loadfile import read_load_model_file
from trundle.loads import library
from trundle.loads.cases import LoadCase, Together
from trundle.modelfile import ModelFileError
from trundle.units import UnitSystem


@dataclass(frozen=True)
class DesignModel:
    """A design load model by name (see the module): ``text`` as given by the user."""

    text: str

    def alternatives(self) -> list[list[str]]:
        out = [[p.strip() for p in alt.split("+")] for alt in self.text.split(",")]
        for alt in out:
            for part in alt:
                if not part:
                    raise ModelFileError(self.text, "design", "expected load-model names or "
                                         "files joined by + or ',', found an empty name")
        return out

    def cases(self, units: UnitSystem) -> list[LoadCase | Together]:
        """The load cases in ``units`` (ModelFileError naming the model if it is unknown)."""
        cases: list[LoadCase | Together] = []
        for alt in self.alternatives():
            parts = [_case(name, units) for name in alt]
            cases.append(parts[0] if len(parts) == 1 else Together(tuple(parts)))
        return cases

    def check(self) -> None:
        """Fail early (before any scan) if a name is neither in the library nor a file."""
        for alt in self.alternatives():
            for name in alt:
                _source(name)


def _source(name: str) -> Path:
    if name in library.names():
        return library.path_of(name)
    path = Path(name)
    if path.is_file():
        return path
    known = ", ".join(library.names()) or "none"
    raise ModelFileError(name, "design", f"expected a load model of the library ({known}) or "
                         f"a load-model file, found neither")


def _case(name: str, units: UnitSystem) -> LoadCase:
    read = read_load_model_file(_source(name), units)
    return LoadCase(read.load, read.impact, read.factors, name=read.name)


def design_extremes(bridge: Bridge, design: DesignModel) -> NDArray[np.float64]:
    """(n_effects, 2): max and min of each of the bridge's effects under the design model
    (exact envelope: trundle.envelope), in the bridge's units."""
    xs = sorted({float(e.at) for e in bridge.effects if e.at is not None})
    kinds = sorted({e.kind for e in bridge.effects})
    env = envelope(bridge.beam, design.cases(bridge.units), sections=xs or None,
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
