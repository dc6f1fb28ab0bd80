"""Python and Jupyter: short readable reprs and small HTML tables with the key numbers; the
governing load named; an envelope as plain records with x (pandas-readable)."""

from __future__ import annotations

import math
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest

import trundle
from trundle.io import load_model
from trundle.io.cranes import runway_spec
from trundle.io.loads import loads_of
from trundle.workflows import moving_loads

ROOT = Path(__file__).resolve().parents[1]
VOID = {"br", "img", "meta", "hr"}


class _Balanced(HTMLParser):
    """Records the text and fails on a closing tag that does not match the open one."""

    def __init__(self) -> None:
        super().__init__()
        self.stack: list[str] = []
        self.text: list[str] = []
        self.cells = 0

    def handle_starttag(self, tag: str, attrs: list) -> None:
        if tag not in VOID:
            self.stack.append(tag)
        self.cells += tag == "td"

    def handle_endtag(self, tag: str) -> None:
        assert self.stack and self.stack.pop() == tag, f"unbalanced </{tag}>"

    def handle_data(self, data: str) -> None:
        self.text.append(data)


def _parsed(markup: str) -> _Balanced:
    parser = _Balanced()
    parser.feed(markup)
    parser.close()
    assert parser.stack == [], f"unclosed tags {parser.stack}"
    return parser


def _short_repr(text: str, limit: int = 400) -> None:
    assert "\n" not in text and len(text) <= limit, text
    assert "array(" not in text and "..., " not in text


def _simple_span_envelope() -> trundle.Envelope:
    beam = trundle.Beam([10.0])
    return trundle.envelope(beam, [trundle.Vehicle([100.0], [], name="single load")],
                            sections=beam.tenth_points())


def test_beam_repr_spells_out_its_values_and_its_table_lists_the_supports() -> None:
    beam = trundle.Beam([30.0, 40.0, 30.0], supports=["pin", "pin", trundle.Spring(5e4), "pin"])
    _short_repr(repr(beam))
    assert "30.0, 40.0, 30.0" in repr(beam)
    page = _parsed(beam._repr_html_())
    text = " ".join(page.text)
    assert "spring k=50000" in text and "degree of indeterminacy 2" in text
    assert page.cells == 4 * 3  # support, x, kind for each of the four supports


def test_influence_line_repr_names_its_extremes() -> None:
    # simple span L = 10, moment at midspan: the line is a triangle with its peak
    # a·b/L = 2.5 under the section and no negative part (statics of a simply supported
    # beam; common practice, no source)
    line = trundle.Beam([10.0]).influence("moment", at=5.0)
    text = repr(line)
    _short_repr(text)
    assert "max 2.5 at x = 5" in text and "min 0 " in text
    page = " ".join(_parsed(line._repr_html_()).text)
    assert "2.5" in page and "12.5" in page  # the triangle's area ½·10·2.5


def test_envelope_repr_is_short_and_has_the_key_numbers() -> None:
    # one 100 kN load on a 10 m simple span: max moment P·L/4 = 250 at midspan, max
    # reaction P = 100 with the load over the support (closed forms; common practice)
    env = _simple_span_envelope()
    text = repr(env)
    _short_repr(text)
    assert "moment max 250 at x = 5 (single load)" in text
    assert "reaction max 100 at support 0 (single load)" in text
    page = _parsed(env._repr_html_())
    words = " ".join(page.text)
    assert "single load" in words and "250" in words
    # one row per family computed, seven cells each
    assert page.cells == 7 * sum(1 for f in env.index.values() if f.size)


