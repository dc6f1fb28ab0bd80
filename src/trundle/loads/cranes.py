"""Overhead travelling cranes: from crane data to wheel loads on one runway rail.

Statics of the crane bridge (common practice, no source): the bridge weight is shared equally
by the two rails; the trolley (with hoist) and the lifted load stand at the minimum hook
approach from the rail being designed and are shared by lever arms across the crane span.
Wheel loads are that rail's share divided equally among its wheels.

The default percentages follow a widely used US building-code provision, from memory:
vertical impact 25 % for cab-operated or remotely operated powered cranes (and powered
monorails), 10 % for pendant-operated powered cranes, 0 % for hand-geared cranes; lateral
force 20 % of (rated capacity + trolley and hoist weight), shared by the two rails; longitudinal
(tractive) force 10 % of the maximum wheel loads. Every one can be overridden; they must be
checked against the code in force.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trundle.core.beam import ModelError
from trundle.loads.vehicles import Vehicle

# from memory of a widely used US building-code provision; verify against the code in force
IMPACT_BY_OPERATION = {"cab": 0.25, "remote": 0.25, "monorail": 0.25, "pendant": 0.10,
                       "hand": 0.0}
LATERAL_FRACTION = 0.20
LONGITUDINAL_FRACTION = 0.10
OPERATIONS = tuple(IMPACT_BY_OPERATION)


@dataclass(frozen=True)
class WheelLoads:
    """Wheel loads of one crane on the runway rail being designed [force per wheel].

    Fields
    ------
    maximum : trolley at minimum hook approach on this side, full rated capacity
    minimum : the same crane seen from the far rail (trolley and load away from this rail)
    unloaded : trolley at minimum hook approach on this side, no lifted load
    lateral : horizontal force per wheel at the top of this rail
    longitudinal : tractive force on this rail (all its wheels together)
    impact : vertical impact fraction applied to the wheel loads for strength
    """

    maximum: float
    minimum: float
    unloaded: float
    lateral: float
    longitudinal: float
    impact: float


def _positive(value: object, what: str, crane: str, allow_zero: bool = False) -> float:
    bound = ">= 0" if allow_zero else "> 0"
    try:
        v = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        v = float("nan")
    ok = v >= 0 if allow_zero else v > 0
    if not np.isfinite(v) or not ok:
        raise ModelError(f"crane {crane!r}: {what}: expected a number {bound}, found {value!r}")
    return v


def _numbers(value: object, what: str, crane: str) -> tuple:
    if value is None or isinstance(value, str) or not hasattr(value, "__iter__"):
        raise ModelError(f"crane {crane!r}: {what}: expected a list of numbers, found {value!r}")
    return tuple(value)  # type: ignore[arg-type]


@dataclass(frozen=True)
class Crane:
    """An overhead travelling crane as its data sheet describes it.

    Parameters
    ----------
    name : str
    capacity : float [force]
        Rated capacity (the lifted load).
    bridge_weight : float [force]
        Weight of the crane bridge (girders, end carriages, drives), without the trolley.
    trolley_weight : float [force]
        Weight of the trolley with its hoist.
    span : float [length]
        Crane span, rail to rail.
    hook_approach : float [length]
        Minimum distance from a rail to the hook (at most half the crane span).
    wheel_spacings : sequence of float [length]
        Distances between consecutive wheels along one rail (two wheels: one spacing; four
        wheels in bogies: three).
    buffer_length : float or None [length]
        Overall length between the crane's buffers along the runway; wheels are centred in
        it. Needed when two cranes can meet on the runway.
    operation : "cab" | "remote" | "monorail" | "pendant" | "hand"
        Type of operation; sets the default vertical impact.
    impact, lateral_fraction, longitudinal_fraction : float or None
        Overrides of the default percentages (fractions: 0.25 for 25 %).
    lateral_share : float
        Share of the crane's lateral force taken by this runway (0.5: equal between the
        rails; by lateral stiffness where the runways differ).
    wheel_loads : (maximum, minimum, unloaded) or None [force per wheel]
        Explicit wheel loads from the crane maker, used instead of the statics above.
    """

    name: str
    capacity: float
    bridge_weight: float
    trolley_weight: float
    span: float
    hook_approach: float
    wheel_spacings: tuple[float, ...]
    buffer_length: float | None = None
    operation: str = "cab"
    impact: float | None = None
    lateral_fraction: float | None = None
    longitudinal_fraction: float | None = None
    lateral_share: float = 0.5
    wheel_loads: tuple[float, float, float] | None = None

    def __post_init__(self) -> None:
        n = self.name

        def keep(key: str, value: object) -> None:
            object.__setattr__(self, key, value)

        for key in ("capacity", "bridge_weight", "trolley_weight", "hook_approach"):
            keep(key, _positive(getattr(self, key), key, n, allow_zero=True))
        keep("span", _positive(self.span, "span", n))
        # the trolley must find a place at least the hook approach from both rails
        if self.hook_approach > 0.5 * self.span:
            raise ModelError(f"crane {n!r}: hook_approach: expected at most half the crane span "
                             f"({0.5 * self.span:g}), found {self.hook_approach:g}")
        keep("wheel_spacings", tuple(_positive(s, "wheel_spacings", n) for s in
                                     _numbers(self.wheel_spacings, "wheel_spacings", n)))
        if self.operation not in OPERATIONS:
            raise ModelError(f"crane {n!r}: operation: expected one of {', '.join(OPERATIONS)}, "
                             f"found {self.operation!r}")
        for key in ("impact", "lateral_fraction", "longitudinal_fraction"):
            value = getattr(self, key)
            if value is not None:
                keep(key, _positive(value, key, n, allow_zero=True))
        share = _positive(self.lateral_share, "lateral_share", n, allow_zero=True)
        if share > 1.0:
            raise ModelError(f"crane {n!r}: lateral_share: expected 0 to 1, "
                             f"found {self.lateral_share!r}")
        keep("lateral_share", share)
        if self.buffer_length is not None:
            keep("buffer_length", _positive(self.buffer_length, "buffer_length", n))
            if self.buffer_length < self.wheelbase:
                raise ModelError(f"crane {n!r}: buffer_length: expected at least the wheelbase "
                                 f"({self.wheelbase:g}), found {self.buffer_length:g}")
        if self.wheel_loads is not None:
            loads = tuple(_positive(w, "wheel_loads", n, allow_zero=True)
                          for w in _numbers(self.wheel_loads, "wheel_loads", n))
            if len(loads) != 3:
                raise ModelError(f"crane {n!r}: wheel_loads: expected (maximum, minimum, "
                                 f"unloaded), found {self.wheel_loads!r}")
            keep("wheel_loads", loads)

    @property
    def wheels_per_rail(self) -> int:
        return len(self.wheel_spacings) + 1

    @property
    def wheelbase(self) -> float:
        """Distance between the extreme wheels on one rail [length]."""
        return float(sum(self.wheel_spacings))

    @property
    def end_distance(self) -> float:
        """From an extreme wheel to the buffer face [length] (0 without a buffer length)."""
        if self.buffer_length is None:
            return 0.0
        return 0.5 * (self.buffer_length - self.wheelbase)

    @property
    def impact_fraction(self) -> float:
        return IMPACT_BY_OPERATION[self.operation] if self.impact is None else self.impact

    def rail_reactions(self) -> tuple[float, float, float]:
        """Total vertical load on this rail [force]: (maximum, minimum, unloaded).

        Maximum: the trolley and the lifted load at the minimum hook approach on this side;
        minimum: at the hook approach on the far side; unloaded: no lifted load, trolley on
        this side.
        """
        near = (self.span - self.hook_approach) / self.span
        far = self.hook_approach / self.span
        half_bridge = 0.5 * self.bridge_weight
        lifted = self.capacity + self.trolley_weight
        return (half_bridge + lifted * near, half_bridge + lifted * far,
                half_bridge + self.trolley_weight * near)

    def wheels(self) -> WheelLoads:
        n = self.wheels_per_rail
        if self.wheel_loads is not None:
            maximum, minimum, unloaded = self.wheel_loads
        else:
            maximum, minimum, unloaded = (r / n for r in self.rail_reactions())
        lateral_fraction = (LATERAL_FRACTION if self.lateral_fraction is None
                            else self.lateral_fraction)
        longitudinal_fraction = (LONGITUDINAL_FRACTION if self.longitudinal_fraction is None
                                 else self.longitudinal_fraction)
        lateral_rail = lateral_fraction * (self.capacity + self.trolley_weight)
        lateral = lateral_rail * self.lateral_share / n
        longitudinal = longitudinal_fraction * maximum * n
        return WheelLoads(maximum, minimum, unloaded, lateral, longitudinal,
                          self.impact_fraction)

    def vehicle(self, state: str = "loaded", with_impact: bool = False, lateral: bool = False,
                confined: bool = False) -> Vehicle:
        """The crane's wheels on this rail as a moving group — the one crane → wheels builder.

        ``state``: "loaded" (maximum wheel loads), "unloaded", "far" (minimum wheel loads) or
        "lateral" (the loaded crane's lateral wheel forces). ``with_impact``: vertical loads
        times (1 + impact). ``lateral``: the lateral wheel forces of the crane in ``state``
        (an unloaded crane still pushes sideways with its trolley: the same fraction of the
        trolley weight alone). ``confined``: every wheel stays on the beam (end stops).
        """
        w = self.wheels()
        label = state
        if state == "lateral":
            state, lateral = "loaded", True
        vertical = {"loaded": w.maximum, "unloaded": w.unloaded, "far": w.minimum}.get(state)
        if vertical is None or (lateral and state == "far"):
            raise ModelError(f"crane {self.name!r}: state: expected loaded, unloaded, far or "
                             f"lateral, found {label!r}")
        if lateral:
            load = w.lateral
            if state == "unloaded":
                load = w.lateral * self.trolley_weight / max(self.capacity
                                                             + self.trolley_weight, 1e-300)
        else:
            load = vertical
            if with_impact:
                load *= 1.0 + w.impact
        return Vehicle([load] * self.wheels_per_rail, list(self.wheel_spacings),
                       name=f"{self.name} ({label})", confined=confined)


def buffer_gap(leading: Crane, following: Crane) -> float:
    """Clear distance from the last wheel of one crane to the first wheel of the next when
    their buffers touch [length]."""
    return leading.end_distance + following.end_distance
