"""Cranes in model files ([[crane]] and [runway]): every key, forces or masses converted
exactly, percentages or fractions, defaults left to the core, the RunwaySpec built from them,
and one-line errors naming the file and the key. Every crane and runway here is invented."""

from __future__ import annotations

import math
from fractions import Fraction
from pathlib import Path

import pytest

from trundle.io.cranes import cranes_of, one_ksi, runway_settings_of, runway_spec
from trundle.io.modelfile import ModelFileError, load_model, read_model
from trundle.loads.cranes import Crane
from trundle.workflows.crane_runway import COMBINATIONS, RunwaySpec

ROOT = Path(__file__).resolve().parents[1]
BAD_CRANES = sorted((Path(__file__).parent / "bad_models").glob("crane_*.toml"))
EXAMPLES = sorted((ROOT / "examples" / "cranes").glob("hall*.toml"))

# Exact definitions. Source: NIST Special Publication 811 (2008 edition), Appendix B.8 and
# B.9: 1 lb = 0.453 592 37 kg exactly; 1 ton (short) = 2000 lb; 1 ft = 0.3048 m; 1 in =
# 0.0254 m; 1 lbf = 4.448 221 615 260 5 N; standard acceleration of gravity
# g_n = 9.806 65 m/s² exactly (a conventional value, 3rd CGPM 1901).
G_N = Fraction("9.80665")
POUND = Fraction("0.45359237")  # kg
LBF = Fraction("4.4482216152605")  # N
FOOT = Fraction("0.3048")
INCH = Fraction("0.0254")

BEAM_SI = """units = "SI"
[beam]
spans = [7.5, 7.5]
supports = ["pin", "pin", "pin"]
E = "210 GPa"
I = "107200 cm^4"
"""

CRANE = """
[[crane]]
name = "bay crane"
capacity = "20 t"
bridge_weight = "160 kN"
trolley_weight = 55
span = "21 m"
hook_approach = "1.2 m"
wheel_spacings = ["4.0 m"]
operation = "remote"
"""

RUNWAY = """
[runway]
service_class = "C"
"""


def read(text: str, name: str = "m.toml"):
    return read_model(text, name)


def crane_of(text: str) -> Crane:
    (entry,) = cranes_of(read(BEAM_SI + text + RUNWAY))
    return entry.crane


# --- [[crane]]: every key ------------------------------------------------------------------


def test_every_crane_key_is_read_in_base_units():
    crane = crane_of("""
[[crane]]
name = "  foundry crane  "
capacity = "20 t"
bridge_weight = "16 t"
trolley_weight = "53.9 kN"
span = "21000 mm"
hook_approach = 1.2
wheel_spacings = ["1.2 m", "2.4 m", 1.2]
buffer_length = "5.6 m"
operation = "cab"
impact = "20 %"
lateral = 0.15
longitudinal = "12.5 %"
lateral_share = "60 %"
wheel_loads = { maximum = "82 kN", minimum = "2.4 t", unloaded = 30 }
""")
    assert crane.name == "foundry crane"
    # 20 t × g_n in kN
    assert crane.capacity == pytest.approx(float(20 * G_N), rel=1e-15)
    assert crane.bridge_weight == pytest.approx(float(16 * G_N), rel=1e-15)
    assert crane.trolley_weight == 53.9
    assert crane.span == pytest.approx(21.0, rel=1e-15) and crane.hook_approach == 1.2
    assert crane.wheel_spacings == (1.2, 2.4, 1.2) and crane.wheels_per_rail == 4
    assert crane.buffer_length == 5.6
    assert crane.operation == "cab"
    assert crane.impact == pytest.approx(0.20, rel=1e-15)
    assert crane.lateral_fraction == 0.15
    assert crane.longitudinal_fraction == pytest.approx(0.125, rel=1e-15)
    assert crane.lateral_share == pytest.approx(0.6, rel=1e-15)
    assert crane.wheel_loads == pytest.approx((82.0, float(Fraction("2.4") * G_N), 30.0),
                                              rel=1e-15)


