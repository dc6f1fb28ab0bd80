"""Unit expressions are bounded before pint evaluates them (trundle.io.unit_guard), and unit
typos get a plain-words hint (trundle.units)."""

from __future__ import annotations

import pytest

from trundle.io.unit_guard import guard_unit_text
from trundle.io.units import SI, US, UnitError, parse_quantity


@pytest.mark.parametrize("text", ["40 m", "55200 cm^4", "9040 in^4", "1.2e5 kN*m^2",
                                  "(kN*m)**2", "2 m**2", "0.64 kip/ft", "5e4 kip*ft/rad",
                                  "1_000 kN", "m^-3", "210 GPa", "29000 ksi"])
def test_ordinary_units_pass(text):
    assert guard_unit_text(text) is None


@pytest.mark.parametrize(("text", "reason"), [
    ("2**(2**40) m", "exponents"), ("10**10**10 m", "exponents"), ("m**12**12", "exponents"),
    ("(2 m)**2", "exponents"), ("((((2 m)**2)**2)**2)**2", "exponents"),
    ("ft**(1/2)", "exponents"), ("m^13", "exponents"), ("1e400 m", "beyond"),
    ("1e31 m", "beyond"), ("((((((m))))))", "parentheses"), ("x" * 101, "100 characters"),
])
def test_hostile_expressions_refused(text, reason):
    refused = guard_unit_text(text)
    assert refused is not None and reason in refused


def test_parse_refuses_a_huge_exponent_without_evaluating_it():
    # would never finish if pint evaluated it (exact rational arithmetic)
    with pytest.raises(UnitError, match="exponents apply to units only"):
        parse_quantity("2**(2**40) m", "length", SI)


def test_long_string_is_not_quoted():
    with pytest.raises(UnitError) as caught:
        parse_quantity("1" * 1_000_000 + " m", "length", SI)
    assert "a string of 1,000,002 characters" in str(caught.value)
    assert "1111111111" not in str(caught.value)


@pytest.mark.parametrize(("text", "quantity", "system", "hint"), [
    ("40 M", "length", SI, 'did you mean "40 m"?'),
    ("12 KN", "force", SI, 'did you mean "12 kN"?'),
    ("200 MPA", "modulus", SI, 'did you mean "200 MPa"?'),
    ("10 FT", "length", US, 'did you mean "10 ft"?'),
])
def test_case_typos_get_a_hint(text, quantity, system, hint):
    with pytest.raises(UnitError) as caught:
        parse_quantity(text, quantity, system)
    assert hint in str(caught.value)
    assert "case-sensitive" in str(caught.value)


def test_molar_named_in_plain_words():
    with pytest.raises(UnitError, match="molar concentration"):
        parse_quantity("40 M", "length", SI)


def test_wrong_dimension_without_a_case_typo_has_no_hint():
    with pytest.raises(UnitError) as caught:
        parse_quantity("7 kN", "length", SI)
    assert "which is a force" in str(caught.value)
    assert "did you mean" not in str(caught.value)
