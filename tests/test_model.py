"""The beam model: degree of indeterminacy, refusal of mechanisms (saying where), bad
arguments, and independence of the unit system."""

from __future__ import annotations

import re

import numpy as np
import pytest

import trundle
from trundle import Beam, ModelError, Spring

# --- degree of indeterminacy ---------------------------------------------------------------
# Source: common practice, no source (restraints + hinge releases − 2 equilibrium equations of
# a plane beam under vertical load).


@pytest.mark.parametrize(("name", "kwargs", "degree"), [
    ("simple span", dict(spans=[10.0]), 0),
    ("cantilever", dict(spans=[6.0], supports=["fixed", "free"]), 0),
    ("simple span with overhang", dict(spans=[10.0, 3.0], supports=["pin", "pin", "free"]), 0),
    ("propped cantilever", dict(spans=[10.0], supports=["fixed", "pin"]), 1),
    ("two-span continuous", dict(spans=[10.0, 12.0]), 1),
    ("three-span continuous", dict(spans=[10.0, 12.0, 10.0]), 2),
    ("fixed-fixed", dict(spans=[10.0], supports=["fixed", "fixed"]), 2),
    ("Gerber, three spans, suspended centre", dict(spans=[20.0, 30.0, 20.0],
                                                   hinges=[26.0, 44.0]), 0),
    ("Gerber, two spans, one hinge", dict(spans=[10.0, 12.0], hinges=[12.0]), 0),
    ("hinge over the middle support", dict(spans=[10.0, 12.0], hinges=[10.0]), 0),
    ("two-span on a middle spring", dict(spans=[10.0, 10.0],
                                         supports=["pin", Spring(50.0), "pin"]), 1),
    ("spring with rotational stiffness", dict(spans=[8.0],
                                              supports=[Spring(5.0, kr=100.0), "pin"]), 1),
])
def test_degree_of_indeterminacy(name: str, kwargs: dict, degree: int) -> None:
    beam = Beam(**kwargs)
    assert beam.degree_of_indeterminacy == degree, name
    assert f"degree of indeterminacy {degree}" in beam.describe()


# --- mechanisms are refused, and the message says where -----------------------------------


@pytest.mark.parametrize(("name", "kwargs", "where"), [
    ("two hinges in one span", dict(spans=[10.0], hinges=[3.0, 6.0]), (0.0, 10.0)),
    ("hinge in a simple span", dict(spans=[10.0], hinges=[5.0]), (0.0, 10.0)),
    ("cantilever with a hinge", dict(spans=[10.0], supports=["fixed", "free"], hinges=[4.0]),
     (4.0, 10.0)),
    ("two hinges in the second of two spans", dict(spans=[10.0, 10.0], hinges=[13.0, 16.0]),
     (13.0, 20.0)),
    ("one pin only", dict(spans=[10.0], supports=["pin", "free"]), (0.0, 10.0)),
    ("overhang beyond a hinge at the last support",
     dict(spans=[10.0, 4.0], supports=["pin", "pin", "free"], hinges=[10.0]), (10.0, 14.0)),
    ("three hinges on three spans", dict(spans=[10.0, 10.0, 10.0], hinges=[12.0, 18.0, 25.0]),
     (12.0, 30.0)),
])
def test_mechanisms_are_refused_with_their_place(name: str, kwargs: dict,
                                                 where: tuple[float, float]) -> None:
    with pytest.raises(ModelError) as err:
        Beam(**kwargs)
    message = str(err.value)
    assert "\n" not in message
    assert "unstable" in message, name
    a, b = where
    assert f"between x = {a:g} and x = {b:g}" in message, (name, message)


def test_beam_without_vertical_support_is_refused() -> None:
    with pytest.raises(ModelError, match="no vertical support"):
        Beam(spans=[10.0, 5.0], supports=["free", "free", "free"])


# --- bad arguments give one-line ModelErrors that name the argument -------------------------


@pytest.mark.parametrize(("kwargs", "pattern"), [
    (dict(spans=[10.0, -4.0]), r"spans\[1\].*positive.*-4"),
    (dict(spans=[0.0]), r"spans\[0\].*positive"),
    (dict(spans=[]), r"spans"),
    (dict(spans=[10.0, 10.0], supports=["pin", "pin"]), r"supports: expected 3.*found 2"),
    (dict(spans=[10.0], supports=["pin", "roller"]), r"supports\[1\].*'roller'"),
    (dict(spans=[10.0], EI=-1.0), r"EI must be a positive number"),
    (dict(spans=[10.0], EI=[(0.0, 4.0, 1.0), (5.0, 10.0, 2.0)]), r"gap at x = 4"),
    (dict(spans=[10.0], EI=[(0.0, 6.0, 1.0), (5.0, 10.0, 2.0)]), r"overlap at x = 6"),
    (dict(spans=[10.0], EI=[(0.0, 8.0, 1.0)]), r"end at x = 8, the beam at 10"),
    (dict(spans=[10.0], EI=[(0.0, 10.0, 1.0, 2.0, "cubic")]), r"segment 0.*shape.*'cubic'"),
    (dict(spans=[10.0], EI=[(0.0, 10.0)]), r"segment 0: expected"),
    (dict(spans=[10.0], EI=[(0.0, 10.0, 0.0)]), r"segment 0: EI must be positive"),
    (dict(spans=[10.0], hinges=[12.0]), r"hinges.*inside the beam.*12"),
    (dict(spans=[10.0, 10.0], hinges=[5.0, 5.0]), r"two hinges at the same position"),
    (dict(spans=[10.0], haunch_divisions=0), r"haunch_divisions"),
    (dict(spans=[10.0, 10.0], supports=["pin", "fixed", "pin"], hinges=[10.0]),
     r"supports\[1\] at x = 10 restrains rotation but stands at a hinge"),
])
def test_bad_arguments(kwargs: dict, pattern: str) -> None:
    with pytest.raises(ModelError) as err:
        Beam(**kwargs)
    assert "\n" not in str(err.value)
    assert re.search(pattern, str(err.value)), str(err.value)


