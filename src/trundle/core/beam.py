"""The beam model: spans, supports, flexural stiffness, internal hinges.

Conventions (fixed; the tests rely on them): x runs from 0 at the left end; supports are
numbered 0, 1, 2 … from the left, one at each span end.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

from trundle.core._repr import html_table, short


class ModelError(ValueError):
    """A beam model that cannot be analysed; the message says where and why, on one line."""


@dataclass(frozen=True)
class Spring:
    """An elastic support.

    Parameters
    ----------
    k : float [force/length]
        Vertical stiffness.
    kr : float or None [moment/radian]
        Rotational stiffness; ``None`` leaves rotation free.
    """

    k: float
    kr: float | None = None

    def __post_init__(self) -> None:
        if not np.isfinite(self.k) or self.k <= 0:
            raise ModelError(f"spring stiffness k must be a positive number, found {self.k!r}")
        if self.kr is not None and (not np.isfinite(self.kr) or self.kr <= 0):
            raise ModelError("rotational spring stiffness kr must be a positive number or None, "
                             f"found {self.kr!r}")


SupportKind = Literal["pin", "fixed", "free"]
SUPPORT_KINDS = ("pin", "fixed", "free")


@dataclass(frozen=True)
class StiffnessSegment:
    """EI over ``x0 ≤ x ≤ x1``: constant, linear, or parabolic between ``EI0`` and ``EI1``.

    A parabolic segment has its vertex (zero slope) at the end with the smaller EI, the usual
    shape of a parabolic haunch that deepens towards a support.
    """

    x0: float
    x1: float
    EI0: float
    EI1: float
    shape: Literal["constant", "linear", "parabolic"] = "constant"

    def at(self, x: NDArray[np.float64]) -> NDArray[np.float64]:
        t = (np.asarray(x, dtype=float) - self.x0) / (self.x1 - self.x0)
        if self.shape == "constant":
            return np.full_like(t, self.EI0)
        if self.shape == "linear":
            return self.EI0 + (self.EI1 - self.EI0) * t
        if self.EI0 <= self.EI1:  # vertex at x0
            return self.EI0 + (self.EI1 - self.EI0) * t**2
        return self.EI1 + (self.EI0 - self.EI1) * (1.0 - t) ** 2

    @property
    def varies(self) -> bool:
        return self.shape != "constant" and self.EI0 != self.EI1

    def slopes(self, x: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(dEI/dx, d²EI/dx²) at x: what the accuracy of a haunch depends on."""
        x = np.asarray(x, dtype=float)
        span = self.x1 - self.x0
        rise = self.EI1 - self.EI0
        if not self.varies:
            return np.zeros_like(x), np.zeros_like(x)
        if self.shape == "linear":
            return np.full_like(x, rise / span), np.zeros_like(x)
        t = (x - self.x0) / span
        if self.EI0 <= self.EI1:  # vertex at x0
            return 2.0 * rise * t / span, np.full_like(x, 2.0 * rise / span**2)
        return 2.0 * rise * (1.0 - t) / span, np.full_like(x, -2.0 * rise / span**2)

    def zeros(self) -> NDArray[np.complex128]:
        """Where the polynomial EI(x) of the segment, continued beyond it, is zero (complex
        for a parabola): the poles of 1/EI that limit how fast quadrature converges."""
        span = self.x1 - self.x0
        if not self.varies:
            return np.zeros(0, dtype=complex)
        if self.shape == "linear":
            return np.array([self.x0 - self.EI0 * span / (self.EI1 - self.EI0)], dtype=complex)
        low, high = min(self.EI0, self.EI1), max(self.EI0, self.EI1)
        vertex = self.x0 if self.EI0 <= self.EI1 else self.x1
        offset = span * np.sqrt(low / (high - low))
        return np.array([vertex + 1j * offset, vertex - 1j * offset])


