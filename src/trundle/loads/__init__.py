"""Loads: vehicles, trains, patterned uniform live load, load cases and the load-model library."""

from trundle.loads.cases import LoadCase, Together, as_case
from trundle.loads.patterns import UniformLoad
from trundle.loads.vehicles import AttachedUniform, SearchParameter, Train, Vehicle

__all__ = ["AttachedUniform", "LoadCase", "SearchParameter", "Together", "Train", "UniformLoad",
           "Vehicle", "as_case"]
