"""Loads in model files ([[load]]) and load-model files (the library): every schema variant,
exact unit conversion, library discovery, and one-line errors naming the file and the key."""

from __future__ import annotations

import math
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

import trundle
from trundle.io import loads as loadfile
from trundle.io.loads import (
    LoadEntry,
    loads_of,
    read_load_model_file,
    require_loads,
)
from trundle.io.modelfile import ModelFileError, load_model, read_model
from trundle.io.units import SI, US
from trundle.loads import library

ROOT = Path(__file__).resolve().parents[1]
BAD_LOADS = sorted((Path(__file__).parent / "bad_models").glob("load_*.toml"))

# Exact unit definitions. Source: NIST Special Publication 811 (2008 edition), Appendix B.8:
# 1 ft = 0.3048 m exactly; 1 lbf = 4.448 221 615 260 5 N exactly; 1 kip = 1000 lbf.
FOOT = Fraction("0.3048")
KIP = 1000 * Fraction("4.4482216152605")  # N

BEAM = """units = "SI"
[beam]
spans = [10.0, 12.0]
supports = ["pin", "pin", "pin"]
EI = 1.0e5
"""


def read(loads: str, name: str = "m.toml", units: str = "SI") -> trundle.io.modelfile.Model:
    return read_model(BEAM.replace('"SI"', f'"{units}"') + loads, name)


def entries(loads: str, **kw) -> tuple[LoadEntry, ...]:
    return loads_of(read(loads, **kw))


# --- schema variants ----------------------------------------------------------------------


def test_vehicle_with_fixed_and_searched_spacings_and_both_directions():
    (entry,) = entries("""
[[load]]
name = "truck"
axles = ["35 kN", "145 kN", 145]
spacings = ["4.3 m", { min = "4.3 m", max = 9 }]
""")
    assert entry.kind == "vehicle" and entry.name == "truck"
    vehicle = entry.load
    assert isinstance(vehicle, trundle.Vehicle)
    assert vehicle.loads == (35.0, 145.0, 145.0)
    assert vehicle.spacings == (4.3, (4.3, 9.0))
    assert vehicle.reversible and vehicle.name == "truck"
    assert entry.case.impact == 0.0 and entry.case.factors == ()
    assert entry.origin == "model file"


def test_single_axle_needs_no_spacings_and_one_way_is_not_reversible():
    (entry,) = entries('[[load]]\nname = "wheel"\naxles = ["80 kN"]\ndirections = "one way"\n')
    assert entry.load.loads == (80.0,) and entry.load.spacings == ()
    assert not entry.load.reversible


def test_impact_as_percentage_or_fraction_and_named_factors_in_order():
    first, second = entries("""
[[load]]
name = "a"
axles = [100]
impact = "33 %"
factors = { "multiple presence" = 1.2, "distribution" = 0.55, "load factor" = 1.75 }

[[load]]
name = "b"
axles = [100]
impact = 0.25
""")
    assert first.case.impact == pytest.approx(0.33, rel=1e-15)
    assert first.case.factors == (("multiple presence", 1.2), ("distribution", 0.55),
                                  ("load factor", 1.75))
    assert first.case.multiplier == pytest.approx(1.2 * 0.55 * 1.75, rel=1e-15)
    assert second.case.impact == 0.25


def test_train_with_library_and_inline_vehicles_gaps_and_attached_uniform_load():
    (entry,) = entries("""
[[load]]
name = "convoy"
vehicles = [
    "demo-service-truck",
    { name = "tandem", axles = ["60 kN", "60 kN"], spacings = ["1.2 m"] },
    { axles = [40] },
]
gaps = [{ min = "15 m", max = "40 m" }, "10 m"]
ahead = { w = "3 kN/m", length = "unlimited", gap = "15 m" }
behind = { w = 2, length = "20 m" }
directions = "one way"
""")
    train = entry.load
    assert entry.kind == "train" and isinstance(train, trundle.Train)
    service = loadfile.read_library_model("demo-service-truck", SI).load
    assert train.vehicles[0].loads == service.loads
    assert train.vehicles[0].spacings == service.spacings
    assert train.vehicles[1].name == "tandem" and train.vehicles[1].spacings == (1.2,)
    assert train.vehicles[2].name == "vehicle 3" and train.vehicles[2].loads == (40.0,)
    assert train.gaps == ((15.0, 40.0), 10.0)
    assert train.ahead == trundle.AttachedUniform(3.0, math.inf, 15.0)
    assert train.behind == trundle.AttachedUniform(2.0, 20.0, 0.0)
    assert not train.reversible
    assert entry.files == (library.path_of("demo-service-truck"),)


