"""The documented limits of model files (trundle.io.limits): one-line errors naming the key
and the limit; finite values and products of factors."""

from __future__ import annotations

import math

import pytest

from trundle.io.limits import (
    LIMITS,
    LimitError,
    check_count,
    check_finite,
    check_nesting,
    check_product,
    check_search,
    check_size,
    check_span_ratio,
    check_text,
    documented_limits,
    search_grid_points,
)


def test_count_at_the_limit_is_accepted_and_one_more_refused():
    maximum = int(LIMITS["spans"].maximum)
    assert check_count("beam.spans", "spans", [1.0] * maximum) == maximum
    with pytest.raises(LimitError) as caught:
        check_count("beam.spans", "spans", maximum + 1)
    message = str(caught.value)
    assert message.startswith("beam.spans: expected at most 200 spans")
    assert "documented limit" in message and "201" in message
    assert "\n" not in message


def test_text_limit_names_the_length_without_quoting_the_text():
    secret = "x" * 5000
    with pytest.raises(LimitError) as caught:
        check_text("title", secret)
    assert "5,000" in str(caught.value)
    assert "xxxx" not in str(caught.value)
    assert check_text("title", "Girder G1") == "Girder G1"


def test_file_size_limit():
    with pytest.raises(LimitError, match="at most 4 MiB"):
        check_size("file", 50 * 1024 * 1024)
    assert check_size("file", 100) == 100


@pytest.mark.parametrize("value", [math.inf, -math.inf, math.nan, 1e308, -1e16, 1e-300,
                                   10**400])
def test_check_finite_refuses(value):
    with pytest.raises(LimitError) as caught:
        check_finite("load[0].uniform", value, "a distributed load")
    assert str(caught.value).startswith("load[0].uniform: expected a distributed load")


@pytest.mark.parametrize("value", [0.0, 1.0, -250.0, 2.1e8, 1e15, 1e-12])
def test_check_finite_accepts(value):
    assert check_finite("x", value) == float(value)


def test_product_of_factors_overflow_and_limit():
    assert check_product("load[0]", [1.75, 1.33, 1.2]) == pytest.approx(1.75 * 1.33 * 1.2)
    with pytest.raises(LimitError, match="at most 10000"):
        check_product("load[0].load_factor", [1e308, 1.5])
    with pytest.raises(LimitError, match="an overflow|at most"):
        check_product("load[0].factors", [1e200, 1e200])
    with pytest.raises(LimitError):
        check_product("load[0].factors", [math.nan])


def test_nesting_depth():
    shallow: dict = {"a": [[{"b": 1}]]}
    check_nesting("file", shallow)
    deep: list = []
    cursor = deep
    for _ in range(5000):  # deeper than Python's recursion limit: the walk must not recurse
        cursor.append([])
        cursor = cursor[0]
    with pytest.raises(LimitError, match="nested at most 32 deep"):
        check_nesting("file", deep)


def test_search_dimensions_and_grid_size():
    assert check_search("load[0].spacings", 8) == 8
    with pytest.raises(LimitError, match="searched dimensions"):
        check_search("load[0].spacings", 50)
    assert search_grid_points(50) == 2.0**50  # a float: no giant integer is built


def test_span_ratio():
    check_span_ratio("beam.spans", [10.0, 30.0])
    with pytest.raises(LimitError, match="times the shortest"):
        check_span_ratio("beam.spans", [1e-6, 1e3])


def test_documented_limits_lists_every_limit():
    rows = documented_limits()
    assert [r[0] for r in rows] == list(LIMITS)
    assert all(r[1] and r[2] for r in rows)
