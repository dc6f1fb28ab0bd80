"""Live load that may be placed anywhere: uniform load on the adverse parts of the line,
on whole spans, or everywhere, with an optional concentrated load at the worst point."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from trundle.core.beam import ModelError

PLACEMENTS = ("anywhere", "spans", "everywhere")


@dataclass(frozen=True)
class UniformLoad:
    """Uniform live load [force/length] placed where it is adverse.

    Parameters
    ----------
    w : float [force/length]
    placement : "anywhere" | "spans" | "everywhere"
        ``anywhere``: on every stretch where the influence line has the adverse sign (exact,
        split at the line's roots); ``spans``: whole spans loaded or not, the worst
        combination; ``everywhere``: the whole beam or nothing.
    point_load : float [force]
        A concentrated load that travels with the uniform load and stands at the worst point
        (0 for none). It is not an axle load: the dynamic allowance does not apply to it.
    """

    w: float
    placement: Literal["anywhere", "spans", "everywhere"] = "anywhere"
    point_load: float = 0.0
    name: str = "uniform live load"

    def __post_init__(self) -> None:
        if not np.isfinite(self.w) or self.w < 0:
            raise ModelError(f"uniform load {self.name!r}: w: expected >= 0, found {self.w!r}")
        if self.placement not in PLACEMENTS:
            raise ModelError(f"uniform load {self.name!r}: placement: expected one of "
                             f"{', '.join(PLACEMENTS)}, found {self.placement!r}")
        if not np.isfinite(self.point_load) or self.point_load < 0:
            raise ModelError(f"uniform load {self.name!r}: point_load: expected >= 0, "
                             f"found {self.point_load!r}")

    def parameters(self) -> list:
        return []

    def describe(self) -> str:
        extra = f" + {self.point_load:g} at the worst point" if self.point_load else ""
        return f"{self.name}: {self.w:g} per length, placed {self.placement}{extra}"