def _as_segments(EI: Any, length: float) -> tuple[StiffnessSegment, ...]:
    if not isinstance(EI, list | tuple | np.ndarray):
        try:
            value = float(EI)
        except (TypeError, ValueError):
            raise ModelError(f"EI must be a positive number or a list of segments, "
                             f"found {EI!r}") from None
        if not np.isfinite(value) or value <= 0:
            raise ModelError(f"EI must be a positive number, found {EI!r}")
        return (StiffnessSegment(0.0, length, value, value),)
    segments = []
    for i, entry in enumerate(EI):
        if isinstance(entry, StiffnessSegment):
            seg = entry
        else:
            entry = tuple(entry)
            if len(entry) == 3:
                seg = StiffnessSegment(float(entry[0]), float(entry[1]), float(entry[2]),
                                       float(entry[2]))
            elif len(entry) in (4, 5):
                shape = entry[4] if len(entry) == 5 else "linear"
                if shape not in ("constant", "linear", "parabolic"):
                    raise ModelError(
                        f"EI segment {i}: shape must be 'linear' or 'parabolic', found {shape!r}"
                    )
                seg = StiffnessSegment(float(entry[0]), float(entry[1]), float(entry[2]),
                                       float(entry[3]), shape)
            else:
                raise ModelError(
                    f"EI segment {i}: expected (x0, x1, EI) or (x0, x1, EI0, EI1[, shape]), "
                    f"found {entry!r}"
                )
        if not (seg.x1 > seg.x0):
            raise ModelError(f"EI segment {i}: x1 must exceed x0, found {seg.x0} .. {seg.x1}")
        if min(seg.EI0, seg.EI1) <= 0 or not np.isfinite([seg.EI0, seg.EI1]).all():
            raise ModelError(f"EI segment {i}: EI must be positive, found {seg.EI0}, {seg.EI1}")
        segments.append(seg)
    if not segments:
        raise ModelError("EI: at least one stiffness segment is needed")
    segments.sort(key=lambda s: s.x0)
    tol = 1e-9 * length
    cursor = 0.0
    for seg in segments:
        if abs(seg.x0 - cursor) > tol:
            what = "a gap" if seg.x0 > cursor else "an overlap"
            raise ModelError(f"EI segments leave {what} at x = {cursor:g}; they must cover "
                             f"0 .. {length:g} end to end")
        cursor = seg.x1
    if abs(cursor - length) > tol:
        raise ModelError(f"EI segments end at x = {cursor:g}, the beam at {length:g}")
    return tuple(segments)


