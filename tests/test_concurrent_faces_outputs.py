"""The shear on each face under the extreme moment, in the CSV, the JSON and the HTML report
(issue 7, item 5): the same numbers as the API, read from the files ``trundle envelope``
writes. Case and statics as in test_concurrent_faces.py: 100 ft span, x = 47.5 ft, axles of
8, 32 and 32 kip at 14 ft (the HL-93 design truck's axles, AASHTO LRFD Art. 3.6.1.2.2, from
memory): V just left = +26.44 kip, just right = −5.56 kip with the middle axle on the section.
"""

from __future__ import annotations

import json

import pytest

from cli_helpers import column, read_csv, run

MODEL = '''
title = "Test span (invented)"
units = "US"
[beam]
spans = ["100 ft"]
supports = ["pin", "pin"]
E = "29000 ksi"
I = "9040 in^4"
[sections]
at = ["47.5 ft"]
[[load]]
name = "three axles"
axles = ["8 kip", "32 kip", "32 kip"]
spacings = ["14 ft", "14 ft"]
'''


def test_files_give_the_shear_on_each_face(tmp_path) -> None:
    model = tmp_path / "span.toml"
    model.write_text(MODEL)
    out = tmp_path / "out"
    result = run("envelope", model, "--out", out)
    assert result.exit_code == 0, (result.output, result.stderr)
    header, body = read_csv(out / "envelope.csv")
    left = column(header, body, "moment max: concurrent shear left [kip]")
    right = column(header, body, "moment max: concurrent shear right [kip]")
    assert left[0] == pytest.approx(26.44, rel=1e-9)
    assert right[0] == pytest.approx(-5.56, rel=1e-9)
    data = json.loads((out / "envelope.json").read_text())
    section = data["sections"][0]
    shear = section["moment"]["max"]["concurrent_shear"]
    assert shear["left"] == pytest.approx(26.44, rel=1e-9)
    assert shear["right"] == pytest.approx(-5.56, rel=1e-9)
    html = (out / "report.html").read_text()
    assert "V left with it" in html and "26.44" in html and "-5.56" in html.replace("−", "-")
    assert "axle on the section" in html
