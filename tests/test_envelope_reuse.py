"""What the envelope keeps between calls is keyed by value, and its lazily built Governing
records agree with its arrays. Source: trundle's own fresh computation (caches emptied)
as the reference; common practice, no source."""

from __future__ import annotations

import numpy as np

import trundle
from trundle.analysis import envelope as envelope_module

SPANS = [18.0, 24.0, 18.0]


def _fresh(beam, loads, **kwargs):
    envelope_module._PREPARED.clear()
    envelope_module._ARRANGEMENTS.clear()
    return trundle.envelope(beam, loads, **kwargs)


def test_loads_with_the_same_name_but_other_values_are_not_confused() -> None:
    beam = trundle.Beam(SPANS)
    light = trundle.Vehicle([50.0, 100.0], [4.0], name="truck")
    heavy = trundle.Vehicle([50.0, 150.0], [4.0], name="truck")
    wider = trundle.Vehicle([50.0, 150.0], [5.0], name="truck")
    results = [trundle.envelope(beam, [v]).max("moment") for v in (light, heavy, wider)]
    for vehicle, got in zip((light, heavy, wider), results, strict=True):
        np.testing.assert_array_equal(got, _fresh(beam, [vehicle]).max("moment"))
    assert not np.array_equal(results[0], results[1])
    assert not np.array_equal(results[1], results[2])


def test_a_repeated_call_equals_a_call_from_nothing() -> None:
    beam = trundle.Beam(SPANS, supports=["fixed", "pin", "pin", "free"])
    loads = [trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 4.3], name="truck"),
             trundle.Vehicle([80.0, 80.0], [1.2], name="tandem", reversible=False)]
    first = _fresh(beam, loads)
    again = trundle.envelope(trundle.Beam(SPANS, supports=["fixed", "pin", "pin", "free"]),
                             loads)
    for kind, side in (("moment", None), ("shear", "left"), ("shear", "right"),
                       ("deflection", None), ("reaction", None)):
        for which in ("max", "min"):
            a = getattr(first, which)(kind, side)
            b = getattr(again, which)(kind, side)
            np.testing.assert_array_equal(a, b)
            assert first.governing(kind, which, side) == again.governing(kind, which, side)


def test_lazy_governing_agrees_with_the_values() -> None:
    beam = trundle.Beam(SPANS)
    env = trundle.envelope(beam, [trundle.Vehicle([35.0, 145.0], [4.3]),
                                  trundle.UniformLoad(9.0, name="lane")])
    for records, values in ((env.governing_max, env.maximum),
                            (env.governing_min, env.minimum)):
        assert len(records) == len(env.effects) == values.size
        listed = list(records)
        np.testing.assert_array_equal([g.value for g in listed], values)
        assert records[-1] is listed[-1]
        assert records[1:4] == tuple(listed[1:4])
        assert all(g.case == -1 or g.load for g in listed)  # named after their case
    values = env.maximum
    values[:] = 0.0  # a copy: the envelope keeps its own
    assert env.maximum.any()
