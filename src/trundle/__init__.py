"""trundle: exact influence lines and moving-load envelopes for statically indeterminate beams."""

from trundle.envelope import Envelope, Governing, envelope
from trundle.influence import Effect, InfluenceLine, InfluenceSet, influence_batch, influence_set
from trundle.loads import AttachedUniform, LoadCase, Together, Train, UniformLoad, Vehicle
from trundle.model import Beam, ModelError, Spring
from trundle.modelfile import ModelFileError, load_model
from trundle.statics import DistributedLoad, PointLoad, PointMoment
from trundle.workflows.sweep import sweep

__all__ = ["AttachedUniform", "Beam", "DistributedLoad", "Effect", "Envelope", "Governing",
           "InfluenceLine", "InfluenceSet", "LoadCase", "ModelError", "ModelFileError",
           "PointLoad", "PointMoment",
           "Spring", "Together", "Train", "UniformLoad", "Vehicle", "envelope", "influence_batch",
           "influence_set", "load_model", "sweep"]
__version__ = "0.1.0"
