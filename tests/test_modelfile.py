"""Model files: schema, unit conversion, sections, and one-line errors for bad input."""

from __future__ import annotations

from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

import trundle
from trundle.io import modelfile
from trundle.io.modelfile import ModelFileError, load_model, read_model
from trundle.io.units import SI, US, UnitError, parse_quantity

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "examples").glob("*.toml"))
BAD_MODELS = sorted((Path(__file__).parent / "bad_models").glob("*.toml"))

# Exact unit definitions. Source: NIST Special Publication 811 (2008 edition), Appendix B.8:
# 1 ft = 0.3048 m and 1 in = 0.0254 m exactly (international foot, 1959 agreement);
# 1 lbf = 4.448 221 615 260 5 N exactly; 1 kip = 1000 lbf.
FOOT = Fraction("0.3048")
INCH = Fraction("0.0254")
KIP = 1000 * Fraction("4.4482216152605")  # N


def expected_key(path: Path) -> str:
    for line in path.read_text().splitlines():
        if line.startswith("# key:"):
            return line.removeprefix("# key:").strip()
    raise AssertionError(f"{path.name} has no '# key:' comment")


def test_the_bad_model_corpus_is_large_and_documented():
    assert len(BAD_MODELS) >= 20
    for path in BAD_MODELS:
        text = path.read_text()
        assert text.startswith("# wrong: "), path.name
        expected_key(path)


# --- units ---------------------------------------------------------------------------------


def test_ten_feet_is_exactly_3_048_metres():
    # Source: NIST SP 811 (2008), Appendix B.8: 1 ft = 0.3048 m exactly.
    assert parse_quantity("10 ft", "length", SI) == 3.048
    assert parse_quantity("14 ft", "length", SI) == float(14 * FOOT)


def test_conversions_match_exact_rational_arithmetic():
    # Each is the exact rational value rounded once to float (NIST SP 811 definitions).
    assert parse_quantity("0.64 kip/ft", "distributed load", SI) == float(
        Fraction("0.64") * KIP / 1000 / FOOT)
    assert parse_quantity("3.2e9 mm^4", "second moment of area", SI) == 0.0032
    assert parse_quantity("200 GPa", "modulus", SI) == 2.0e8  # kN/m²
    assert parse_quantity("29000 ksi", "modulus", US) == float(29000 * 144)  # kip/ft²
    assert parse_quantity("9040 in^4", "second moment of area", US) == float(
        9040 * INCH**4 / FOOT**4)
    assert parse_quantity("50 MN/m", "spring stiffness", SI) == 50_000.0
    assert parse_quantity("300 kip/in", "spring stiffness", US) == 3600.0
    assert parse_quantity("25 kip", "force", SI) == float(25 * KIP / 1000)


def test_plain_numbers_are_base_units():
    assert parse_quantity(7.5, "length", SI) == 7.5
    assert parse_quantity(40, "length", US) == 40.0
    assert parse_quantity("12.5", "position", US) == 12.5
    assert parse_quantity(1.2e5, "flexural rigidity", SI) == 1.2e5


@pytest.mark.parametrize(("value", "quantity", "found"), [
    ("20 kN", "length", "which is a force"),
    ("8 m", "flexural rigidity", "which is a length"),
    ("5 kg", "force", "which is a mass"),
    ("210 GPx", "modulus", "unknown unit 'GPx'"),
    (210000, "modulus", "bare number"),
    ("55200", "second moment of area", "no unit"),
    (True, "length", "found true"),
    ("nan", "length", 'found "nan"'),
])
def test_unit_errors_say_what_was_expected_and_found(value, quantity, found):
    with pytest.raises(UnitError) as info:
        parse_quantity(value, quantity, SI)
    message = str(info.value)
    assert message.startswith("expected ")
    assert found in message
    assert "\n" not in message


def test_influence_units_for_display():
    assert SI.influence_unit("deflection") == (1000.0, "mm/kN", "mm/kN")
    assert US.influence_unit("deflection") == (12.0, "in/kip", "in/kip")
    assert SI.influence_unit("rotation")[0] == 1000.0
    assert US.influence_unit("moment")[1:] == ("kip·ft/kip", "kip*ft/kip")


# --- the examples --------------------------------------------------------------------------