@pytest.mark.parametrize(("args", "pattern"), [
    ((-1.0,), r"spring stiffness k must be a positive number"),
    ((float("nan"),), r"spring stiffness k"),
    ((1.0, 0.0), r"rotational spring stiffness kr"),
])
def test_bad_springs(args: tuple, pattern: str) -> None:
    with pytest.raises(ModelError, match=pattern):
        Spring(*args)


def test_bad_effect_requests() -> None:
    beam = Beam(spans=[10.0, 4.0], supports=["pin", "pin", "free"])
    with pytest.raises(ModelError, match="support 2 is free"):
        beam.influence("reaction", support=2)
    with pytest.raises(ModelError, match="does not restrain rotation"):
        beam.influence("support_moment", support=0)
    with pytest.raises(ModelError, match="outside the beam"):
        beam.influence("moment", at=15.0)
    with pytest.raises(ModelError, match="supports 0 .. 2"):
        beam.influence("reaction", support=3)
    with pytest.raises(ModelError, match="expected one of"):
        beam.influence("torsion", at=1.0)
    with pytest.raises(ModelError, match="needs at="):
        beam.influence("moment")
    with pytest.raises(ModelError, match="needs support="):
        beam.influence("reaction")


# --- sections ------------------------------------------------------------------------------


def test_tenth_points_and_geometry() -> None:
    beam = Beam(spans=[10.0, 15.0, 10.0])
    points = beam.tenth_points()
    assert len(points) == 31
    assert points[[0, 10, 20, 30]] == pytest.approx([0.0, 10.0, 25.0, 35.0])
    assert points[15] == pytest.approx(17.5)
    assert beam.length == 35.0
    assert beam.support_positions == pytest.approx([0.0, 10.0, 25.0, 35.0])


# --- the unit system is the user's choice ---------------------------------------------------


@pytest.mark.parametrize("factor", [1e-3, 1.0, 1e3])
def test_lines_do_not_depend_on_the_length_unit(factor: float) -> None:
    """The same bridge in metres, in millimetres or in kilometres: reaction lines are pure
    numbers, moment lines scale with the length unit. (A 140 m girder in mm is 140 000 mm
    long; the model must not call it a mechanism.) Source: common practice, no source."""
    metres = Beam(spans=[50.0, 50.0, 40.0], EI=2.0e7,
                  supports=["pin", Spring(4.0e4), "pin", "fixed"], hinges=[75.0])
    scaled = Beam(spans=[50.0 * factor, 50.0 * factor, 40.0 * factor],
                  EI=2.0e7 * factor**2,  # force·length², the force unit kept
                  supports=["pin", Spring(4.0e4 / factor), "pin", "fixed"],
                  hinges=[75.0 * factor])
    assert scaled.degree_of_indeterminacy == metres.degree_of_indeterminacy == 2
    x = np.linspace(0.0, 140.0, 57)
    for i in range(4):
        np.testing.assert_allclose(scaled.influence("reaction", support=i)(x * factor),
                                   metres.influence("reaction", support=i)(x),
                                   rtol=0, atol=1e-10)
    np.testing.assert_allclose(scaled.influence("moment", at=120.0 * factor)(x * factor),
                               factor * metres.influence("moment", at=120.0)(x),
                               rtol=0, atol=1e-10 * 140.0 * factor)


@pytest.mark.parametrize("factor", [1e-3, 1.0, 1e3])
def test_mechanism_is_found_in_any_length_unit(factor: float) -> None:
    """Three hinges in the middle span: the stretch between the outer two folds."""
    with pytest.raises(ModelError, match=f"between x = {60 * factor:g} and x = {90 * factor:g}"):
        Beam(spans=[50.0 * factor, 50.0 * factor, 40.0 * factor],
             hinges=[60.0 * factor, 75.0 * factor, 90.0 * factor])
    # two of them leave a suspended span, which is stable and determinate
    gerber = Beam(spans=[50.0 * factor, 50.0 * factor, 40.0 * factor],
                  hinges=[60.0 * factor, 90.0 * factor])
    assert gerber.degree_of_indeterminacy == 0


def test_public_names() -> None:
    for name in ("Beam", "Spring", "ModelError", "Effect", "InfluenceLine", "InfluenceSet",
                 "influence_batch", "influence_set"):
        assert hasattr(trundle, name), name
