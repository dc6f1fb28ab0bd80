"""The three invented design examples read with their design tables and run end to end."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from conftest import design_run
from trundle.analysis.checks import PASS
from trundle.analysis.combinations import PERMANENT_ONLY

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "examples" / "design").glob("*.toml"))


def test_there_are_three_invented_examples() -> None:
    assert len(EXAMPLES) == 3
    for path in EXAMPLES:
        text = path.read_text()
        assert "invented" in text.lower() and "qualified engineer" in text


@pytest.fixture(scope="module", params=EXAMPLES, ids=lambda p: p.stem)
def example(request):
    return design_run(request.param)  # once per session, shared (conftest)


def test_every_example_has_cases_combinations_and_checks(example) -> None:
    design, result = example
    assert result.cases and result.designs and result.deflection
    for envelope in result.designs.values():
        for key, values in envelope.values.items():
            finite = values[~np.isnan(values)]
            assert finite.size
            if key[1] == "max":
                assert np.all(values[~np.isnan(values)] >= envelope.min(key[0])[
                    ~np.isnan(values)] - 1e-9)
        names = set(envelope.governing["moment", "max"])
        assert names <= {*result.cases, PERMANENT_ONLY}
    for check in result.deflection:
        assert check.verdict == PASS and 0 < check.utilisation < 1


def test_design_values_are_the_factored_sums_of_their_parts(example) -> None:
    """Each design value = factored permanent part + γL × the governing case's own value."""
    design, result = example
    for envelope in result.designs.values():
        gamma = envelope.combination.live
        for (family, which), values in envelope.values.items():
            for j, name in enumerate(envelope.governing[family, which]):
                if np.isnan(values[j]):
                    continue
                live = 0.0 if name == PERMANENT_ONLY else result.cases[name].values[
                    family, which][j]
                assert values[j] == pytest.approx(envelope.permanent[family, which][j]
                                                  + gamma * live, rel=1e-12, abs=1e-9)


def test_floor_beam_permanent_combination_at_a_support() -> None:
    """1.4D at the first interior support equals 1.4 × the static moment of every permanent
    load (a hand-checkable sum of static solves)."""
    path = ROOT / "examples" / "design" / "quarry_yard_floor_beam_si.toml"
    design, result = design_run(path)
    beam = design.model.beam
    j = int(np.argmin(np.abs(result.sections - 6.0)))
    total = sum(beam.static(p.statics_loads(beam)).moment(6.0)[0] for p in design.permanent)
    assert result.designs["building 1.4D"].min("moment")[j] == pytest.approx(1.4 * total,
                                                                             rel=1e-9)
    assert result.critical == pytest.approx([0.4, 5.6, 6.4, 13.1, 13.9, 20.6, 21.4, 26.6])