def test_left_out_overrides_are_left_to_the_core_defaults():
    crane = crane_of(CRANE)
    assert crane.impact is None and crane.lateral_fraction is None
    assert crane.longitudinal_fraction is None and crane.wheel_loads is None
    assert crane.lateral_share == 0.5 and crane.buffer_length is None
    # the core's default for a remotely operated crane
    # (from memory of a widely used US building-code provision: 25 %)
    assert crane.impact_fraction == 0.25


@pytest.mark.parametrize(("written", "kN"), [
    ('"20 t"', 20 * G_N),
    ('"20000 kg"', 20 * G_N),
    ('"20 tonne"', 20 * G_N),
    ('"40000 lb"', 40000 * POUND * G_N / 1000),
    ('"15 ton"', 15 * 2000 * POUND * G_N / 1000),
    ('"196.133 kN"', Fraction("196.133")),
    ('"30 kip"', 30 * 1000 * LBF / 1000),
    ("196.133", Fraction("196.133")),
])
def test_capacity_as_a_force_or_a_mass(written, kN):
    crane = crane_of(CRANE.replace('capacity = "20 t"', f"capacity = {written}"))
    assert crane.capacity == pytest.approx(float(kN), rel=1e-14)


def test_a_mass_in_pounds_is_its_weight_in_pound_force_in_a_us_model():
    # 1 lb (mass) × g_n is 1 lbf by definition of the pound-force (NIST SP 811, B.8)
    text = BEAM_SI.replace('"SI"', '"US"').replace("[7.5, 7.5]", "[25, 25]").replace(
        '"210 GPa"', '"29000 ksi"').replace('"107200 cm^4"', '"3548 in^4"')
    crane_text = CRANE.replace('"20 t"', '"15 ton"').replace('"160 kN"', '"40000 lb"').replace(
        "trolley_weight = 55", 'trolley_weight = "7.2 kip"').replace('"21 m"', '"60 ft"')
    crane_text = crane_text.replace('"1.2 m"', '"3.5 ft"').replace('"4.0 m"', '"10 ft"')
    (entry,) = cranes_of(read(text + crane_text + RUNWAY))
    crane = entry.crane
    assert crane.capacity == pytest.approx(30.0, rel=1e-14)
    assert crane.bridge_weight == pytest.approx(40.0, rel=1e-14)
    assert crane.trolley_weight == pytest.approx(7.2, rel=1e-14)
    assert crane.span == pytest.approx(60.0, rel=1e-15)


def test_crane_order_and_names_are_kept_and_runway_may_come_first():
    second = CRANE.replace('"bay crane"', '"small crane"').replace('"20 t"', '"5 t"').replace(
        '"4.0 m"', '"3.2 m"')
    text = BEAM_SI + RUNWAY + CRANE.replace('"remote"', '"remote"\nbuffer_length = "5 m"') + \
        second.replace('"remote"', '"pendant"\nbuffer_length = "3.6 m"')
    entries = cranes_of(read(text))
    assert [e.name for e in entries] == ["bay crane", "small crane"]
    assert entries[1].crane.operation == "pendant"
    assert entries[0].given["capacity"] == "20 t"


# --- [runway] --------------------------------------------------------------------------------


def test_every_runway_key_and_the_spec_built_from_them():
    model = read(BEAM_SI + CRANE + """
[runway]
combinations = ["each alone", "all loaded"]
service_class = "D"
lateral_I = "6300 cm^4"
vertical_limit = "L/800"
lateral_limit = 450
section_modulus = "4980 cm^3"
detail_category = "C'"
fatigue_cycles = 3_000_000
""")
    settings = runway_settings_of(model)
    assert settings.combinations == ("each alone", "all loaded")
    # 210 GPa × 6300 cm⁴ = 210e6 kN/m² × 6.3e-5 m⁴
    assert settings.lateral_EI == pytest.approx(210e6 * 6.3e-5, rel=1e-14)
    assert "6300 cm^4" in settings.lateral_EI_given and "210 GPa" in settings.lateral_EI_given
    spec = runway_spec(model)
    assert isinstance(spec, RunwaySpec)
    assert spec.cranes == (cranes_of(model)[0].crane,)
    assert spec.service_class == "D"
    assert spec.vertical_limit_ratio == 800.0 and spec.lateral_limit_ratio == 450.0
    assert spec.section_modulus == pytest.approx(4.98e-3, rel=1e-14)
    assert spec.detail_category == "C'" and spec.cycles == 3e6
    # 1 ksi = 1000 lbf/in² in kN/m²
    assert spec.ksi == pytest.approx(float(1000 * LBF / INCH**2 / 1000), rel=1e-14)


