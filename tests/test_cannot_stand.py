"""A confined load (a crane between end stops) that cannot stand on the beam is refused.

Issue 7: a confined vehicle longer than the beam used to return an all-zero envelope with no
warning. Nothing can stand on the beam, so there is no envelope to report (common practice,
no source: a result must never be a silent zero).
"""

from __future__ import annotations

import pytest

import trundle
from trundle.core.beam import ModelError


def test_confined_vehicle_longer_than_the_beam_is_refused() -> None:
    beam = trundle.Beam(spans=[5.0, 10.0], EI=1.0)
    wheels = trundle.Vehicle(loads=[100.0, 100.0], spacings=[15.5], confined=True)
    with pytest.raises(ModelError, match="cannot stand on the beam"):
        trundle.envelope(beam, [wheels], sections=[2.5])


def test_confined_vehicle_whose_shortest_spacing_fits_is_analysed() -> None:
    # spacing s searched in (12, 20) m on a 15 m simple beam: only s ≤ 15 m fits. With the
    # wheels at a and a + s, M(7.5) = 100·a·7.5/15 + 100·7.5·(15 − a − s)/15 = 50·(15 − s)
    # (simple-beam influence line of mid-span moment, from memory): 150 kN·m at s = 12 m.
    beam = trundle.Beam(spans=[15.0], EI=1.0)
    wheels = trundle.Vehicle(loads=[100.0, 100.0], spacings=[(12.0, 20.0)], confined=True)
    env = trundle.envelope(beam, [wheels], sections=[7.5], effects=("moment",))
    assert env.max("moment")[0] == pytest.approx(150.0, rel=1e-9)


def test_confined_train_longer_than_the_beam_is_refused() -> None:
    beam = trundle.Beam(spans=[6.0], EI=1.0)
    a = trundle.Vehicle(loads=[50.0, 50.0], spacings=[3.0])
    train = trundle.Train((a, a), gaps=(1.0,), confined=True)
    with pytest.raises(ModelError, match="cannot stand on the beam"):
        trundle.envelope(beam, [train], sections=[3.0])


def test_cli_refuses_a_crane_longer_than_its_runway_with_end_stops(tmp_path) -> None:
    # the model file reads fine (``trundle summary`` shows it); the envelope cannot exist
    from pathlib import Path

    from cli_helpers import assert_one_line_error, expected_key, run

    path = Path(__file__).parent / "bad_runs" / "crane_longer_than_runway_with_end_stops.toml"
    result = run("envelope", path, "--out", tmp_path / "out")
    assert_one_line_error(result, str(path), expected_key(path), "cannot stand on the beam")
    assert not (tmp_path / "out").exists()