def test_examples_exist_in_both_unit_systems():
    systems = {load_model(p).units.name for p in EXAMPLES}
    assert systems == {"SI", "US"}


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_examples_load_and_say_they_are_invented(path):
    model = load_model(path)
    assert "invented" in path.read_text().lower()
    assert "invented" in model.title
    assert model.beam.length > 0
    assert len(model.sections) >= 11


def test_si_example_values():
    model = load_model(ROOT / "examples" / "harbour_lane_floor_girder_si.toml")
    beam = model.beam
    assert beam.spans == (7.2, 9.0, 7.2)
    # E·I = 210 GPa × 55 200 cm⁴ = 2.1e8 kN/m² × 5.52e-4 m⁴ (hand arithmetic)
    assert beam.stiffness_segments[0].EI0 == pytest.approx(115_920.0, rel=1e-14)
    assert beam.supports[:3] == ("pin", "pin", "pin")
    assert beam.supports[3] == trundle.Spring(15_000.0)
    assert 3.0 in model.sections
    np.testing.assert_allclose(model.sections[[0, -1]], [0.0, 23.4])


def test_us_example_values():
    model = load_model(ROOT / "examples" / "millrace_access_bridge_us.toml")
    segments = model.beam.stiffness_segments
    assert [(s.x0, s.x1) for s in segments] == [(0.0, 52.0), (52.0, 80.0), (80.0, 132.0)]
    # 29000 ksi × 9040 in⁴ = 2.6216e8 kip·in² = 2.6216e8 / 144 kip·ft²
    assert segments[0].EI0 == pytest.approx(29000 * 9040 / 144, rel=1e-14)
    assert segments[1].EI0 == pytest.approx(29000 * 18600 / 144, rel=1e-14)
    assert {52.0, 80.0} <= set(model.sections.tolist())
    assert model.stiffness_given[1] == 'E = "29000 ksi", I = "18600 in^4"'


# --- schema details ------------------------------------------------------------------------

BASE = """
units = "SI"
[beam]
spans = [6.0, 6.0]
supports = ["pin", "pin", "pin"]
EI = 1.0e5
"""


def test_lengths_in_feet_inside_an_si_file_convert():
    model = read_model("""
units = "SI"
[beam]
spans = ["10 ft", "20 ft"]
supports = ["pin", "pin", "pin"]
hinges = ["5 ft"]
EI = 1.0e5
[sections]
at = ["10 ft", "9000 mm"]
""")
    assert model.beam.spans == (3.048, 6.096)
    assert model.beam.hinges == (1.524,)
    assert model.sections.tolist() == [3.048, 9.0]


def test_default_sections_are_tenth_points():
    model = read_model(BASE)
    np.testing.assert_allclose(model.sections, model.beam.tenth_points())
    assert len(model.sections) == 21


def test_sections_every_and_named_sets():
    model = read_model(BASE + '[sections]\nevery = "2.5 m"\nat = ["midspans"]\n')
    np.testing.assert_allclose(model.sections,
                               [0, 2.5, 3.0, 5.0, 6.0, 8.5, 9.0, 11.0, 12.0])
    quarter = read_model(BASE + '[sections]\nat = "quarter points"\n')
    np.testing.assert_allclose(quarter.sections, [0, 1.5, 3, 4.5, 6, 7.5, 9, 10.5, 12])


def test_springs_with_rotation_and_e_times_i():
    model = read_model("""
units = "SI"
[beam]
spans = [8.0]
supports = [{ spring = "50 MN/m", rotational = "2e5 kN*m/rad" }, "pin"]
E = "30 GPa"
I = "0.0125 m^4"
""")
    assert model.beam.supports[0] == trundle.Spring(50_000.0, 200_000.0)
    assert model.beam.stiffness_segments[0].EI0 == pytest.approx(3.0e7 * 0.0125, rel=1e-14)


def test_stiffness_segments_linear_and_parabolic():
    model = read_model("""
units = "SI"
[beam]
spans = [10.0, 10.0]
supports = ["pin", "pin", "pin"]
E = "30 GPa"
[[beam.stiffness]]
to = 7.0
I = "0.02 m^4"
[[beam.stiffness]]
to = 10.0
I = "0.02 m^4"
I_end = "0.05 m^4"
shape = "parabolic"
[[beam.stiffness]]
to = 13.0
EI = 1.5e6
EI_end = 6.0e5
[[beam.stiffness]]
EI = 6.0e5
""")
    segs = model.beam.stiffness_segments
    assert [(s.x0, s.x1, s.shape) for s in segs] == [
        (0.0, 7.0, "constant"), (7.0, 10.0, "parabolic"), (10.0, 13.0, "linear"),
        (13.0, 20.0, "constant")]
    assert segs[1].EI0 == pytest.approx(6.0e5) and segs[1].EI1 == pytest.approx(1.5e6)
    assert segs[2].EI0 == 1.5e6 and segs[2].EI1 == 6.0e5


