"""Slow, obviously-correct references for the tests; they share no code with trundle's solver.

``naive_solve`` places one unit (or any) point load on the beam and solves it from scratch: its
own mesh (a node at every support, hinge, EI step, requested section and the load point), its
own element matrices, a dense ``numpy.linalg.solve``. Reactions come from the full matrix;
shear and moment at a section come from equilibrium of everything left of it (reactions,
support couples and the load), deflection and rotation straight from the nodal values.

Only the beam's data are read (spans, supports, hinges, stiffness segments); the segments must
be piecewise constant (stepped EI), which is what this reference is exact for.

Conventions (fixed, the same as trundle's): v downward, θ = dv/dx clockwise, reactions upward,
support couples counter-clockwise, moment sagging, V = upward resultant of everything left.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

import trundle


def beam_element(EI: float, h: float) -> np.ndarray:
    """Euler–Bernoulli element for (v1, θ1, v2, θ2) with v and θ = dv/dx in one frame."""
    return EI / h**3 * np.array([
        [12.0, 6.0 * h, -12.0, 6.0 * h],
        [6.0 * h, 4.0 * h * h, -6.0 * h, 2.0 * h * h],
        [-12.0, -6.0 * h, 12.0, -6.0 * h],
        [6.0 * h, 2.0 * h * h, -6.0 * h, 4.0 * h * h],
    ])


def _stepped_EI(beam: trundle.Beam, x: float) -> float:
    for seg in beam.stiffness_segments:
        if seg.x0 <= x <= seg.x1:
            if seg.EI0 != seg.EI1:
                raise ValueError("naive reference handles stepped (piecewise constant) EI only")
            return seg.EI0
    raise ValueError(f"no stiffness segment covers x = {x}")


def _is_rotation_restrained(support: object) -> bool:
    return support == "fixed" or (isinstance(support, trundle.Spring) and support.kr is not None)


@dataclass
class NaiveResult:
    beam: trundle.Beam
    load_at: float
    P: float
    nodes: np.ndarray
    v: np.ndarray  # per node
    theta_left: np.ndarray  # per node (differs from theta_right only at a hinge)
    theta_right: np.ndarray
    reactions: np.ndarray  # per support, upward
    couples: np.ndarray  # per support, counter-clockwise

    def _node(self, x: float) -> int:
        i = int(np.argmin(np.abs(self.nodes - x)))
        assert abs(self.nodes[i] - x) < 1e-9 * self.nodes[-1], f"{x} is not a node"
        return i

    def shear(self, x: float, side: str = "right") -> float:
        """Upward resultant of everything left of the section (a support at x counts for
        side="right" only); the load itself must not stand at x."""
        assert abs(self.load_at - x) > 1e-12, "shear is two-valued under the load"
        xs = self.beam.support_positions
        left = xs < x if side == "left" else xs <= x
        if side == "left" and x <= 0.0 or side == "right" and x >= self.beam.length:
            return 0.0
        return float(self.reactions[left].sum() - self.P * (self.load_at < x))

    def moment(self, x: float, side: str = "right") -> float:
        """Sagging moment: clockwise moments about the section of everything on its left.

        An upward reaction left of x turns clockwise about x; a counter-clockwise support
        couple counts negative; the downward load counts negative.
        """
        xs = self.beam.support_positions
        left = xs < x if side == "left" else xs <= x
        m = np.sum(self.reactions[left] * (x - xs[left])) - np.sum(self.couples[left])
        if self.load_at < x:
            m -= self.P * (x - self.load_at)
        return float(m)

    def deflection(self, x: float) -> float:
        return float(self.v[self._node(x)])

    def rotation(self, x: float, side: str = "right") -> float:
        i = self._node(x)
        return float((self.theta_left if side == "left" else self.theta_right)[i])


def _refined_solve(A: np.ndarray, b: np.ndarray, steps: int = 3) -> np.ndarray:
    """Dense solve with iterative refinement, residuals in extended precision: soft springs
    and short elements make the system ill-conditioned, and the reference should not be the
    weaker party in a 1e-10 comparison."""
    A_ext = A.astype(np.longdouble)
    b_ext = b.astype(np.longdouble)
    x = np.linalg.solve(A, b).astype(np.longdouble)
    for _ in range(steps):
        residual = b_ext - A_ext @ x
        x += np.linalg.solve(A, residual.astype(float))
    return x


def naive_solve(beam: trundle.Beam, load_at: float, P: float = 1.0,
                sections: tuple[float, ...] = ()) -> NaiveResult:
    """One dense static solve for a downward point load P at ``load_at``."""
    L = beam.length
    tol = 1e-9 * L
    points = [*beam.support_positions, *beam.hinges, load_at, *sections]
    for seg in beam.stiffness_segments:
        points += [seg.x0, seg.x1]
    nodes: list[float] = []
    for p in sorted(points):
        if not nodes or p - nodes[-1] > tol:
            nodes.append(p)
    nodes_arr = np.array(nodes)
    n = len(nodes_arr)
    hinge_nodes = {int(np.argmin(np.abs(nodes_arr - h))) for h in beam.hinges}

    # dof numbering: v, θ (θ_left and θ_right separate at a hinge)
    v_dof, thl, thr = [], [], []
    d = 0
    for i in range(n):
        v_dof.append(d)
        thl.append(d + 1)
        thr.append(d + 2 if i in hinge_nodes else d + 1)
        d = thr[-1] + 1
    K = np.zeros((d, d))
    for i in range(n - 1):
        h = nodes_arr[i + 1] - nodes_arr[i]
        EI = _stepped_EI(beam, 0.5 * (nodes_arr[i] + nodes_arr[i + 1]))
        dofs = [v_dof[i], thr[i], v_dof[i + 1], thl[i + 1]]
        K[np.ix_(dofs, dofs)] += beam_element(EI, h)

    K_springs = np.zeros((d, d))
    held = np.zeros(d, dtype=bool)
    support_nodes = [int(np.argmin(np.abs(nodes_arr - xs))) for xs in beam.support_positions]
    for s, i in zip(beam.supports, support_nodes, strict=True):
        if s == "pin":
            held[v_dof[i]] = True
        elif s == "fixed":
            held[[v_dof[i], thl[i], thr[i]]] = True
        elif isinstance(s, trundle.Spring):
            K_springs[v_dof[i], v_dof[i]] += s.k
            if s.kr is not None:
                K_springs[thr[i], thr[i]] += s.kr
    K_total = K + K_springs
    F = np.zeros(d)
    F[v_dof[int(np.argmin(np.abs(nodes_arr - load_at)))]] = P
    free = ~held
    u = np.zeros(d, dtype=np.longdouble)
    u[free] = _refined_solve(K_total[np.ix_(free, free)], F[free])
    # force each rigid restraint puts on its node in dof directions (down / clockwise)
    restraint = (K_total.astype(np.longdouble) @ u - F).astype(float)
    u = u.astype(float)
    reactions = np.zeros(len(beam.supports))
    couples = np.zeros(len(beam.supports))
    for j, (s, i) in enumerate(zip(beam.supports, support_nodes, strict=True)):
        if s in ("pin", "fixed"):
            reactions[j] = -restraint[v_dof[i]]
        if s == "fixed":
            couples[j] = -restraint[thr[i]]
        if isinstance(s, trundle.Spring):
            reactions[j] = s.k * u[v_dof[i]]  # a compressed spring pushes up
            if s.kr is not None:
                couples[j] = s.kr * u[thr[i]]  # and resists a clockwise turn
    return NaiveResult(beam, load_at, P, nodes_arr, u[v_dof], u[thl], u[thr], reactions, couples)


def naive_effect(beam: trundle.Beam, effect: trundle.Effect, load_at: float) -> float:
    """The value of one effect for a unit load at ``load_at``, from a fresh dense solve."""
    sections = () if effect.at is None else (effect.at,)
    res = naive_solve(beam, load_at, 1.0, sections)
    if effect.kind == "reaction":
        return float(res.reactions[effect.support])
    if effect.kind == "support_moment":
        return float(res.couples[effect.support])
    if effect.kind == "shear":
        return res.shear(effect.at, effect.side or "right")
    if effect.kind == "moment":
        side = effect.side
        if side is None:  # trundle's default: just right of the section, just left at the end
            side = "left" if effect.at >= beam.length - 1e-9 * beam.length else "right"
        return res.moment(effect.at, side)
    if effect.kind == "deflection":
        return res.deflection(effect.at)
    if effect.kind == "rotation":
        return res.rotation(effect.at, effect.side or "right")
    raise ValueError(effect.kind)


def natural_unit(beam: trundle.Beam, kind: str) -> float:
    """The size an effect of a unit load has on this beam, to judge rounding in lines that are
    (nearly) zero: a force is of order 1, a moment of order L, a deflection L³/EI, a rotation
    L²/EI."""
    L = beam.length
    EI = min(min(s.EI0, s.EI1) for s in beam.stiffness_segments)
    return {"reaction": 1.0, "shear": 1.0, "moment": L, "support_moment": L,
            "deflection": L**3 / EI, "rotation": L**2 / EI}[kind]


def floor_scale(beam: trundle.Beam, kind: str) -> float:
    """The least scale a line of this kind is judged against.

    Rounding in a solve is absolute, of the size of the effect's natural unit. A force or
    moment line far smaller than that (moment at a hinge, shear beyond a free end: identically
    zero; moment near a free end) is measured against a tenth of its natural unit instead of
    its own tiny maximum. Deflection and rotation lines vanish only at held dofs, where every
    solver gives exact zeros, so they keep (almost) their own scale.
    """
    fraction = 1e-6 if kind in ("deflection", "rotation") else 0.1
    return fraction * natural_unit(beam, kind)


# --- random test beams ----------------------------------------------------------------------


MIN_NODE_GAP = 0.03  # between supports, hinges and EI steps of a random beam [× length]
MIN_LOAD_GAP = 0.015  # between a random section or load point and any other node [× length]


def _far_from(points: np.ndarray, value: float, gap: float) -> bool:
    return bool(np.all(np.abs(np.asarray(points) - value) >= gap))


def beam_nodes(beam: trundle.Beam) -> np.ndarray:
    """Supports, hinges and EI steps: the points a random section or load should keep off.

    A load point a hair's breadth from a node makes a tiny element whose stiffness (∝ 1/h³)
    swamps the rest; the dense reference then loses digits to rounding, not to a bug.
    """
    pts = [*beam.support_positions, *beam.hinges]
    for seg in beam.stiffness_segments:
        pts += [seg.x0, seg.x1]
    return np.unique(np.asarray(pts, dtype=float))


def spread_points(rng: np.random.Generator, beam: trundle.Beam, count: int,
                  avoid: np.ndarray | None = None) -> np.ndarray:
    """``count`` random points on the beam, each at least MIN_LOAD_GAP × length from the
    beam's nodes, from ``avoid`` and from one another (the gap halves if the beam is full)."""
    taken = list(beam_nodes(beam)) + ([] if avoid is None else list(avoid))
    gap = MIN_LOAD_GAP * beam.length
    out: list[float] = []
    tries = 0
    while len(out) < count:
        x = float(np.round(rng.uniform(0.0, beam.length), 3))
        if _far_from(np.asarray(taken + out), x, gap):
            out.append(x)
        tries += 1
        if tries % 200 == 0:
            gap /= 2
    return np.asarray(out)


def effects_for(beam: trundle.Beam, rng: np.random.Generator) -> list[trundle.Effect]:
    """Every kind of effect the beam has: all reactions and couples, and moment (default and
    both faces), shear (both faces), deflection and rotation at random sections, at a support
    and at a hinge."""
    E = trundle.Effect
    effects = []
    for i, s in enumerate(beam.supports):
        if s != "free":
            effects.append(E("reaction", support=i))
        if _is_rotation_restrained(s):
            effects.append(E("support_moment", support=i))
    sections = list(spread_points(rng, beam, 2))
    sections.append(float(beam.support_positions[rng.integers(0, len(beam.supports))]))
    sections += list(beam.hinges[:1])
    for x in sections:
        x = float(x)
        effects += [E("moment", at=x), E("moment", at=x, side="left"),
                    E("moment", at=x, side="right"), E("shear", at=x, side="left"),
                    E("shear", at=x, side="right"), E("deflection", at=x),
                    E("rotation", at=x, side="left"), E("rotation", at=x, side="right")]
    return effects
