"""Where the live load stands for the governing design values (``DesignResult.positions``).

Checks: each record's value is the design envelope's, and the permanent part plus γL × the
live extreme; the live configuration it names, re-applied as a fixed load to trundle's static
solver (``Beam.static``), gives the tabulated live extreme; on a simple span the governing
positions of two equal axles are those of the closed form; and the design report of every
example draws them with the design table's numbers."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

import trundle
from trundle.analysis.combinations import BUILDING_1_2D_1_6L, PERMANENT_ONLY
from trundle.analysis.permanent import PermanentLoad
from trundle.core.statics import DistributedLoad, PointLoad
from trundle.io.design_tables import design_spec_of, read_design_model
from trundle.loads.cases import LoadCase, Together
from trundle.loads.design_cases import for_beam
from trundle.loads.patterns import UniformLoad
from trundle.loads.vehicles import Train, Vehicle
from trundle.workflows.design_envelope import DesignSpec, run

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "examples" / "design").glob("*.toml"))


@pytest.fixture(scope="module", params=EXAMPLES, ids=lambda p: p.stem)
def example(request):
    design = read_design_model(request.param)
    spec = design_spec_of(design)
    return spec, run(spec)


def _load_cases(spec: DesignSpec) -> dict[str, LoadCase]:
    """Every live load case of the spec by name (design-case parts, plain loads, patterns)."""
    out: dict[str, LoadCase] = {}
    for design_case in spec.design_loads:
        for alternative in design_case.alternatives:
            case = for_beam(alternative, spec.beam.length)
            for part in (case.parts if isinstance(case, Together) else (case,)):
                out[part.name] = part
    for name, w, placement in spec.live_patterns:
        out[name] = LoadCase(UniformLoad(w, "spans" if placement == "spans" else "anywhere",
                                         name=name))
    return out


def _static_loads(record, case: LoadCase, length: float) -> tuple[list, list]:
    """The record's configuration of one load case as fixed loads, multiplier included:
    axles with the dynamic allowance at their x (those on the beam), uniform load on its
    loaded stretches, a train's attached uniform load where it lies. Returned as (loads,
    axles at the section with the side they stand on: +1 just right, −1 just left)."""
    m = case.multiplier
    load = case.load
    if isinstance(load, UniformLoad):
        out = [DistributedLoad(a, b, m * load.w) for a, b in record.loaded]
        if load.point_load and record.lead_x is not None:
            out.append(PointLoad(record.lead_x, m * load.point_load))
        return out, []
    vehicles = load.vehicles if isinstance(load, Train) else (load,)
    axle_loads = [p for v in vehicles for p in v.loads]
    assert len(axle_loads) == len(record.axles)
    out, at_section = [], []
    side = {"left": -1, "right": 1}.get(record.face, 0)
    for x, p in zip(record.axles, axle_loads, strict=True):
        if not -1e-9 * length <= x <= length * (1 + 1e-9):
            continue
        load_here = PointLoad(x, m * (1 + case.impact) * p)
        if side and abs(x - record.x) <= 1e-9 * length:
            at_section.append((load_here, side))
        else:
            out.append(load_here)
    out += [DistributedLoad(a, b, m * w) for a, b, w in record.attached]
    return out, at_section


def _static_effect(beam, loads, family: str, where: float | int) -> float:
    if not loads:
        return 0.0
    solved = beam.static(loads)
    if family == "reaction":
        return float(solved.reactions[int(where)])
    if family == "moment":
        return float(solved.moment(where)[0])
    return float(solved.shear(where, side=family.split("_")[1])[0])


def _just_beside(beam, load: PointLoad, side: int, family: str, x: float) -> float:
    """The shear at x of a load standing just left (−1) or right (+1) of x, where the line
    jumps: the limit from that side by Richardson extrapolation of two static solves at
    distances h and 2h (error O(h²))."""
    h = 1e-4 * beam.length

    def at(d: float) -> float:
        return _static_effect(beam, [PointLoad(x + side * d, load.P)], family, x)

    return 2 * at(h) - at(2 * h)


def test_records_carry_the_design_values_and_their_parts(example) -> None:
    spec, result = example
    beam = spec.beam
    assert set(result.positions) == set(result.designs)
    for name, records in result.positions.items():
        env = result.designs[name]
        spans_with = {"moment max": set(), "moment min": set()}
        for r in records:
            assert r.value == env.values[r.family, r.which][r.index]
            assert r.case == env.governing[r.family, r.which][r.index]
            assert r.value == pytest.approx(r.permanent + r.live_factor * r.live,
                                            rel=1e-12, abs=1e-9)
            if r.family == "moment":
                spans_with[f"moment {r.which}"].update(r.spans)
            if r.case == PERMANENT_ONLY:
                assert r.load is None and r.live == 0.0
                continue
            assert r.reproduced
            assert r.alternative_factor * r.load.value == pytest.approx(r.live, rel=1e-6)
        # every span has its largest and smallest design moment, every support its reaction
        assert spans_with["moment max"] == spans_with["moment min"] == set(range(beam.n_spans))
        reactions = {r.index for r in records if r.family == "reaction" and r.which == "max"}
        assert reactions == set(range(len(beam.supports)))
        # each is the extreme of its span: no section of the span is worse
        for r in records:
            if r.family != "moment":
                continue
            for span in r.spans:
                inside = beam.sections_in_span(result.sections, span)
                values = env.values["moment", r.which][inside]
                assert (r.value >= values.max()) if r.which == "max" else (r.value <= values.min())


def test_governing_positions_reapplied_statically_give_the_live_extreme(example) -> None:
    """The configuration of every governing design moment (and shear and reaction) as a fixed
    load on the beam, solved by trundle's static solver, gives the case's own extreme.
    Alternatives' factors multiply the sum of their parts (each at its own worst)."""
    spec, result = example
    beam = spec.beam
    cases = _load_cases(spec)
    checked = 0
    for records in result.positions.values():
        for r in records:
            if r.load is None:
                continue
            parts = r.load.parts or (r.load,)
            where = r.index if r.family == "reaction" else r.x
            total = 0.0
            for part in parts:
                loads, at_section = _static_loads(part, cases[part.case], beam.length)
                total += _static_effect(beam, loads, r.family, where)
                total += sum(_just_beside(beam, load, side, r.family, r.x)
                             for load, side in at_section)
            assert r.alternative_factor * total == pytest.approx(r.live, rel=1e-6,
                                                                 abs=1e-9 * abs(r.value)), r
            checked += 1
    assert checked


