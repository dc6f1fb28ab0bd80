"""trundle: exact influence lines and moving-load envelopes for statically indeterminate beams."""

from trundle.influence import Effect, InfluenceLine, InfluenceSet, influence_batch, influence_set
from trundle.model import Beam, ModelError, Spring

__all__ = ["Beam", "Effect", "InfluenceLine", "InfluenceSet", "ModelError", "Spring",
           "influence_batch", "influence_set"]
__version__ = "0.1.0"
