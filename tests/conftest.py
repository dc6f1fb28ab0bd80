"""Shared test helpers: the one test crane.

``make_crane`` is the invented 20 t cab-operated crane (capacity 200 kN, bridge 300 kN,
trolley 50 kN, crane span 20 m, hook approach 1 m, two wheels 3.6 m apart per rail, 4.4 m over
the buffers) that the crane tests share; each test module names it as it likes and changes
what it needs (``make_crane(name="paint crane", capacity=100.0)``).
"""

from __future__ import annotations

from trundle.loads.cranes import Crane

CRANE_DATA = dict(capacity=200.0, bridge_weight=300.0, trolley_weight=50.0, span=20.0,
                  hook_approach=1.0, wheel_spacings=(3.6,), buffer_length=4.4)


def make_crane(name: str = "bay crane", **changes: object) -> Crane:
    """The shared test crane, named ``name``, with ``changes`` to its data."""
    return Crane(name=name, **{**CRANE_DATA, **changes})
