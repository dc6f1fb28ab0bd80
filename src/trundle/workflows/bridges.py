"""A bridge of an inventory as the fleet and permit workflows see it (read by io/inventory.py).

The unit system is the io layer's ``UnitSystem`` carried by duck typing (``name``, ``force``,
``length``, ``factor()``), so that the workflows import nothing above them.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from trundle.core.beam import Beam
from trundle.core.influence import Effect


@dataclass(frozen=True, eq=False)
class Bridge:
    """One bridge of an inventory.

    Fields
    ------
    name : unique within the inventory
    beam : the line-girder model
    effects : the effects of interest, one influence line each
    units : the unit system of the beam's numbers
    source : where it was read ("inventory.csv row 3", a model file)
    """

    name: str
    beam: Beam
    effects: tuple[Effect, ...]
    units: Any  # trundle.io.units.UnitSystem (name, force, length, factor()), duck-typed
    source: str

    @property
    def labels(self) -> tuple[str, ...]:
        return tuple(e.label for e in self.effects)
