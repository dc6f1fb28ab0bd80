"""Model paths and sweep ranges: the tokenizer, the paths a model offers, values with units,
and one-line errors for every malformed path or range (no eval anywhere)."""

from __future__ import annotations

import tomllib

import pytest

from trundle.io.model_paths import (
    MAX_POINTS_PER_AXIS,
    ModelPathError,
    apply,
    parse_range,
    resolve,
    split_vary,
    tokens,
    valid_paths,
)
from trundle.io.modelfile import read_model_data
from trundle.io.units import SI, US

MODEL = """
title = "Path test girder (invented)"
units = "SI"

[beam]
spans = ["20 m", 25.0, "20 m"]
supports = ["pin", { spring = "50 MN/m" }, "pin", "pin"]
E = "210 GPa"
I = "3.2e9 mm^4"

[[load]]
name = "truck"
axles = ["35 kN", "145 kN", "145 kN"]
spacings = ["4.3 m", { min = "4.3 m", max = "9.0 m" }]

[[load]]
name = "floor live load"
uniform = "15 kN/m"

[[load]]
use = "demo-service-truck"
"""


@pytest.fixture()
def raw() -> dict:
    return tomllib.loads(MODEL)


def test_tokens_read_words_quoted_names_and_indices() -> None:
    assert tokens("beam.spans[1]") == ["beam", "spans", 1]
    assert tokens('load."floor live load".uniform') == ["load", "floor live load", "uniform"]
    assert tokens("load[0].spacings[ 2 ]") == ["load", 0, "spacings", 2]


@pytest.mark.parametrize("text", ["", "beam.", "beam..spans", "beam.spans[x]", "beam.spans[-1]",
                                  'load."truck', "__import__('os')", "beam.spans[1]+1",
                                  "beam spans", 'load."".axles[0]'])
def test_malformed_paths_are_one_line_errors(text: str) -> None:
    with pytest.raises(ModelPathError) as caught:
        tokens(text)
    assert "\n" not in str(caught.value)


def test_valid_paths_of_a_model(raw: dict) -> None:
    texts = [p.text for p in valid_paths(raw)]
    for expected in ("beam.spans[0]", "beam.spans[2]", "beam.supports[0].spring",
                     "beam.supports[1].spring", "beam.E", "beam.I", "load.truck.axles[2]",
                     "load.truck.spacings[0]", "load.truck.spacings[1]",
                     "load.truck.spacings[1].min", "load.truck.spacings[1].max",
                     'load."floor live load".uniform'):
        assert expected in texts
    # a library model's numbers live in its own file: not addressable from here
    assert not any("demo-service-truck" in t or t.startswith("load[2]") for t in texts)


def test_names_and_indices_address_the_same_number(raw: dict) -> None:
    by_name = resolve(raw, "load.truck.spacings[0]")
    assert resolve(raw, "load[0].spacings[0]") == by_name
    assert resolve(raw, 'load."truck".spacings[0]') == by_name
    assert by_name.location == ("load", 0, "spacings", 0)
    assert by_name.kind == "length" and by_name.given == "4.3 m"


def test_an_unknown_path_lists_every_valid_path_on_one_line(raw: dict) -> None:
    with pytest.raises(ModelPathError) as caught:
        resolve(raw, "load.truk.spacings[0]")
    message = str(caught.value)
    assert "\n" not in message
    assert 'did you mean "load.truck.spacings[0]"' in message
    for path in valid_paths(raw):
        assert path.text in message


def test_apply_changes_one_number_of_a_copy(raw: dict) -> None:
    path = resolve(raw, "load.truck.spacings[1]")
    changed = apply(raw, {path: "6.5 m"})
    assert changed["load"][0]["spacings"][1] == "6.5 m"
    assert raw["load"][0]["spacings"][1] == {"min": "4.3 m", "max": "9.0 m"}  # untouched
    model = read_model_data(changed)
    truck = model.tables["load"][0].case.load
    assert truck.spacings == (4.3, 6.5)