def test_a_file_gives_the_same_lines_as_the_python_api():
    model = read_model(BASE.replace('"pin", "pin", "pin"', '"fixed", "pin", {spring = 8000}'))
    direct = trundle.Beam(spans=[6.0, 6.0], EI=1.0e5,
                          supports=["fixed", "pin", trundle.Spring(8000.0)])
    x = np.linspace(0.0, 12.0, 49)
    for effect in (trundle.Effect("moment", at=3.0), trundle.Effect("reaction", support=2)):
        np.testing.assert_array_equal(model.beam.influence_set([effect])(x),
                                      direct.influence_set([effect])(x))


def test_two_span_reaction_ordinate_through_a_us_file():
    # Source: two equal continuous spans, load P at midspan of one span: R_middle = 11P/16
    # (AISC Steel Construction Manual, Beam Diagrams and Formulas, "continuous beam - two
    # equal spans - concentrated load at center of one span"; from memory).
    model = read_model("""
units = "US"
[beam]
spans = ["40 ft", "480 in"]
supports = ["pin", "pin", "pin"]
E = "29000 ksi"
I = "1000 in^4"
""")
    line = model.beam.influence("reaction", support=1)
    assert line(20.0) == pytest.approx(11 / 16, rel=1e-12)


def test_model_keeps_raw_tables_and_source(tmp_path):
    path = tmp_path / "m.toml"
    path.write_text('title = "t"\n' + BASE)
    model = load_model(path)
    assert model.source == path
    assert model.title == "t"
    assert model.raw["beam"]["spans"] == [6.0, 6.0]


def test_registered_tables_are_read_and_unregistered_ones_refused(monkeypatch):
    text = BASE + '[trolley]\nwheels = ["12 kN", "12 kN"]\n'
    with pytest.raises(ModelFileError) as info:
        read_model(text, "m.toml")
    assert info.value.key == "trolley"

    def read_trolley(value, reader):
        table = reader.table(value, "trolley", ["wheels"], required=["wheels"])
        return [reader.quantity(w, f"trolley.wheels[{i}]", "force")
                for i, w in enumerate(table["wheels"])]

    monkeypatch.setitem(modelfile._EXTRA_TABLES, "trolley", read_trolley)
    assert read_model(text).tables["trolley"] == [12.0, 12.0]
    with pytest.raises(ModelFileError) as info:
        read_model(text.replace('"12 kN", "12 kN"', '"12 kN", "1.2 m"'), "m.toml")
    assert info.value.key == "trolley.wheels[1]"


# --- bad input -----------------------------------------------------------------------------


@pytest.mark.parametrize("path", BAD_MODELS, ids=lambda p: p.name)
def test_bad_models_raise_one_line_naming_file_and_key(path):
    with pytest.raises(ModelFileError) as info:
        load_model(path)
    error = info.value
    message = str(error)
    assert error.key == expected_key(path)
    assert message.startswith(f"{path}: {error.key}: ")
    assert "\n" not in message
    assert isinstance(error, ValueError)


def test_missing_file_and_directory():
    with pytest.raises(ModelFileError, match="no_such.toml: file: expected an existing"):
        load_model("no_such.toml")
    with pytest.raises(ModelFileError, match="found a folder"):
        load_model(ROOT / "examples")


def test_keys_are_named_with_their_path():
    cases = {
        BASE.replace("EI = 1.0e5", 'EI = "1e5 kN*m"'): "beam.EI",
        BASE.replace('"pin", "pin", "pin"', '"pin", {spring = 5, damping = 1}, "pin"'):
            "beam.supports[1].damping",
        BASE + "[sections]\nat = [1.0, -2.0]\n": "sections.at[1]",
        BASE + "[sections]\n": "sections.at",
        BASE.replace("[beam]", "[beam]\nhaunch_divisions = 0"): "beam.haunch_divisions",
        'title = 3\n' + BASE: "title",
    }
    for text, key in cases.items():
        with pytest.raises(ModelFileError) as info:
            read_model(text, "x.toml")
        assert info.value.key == key, str(info.value)
