"""The public Python API: the names the README's Python section uses exist and work.

Numbers here are checked against closed forms (simple span, one point load: R = P/2 at
mid-span; M = P·L/4) — common practice, no source needed beyond statics.
"""

import importlib

import pytest

import trundle


def test_the_envelope_function_and_its_module_are_both_reachable():
    module = importlib.import_module("trundle.analysis.envelope")
    assert trundle.envelope is module.envelope
    beam = trundle.Beam(spans=[10.0])
    env = trundle.envelope(beam, [trundle.Vehicle(loads=[8.0])], sections=[5.0],
                           effects=("moment",))
    assert env.max("moment")[0] == pytest.approx(8.0 * 10.0 / 4.0, rel=1e-12)


def test_beam_methods_still_work_for_users():
    beam = trundle.Beam(spans=[10.0])
    line = beam.influence("moment", at=5.0)
    assert line(5.0) == pytest.approx(2.5, rel=1e-12)  # L/4 at mid-span


def test_crane_runway_from_python_without_a_model_file():
    crane = trundle.Crane("bay crane", capacity=200.0, bridge_weight=300.0,
                          trolley_weight=50.0, span=20.0, hook_approach=1.0,
                          wheel_spacings=(3.6,))
    spec = trundle.RunwaySpec(cranes=(crane,), service_class="C")
    result = trundle.analyse_runway(trundle.Beam(spans=[8.0]), spec)
    assert isinstance(result, trundle.RunwayResult)
    wheel = crane.wheels()
    # one span, both wheels: the reaction over a support is at most both wheels with impact
    assert result.strength.max("reaction")[0] <= 2 * wheel.maximum * (1 + wheel.impact) + 1e-9
    assert result.strength.max("reaction")[0] >= wheel.maximum * (1 + wheel.impact) - 1e-9


def test_a_runway_spec_without_cranes_is_refused_by_the_analysis():
    with pytest.raises(trundle.ModelError, match="at least one crane"):
        trundle.analyse_runway(trundle.Beam(spans=[8.0]), trundle.RunwaySpec())