def test_governing_names_its_load_and_reads_plainly() -> None:
    beam = trundle.Beam([24.0, 30.0, 24.0])
    truck = trundle.Vehicle([35.0, 145.0, 145.0], [4.3, (4.3, 9.0)], name="truck")
    lane = trundle.UniformLoad(9.3, name="lane")
    env = trundle.envelope(beam, [truck, lane, trundle.Together([truck, lane], name="both")],
                           sections=beam.tenth_points())
    for which in ("max", "min"):
        for g in env.governing("moment", which):
            assert g.load == ("" if g.case < 0 else env.cases[g.case].name)
            for part in g.parts:
                assert part.load in ("", "truck", "lane")
    g = env.governing("moment")[15]
    assert g.load == "both" and {p.load for p in g.parts} == {"truck", "lane"}
    text = repr(g)
    _short_repr(text, 600)
    assert "load 'both'" in text and "load 'truck'" in text and "searched" in text
    assert repr(trundle.Governing(0.0)) == "Governing(0, empty beam)"
    # the field documentation explains reference and side
    doc = trundle.Governing.__doc__
    assert "reference :" in doc and "side :" in doc and "first concentrated load" in doc


def test_records_are_plain_rows_with_x_equal_to_the_envelope() -> None:
    env = _simple_span_envelope()
    rows = env.records()
    assert [r["x"] for r in rows] == pytest.approx(list(env.sections))
    assert [r["moment_max"] for r in rows] == pytest.approx(list(env.max("moment")))
    assert [r["shear_left_min"] for r in rows] == pytest.approx(list(env.min("shear", "left")))
    assert all(r["span"] == 1 for r in rows) and rows[5]["moment_max_load"] == "single load"
    for row in rows:  # plain Python scalars: any table library reads them
        assert all(isinstance(v, int | float | str) for v in row.values())
    moment = env.records("moment")
    assert moment[5]["max"] == pytest.approx(250.0) and moment[5]["max_reference"] == 5.0
    shear = env.records("shear")
    assert len(shear) == 2 * len(env.sections)
    assert [r["side"] for r in shear[:2]] == ["left", "right"]
    reactions = env.records("reaction")
    assert [(r["support"], r["x"]) for r in reactions] == [(0, 0.0), (1, 10.0)]
    assert reactions[1]["max"] == pytest.approx(100.0)


def test_records_make_a_dataframe_when_pandas_is_there() -> None:
    pandas = pytest.importorskip("pandas")
    frame = pandas.DataFrame(_simple_span_envelope().records())
    assert list(frame.columns[:3]) == ["x", "span", "moment_max"] and len(frame) == 11


def test_workflow_results_have_short_reprs_and_tables() -> None:
    model = load_model(ROOT / "examples" / "harbour_lane_floor_girder_si.toml")
    result = moving_loads.run(moving_loads.MovingLoadsSpec(
        model.beam, [entry.case for entry in loads_of(model)], sections=model.sections))
    _short_repr(repr(result), 600)
    first = result.absolute[0]["max"]
    assert f"{first.value:.5g}" in repr(result)
    _parsed(result._repr_html_())
    crane = load_model(ROOT / "examples" / "cranes" / "hall_kestrel_quay_si.toml")
    runway = trundle.analyse_runway(crane.beam, runway_spec(crane), crane.sections)
    text = repr(runway)
    _short_repr(text)
    reaction = np.nanmax(runway.strength.max("reaction"))
    assert f"{reaction:.5g}" in text and "EXCEEDS" in text
    page = _parsed(runway._repr_html_())
    assert len(runway._repr_html_()) < 20_000 and "PASS" in " ".join(page.text)


def test_sweep_result_repr_and_records() -> None:
    result = trundle.sweep(ROOT / "examples" / "harbour_lane_floor_girder_si.toml",
                           ['load."pallet forklift".spacings[0]=1.2:1.8:0.3 m'],
                           ["moment max span 2"])
    text = repr(result)
    _short_repr(text)
    worst = result.values[result.worst(0), 0]
    assert f"{worst:.5g}" in text and "3 points" in text
    rows = result.records()
    assert [r['load."pallet forklift".spacings[0]'] for r in rows] == pytest.approx(
        [1.2, 1.5, 1.8])
    assert all(math.isfinite(r["max moment, span 2"]) for r in rows)
    _parsed(result._repr_html_())