def test_two_equal_axles_on_a_simple_span_stand_where_the_closed_form_puts_them() -> None:
    """Two axles P at spacing a on a simple span L: the largest moment stands under one axle
    when the midspan halves the distance between that axle and the resultant:
    M = (2P/L)(L/2 − a/4)² (the resultant rule for a simple span, structural analysis
    textbooks, from memory). L = 20, a = 4, P = 100: M = 810 at x = 9 (axles at 9 and 13) or
    at x = 11 (axles at 7 and 11). With a uniform permanent w = 10 (M = wx(L−x)/2 = 495 at
    x = 9) and 1.2D + 1.6L the design value is 1.2·495 + 1.6·810 = 1890."""
    L, a, P, w = 20.0, 4.0, 100.0, 10.0
    beam = trundle.Beam(spans=[L])
    sections = np.unique(np.concatenate([beam.tenth_points(), [9.0, 11.0]]))
    spec = DesignSpec(beam, sections, loads=[Vehicle((P, P), (a,), name="pair")],
                      permanent=[PermanentLoad("deck", "D", "self weight", w)],
                      combinations=[BUILDING_1_2D_1_6L])
    result = run(spec)
    record = next(r for r in result.positions[BUILDING_1_2D_1_6L.name]
                  if r.family == "moment" and r.which == "max")
    closed = 2 * P / L * (L / 2 - a / 4) ** 2
    assert closed == pytest.approx(810.0)
    assert record.x in (9.0, 11.0)
    assert record.live == pytest.approx(closed, rel=1e-12)
    assert record.value == pytest.approx(1.2 * w * record.x * (L - record.x) / 2 + 1.6 * closed,
                                         rel=1e-12)
    assert record.value == pytest.approx(1890.0, rel=1e-12)
    axles = sorted(record.load.axles)
    assert axles == pytest.approx([9.0, 13.0] if record.x == 9.0 else [7.0, 11.0], abs=1e-9)
    # the same axles as a fixed load on the beam (static solver)
    solved = beam.static([PointLoad(x, P) for x in axles])
    assert float(solved.moment(record.x)[0]) == pytest.approx(closed, rel=1e-12)
    # the largest reaction: one axle over the support, the other on the span
    reaction = next(r for r in result.positions[BUILDING_1_2D_1_6L.name]
                    if r.family == "reaction" and r.index == 0)
    assert reaction.live == pytest.approx(P + P * (L - a) / L, rel=1e-12)
    assert min(reaction.load.axles) == pytest.approx(0.0, abs=1e-9)


def test_a_lane_load_by_loaded_length_is_drawn_on_its_loaded_set() -> None:
    """A lane load w(L) constant in L is a uniform load wherever adverse: the loaded set of the
    midspan moment of a simple span is the whole span, M = wL²/8 (closed form)."""
    from trundle.analysis.patterns import LaneIntensity

    L, w = 12.0, 9.0
    beam = trundle.Beam(spans=[L])
    lane = LaneIntensity(lengths=(0.0, 100.0), intensities=(w, w))
    spec = DesignSpec(beam, beam.tenth_points(), lane_length_loads=[("lane", lane, False)],
                      permanent=[PermanentLoad("deck", "D", "self weight", 1.0)],
                      combinations=[BUILDING_1_2D_1_6L])
    record = next(r for r in run(spec).positions[BUILDING_1_2D_1_6L.name]
                  if r.family == "moment" and r.which == "max")
    assert record.x == pytest.approx(L / 2)
    assert len(record.load.loaded) == 1
    assert record.load.loaded[0] == pytest.approx((0.0, L))
    assert record.live == pytest.approx(w * L**2 / 8, rel=1e-9) and record.reproduced
    assert math.isclose(record.value, 1.2 * L**2 / 8 + 1.6 * w * L**2 / 8, rel_tol=1e-9)


def test_a_configuration_not_reproduced_is_marked_in_every_output(tmp_path, monkeypatch):
    """Should the live configuration found again ever differ from the case's tabulated value,
    the values stand but every output says the drawing is not reproduced (a tolerance below
    zero forces it here)."""
    from cli_helpers import read_csv
    from cli_helpers import run as run_cli
    from trundle.workflows import design_records

    monkeypatch.setattr(design_records, "REPRODUCED", -1.0)
    out = tmp_path / "out"
    model = ROOT / "examples" / "design" / "heron_gill_underbridge_e80_us.toml"
    result = run_cli("envelope", model, "--out", out, "--no-figure")
    assert result.exit_code == 0, result.output
    header, rows = read_csv(out / "design-positions.csv")
    assert {r[header.index("reproduced")] for r in rows} == {"NO"}
    page = (out / "report.html").read_text(encoding="utf-8")
    assert "NOT REPRODUCED: the live-load position found again" in page
    assert page.count("NOT REPRODUCED, check by") == len(rows)  # every panel title
    assert "NOT REPRODUCED" in result.output
