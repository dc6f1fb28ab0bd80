"""Critical sections for shear at a distance from the support faces.

A section spec such as ``"d from supports"`` (with the effective depth d given by the model),
``"0.9 m from supports"`` or ``"1.5 ft from supports"`` asks for sections at that distance from
the face of every support, into every span that meets it. The face is ``face_offset`` from the
support's centreline (half the bearing or column width; 0 by default).
"""

from __future__ import annotations

import re
from collections.abc import Callable

import numpy as np
from numpy.typing import NDArray

from trundle.core.beam import Beam, ModelError

_SPEC = re.compile(r"^\s*(?P<distance>.+?)\s+from\s+supports?\s*$", re.IGNORECASE)


def parse_from_supports(text: str, depth: float | None = None,
                        length: Callable[[str], float] | None = None) -> float | None:
    """The distance of a "… from supports" spec [length], or None if ``text`` is not one.

    ``"d from supports"`` needs ``depth``; ``"2 d from supports"`` is twice it; any other
    distance is converted by ``length`` (a parser of length strings, e.g. the model's units)
    or read as a plain number in the base unit. A bad spec raises a one-line ModelError.
    """
    match = _SPEC.match(text)
    if match is None:
        return None
    distance = match.group("distance").strip()
    multiple = re.fullmatch(r"(?:(?P<n>[0-9.]+)\s*\*?\s*)?d", distance)
    if multiple:
        if depth is None or not depth > 0:
            raise ModelError(f'"{text}": expected the effective depth d to be given (a '
                             "positive length), found none")
        n = float(multiple.group("n")) if multiple.group("n") else 1.0
        return n * depth
    try:
        value = length(distance) if length is not None else float(distance)
    except (ValueError, ModelError) as error:
        raise ModelError(f'"{text}": expected "d from supports" or "<length> from supports", '
                         f"found a distance that is not a length ({error})") from None
    if not value >= 0:
        raise ModelError(f'"{text}": expected a distance >= 0, found {value:g}')
    return float(value)


def sections_from_supports(beam: Beam, distance: float, face_offset: float = 0.0
                           ) -> NDArray[np.float64]:
    """x of the sections ``distance`` beyond the face of every support, into each adjacent
    span (sections that would fall beyond the span's middle are left out: there the
    critical section of the other support governs)."""
    ends = beam.support_positions
    out: list[float] = []
    for k, x in enumerate(ends):
        if beam.supports[k] == "free":
            continue
        step = face_offset + distance
        if k > 0 and step <= 0.5 * (ends[k] - ends[k - 1]):
            out.append(float(x - step))
        if k < len(ends) - 1 and step <= 0.5 * (ends[k + 1] - ends[k]):
            out.append(float(x + step))
    return np.unique(np.asarray(out, dtype=float))
