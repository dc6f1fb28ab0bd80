"""Reading the load models the fleet and permit workflows compare with or run.

A design model is named by text: load models of the library or load-model files
(docs/model-file.md); ``a+b`` makes loads act together (each where it is worst, e.g. a design
vehicle with its lane load), ``a,b`` envelopes alternatives. Each is read in the units of the
bridge it is applied to. This is the one place that turns the text into load cases, so a new
kind of load-model file (a published design case such as ``hl93``, once it is in the
library) reaches the ratios by extending the reader here; the workflows only see
:class:`~trundle.workflows.design_ratio.DesignModel`.
"""

from __future__ import annotations

from pathlib import Path

from trundle.io.loads import read_load_model_file
from trundle.io.modelfile import ModelFileError
from trundle.io.units import UnitSystem
from trundle.loads import library
from trundle.loads.cases import LoadCase, Together
from trundle.loads.vehicles import Vehicle
from trundle.workflows.design_ratio import DesignModel


def design_model(text: str) -> DesignModel:
    """The design model named by ``text``; every name is checked now, before any scan
    (ModelFileError naming the model if it is neither in the library nor a file)."""
    alternatives = _alternatives(text)
    for alt in alternatives:
        for name in alt:
            _source(name)

    def cases(units: UnitSystem) -> list[LoadCase | Together]:
        out: list[LoadCase | Together] = []
        for alt in alternatives:
            parts = [_case(name, units) for name in alt]
            out.append(parts[0] if len(parts) == 1 else Together(tuple(parts)))
        return out

    return DesignModel(text, cases)


def permit_vehicle(name: str, units: UnitSystem) -> Vehicle:
    """One definite permit vehicle (fixed spacings) from the library or a load-model file."""
    path = _source(name, "vehicle")
    read = read_load_model_file(path, units)
    if not isinstance(read.load, Vehicle):
        raise ModelFileError(str(path), "axles", f"expected one permit vehicle, found a "
                             f"{read.kind}")
    if read.load.parameters():
        raise ModelFileError(str(path), "spacings", "expected fixed spacings for a permit "
                             "vehicle (one definite vehicle), found a range")
    return read.load


def _alternatives(text: str) -> list[list[str]]:
    out = [[p.strip() for p in alt.split("+")] for alt in text.split(",")]
    for alt in out:
        for part in alt:
            if not part:
                raise ModelFileError(text, "design", "expected load-model names or files "
                                     "joined by + or ',', found an empty name")
    return out


def _source(name: str, key: str = "design") -> Path:
    if name in library.names():
        return library.path_of(name)
    path = Path(name)
    if path.is_file():
        return path
    known = ", ".join(library.names()) or "none"
    raise ModelFileError(name, key, f"expected a load model of the library ({known}) or a "
                         f"load-model file, found neither")


def _case(name: str, units: UnitSystem) -> LoadCase:
    read = read_load_model_file(_source(name), units)
    return LoadCase(read.load, read.impact, read.factors, name=read.name)
