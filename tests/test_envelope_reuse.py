"""What the envelope keeps between calls is keyed by value, and its lazily built Governing
records agree with its arrays; the merge of both directions' scans against its plain twin
(tests/naive_scan.py). Source: trundle's own fresh computation (caches emptied)
as the reference; common practice, no source."""

from __future__ import annotations

import numpy as np
import pytest

import trundle
from naive_scan import plain_merge_directions
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


def test_a_changed_beam_sections_or_factors_never_reuse_what_was_kept() -> None:
    # every cache is keyed by value: each envelope, computed right after a similar one (the
    # caches warm), must equal one computed from nothing, and differ where a value differs
    truck = trundle.Vehicle([35.0, 145.0, 145.0], [4.3, 4.3], name="truck")
    base = trundle.Beam(SPANS)
    variants = [
        (base, [truck], None),
        (trundle.Beam(SPANS, EI=[(0.0, 30.0, 1.0), (30.0, 60.0, 2.0)]), [truck], None),
        (trundle.Beam(SPANS, supports=["pin", trundle.Spring(50.0), "pin", "pin"]), [truck],
         None),
        (trundle.Beam([18.0, 24.0, 18.5]), [truck], None),
        (base, [trundle.LoadCase(truck, impact=0.33)], None),
        (base, [trundle.LoadCase(truck, factors=(("share", 0.6),))], None),
        (base, [trundle.LoadCase(truck, load_factor=1.75)], None),
        (base, [truck], np.linspace(0.0, 60.0, 13)),
    ]
    warm = []
    for beam, loads, sections in variants:
        warm.append(trundle.envelope(beam, loads, sections=sections))
    for (beam, loads, sections), got in zip(variants, warm, strict=True):
        want = _fresh(beam, loads, sections=sections)
        for kind in ("moment", "deflection", "reaction"):
            np.testing.assert_array_equal(got.max(kind), want.max(kind))
            np.testing.assert_array_equal(got.min(kind), want.min(kind))
        assert got.governing("moment", "max") == want.governing("moment", "max")
    moments = [env.max("moment") for env in warm[:7]]
    for other in moments[1:]:
        assert not np.array_equal(moments[0], other)
    # sections changed in place between two calls are other sections
    sections = np.linspace(0.0, 54.0, 7)
    first = trundle.envelope(base, [truck], sections=sections).max("moment")
    sections += 1.0
    second = trundle.envelope(base, [truck], sections=sections).max("moment")
    np.testing.assert_array_equal(second, _fresh(base, [truck], sections=sections).max("moment"))
    assert not np.array_equal(first, second)


@pytest.mark.parametrize("seed", range(6))
def test_merged_directions_keep_what_offering_each_direction_keeps(seed: int) -> None:
    # both directions' rows of one kernel call are merged into values and the direction
    # each came from; positions are read from the rows only when asked for. Twin: each
    # direction offered in turn to the empty beam (tests/naive_scan.py); values drawn from
    # a few levels so ties and zeros occur
    rng = np.random.default_rng(seed)
    n, directions = 40, np.array([1, -1], dtype=np.int64)
    scans = []
    for _ in directions:
        scan = np.empty((n, 6))
        for col in (0, 3):
            scan[:, col] = rng.choice([-2.0, -1.0, 0.0, 1.0, 2.0], n)
            scan[:, col + 1] = np.where(rng.random(n) < 0.2, np.nan, rng.random(n) * 30.0)
            scan[:, col + 2] = rng.choice([-1.0, 0.0, 1.0], n)
        scans.append(scan)
    for count in (1, 2):
        expected = plain_merge_directions(scans[:count], list(directions[:count]))
        rows = np.concatenate(scans[:count])
        merged = envelope_module._CaseResult.merged(0, rows, directions[:count])
        # Governing records straight from the kernel's rows, before any array is laid out
        for w in (0, 1):
            for j in range(n):
                g = merged.governing(w, j)
                if np.isnan(expected[1][w, j]):
                    assert g is envelope_module.EMPTY
                else:
                    assert (g.value, g.reference, g.side, g.direction, g.searched) == (
                        expected[0][w, j], expected[1][w, j], expected[2][w, j],
                        expected[3][w, j], ())
        # the empty beam's zero is 0.0, as offering gives it (never −0.0)
        assert not np.signbit(merged.value[merged.value == 0.0]).any()
        before = [merged.governing(w, j) for w in (0, 1) for j in range(n)]
        for got, want in zip((merged.value, merged.xi, merged.side, merged.direction),
                             expected, strict=True):
            np.testing.assert_array_equal(got, want)
        assert merged.searched.shape == (2, n, 0)
        # once the arrays are read (or changed by an offer), they give the same records
        merged._own_arrays()
        assert [merged.governing(w, j) for w in (0, 1) for j in range(n)] == before