@pytest.mark.parametrize("placement", ["anywhere", "spans", "everywhere"])
def test_placed_uniform_load(placement):
    (entry,) = entries(f"""
[[load]]
name = "lane"
uniform = "9 kN/m"
placement = "{placement}"
point_load = "80 kN"
factors = {{ "load factor" = 1.5 }}
""")
    assert entry.kind == "uniform"
    assert entry.load == trundle.UniformLoad(9.0, placement, 80.0, name="lane")
    assert entry.case.factors == (("load factor", 1.5),)


def test_uniform_load_defaults_to_anywhere_without_point_load():
    (entry,) = entries('[[load]]\nname = "lane"\nuniform = 12.5\n')
    assert entry.load == trundle.UniformLoad(12.5, "anywhere", 0.0, name="lane")


def test_use_library_model_with_name_impact_and_factors():
    plain, renamed = entries("""
[[load]]
use = "demo-heavy-vehicle-5-axle"

[[load]]
use = "demo-heavy-vehicle-5-axle"
name = "heavy, lane 2"
impact = "30 %"
factors = { distribution = 0.5 }
""")
    model = loadfile.read_library_model("demo-heavy-vehicle-5-axle", SI)
    assert plain.name == "demo-heavy-vehicle-5-axle" and plain.kind == "vehicle"
    assert plain.load.loads == model.load.loads
    assert plain.origin == "library model demo-heavy-vehicle-5-axle"
    assert plain.description == model.description and plain.source == model.source
    assert renamed.name == "heavy, lane 2" and renamed.load.name == "heavy, lane 2"
    assert renamed.case.impact == pytest.approx(0.30, rel=1e-15)
    assert renamed.case.factors == (("distribution", 0.5),)
    assert plain.files == renamed.files == (library.path_of("demo-heavy-vehicle-5-axle"),)


def test_use_a_load_model_file_by_path_relative_to_the_model(tmp_path):
    folder = tmp_path / "vehicles"
    folder.mkdir()
    (folder / "mill-shuttle.toml").write_text("""
units = "US"
description = "Mill shuttle (invented for a test)"
source = "Invented for a test; not a code load model."
axles = [10, "20 kip"]
spacings = ["14 ft"]
impact = "15 %"
factors = { "load factor" = 1.6, "distribution" = 0.5 }
""")
    model_file = tmp_path / "girder.toml"
    model_file.write_text(BEAM + """
[[load]]
use = "vehicles/mill-shuttle.toml"
factors = { distribution = 0.6 }
""")
    (entry,) = loads_of(load_model(model_file))
    assert entry.name == "mill-shuttle"
    assert entry.origin == f"load-model file {folder / 'mill-shuttle.toml'}"
    # A bare number in a US file is kip; converted exactly into the SI model (kN, m).
    assert entry.load.loads == (float(10 * KIP / 1000), float(20 * KIP / 1000))
    assert entry.load.spacings == (float(14 * FOOT),)
    assert entry.case.impact == pytest.approx(0.15, rel=1e-15)
    # the entry's factors replace the file's of the same name and keep the others
    assert entry.case.factors == (("load factor", 1.6), ("distribution", 0.6))


# --- units --------------------------------------------------------------------------------


def test_units_are_converted_exactly_into_the_models_base_units():
    # Source: NIST SP 811 (2008), Appendix B.8 (exact definitions of ft and lbf).
    (entry,) = entries("""
[[load]]
name = "truck"
axles = ["8 kip", "32 kip"]
spacings = ["14 ft"]
""")
    assert entry.load.loads == (float(8 * KIP / 1000), float(32 * KIP / 1000))
    assert entry.load.spacings == (float(14 * FOOT),)
    (lane,) = entries('[[load]]\nname = "lane"\nuniform = "0.64 kip/ft"\npoint_load = "18 kip"\n',
                      units="US")
    assert lane.load.w == 0.64 and lane.load.point_load == 18.0


