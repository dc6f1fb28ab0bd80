"""trundle: exact influence lines and moving-load envelopes for statically indeterminate beams."""

from trundle._jit import use_user_cache

use_user_cache()  # before numba is imported: compiled kernels go to a per-user cache folder

# ruff: noqa: E402 (the cache folder is chosen before the imports below import numba)

from trundle.envelope import Envelope, Governing, envelope
from trundle.influence import Effect, InfluenceLine, InfluenceSet, influence_batch, influence_set
from trundle.loads import AttachedUniform, LoadCase, Together, Train, UniformLoad, Vehicle
from trundle.model import Beam, ModelError, Spring
from trundle.modelfile import ModelFileError, load_model
from trundle.statics import DistributedLoad, PointLoad, PointMoment

__all__ = ["AttachedUniform", "Beam", "DistributedLoad", "Effect", "Envelope", "Governing",
           "InfluenceLine", "InfluenceSet", "LoadCase", "ModelError", "ModelFileError",
           "PointLoad", "PointMoment",
           "Spring", "Together", "Train", "UniformLoad", "Vehicle", "envelope", "influence_batch",
           "influence_set", "load_model"]
__version__ = "0.1.0"