@dataclass(frozen=True, eq=False)
class Beam:
    """A straight beam of one or more spans on supports, with optional internal hinges.

    Parameters
    ----------
    spans : sequence of float [length]
        Span lengths, left to right.
    EI : float or sequence [force·length²]
        Flexural stiffness: a number, or segments ``(x0, x1, EI)`` (stepped),
        ``(x0, x1, EI0, EI1)`` (linear) or ``(x0, x1, EI0, EI1, "parabolic")`` (haunch)
        that cover the beam end to end.
    supports : sequence of ``"pin" | "fixed" | "free" | Spring``
        One per span end (``len(spans) + 1``). Default: all pins.
    hinges : sequence of float [length]
        Positions of internal moment releases; a hinge may stand over a support.
    haunch_divisions : int or None
        ``None`` (the default): each varying-EI segment is cut into as many exact
        varying-stiffness elements as make every influence line within 1e-8 of its largest
        ordinate (chosen from the shape of EI and checked on the lines built; see
        ``trundle.core.fem``). An int: exactly that many elements per varying segment, with no
        accuracy control (an explicit override).
    """

    spans: tuple[float, ...]
    EI: Any = 1.0
    supports: tuple[SupportKind | Spring, ...] | None = None
    hinges: tuple[float, ...] = ()
    haunch_divisions: int | None = None
    stiffness_segments: tuple[StiffnessSegment, ...] = field(init=False, repr=False)

    def __post_init__(self) -> None:
        spans = tuple(float(s) for s in np.atleast_1d(np.asarray(self.spans, dtype=float)))
        if not spans:
            raise ModelError("spans: at least one span is needed")
        for i, s in enumerate(spans):
            if not np.isfinite(s) or s <= 0:
                raise ModelError(f"spans[{i}]: a span must be a positive length, found {s!r}")
        object.__setattr__(self, "spans", spans)
        supports = self.supports
        if supports is None:
            supports = ("pin",) * (len(spans) + 1)
        supports = tuple(supports)
        if len(supports) != len(spans) + 1:
            raise ModelError(
                f"supports: expected {len(spans) + 1} (one per span end), found {len(supports)}"
            )
        for i, s in enumerate(supports):
            if not (isinstance(s, Spring) or s in SUPPORT_KINDS):
                raise ModelError(
                    f"supports[{i}]: expected 'pin', 'fixed', 'free' or a Spring, found {s!r}"
                )
        object.__setattr__(self, "supports", supports)
        length = float(sum(spans))
        hinges = tuple(sorted(float(h) for h in self.hinges))
        tol = 1e-9 * length
        for h in hinges:
            if not (tol < h < length - tol):
                raise ModelError(f"hinges: a hinge must lie inside the beam (0 < x < {length:g}), "
                                 f"found {h:g}")
        if any(b - a <= tol for a, b in zip(hinges, hinges[1:], strict=False)):
            raise ModelError("hinges: two hinges at the same position")
        object.__setattr__(self, "hinges", hinges)
        if self.haunch_divisions is not None and int(self.haunch_divisions) < 1:
            raise ModelError("haunch_divisions must be at least 1 (or None: chosen for 1e-8 "
                             "accuracy)")
        object.__setattr__(self, "stiffness_segments", _as_segments(self.EI, length))
        for i, s in enumerate(supports):
            xs = self.support_positions[i]
            at_hinge = any(abs(h - xs) <= tol for h in hinges)
            restrains_rotation = s == "fixed" or (isinstance(s, Spring) and s.kr is not None)
            if at_hinge and restrains_rotation:
                raise ModelError(
                    f"supports[{i}] at x = {xs:g} restrains rotation but stands at a hinge; "
                    "say which side it holds by moving the hinge off the support"
                )
        self._check_stability()

    # --- geometry -------------------------------------------------------------------------

    @property
    def length(self) -> float:
        """Total length [length]."""
        return float(sum(self.spans))

    @cached_property
    def support_positions(self) -> NDArray[np.float64]:
        """x of each support (span ends) [length]."""
        return np.concatenate([[0.0], np.cumsum(self.spans)])

    @property
    def n_spans(self) -> int:
        return len(self.spans)

    def span_of(self, x: float) -> int:
        """Index of the span containing x (a support belongs to the span on its left)."""
        ends = self.support_positions
        i = int(np.searchsorted(ends, x, side="left")) - 1
        return min(max(i, 0), self.n_spans - 1)

    def sections_in_span(self, x: ArrayLike, span: int) -> NDArray[np.int64]:
        """Indices of the sections ``x`` [length] in ``span``, both its supports included
        (to 1e-9 of the beam's length)."""
        x = np.asarray(x, dtype=float)
        a, b = self.support_positions[span], self.support_positions[span + 1]
        tolerance = 1e-9 * self.length
        return np.flatnonzero((x >= a - tolerance) & (x <= b + tolerance))

    def tenth_points(self) -> NDArray[np.float64]:
        """Tenth points of every span, each support included once [length]."""
        ends = self.support_positions
        pts = [ends[0]]
        for a, b in zip(ends[:-1], ends[1:], strict=True):
            pts.extend(a + (b - a) * np.arange(1, 11) / 10.0)
        return np.asarray(pts)

    def support_label(self, i: int) -> str:
        s = self.supports[i]
        return f"spring k={s.k:g}" if isinstance(s, Spring) else str(s)

    # --- statics of the rigid-body chain ------------------------------------------------

    def _restraint_count(self) -> int:
        count = 0
        for s in self.supports:
            if s == "pin":
                count += 1
            elif s == "fixed":
                count += 2
            elif isinstance(s, Spring):
                count += 1 + (s.kr is not None)
        return count

    @property
    def degree_of_indeterminacy(self) -> int:
        """Redundants beyond statics: restraints + hinge shears − 2 × rigid pieces."""
        return self._restraint_count() - len(self.hinges) - 2

    def _rigid_pieces(self) -> list[tuple[float, float]]:
        cuts = [0.0, *self.hinges, self.length]
        return list(zip(cuts[:-1], cuts[1:], strict=True))

    def _check_stability(self) -> None:
        """Refuse a mechanism: the chain of rigid pieces between hinges must be held."""
        pieces = self._rigid_pieces()
        n = len(pieces)
        rows = []
        for i, s in enumerate(self.supports):
            if s == "free":
                continue
            xs = self.support_positions[i]
            p = min(int(np.searchsorted([b for _, b in pieces], xs - 1e-12 * self.length)), n - 1)
            row = np.zeros(2 * n)
            row[2 * p], row[2 * p + 1] = 1.0, xs - pieces[p][0]
            rows.append(row)
            if s == "fixed" or (isinstance(s, Spring) and s.kr is not None):
                row = np.zeros(2 * n)
                row[2 * p + 1] = self.length  # held rotation, as a lift over the beam length
                rows.append(row)
        for j, xh in enumerate(self.hinges):
            row = np.zeros(2 * n)
            row[2 * j], row[2 * j + 1] = 1.0, xh - pieces[j][0]
            row[2 * (j + 1)] = -1.0
            rows.append(row)
        # unknowns (lift, rotation × length) of each piece: all lengths, so the rank check
        # is fair in any unit system (rotation = lift over the beam length)
        scale = np.ones(2 * n)
        scale[1::2] = 1.0 / self.length
        matrix = np.array(rows).reshape(-1, 2 * n) * scale if rows else np.zeros((0, 2 * n))
        if matrix.shape[0]:
            _, sv, vt = np.linalg.svd(matrix)
            rank = int(np.sum(sv > 1e-10 * sv.max()))
        else:
            rank, vt = 0, np.eye(2 * n)
        if rank == 2 * n:
            return
        motion = vt[-1]  # one free motion, unit norm: (lift, rotation × length) of each piece
        moving = []
        for p, (a, b) in enumerate(pieces):
            lift, turn = motion[2 * p], motion[2 * p + 1] * (b - a) / self.length
            if max(abs(lift), abs(lift + turn)) > 1e-9:
                moving.append((a, b))
        a, b = moving[0][0], moving[-1][1]
        held = [i for i, s in enumerate(self.supports) if s != "free"
                and a - 1e-9 * self.length <= self.support_positions[i] <= b + 1e-9 * self.length]
        inner = [h for h in self.hinges if a < h < b]
        if not held and a == 0.0 and b == self.length:
            raise ModelError("unstable model: the beam has no vertical support")
        raise ModelError(
            f"unstable model (a mechanism): the beam between x = {a:g} and x = {b:g} can move "
            f"without bending; that stretch has {len(held)} support(s) and {len(inner)} internal "
            "hinge(s) - add a support or remove a hinge there"
        )

    # ``beam.influence(...)``, ``beam.influence_set(...)`` and ``beam.static(...)`` are bound
    # in trundle/core/__init__.py, above this module, so that beam.py imports neither the
    # influence lines nor the statics that import it

    # ``repr(beam)`` stays the dataclass repr: it spells out every value that defines the
    # beam (short for any real beam) and the envelope's cache of lines is keyed on it

    @cached_property
    def _value_key(self) -> str:
        """Every value that defines the beam, spelled out (its repr), for caches keyed by
        value; spelled once per beam (a frozen beam cannot change, and its lines were built
        from the values it was made with), not once per call."""
        return repr(self)

    def _repr_html_(self) -> str:
        """A small table for Jupyter: spans, supports, hinges, stiffness."""
        ends = self.support_positions
        rows = [[str(i), short(ends[i]), self.support_label(i)]
                for i in range(len(self.supports))]
        stiffness = ", ".join(
            f"{short(seg.x0)}–{short(seg.x1)}: EI {short(seg.EI0)}"
            + (f" to {short(seg.EI1)} ({seg.shape})" if seg.EI1 != seg.EI0 else "")
            for seg in self.stiffness_segments)
        note = (f"{self.n_spans} span(s) {', '.join(short(s) for s in self.spans)}; length "
                f"{short(self.length)}; hinges at "
                f"{', '.join(short(h) for h in self.hinges) or 'none'}; {stiffness}; degree "
                f"of indeterminacy {self.degree_of_indeterminacy}")
        return html_table("Beam", ["support", "x", "kind"], rows, note)

    def describe(self) -> str:
        parts = [f"{self.n_spans} span(s) = {', '.join(f'{s:g}' for s in self.spans)}"]
        parts.append("supports " + ", ".join(self.support_label(i)
                                             for i in range(len(self.supports))))
        if self.hinges:
            parts.append("hinges at " + ", ".join(f"{h:g}" for h in self.hinges))
        parts.append(f"degree of indeterminacy {self.degree_of_indeterminacy}")
        return "; ".join(parts)