def test_runway_defaults_and_lateral_EI():
    model = read(BEAM_SI + CRANE + '[runway]\nservice_class = "B"\nlateral_EI = "1.3e4 kN*m^2"\n'
                 'vertical_limit = 600\nfatigue_cycles = "unlimited"\n')
    spec = runway_spec(model)
    assert spec.combinations == COMBINATIONS
    assert spec.lateral_EI == 1.3e4
    assert spec.vertical_ratio == 600.0 and spec.lateral_ratio is None
    assert spec.section_modulus is None and spec.detail_category is None
    assert math.isinf(spec.cycles)


def test_us_section_modulus_and_ksi():
    text = BEAM_SI.replace('"SI"', '"US"').replace('"210 GPa"', '"29000 ksi"').replace(
        '"107200 cm^4"', '"3548 in^4"')
    model = read(text + CRANE + '[runway]\nservice_class = "B"\nsection_modulus = "424 in^3"\n'
                 'detail_category = "B"\n')
    spec = runway_spec(model)
    assert spec.section_modulus == pytest.approx(float(424 * INCH**3 / FOOT**3), rel=1e-14)
    # 1 ksi = 144 ksf exactly (1 ft = 12 in)
    assert one_ksi(model.units) == 144.0 and spec.ksi == 144.0


def test_a_model_without_cranes_has_no_runway():
    model = read(BEAM_SI)
    assert cranes_of(model) == () and runway_spec(model) is None


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_the_examples_read_and_are_marked_invented(path):
    model = load_model(path)
    assert cranes_of(model) and runway_spec(model) is not None
    assert "(invented)" in model.title
    assert "invented" in path.read_text().splitlines()[1].lower()


# --- errors ----------------------------------------------------------------------------------


@pytest.mark.parametrize(("text", "key", "fragment"), [
    (CRANE.replace('"20 t"', '"20 m"'), "crane[0].capacity", "which is a length"),
    (CRANE.replace('"20 t"', '"20 tt"'), "crane[0].capacity", "a force or a mass"),
    (CRANE.replace('"20 t"', "-5"), "crane[0].capacity", "zero or more"),
    (CRANE.replace("span =", "spam ="), "crane[0].spam", 'did you mean "span"'),
    (CRANE.replace('"remote"', '"radio"'), "crane[0].operation", '"remote"'),
    (CRANE.replace('"1.2 m"', '"11 m"'), "crane[0].hook_approach", "half the crane span"),
    (CRANE.replace('"1.2 m"', '"-1 m"'), "crane[0].hook_approach", "zero or more"),
    (CRANE.replace('["4.0 m"]', "[]"), "crane[0].wheel_spacings", "at least one"),
    (CRANE.replace('["4.0 m"]', '"4.0 m"'), "crane[0].wheel_spacings", "a list"),
    (CRANE.replace('["4.0 m"]', '["4.0 kN"]'), "crane[0].wheel_spacings[0]", "a length"),
    (CRANE + 'buffer_length = "3 m"\n', "crane[0].buffer_length", "wheelbase"),
    (CRANE + "impact = 25\n", "crane[0].impact", '"25 %"'),
    (CRANE + 'impact = "125 %"\n', "crane[0].impact", "0 to 100 %"),
    (CRANE + 'lateral = "twenty"\n', "crane[0].lateral", "percentage"),
    (CRANE + "lateral_share = 1.5\n", "crane[0].lateral_share", '"1.5 %"'),
    (CRANE + 'wheel_loads = { maximum = "80 kN", minimum = "90 kN", unloaded = "30 kN" }\n',
     "crane[0].wheel_loads.minimum", "at most the maximum"),
    (CRANE + 'wheel_loads = { maximum = "80 kN", minimum = "9 kN" }\n',
     "crane[0].wheel_loads.unloaded", "required"),
    (CRANE.replace('name = "bay crane"\n', ""), "crane[0].name", "required"),
    (CRANE.replace('"bay crane"', '"  "'), "crane[0].name", "not blank"),
    (CRANE + CRANE, "crane[0].buffer_length", "two or more cranes"),
    (CRANE.replace('"remote"', '"remote"\nbuffer_length = "5 m"') * 2, "crane[1].name",
     "different"),
])
def test_crane_errors_name_the_key(text, key, fragment):
    with pytest.raises(ModelFileError) as info:
        read(BEAM_SI + text + RUNWAY, "hall.toml")
    error = info.value
    assert error.key == key, str(error)
    assert fragment in str(error)
    assert str(error).startswith(f"hall.toml: {key}: ") and "\n" not in str(error)


