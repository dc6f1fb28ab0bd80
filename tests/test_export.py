"""report/export.py (the one CSV/JSON writer) and analysis/records.py (result records)."""

from __future__ import annotations

import csv
import json
import math
from dataclasses import dataclass

import numpy as np
import pytest

import trundle
from trundle.analysis.records import EnvelopeRecords, span_faces
from trundle.io.outputs import Provenance
from trundle.report.export import csv_text, input_values, json_text, jsonable, stamp_csv_files


def test_csv_has_the_provenance_first_then_header_and_rows() -> None:
    provenance = Provenance("beam.toml", "ab" * 32, "9.9", "2026-01-01")
    text = csv_text(["x [m]", "load"], [["1.5", "truck"], {"x [m]": "3", "load": "lane"}],
                    provenance)
    lines = text.splitlines()
    assert lines[0] == provenance.csv_comment()
    assert list(csv.DictReader(lines[1:])) == [{"x [m]": "1.5", "load": "truck"},
                                               {"x [m]": "3", "load": "lane"}]


def test_csv_cells_cannot_be_formulas_and_numbers_stay_numbers() -> None:
    text = csv_text(["name", "value"], [["=HYPERLINK(1)", "-2.5"], ["+evil", -3.0]])
    rows = list(csv.reader(text.splitlines()))[1:]
    assert rows == [["'=HYPERLINK(1)", "-2.5"], ["'+evil", "-3.0"]]


def test_csv_refuses_rows_that_do_not_fit_the_columns() -> None:
    with pytest.raises(ValueError):
        csv_text(["a", "b"], [["1"]])
    with pytest.raises(ValueError):
        csv_text(["a", "a"], [])


def test_stamp_adds_the_comment_once() -> None:
    provenance = Provenance("m.toml", "", "1", "")
    files = stamp_csv_files({"a.csv": "x\n1\n", "b.json": "{}"}, provenance)
    again = stamp_csv_files(files, provenance)
    assert again["a.csv"] == provenance.csv_comment() + "\nx\n1\n"
    assert again["b.json"] == "{}"


@dataclass(frozen=True)
class _Check:
    span: int
    value: float
    where: tuple[float, ...]


def test_jsonable_of_dataclasses_numpy_and_non_finite() -> None:
    record = _Check(np.int64(2), np.float64(-0.0), (1.0, math.nan))
    assert jsonable(record) == {"span": 2, "value": 0.0, "where": [1.0, None]}
    assert jsonable({"a": np.arange(3.0), 1: np.bool_(True)}) == {"a": [0.0, 1.0, 2.0],
                                                                  "1": True}
    assert json.loads(json_text({"v": math.inf, "name": "\u202eevil"})) == {
        "v": None, "name": "\u202eevil"}
    assert "\u202e" not in json_text({"name": "\u202eevil"})  # written as an escape
    with pytest.raises(TypeError):
        jsonable(object())


def test_json_text_is_the_standard_library_text_character_for_character() -> None:
    # json_text writes in one pass what json.dumps(jsonable(doc), indent=1,
    # ensure_ascii=False) writes (the files' text must not change with the writer)
    import enum
    from pathlib import PurePath

    from trundle.report.safe_text import json_escaped

    class Name(str):
        pass

    class Count(enum.IntEnum):
        THREE = 3

    def reference(document: object) -> str:
        return json_escaped(json.dumps(jsonable(document), indent=1, ensure_ascii=False,
                                       allow_nan=False)) + "\n"

    documents = [
        {}, [], "text", 2.5, 7, None, True, (1, 2), {"a": [], "b": {}, "c": [[], {}]},
        {"zero": -0.0, "np zero": np.float64(-0.0), "nan": math.nan, "inf": np.inf,
         "big": 1e300, "third": 1 / 3, "f32": np.float32(0.1)},
        {"name": Name("h\u00e9\u202e\x7f\n\""), "count": Count.THREE, "yes": True,
         "no": np.bool_(False), "none": None, "i64": np.int64(-7), 1: "int key",
         2.5: [1, (2, 3.0, [None])]},
        {"check": _Check(np.int64(2), np.float64(-0.0), (1.0, math.nan)),
         "array": np.arange(4.0).reshape(2, 2), "path": PurePath("/a/b"),
         "deep": [{"x": [{"y": [], "z": {"w": [1.0]}}]}]},
    ]
    for document in documents:
        assert json_text(document) == reference(document), document


def test_input_values_keep_what_was_written() -> None:
    assert input_values({"w": math.inf, "n": [1, 2.5]}) == {"w": "inf", "n": [1, 2.5]}


def test_records_name_the_governing_load_and_where_it_stands() -> None:
    # a single axle of 10 on a simple span of 10: max moment at midspan 10·10/4 = 25 with the
    # axle on the section (statics of a simple span; common practice, no source)
    beam = trundle.Beam(spans=[10.0])
    axle = trundle.Vehicle(loads=[10.0], spacings=[], name="axle")
    env = trundle.envelope(beam, [axle], sections=[0.0, 5.0, 10.0])
    records = EnvelopeRecords(env)
    at_mid = records.at_sections("moment", "max")[1]
    assert at_mid.case == "axle" and at_mid.governed
    assert at_mid.value == pytest.approx(25.0, rel=1e-12)
    assert at_mid.axles == pytest.approx((5.0,)) and at_mid.point_loads == (10.0,)
    assert at_mid.face == "on"
    empty = records.at_sections("moment", "min")[1]  # no load makes it worse than 0
    assert not empty.governed and empty.value == 0.0
    reactions = records.at_supports("reaction", "max")
    assert sorted(reactions) == [0, 1]
    assert reactions[0].value == pytest.approx(10.0, rel=1e-12)


def test_records_of_loads_acting_together_keep_each_part() -> None:
    beam = trundle.Beam(spans=[10.0])
    axle = trundle.LoadCase(trundle.Vehicle(loads=[10.0], spacings=[]), name="axle")
    lane = trundle.LoadCase(trundle.UniformLoad(1.0), name="lane")
    together = trundle.Together((axle, lane), name="axle + lane")
    env = trundle.envelope(beam, [together], sections=[5.0], effects=("moment",))
    record = EnvelopeRecords(env).at_sections("moment", "max")[0]
    # 10·10/4 + 1·10²/8 = 37.5 (statics of a simple span; common practice, no source)
    assert record.value == pytest.approx(37.5, rel=1e-12)
    assert record.case == "axle + lane" and record.together
    assert {p.case for p in record.parts} == {"axle", "lane"}
    assert len(record.loaded) == 1 and record.loaded[0] == pytest.approx((0.0, 10.0))


def test_span_faces() -> None:
    beam = trundle.Beam(spans=[4.0, 6.0])
    x = np.array([0.0, 2.0, 4.0, 7.0, 10.0])
    inside, rights, lefts = span_faces(beam, x, 1)
    assert list(inside) == [2, 3, 4]
    assert list(rights) == [2, 3]  # the right support has no right face in the span
    assert list(lefts) == [3, 4]  # the left support has no left face in the span
