"""Plausibility warnings (trundle.io.plausibility): they fire on slips such as E = "200 MPa"
for a steel girder, and stay silent on every bundled example.

Ranges are common practice, no source (see the module docstring).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
import pytest

from trundle.analysis.envelope import envelope
from trundle.io.cranes import cranes_of
from trundle.io.loads import loads_of
from trundle.io.modelfile import Model, load_model
from trundle.io.plausibility import plausibility_warnings
from trundle.io.units import parse_quantity

ROOT = Path(__file__).resolve().parents[1]
# every model file among the examples (a permit vehicle in examples/fleet is a load-model
# file, not a model: it has no [beam])
EXAMPLES = sorted(p for p in (ROOT / "examples").rglob("*.toml")
                  if "[beam]" in p.read_text(encoding="utf-8"))


def test_steel_girder_with_modulus_in_mpa_warns():
    # E = "200 MPa" read as 2e5 kN/m²: a thousand times too soft for steel
    warnings = plausibility_warnings("SI", [12.0], moduli={"beam.E": 2e5},
                                     second_moments={"beam.I": 5.52e-4})
    assert len(warnings) == 1
    assert warnings[0].startswith("warning: beam.E = 0.2 GPa is outside the usual range")
    assert "\n" not in warnings[0]


def test_steel_girder_with_modulus_in_gpa_is_silent():
    assert plausibility_warnings("SI", [12.0], moduli={"beam.E": 2.1e8},
                                 second_moments={"beam.I": 5.52e-4}) == []


def test_second_moment_in_mm4_instead_of_cm4_warns():
    # "55200 mm^4" instead of "55200 cm^4": 5.52e-8 m^4 on 9 m
    warnings = plausibility_warnings("SI", [7.2, 9.0, 7.2], second_moments={"beam.I": 5.52e-8})
    assert len(warnings) == 1 and "beam.I" in warnings[0] and "I / L^4" in warnings[0]


@pytest.mark.parametrize(("span", "fires"), [(0.0072, True), (0.1, False), (1000.0, False),
                                             (1500.0, True)])
def test_span_range(span, fires):
    assert bool(plausibility_warnings("SI", [span])) == fires


def test_us_units_converted():
    # 29000 ksi = 4.176e6 kip/ft²: ordinary steel, silent; 29 ksi (a slip) warns
    assert plausibility_warnings("US", [66.0], moduli={"beam.E": 4.176e6},
                                 second_moments={"beam.I": 9040 / 12**4}) == []
    assert plausibility_warnings("US", [66.0], moduli={"beam.E": 4176.0})


def test_crane_span_and_deflection():
    warnings = plausibility_warnings("SI", [7.5], crane_spans={"crane[0].span": 1e-300},
                                     deflections=[("span 1", 7.5, 0.2)])
    assert len(warnings) == 2
    assert "crane[0].span" in warnings[0]
    assert "span / 37.5" in warnings[1]


def test_flexural_rigidity_given_directly():
    assert plausibility_warnings("SI", [24.0], flexural_rigidities={"beam.EI": 4.2e6}) == []
    assert plausibility_warnings("SI", [24.0], flexural_rigidities={"beam.EI": 1.0})


def _numbers(model: Model) -> dict[str, Any]:
    """The plain numbers of a model file the warnings look at, as a reader would pass them."""
    units, beam = model.units, model.beam
    raw_beam = dict(model.raw["beam"])
    moduli, inertias, rigidities = {}, {}, {}
    if "E" in raw_beam:
        moduli["beam.E"] = parse_quantity(raw_beam["E"], "modulus", units)
    if "I" in raw_beam:
        inertias["beam.I"] = parse_quantity(raw_beam["I"], "second moment of area", units)
    if "EI" in raw_beam:
        rigidities["beam.EI"] = parse_quantity(raw_beam["EI"], "flexural rigidity", units)
    for i, segment in enumerate(raw_beam.get("stiffness", [])):
        for name, quantity, store in (("E", "modulus", moduli),
                                      ("I", "second moment of area", inertias),
                                      ("I_end", "second moment of area", inertias),
                                      ("EI", "flexural rigidity", rigidities),
                                      ("EI_end", "flexural rigidity", rigidities)):
            if name in segment:
                store[f"beam.stiffness[{i}].{name}"] = parse_quantity(segment[name], quantity,
                                                                      units)
    cranes = {f"crane[{i}].span": entry.crane.span for i, entry in enumerate(cranes_of(model))}
    return {"spans": list(beam.spans), "moduli": moduli, "second_moments": inertias,
            "flexural_rigidities": rigidities, "crane_spans": cranes}


def _deflections(model: Model) -> list[tuple[str, float, float]]:
    """Largest deflection per span under the model's [[load]] tables (crane runways have
    their own deflection checks against service-class limits)."""
    entries = loads_of(model)
    if not entries:
        return []
    found = envelope(model.beam, [e.case for e in entries], model.sections,
                     effects=("deflection",))
    sections = found.sections
    worst = np.maximum(np.abs(found.max("deflection")), np.abs(found.min("deflection")))
    ends = model.beam.support_positions
    out = []
    for i, (a, b) in enumerate(zip(ends[:-1], ends[1:], strict=True)):
        inside = (sections >= a) & (sections <= b)
        out.append((f"span {i + 1}", b - a, float(worst[inside].max())))
    return out


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_silent_on_every_bundled_example(path):
    model = load_model(path)
    warnings = plausibility_warnings(model.units.name, deflections=_deflections(model),
                                     **_numbers(model))
    assert warnings == []


# --- as the commands call them: from a model read from a file -----------------------------


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_model_warnings_silent_on_every_bundled_example(path):
    from trundle.io.plausibility import deflection_warnings, model_warnings

    model = load_model(path)
    assert model_warnings(model) == []
    for where, span, largest in _deflections(model):
        assert largest <= span / 50, where
    entries = loads_of(model)
    if entries:
        found = envelope(model.beam, [e.case for e in entries], model.sections,
                         effects=("deflection",))
        largest = np.maximum(np.abs(found.max("deflection")), np.abs(found.min("deflection")))
        assert deflection_warnings(model, list(found.sections), list(largest)) == []


def test_model_warnings_fire_on_a_modulus_in_mpa():
    from trundle.io.modelfile import read_model
    from trundle.io.plausibility import model_warnings

    model = read_model('units = "SI"\n[beam]\nspans = [12.0]\nsupports = ["pin", "pin"]\n'
                       'E = "200 MPa"\nI = "55200 cm^4"\n')
    warnings = model_warnings(model)
    assert len(warnings) == 1 and warnings[0].startswith("warning: beam.E = 0.2 GPa")


def test_deflection_warning_from_an_envelope():
    from trundle.io.modelfile import read_model
    from trundle.io.plausibility import deflection_warnings

    model = read_model('units = "SI"\n[beam]\nspans = [10.0, 10.0]\n'
                       'supports = ["pin", "pin", "pin"]\nEI = 1e5\n')
    # 0.25 m in span 2 is span / 40: more than span / 50
    warnings = deflection_warnings(model, [2.0, 5.0, 15.0], [0.01, 0.1, 0.25])
    assert len(warnings) == 1 and "span 2" in warnings[0] and "span / 40" in warnings[0]