def test_si_library_model_in_a_us_model_is_converted_exactly():
    (truck, lane) = entries('[[load]]\nuse = "demo-service-truck"\n'
                            '[[load]]\nuse = "demo-lane-load"\n', units="US")
    # 50 kN and 100 kN in kip; 4.0 m in ft; 9 kN/m in kip/ft; 60 kN in kip.
    assert truck.load.loads == (float(50 * 1000 / KIP), float(100 * 1000 / KIP))
    assert truck.load.spacings == (float(4 / FOOT),)
    assert lane.load.w == float(9 * 1000 / KIP * FOOT)
    assert lane.load.point_load == float(60 * 1000 / KIP)


def test_a_load_model_file_read_in_its_own_units():
    model = loadfile.read_library_model("demo-lane-load")
    assert model.units == SI and model.kind == "uniform"
    assert model.load.w == 9.0 and model.load.point_load == 60.0
    converted = loadfile.read_library_model("demo-lane-load", US)
    assert converted.units == SI  # the file's own units, as written
    assert converted.load.w == float(9 * 1000 / KIP * FOOT)


def test_a_description_is_shown_in_the_units_the_model_uses():
    # demo-lane-load (SI) in a US model: "9 kN/m" and "60 kN" become kip/ft and kip, with the
    # exact factors above (9 kN/m = 0.61671 kip/ft; 60 kN = 13.4885 kip), 4 significant digits
    converted = loadfile.read_library_model("demo-lane-load", US).description
    assert "0.6167 kip/ft" in converted and "13.49 kip" in converted
    assert "kN" not in converted
    assert loadfile.read_library_model("demo-lane-load").description.count("kN") == 2
    # HL-93 (US) in an SI model: a list ("8, 32, 32 kip") and a range ("14 to 30 ft") are
    # converted number by number; 8 kip = 35.586 kN, 14 ft = 4.2672 m, 30 ft = 9.144 m
    truck = loadfile.read_library_model("hl93-truck", SI).description
    assert "35.59, 142.3, 142.3 kN" in truck and "4.267 to 9.144 m" in truck
    assert "33 %" in truck and "kip" not in truck and " ft" not in truck


@pytest.mark.parametrize("name", library.names())
def test_every_library_description_converts_completely(name):
    """No unit of the file's own system is left, numbers without a unit are kept (lane
    numbers, percentages, names such as CL-625) and each converted number is one of the
    original numbers times its factor."""
    import re

    own = loadfile.read_library_model(name)
    other = US if own.units == SI else SI
    converted = loadfile.read_library_model(name, other).description
    leftover = r"\bkN\b|\d m\b" if own.units == SI else r"\b(kip|kips|ft|klf)\b"
    assert not re.search(leftover, converted), converted
    number = r"(?<![/\w])\d+(?:\.\d+)?"  # not the 2 of "kN/m2"
    assert len(re.findall(number, converted)) == len(re.findall(number, own.description))
    for kept in re.findall(r"\d+ %|CL-\d+|lanes? [\d / ]+\d", own.description):
        assert kept in converted


# --- the library --------------------------------------------------------------------------


def test_the_library_lists_its_models_with_kind_description_and_source():
    names = library.names()
    assert {"demo-service-truck", "demo-heavy-vehicle-5-axle", "demo-lane-load"} <= set(names)
    models = loadfile.read_library()
    assert [m.name for m in models] == names
    for model in models:
        assert model.kind in (*loadfile.KINDS, "design case")
        assert model.description and model.source
    heavy = loadfile.read_library_model("demo-heavy-vehicle-5-axle")
    assert len(heavy.load.loads) == 5
    assert [isinstance(s, tuple) for s in heavy.load.spacings].count(True) == 1


def test_the_shipped_examples_say_they_are_invented():
    # The demo models are invented; every other model is a published one and says where it
    # comes from and that it is transcribed from memory (to verify against the edition).
    for model in loadfile.read_library():
        source = model.source.lower()
        if model.name.startswith("demo-"):
            assert source.startswith("invented") and "not a code load model" in source
        else:
            assert "transcribed from memory - verify against the" in source
            assert "invented" not in source


def test_the_library_prefers_the_folder_shipped_inside_the_package(tmp_path, monkeypatch):
    package = tmp_path / "site-packages" / "trundle"
    (package / "loadmodels").mkdir(parents=True)
    (package / "loadmodels" / "only-here.toml").write_text(
        'units = "SI"\ndescription = "d"\nsource = "Invented for a test."\naxles = [10]\n')
    monkeypatch.setattr(library, "_PACKAGE", package)
    assert library.folder() == package / "loadmodels"
    assert library.names() == ["only-here"]
    assert loadfile.read_library_model("only-here").load.loads == (10.0,)


