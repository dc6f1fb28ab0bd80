"""Passage histories: every line's response as a load group crosses the beam once."""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from trundle.scan.engine import LineBatch, TermGroup


def passage_history(batch: LineBatch, group: TermGroup, samples: int = 2001
                    ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Every line's response as the group crosses once: (ξ (N,), values (N, n_lines)).

    Sampled at every break (an axle over a knot) and on a fine even grid in between. A
    confined group (a crane) travels from one end of the beam to the other with every
    wheel on it; another enters and leaves.
    """
    weights, offsets, kinds, constant = group.terms()
    lo, hi = offsets.min(), batch.length + offsets.max()
    if group.confined:
        lo, hi = offsets.max(), batch.length + offsets.min()
    breaks = (batch.knots[None, :] + offsets[:, None]).ravel()
    xi = np.unique(np.concatenate([np.linspace(lo, hi, samples), breaks[(breaks >= lo)
                                                                        & (breaks <= hi)]]))
    values = np.zeros((xi.size, batch.n_lines))
    for w, d in zip(weights, offsets, strict=True):
        values += w * batch.ordinates(xi - d, "right")
    return xi, values
