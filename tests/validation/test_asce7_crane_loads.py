"""Crane loads on a runway: vertical impact, lateral and longitudinal forces by default.

Source: ASCE/SEI 7, Minimum Design Loads for Buildings and Other Structures, crane loads (§4.9
in recent editions), from memory (verify against the edition in force): vertical impact 25 %
for monorail cranes (powered) and cab-operated or remotely operated bridge cranes (powered),
10 % for pendant-operated bridge cranes (powered), 0 % for hand-geared cranes; lateral force
20 % of (rated capacity + hoist and trolley weight); longitudinal force 10 % of the maximum
wheel loads.
"""

from __future__ import annotations

import pytest

from trundle.loads.cranes import (
    IMPACT_BY_OPERATION,
    LATERAL_FRACTION,
    LONGITUDINAL_FRACTION,
    Crane,
)


def _crane(**changes: object) -> Crane:
    data = dict(name="yard crane", capacity=100.0, bridge_weight=150.0, trolley_weight=20.0,
                span=15.0, hook_approach=0.75, wheel_spacings=(3.0,))
    data.update(changes)
    return Crane(**data)


def test_impact_lateral_and_longitudinal_defaults() -> None:
    # ---- vertical impact by type of operation
    # Source: ASCE/SEI 7, crane loads, vertical impact force (from memory of a widely used
    # building code; verify)
    assert IMPACT_BY_OPERATION == {"cab": 0.25, "remote": 0.25, "monorail": 0.25,
                                   "pendant": 0.10, "hand": 0.0}
    assert _crane().impact_fraction == 0.25  # a crane is cab-operated unless told otherwise
    for operation, impact in IMPACT_BY_OPERATION.items():
        assert _crane(operation=operation).wheels().impact == impact
    # ---- lateral force: 20 % of (rated capacity + trolley and hoist), half to each runway
    # Source: ASCE/SEI 7, crane loads, lateral force (from memory; verify)
    assert LATERAL_FRACTION == 0.20
    assert _crane().lateral_share == 0.5
    assert _crane().wheels().lateral == pytest.approx(0.20 * 120.0 * 0.5 / 2, rel=1e-12)
    # ---- longitudinal force: 10 % of the maximum wheel loads
    # Source: ASCE/SEI 7, crane loads, longitudinal force (from memory; verify)
    assert LONGITUDINAL_FRACTION == 0.10
    w = _crane().wheels()
    assert w.longitudinal == pytest.approx(0.10 * 2 * w.maximum, rel=1e-12)