def test_without_a_shipped_folder_the_repository_folder_is_used():
    assert library.folder() == ROOT / "loadmodels" or \
        library.folder() == Path(library.__file__).resolve().parents[1] / "loadmodels"
    assert (library.folder() / "demo-lane-load.toml").is_file()
    with pytest.raises(KeyError):
        library.path_of("no-such-model")


# --- models without loads, and entries --------------------------------------------------


def test_a_model_without_loads_reads_and_the_envelope_asks_for_them(tmp_path):
    path = tmp_path / "plain.toml"
    path.write_text(BEAM)
    model = load_model(path)
    assert loads_of(model) == ()
    with pytest.raises(ModelFileError) as info:
        require_loads(model)
    assert info.value.key == "load" and str(info.value).startswith(f"{path}: load: expected")


def test_an_empty_load_array_is_an_error():
    with pytest.raises(ModelFileError) as info:
        read_model("load = []\n" + BEAM, "x.toml")
    assert info.value.key == "load" and "at least one" in str(info.value)


def test_examples_read_with_their_loads():
    counts = {}
    for path in sorted((ROOT / "examples").glob("*.toml")):
        counts[path.name] = [e.kind for e in loads_of(load_model(path))]
    assert counts["harbour_lane_floor_girder_si.toml"] == ["uniform", "vehicle"]
    assert counts["millrace_access_bridge_us.toml"] == ["vehicle", "uniform", "together"]
    assert counts["ferry_road_overpass_convoy_si.toml"] == ["train", "vehicle", "uniform"]


def test_the_loads_read_give_the_envelope_of_the_same_loads_built_by_hand():
    text = """
[[load]]
name = "truck"
axles = ["40 kN", "120 kN"]
spacings = [{ min = "3 m", max = "6 m" }]
impact = "20 %"
factors = { "load factor" = 1.5 }

[[load]]
name = "lane"
uniform = "8 kN/m"
placement = "spans"
"""
    model = read(text)
    from_file = trundle.envelope(model.beam, [e.case for e in loads_of(model)],
                                 sections=model.sections)
    truck = trundle.Vehicle([40.0, 120.0], [(3.0, 6.0)], name="truck")
    by_hand = trundle.envelope(model.beam, [
        trundle.LoadCase(truck, impact=0.2, factors=(("load factor", 1.5),)),
        trundle.UniformLoad(8.0, "spans", name="lane")], sections=model.sections)
    for kind in ("moment", "deflection", "reaction"):
        np.testing.assert_array_equal(from_file.max(kind), by_hand.max(kind))
        np.testing.assert_array_equal(from_file.min(kind), by_hand.min(kind))


# --- errors -------------------------------------------------------------------------------


def expected_key(path: Path) -> str:
    for line in path.read_text().splitlines():
        if line.startswith("# key:"):
            return line.removeprefix("# key:").strip()
    raise AssertionError(f"{path.name} has no '# key:' comment")


def test_there_are_at_least_ten_bad_load_files():
    assert len(BAD_LOADS) >= 10


@pytest.mark.parametrize("path", BAD_LOADS, ids=lambda p: p.name)
def test_bad_load_files_give_one_line_naming_file_and_key(path):
    with pytest.raises(ModelFileError) as info:
        load_model(path)
    message = str(info.value)
    assert info.value.key == expected_key(path)
    assert message.startswith(f"{path}: {info.value.key}: ")
    assert "expected" in message
    assert "\n" not in message