def test_a_pin_support_made_elastic(raw: dict) -> None:
    path = resolve(raw, "beam.supports[2].spring")
    assert path.given is None and "elastic" in path.note
    model = read_model_data(apply(raw, {path: "20 MN/m"}))
    assert model.beam.supports[2].k == pytest.approx(20_000.0, rel=1e-15)


def test_range_takes_the_unit_of_the_value_it_replaces(raw: dict) -> None:
    path = resolve(raw, "beam.I")  # written in mm^4
    r = parse_range(path, "3.0e9:3.4e9:0.2e9", SI)
    assert r.unit == "mm^4" and r.values == pytest.approx((3.0e9, 3.2e9, 3.4e9))
    bare = resolve(raw, "beam.spans[1]")  # a bare number: metres, the base unit
    assert parse_range(bare, "24:26:1", SI).unit == "m"


def test_unit_once_at_the_end_or_on_each(raw: dict) -> None:
    path = resolve(raw, "load.truck.spacings[0]")
    once = parse_range(path, "14:16:1 ft", SI)
    assert once.unit == "ft" and once.values == (14.0, 15.0, 16.0)
    each = parse_range(path, "4 m:5 m:50 cm", SI)
    assert each.unit == "m" and each.values == pytest.approx((4.0, 4.5, 5.0), rel=1e-15)
    # the value written into the model is converted exactly by the model reader
    model = read_model_data(apply(raw, {path: once.text(15.0)}))
    assert model.tables["load"][0].case.load.spacings[0] == pytest.approx(4.572, rel=1e-15)


def test_stop_is_always_included() -> None:
    raw = tomllib.loads(MODEL)
    path = resolve(raw, "beam.spans[0]")
    assert parse_range(path, "10:11:0.4", SI).values == pytest.approx((10.0, 10.4, 10.8, 11.0))
    assert parse_range(path, "4.0:8.9:0.1", SI).values[-1] == 8.9
    assert len(parse_range(path, "4.0:8.9:0.1", SI).values) == 50
    assert parse_range(path, "12:12:1", SI).values == (12.0,)


@pytest.mark.parametrize(("text", "fragment"), [
    ("1:2", "START:STOP:STEP"),
    ("1:2:3:4", "START:STOP:STEP"),
    ("a:2:1", "a number for START"),
    ("1:2:0", "STEP greater than zero"),
    ("1:2:-0.5", "STEP greater than zero"),
    ("5:2:1", "STOP at least START"),
    ("1:3000:1", f"at most {MAX_POINTS_PER_AXIS:,} values"),
    ("1 kN:2 kN:1 kN", "a length"),
    ("1:2:1 kN", "a length"),
    ("1 m:2:1 m", "once at the end"),
    ("1:2:1 furlongs_of_doom", "unknown unit"),
    ("inf:2:1", "a number for START"),
    ("nan:2:1", "a number for START"),
    ("1:1e400:1", "finite number for STOP"),
])
def test_bad_ranges_are_one_line_errors(text: str, fragment: str) -> None:
    raw = tomllib.loads(MODEL)
    path = resolve(raw, "beam.spans[0]")
    with pytest.raises(ModelPathError) as caught:
        parse_range(path, text, SI)
    assert fragment in str(caught.value)
    assert "\n" not in str(caught.value)


def test_crane_weights_take_forces_or_masses() -> None:
    raw = tomllib.loads(open("examples/cranes/hall_sawtooth_creek_us.toml").read())
    texts = [p.text for p in valid_paths(raw)]
    capacity = next(t for t in texts if t.endswith(".capacity"))
    path = resolve(raw, capacity)
    assert path.kind == "force or mass"
    assert parse_range(path, "10:20:5 ton", US).unit == "ton"
    assert parse_range(path, "20:40:10 kip", US).unit == "kip"
    with pytest.raises(ModelPathError, match="a force or a mass"):
        parse_range(path, "1:2:1 ft", US)


def test_split_vary_keeps_quoted_names() -> None:
    assert split_vary('load."a=b".axles[0]=1:2:1 kN') == ('load."a=b".axles[0]', "1:2:1 kN")
    with pytest.raises(ModelPathError, match="PATH=START:STOP:STEP"):
        split_vary("beam.spans[0]")
