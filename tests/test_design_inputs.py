"""Design tables and design-case files: reading, and bad input as one-line errors (exit 2 where
it reaches the command line)."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from cli_helpers import assert_one_line_error, run
from trundle.analysis.combinations import Combination
from trundle.analysis.permanent import PermanentLoad
from trundle.core.beam import ModelError
from trundle.io.design_tables import (
    read_combinations,
    read_design_settings,
    read_lane_length_loads,
    read_live_patterns,
    read_permanent,
)
from trundle.io.loads import read_design_case_file, read_library_model, read_load_model_file
from trundle.io.modelfile import ModelFileError, Reader
from trundle.io.units import SYSTEMS
from trundle.loads import library

BEAM = """units = "US"
[beam]
spans = ["100 ft", "100 ft"]
supports = ["pin", "pin", "pin"]
EI = 1e7
"""


def _reader(units: str = "US", length: float = 200.0) -> Reader:
    return Reader("girder.toml", SYSTEMS[units], length=length)


def _one_line(error: Exception, *fragments: str) -> None:
    text = str(error)
    assert "\n" not in text
    for fragment in fragments:
        assert fragment in text, text


# --- bad input through the command line --------------------------------------------------


def test_unknown_load_model_name_lists_the_valid_ones(tmp_path: Path) -> None:
    model = tmp_path / "girder.toml"
    model.write_text(BEAM + '[[load]]\nuse = "hl-93"\n')
    result = run("envelope", model)
    assert_one_line_error(result, "load[0].use", '"hl-93"', 'did you mean "hl93"?',
                          *library.names())


def test_design_case_file_with_an_unknown_rule_effect(tmp_path: Path) -> None:
    case = tmp_path / "two-trucks.toml"
    case.write_text('units = "US"\ndescription = "d"\nsource = "invented"\n'
                    '[[alternative]]\nname = "a"\nparts = ["hl93-lane"]\n'
                    'rule = { effects = ["negative shear"] }\n')
    with pytest.raises(ModelFileError) as caught:
        read_load_model_file(case)
    _one_line(caught.value, "alternative[0].rule.effects[0]", '"negative shear"',
              '"negative moment"')
    model = tmp_path / "girder.toml"
    model.write_text(BEAM + '[[load]]\nuse = "two-trucks.toml"\n')
    assert_one_line_error(run("envelope", model), "two-trucks.toml",
                          "alternative[0].rule.effects[0]")


def test_design_case_in_a_load_table_is_refused_clearly(tmp_path: Path) -> None:
    model = tmp_path / "girder.toml"
    model.write_text(BEAM + '[[load]]\nuse = "hl93"\n')
    assert_one_line_error(run("envelope", model), "load[0].use", "a design case")


def test_bad_rule_region_and_factor() -> None:
    base = {"units": "US", "description": "d", "source": "s"}
    for alternative, key in (
            ({"name": "a", "parts": ["hl93-lane"], "rule": {"effects": ["shear"],
                                                            "region": "near piers"}},
             "alternative[0].rule.region"),
            ({"name": "a", "parts": ["hl93-lane"], "factor": -0.9}, "alternative[0].factor"),
            ({"name": "a", "parts": ["hl93"]}, "alternative[0].parts[0]"),
            ({"name": "a", "parts": [{"name": "p", "axles": ["8 kip"], "scale_by": ["beta"]}]},
             "alternative[0].parts[0].scale_by[0]")):
        raw = {**base, "alternative": [alternative]}
        reader = _reader()
        from trundle.io.loads import read_design_case
        with pytest.raises(ModelFileError) as caught:
            read_design_case(raw, "x", reader, library.folder())
        _one_line(caught.value, key)


# --- combinations --------------------------------------------------------------------------


def test_combination_naming_an_unknown_category() -> None:
    table = [{"name": "strength", "factors": {"DC": [1.25, 0.9], "DX": [1.5, 0.65],
                                              "LL": 1.75}}]
    with pytest.raises(ModelFileError) as caught:
        read_combinations(table, _reader(), ("DC", "DW"))
    _one_line(caught.value, "combination[0].factors.DX", '"DX"', "DC, DW", "did you mean")


def test_combination_missing_a_category_of_the_permanent_loads() -> None:
    table = [{"name": "strength", "factors": {"DC": [1.25, 0.9], "LL": 1.75}}]
    with pytest.raises(ModelFileError) as caught:
        read_combinations(table, _reader(), ("DC", "DW"))
    _one_line(caught.value, "combination[0].factors", '"DW"')


@pytest.mark.parametrize("factors", [{"DC": [1.25, -0.9]}, {"DC": -1.25},
                                     {"DC": [1.25, 0.9], "LL": -1.75}, {"DC": [0.9, 1.25]}])
def test_negative_or_reversed_factors(factors) -> None:
    with pytest.raises(ModelFileError) as caught:
        read_combinations([{"name": "c", "factors": factors}], _reader(), ("DC",))
    _one_line(caught.value, "combination[0].factors")
    with pytest.raises(ModelError):
        Combination("c", {"DC": (1.25, -0.9)}, 1.75)


def test_shipped_combination_by_name() -> None:
    (c,) = read_combinations([{"use": "building 1.2D + 1.6L"}], _reader(), ("D",))
    assert c.permanent == {"D": (1.2, 1.2)} and c.live == 1.6
    assert "verify" in c.provenance
    with pytest.raises(ModelFileError) as caught:
        read_combinations([{"use": "building 1.2D+1.6L"}], _reader(), ("D",))
    _one_line(caught.value, "combination[0].use", 'did you mean "building 1.2D + 1.6L"?')


# --- permanent loads, patterns, lane loads, design settings --------------------------------


def test_permanent_loads_read_and_bad_ones_refused() -> None:
    loads = read_permanent([
        {"name": "girder", "category": "DC", "self_weight": "1.1 kip/ft"},
        {"name": "barrier", "category": "DC", "uniform": "0.5 kip/ft", "from": "10 ft",
         "to": "40 ft"},
        {"name": "diaphragm", "category": "DC", "point": "6 kip", "at": "100 ft"},
        {"name": "end couple", "category": "DW", "couple": "-20 kip*ft", "at": 0}], _reader())
    assert loads[1] == PermanentLoad("barrier", "DC", "partial uniform", 0.5, 10.0, 40.0)
    assert loads[3].value == -20.0
    for bad, key in (
            ({"name": "a", "category": "DC", "self_weight": "1 kip"}, "permanent[0].self_weight"),
            ({"name": "a", "category": "DC", "point": "6 kip"}, "permanent[0].at"),
            ({"name": "a", "category": "DC"}, "permanent[0]"),
            ({"name": "a", "category": "DC", "uniform": "1 kip/ft", "from": 50, "to": 40},
             "permanent[0].to"),
            ({"name": "a", "category": "DC", "point": "6 kip", "at": "300 ft"}, "permanent[0].at"),
            ({"category": "DC", "self_weight": 1.0}, "permanent[0].name")):
        with pytest.raises(ModelFileError) as caught:
            read_permanent([bad], _reader())
        _one_line(caught.value, key)


def test_live_patterns_lane_loads_and_settings() -> None:
    assert read_live_patterns([{"name": "floor", "uniform": "4 kN/m"}], _reader("SI")) == \
        (("floor", 4.0, "spans"),)
    with pytest.raises(ModelFileError) as caught:
        read_live_patterns([{"name": "floor", "uniform": "4 kN/m", "placement": "some"}],
                           _reader("SI"))
    _one_line(caught.value, "live_pattern[0].placement")
    ((name, law, whole),) = read_lane_length_loads(
        [{"name": "lane", "intensity": {"w_ref": "9 kN/m", "L_ref": "50 m", "exponent": -0.2,
                                        "max": "15 kN/m"}, "loaded_set": "whole segments"}],
        _reader("SI"))
    assert whole and law(50.0) == pytest.approx(9.0) and law(0.01) == 15.0
    settings = read_design_settings({"deflection_limit": "L/800",
                                     "critical_shear": ["d from supports", "0.9 m from supports"],
                                     "effective_depth": "1.2 m"}, _reader("SI"))
    assert settings.deflection_ratio == 800.0
    assert settings.critical_shear_distances == (1.2, 0.9)
    for bad, key in (({"deflection_limit": "L/-5"}, "design.deflection_limit"),
                     ({"critical_shear": ["d from supports"]}, "design.critical_shear[0]"),
                     ({"critical_shear": ["near supports"]}, "design.critical_shear[0]"),
                     ({"critical_shear": ["5 kN from supports"]}, "design.critical_shear[0]")):
        with pytest.raises(ModelFileError) as caught:
            read_design_settings(bad, _reader("SI"))
        _one_line(caught.value, key)


# --- the library's published models ---------------------------------------------------------


def test_every_library_model_names_its_source_and_caution() -> None:
    for name in library.names():
        model = read_library_model(name)
        assert model.source
        if not name.startswith("demo-"):
            assert "Transcribed from memory - verify against the" in model.source, name
            raw = tomllib.loads(model.path.read_text())
            assert raw["source"]


def test_lm1_parameters_lane_and_width() -> None:
    path = library.path_of("en1991-2-lm1")
    lane1 = read_design_case_file(path).load.alternatives[0].case
    assert lane1.parts[0].load.loads == (300.0, 300.0)
    assert lane1.parts[1].load.w == pytest.approx(27.0)  # 9 kN/m² x 3 m
    lane2 = read_design_case_file(path, parameters={"lane": 2, "lane_width": "3.5 m",
                                                    "alpha_Q": 0.9}).load
    tandem, uniform = lane2.alternatives[0].case.parts
    assert tandem.load.loads == (200.0, 200.0) and tandem.multiplier == pytest.approx(0.9)
    assert uniform.load.w == pytest.approx(2.5 * 3.5)
    lane4 = read_design_case_file(path, parameters={"lane": 4}).load
    assert lane4.alternatives[0].case.load.w == pytest.approx(7.5)  # no tandem beyond lane 3
    with pytest.raises(ModelFileError) as caught:
        read_design_case_file(path, parameters={"alpha_X": 1.0})
    _one_line(caught.value, "parameters.alpha_X", "alpha_Q")


def test_bad_parameters_and_pressures() -> None:
    from trundle.io.loads import read_design_case

    base = {"units": "SI", "description": "d", "source": "s"}
    part = {"name": "udl", "pressure": [], "placement": "anywhere"}
    for raw, key in (
            ({**base, "parameters": 5, "alternative": [{"name": "a", "parts": ["hl93-lane"]}]},
             "parameters"),
            ({**base, "parameters": {"lane_width": "3 kN"},
              "alternative": [{"name": "a", "parts": ["hl93-lane"]}]}, "parameters.lane_width"),
            ({**base, "parameters": {"lane_width": "3 m"},
              "alternative": [{"name": "a", "parts": [part]}]}, "alternative[0].parts[0].pressure"),
            ({**base, "alternative": [{"name": "a", "parts": [{**part, "pressure": "9 kN/m^2"}]}]},
             "alternative[0].parts[0].pressure")):
        with pytest.raises(ModelFileError) as caught:
            read_design_case(raw, "x", _reader("SI"), library.folder())
        _one_line(caught.value, key)


def test_design_load_table(tmp_path: Path) -> None:
    from trundle.io.design_tables import read_design_loads

    (case,) = read_design_loads([{"use": "cooper-e80", "factors": {"per rail": 0.5}}], _reader())
    assert [a.factor for a in case.alternatives] == [0.5, 0.5]
    (lane,) = read_design_loads([{"use": "hl93-lane", "name": "lane only"}], _reader())
    assert lane.name == "lane only" and lane.alternatives[0].case.load.w == 0.64
    for bad, key in (({"use": "hl-93"}, "design_load[0].use"),
                     ({"use": "hl93-lane", "parameters": {"lane": 2}}, "design_load[0].parameters"),
                     ({"use": "en1991-2-lm1", "parameters": {"lane": 0}},
                      "parameters.lane"),
                     ({"use": "hl93", "factors": {"x": -1}}, 'design_load[0].factors."x"')):
        with pytest.raises(ModelFileError) as caught:
            read_design_loads([bad], _reader())
        _one_line(caught.value, key)