@pytest.mark.parametrize(("runway", "key", "fragment"), [
    ('service_class = "G"', "runway.service_class", '"C"'),
    ("", "runway.service_class", "required"),
    ('service_class = "C"\ncombinations = ["each alone", "both loaded"]',
     "runway.combinations[1]", '"all loaded"'),
    ('service_class = "C"\ncombinations = []', "runway.combinations", "at least one"),
    ('service_class = "C"\ncombinations = ["all loaded", "all loaded"]',
     "runway.combinations[1]", "once"),
    ('service_class = "C"\nlateral_EI = 1e4\nlateral_I = "6300 cm^4"', "runway.lateral_I",
     "both"),
    ('service_class = "C"\nlateral_I = 6300', "runway.lateral_I", "with its unit"),
    ('service_class = "C"\nvertical_limit = 0.0016667', "runway.vertical_limit",
     "write 600"),
    ('service_class = "C"\nlateral_limit = "L/zero"', "runway.lateral_limit", '"L/600"'),
    ('service_class = "C"\nsection_modulus = 4980', "runway.section_modulus", "with its unit"),
    ('service_class = "C"\nsection_modulus = "4980 cm^2"', "runway.section_modulus",
     "not a length cubed"),
    ('service_class = "C"\ndetail_category = "C"', "runway.section_modulus", "needed"),
    ('service_class = "C"\nsection_modulus = "4980 cm^3"\ndetail_category = "Z"',
     "runway.detail_category", "\"C'\""),
    ('service_class = "C"\nfatigue_cycles = 0', "runway.fatigue_cycles", "unlimited"),
    ('service_clas = "C"', "runway.service_clas", 'did you mean "service_class"'),
])
def test_runway_errors_name_the_key(runway, key, fragment):
    with pytest.raises(ModelFileError) as info:
        read(BEAM_SI + CRANE + "[runway]\n" + runway + "\n", "hall.toml")
    assert info.value.key == key, str(info.value)
    assert fragment in str(info.value)


def test_lateral_I_needs_the_beams_E():
    text = BEAM_SI.replace('E = "210 GPa"\nI = "107200 cm^4"', "EI = 2.25e5")
    with pytest.raises(ModelFileError) as info:
        read(text + CRANE + '[runway]\nservice_class = "C"\nlateral_I = "6300 cm^4"\n')
    assert info.value.key == "runway.lateral_I" and "no E in [beam]" in str(info.value)


def test_cranes_and_runway_need_each_other():
    with pytest.raises(ModelFileError) as info:
        read(BEAM_SI + CRANE)
    assert info.value.key == "runway" and "service_class" in str(info.value)
    with pytest.raises(ModelFileError) as info:
        read(BEAM_SI + RUNWAY)
    assert info.value.key == "runway" and "[[crane]]" in str(info.value)


def test_a_misspelt_table_name_is_suggested():
    with pytest.raises(ModelFileError) as info:
        read(BEAM_SI + CRANE.replace("[[crane]]", "[[cranes]]") + RUNWAY)
    assert info.value.key == "cranes" and 'did you mean "crane"' in str(info.value)


def test_the_bad_crane_corpus_is_there():
    # the corpus tests of test_modelfile and test_cli read every file of tests/bad_models
    assert len(BAD_CRANES) >= 8
    for path in BAD_CRANES:
        head = path.read_text().splitlines()[:2]
        assert head[0].startswith("# wrong:") and head[1].startswith("# key:")
