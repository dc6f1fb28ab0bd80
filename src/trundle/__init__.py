"""trundle: exact influence lines and moving-load envelopes for statically indeterminate beams."""

from trundle.core._jit import use_user_cache

use_user_cache()  # before numba is imported: compiled kernels go to a per-user cache folder

# ruff: noqa: E402 (the cache folder is chosen before the imports below import numba)

from trundle._version import __version__
from trundle.analysis.envelope import Envelope, Governing, envelope
from trundle.core.beam import Beam, ModelError, Spring
from trundle.core.influence import (
    Effect,
    InfluenceLine,
    InfluenceSet,
    influence_batch,
    influence_set,
)
from trundle.core.statics import DistributedLoad, PointLoad, PointMoment
from trundle.io import ModelFileError, load_model
from trundle.io.sweeps import sweep
from trundle.loads import AttachedUniform, LoadCase, Together, Train, UniformLoad, Vehicle
from trundle.loads.cranes import Crane, WheelLoads
from trundle.workflows.crane_runway import RunwayResult, RunwaySpec, analyse_runway

__all__ = ["AttachedUniform", "Beam", "Crane", "DistributedLoad", "Effect", "Envelope",
           "Governing", "InfluenceLine", "InfluenceSet", "LoadCase", "ModelError",
           "ModelFileError", "PointLoad", "PointMoment", "RunwayResult", "RunwaySpec", "Spring",
           "Together", "Train", "UniformLoad", "Vehicle", "WheelLoads", "__version__",
           "analyse_runway", "envelope", "influence_batch", "influence_set", "load_model", "sweep"]