@pytest.mark.parametrize(("loads", "key", "fragment"), [
    ('[[load]]\nname = "t"\naxles = []\n', "load[0].axles", "at least one axle"),
    ('[[load]]\nname = "t"\naxles = ["-5 kN"]\n', "load[0].axles[0]", "positive"),
    ('[[load]]\nname = "t"\naxles = [1, 2]\nspacings = ["0 m"]\n', "load[0].spacings[0]",
     "positive"),
    ('[[load]]\nname = "t"\naxles = [1, 2]\nspacings = [{min = 3}]\n',
     "load[0].spacings[0].max", "required"),
    ('[[load]]\nname = "t"\naxles = [1, 2]\nspacings = [{min = 3, max = 4, step = 1}]\n',
     "load[0].spacings[0].step", "unknown key"),
    ('[[load]]\nname = "t"\naxles = [1]\nimpact = "-5 %"\n', "load[0].impact",
     "between 0 and 100 %"),
    ('[[load]]\nname = "t"\naxles = [1]\nimpact = "a lot"\n', "load[0].impact", "percentage"),
    ('[[load]]\nname = "t"\naxles = [1]\nfactors = [1.5]\n', "load[0].factors",
     "named multipliers"),
    ('[[load]]\nname = "t"\naxles = [1]\nfactors = {lf = true}\n', "load[0].factors.lf",
     "positive number"),
    ('[[load]]\nname = " "\naxles = [1]\n', "load[0].name", "not blank"),
    ('[[load]]\nuse = "demo-service-truck"\naxles = [1]\n', "load[0].use",
     "found both axles and use"),
    ('[[load]]\nuse = "demo-service-truck"\nspacings = [1]\n', "load[0].spacings",
     "only name, impact, factors and load_factor beside use"),
    ('[[load]]\nname = "t"\nvehicles = []\n', "load[0].vehicles", "at least one vehicle"),
    ('[[load]]\nname = "t"\nvehicles = [{axles = [1], wheels = 4}]\n',
     "load[0].vehicles[0].wheels", "unknown key"),
    ('[[load]]\nname = "t"\nvehicles = [{axles = [1]}]\nahead = {w = "3 kN/m", gap = "-1 m"}\n',
     "load[0].ahead.gap", "zero or more"),
    ('[[load]]\nname = "t"\nvehicles = [{axles = [1]}]\nbehind = {length = "5 m"}\n',
     "load[0].behind.w", "required"),
    ('[[load]]\nname = "t"\nuniform = "9 kN/m"\ndirections = "both"\n', "load[0].directions",
     "belongs to a vehicle or train of vehicles"),
    ('[[load]]\nname = "t"\naxles = [1]\ngaps = ["1 m"]\n', "load[0].gaps",
     "belongs to a train"),
])
def test_keys_are_named_with_their_path(loads, key, fragment):
    with pytest.raises(ModelFileError) as info:
        read(loads, name="x.toml")
    assert info.value.key == key, str(info.value)
    assert fragment in str(info.value)


@pytest.mark.parametrize(("text", "key", "fragment"), [
    ('units = "SI"\ndescription = "d"\nsource = "s"\nname = "x"\naxles = [1]\n', "name",
     "called by its file name"),
    ('units = "SI"\ndescription = "d"\naxles = [1]\n', "source", "required"),
    ('units = "metric"\ndescription = "d"\nsource = "s"\naxles = [1]\n', "units", '"SI"'),
    ('units = "SI"\ndescription = "d"\nsource = "s"\n', "file", "expected one of axles"),
    ('units = "SI"\ndescription = "d"\nsource = "s"\nuse = "demo-lane-load"\n', "use",
     "cannot refer to another"),
    ('units = "SI"\ndescription = "d"\nsource = "s"\naxles = [1, 2]\nspacings = ["3 kN"]\n',
     "spacings[0]", "which is a force"),
    ('units = "SI"\ndescription = "d"\nsource = "s"\nuniform = 3\nimpact = 0.3\n', "impact",
     "axle loads only"),
    ('units = "SI"\ndescription = "d"\nsource = "s"\naxles = = 3\n', "line 4", "invalid TOML"),
])
def test_errors_in_load_model_files_name_that_file_and_its_key(tmp_path, text, key, fragment):
    path = tmp_path / "bad-model.toml"
    path.write_text(text)
    with pytest.raises(ModelFileError) as info:
        read_load_model_file(path, SI)
    assert info.value.file == str(path)
    assert info.value.key == key, str(info.value)
    assert fragment in str(info.value)
    assert "\n" not in str(info.value)


# --- loads acting together ----------------------------------------------------------------

TRUCK_AND_LANE = """
[[load]]
name = "truck"
axles = ["100 kN", "150 kN"]
spacings = [{ min = "4 m", max = "9 m" }]
impact = "30 %"
factors = { "distribution" = 0.6 }
load_factor = 1.75

[[load]]
name = "lane"
uniform = "9 kN/m"
placement = "spans"
"""


def together_error(extra: str, loads: str = TRUCK_AND_LANE) -> ModelFileError:
    with pytest.raises(ModelFileError) as info:
        read(loads + extra)
    assert "\n" not in str(info.value)
    return info.value


def test_together_names_other_entries_and_keeps_their_own_impact_and_factors():
    # written before its parts: names are resolved after every entry is read
    together, truck, lane = entries('[[load]]\nname = "truck + lane"\n'
                                    'together = ["truck", "lane"]\n' + TRUCK_AND_LANE)
    assert together.kind == "together" and together.name == "truck + lane"
    assert isinstance(together.case, trundle.Together)
    assert together.case.name == "truck + lane"
    assert together.case.parts == (truck.case, lane.case)
    assert together.parts == ("truck", "lane")
    assert together.load is together.case
    assert together.case.parts[0].impact == 0.3
    assert together.case.parts[0].factors == (("distribution", 0.6),)
    assert together.case.parts[0].load_factor == 1.75
    assert together.case.parts[1].impact == 0.0
    assert together.origin == "model file" and together.files == ()


def test_together_of_library_models_carries_their_files():
    entry = entries('[[load]]\nuse = "demo-lane-load"\n[[load]]\n'
                    'use = "demo-heavy-vehicle-5-axle"\n[[load]]\nname = "both"\n'
                    'together = ["demo-heavy-vehicle-5-axle", "demo-lane-load"]\n')[2]
    assert [p.stem for p in entry.files] == ["demo-heavy-vehicle-5-axle", "demo-lane-load"]
    assert entry.parts == ("demo-heavy-vehicle-5-axle", "demo-lane-load")


def test_together_unknown_name_suggests_the_close_one():
    error = together_error('[[load]]\nname = "both"\ntogether = ["truck", "lame"]\n')
    assert error.key == "load[2].together[1]"
    assert 'found "lame" (did you mean "lane"?)' in error.detail


def test_together_cannot_name_itself():
    error = together_error('[[load]]\nname = "both"\ntogether = ["truck", "both"]\n')
    assert error.key == "load[2].together[1]" and "this entry itself" in error.detail


def test_together_cannot_include_another_together():
    error = together_error('[[load]]\nname = "both"\ntogether = ["truck", "lane"]\n'
                           '[[load]]\nname = "more"\ntogether = ["lane", "both"]\n')
    assert error.key == "load[3].together[1]"
    assert "itself loads acting together" in error.detail


@pytest.mark.parametrize("parts", ['["truck"]', "[]"])
def test_together_needs_two_or_more_parts(parts):
    error = together_error(f'[[load]]\nname = "both"\ntogether = {parts}\n')
    assert error.key == "load[2].together" and "two or more" in error.detail


def test_together_refuses_a_part_twice():
    error = together_error('[[load]]\nname = "both"\ntogether = ["truck", "truck"]\n')
    assert error.key == "load[2].together[1]" and 'found "truck" again' in error.detail


@pytest.mark.parametrize("key, value", [("impact", '"33 %"'), ("factors", "{ a = 1.2 }"),
                                        ("load_factor", "1.5")])
def test_together_has_no_impact_or_factors_of_its_own(key, value):
    error = together_error(f'[[load]]\nname = "both"\ntogether = ["truck", "lane"]\n'
                           f"{key} = {value}\n")
    assert error.key == f"load[2].{key}" and "each part keeps its own" in error.detail


def test_together_needs_a_name_and_no_other_kind_of_load():
    error = together_error('[[load]]\ntogether = ["truck", "lane"]\n')
    assert error.key == "load[2].name"
    error = together_error('[[load]]\nname = "both"\ntogether = ["truck", "lane"]\n'
                           'uniform = "2 kN/m"\n')
    assert "one kind of load per entry" in error.detail
    error = together_error('[[load]]\nname = "truck"\ntogether = ["lane", "truck"]\n')
    assert error.key == "load[2].name" and "different" in error.detail


def test_together_is_not_allowed_in_a_load_model_file(tmp_path):
    path = tmp_path / "combo.toml"
    path.write_text('units = "SI"\ndescription = "x"\nsource = "invented"\n'
                    'together = ["a", "b"]\n')
    with pytest.raises(ModelFileError) as info:
        read_load_model_file(path)
    assert info.value.key == "together"
