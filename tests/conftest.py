"""Shared test helpers: the one test crane, the one random-beam generator and the bundled
examples run once per test session.

``make_crane`` is the invented 20 t cab-operated crane (capacity 200 kN, bridge 300 kN,
trolley 50 kN, crane span 20 m, hook approach 1 m, two wheels 3.6 m apart per rail, 4.4 m over
the buffers) that the crane tests share; each test module names it as it likes and changes
what it needs (``make_crane(name="paint crane", capacity=100.0)``).

``random_beam`` draws the random stable beams of the property and brute-force tests (the
kernels' tests ask for up to 3 spans of at least 3 and nodes 0.5 apart).

``bundled_run`` runs ``trundle envelope EXAMPLE --out FOLDER`` (every output: tables, JSON,
figures, report) once per bundled example and test session, and gives every test module that
checks those outputs the same run (result and folder): the CLI, report, design and crane
tests each used to run the same examples again. The folders are read-only for the tests.
``design_run`` does the same for the design workflow of a design example (library level).
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest

import trundle
from naive import MIN_NODE_GAP, beam_nodes
from trundle.loads.cranes import Crane

ROOT = Path(__file__).resolve().parents[1]
# every bundled model file that `trundle envelope` runs as it is
BUNDLED_EXAMPLES = sorted([*(ROOT / "examples").glob("*.toml"),
                           *(ROOT / "examples" / "cranes").glob("*.toml"),
                           *(ROOT / "examples" / "design").glob("*.toml")])


@pytest.fixture(scope="session")
def bundled_run(tmp_path_factory: pytest.TempPathFactory) -> Callable[[Path], tuple]:
    """``bundled_run(path)`` → (click result, output folder) of ``trundle envelope path --full
    --out folder`` with every output, run on first request and shared for the session."""
    from cli_helpers import run

    done: dict[Path, tuple] = {}

    def get(path: Path) -> tuple:
        path = Path(path).resolve()
        assert path in BUNDLED_EXAMPLES, f"{path} is not a bundled example"
        if path not in done:
            out = tmp_path_factory.mktemp(f"bundled-{path.stem}") / "out"
            done[path] = (run("envelope", path, "--out", out, "--full"), out)
        return done[path]

    return get


@functools.cache
def design_run(path: Path) -> tuple:
    """(design model, ``workflows.design_envelope.run`` result) of a design example, computed
    once per session (the results are not changed by the tests)."""
    from trundle.io.design_tables import design_spec_of, read_design_model
    from trundle.workflows.design_envelope import run

    design = read_design_model(path)
    return design, run(design_spec_of(design))

# One three-axle truck on two 14 m spans; {spacing} is its rear spacing, fixed ("4.3 m": an
# exact "anywhere" moment) or searched (a table: only the sampled search, "not certified").
TRUCK_ON_TWO_SPANS = """units = "SI"
[beam]
spans = [14.0, 14.0]
supports = ["pin", "pin", "pin"]
EI = 1e5
[[load]]
name = "truck"
axles = ["35 kN", "145 kN", "145 kN"]
spacings = ["4.3 m", {spacing}]
"""

CRANE_DATA = dict(capacity=200.0, bridge_weight=300.0, trolley_weight=50.0, span=20.0,
                  hook_approach=1.0, wheel_spacings=(3.6,), buffer_length=4.4)


def make_crane(name: str = "bay crane", **changes: object) -> Crane:
    """The shared test crane, named ``name``, with ``changes`` to its data."""
    return Crane(name=name, **{**CRANE_DATA, **changes})


# What the scan and fleet tests draw: up to 3 spans of at least 3, nodes at least 0.5 apart.
SCAN_BEAMS = dict(max_spans=3, shortest=3.0, min_node_gap=0.5)


def random_beam(rng: np.random.Generator, max_spans: int = 4, stepped: bool = True,
                shortest: float = 2.0, min_node_gap: float | None = None) -> trundle.Beam:
    """The one random-beam generator of the tests: a random stable beam of 1 to
    ``max_spans`` spans of ``shortest`` to 10 long, with pins, fixed and free ends, springs
    (k, and kr or not), hinges (also over supports), overhangs and (``stepped``) stepped EI.
    Mechanisms, and beams whose supports, hinges and EI steps come closer than
    ``min_node_gap`` (default MIN_NODE_GAP × length), are drawn again."""
    for _ in range(1000):
        n = int(rng.integers(1, max_spans + 1))
        spans = np.round(rng.uniform(shortest, 10.0, n), 2)
        L = float(spans.sum())
        EI_base = float(rng.uniform(0.5, 5.0))
        supports: list[object] = []
        for _ in range(n + 1):
            kind = rng.choice(["pin", "pin", "pin", "fixed", "free", "spring"])
            if kind == "spring":
                # comparable with the beam's own stiffness, so the springs matter; much softer
                # springs make rigid-body drift swamp bending and cost digits in any solver
                k = EI_base / spans.mean() ** 3 * float(10 ** rng.uniform(0.5, 2.5))
                kr = None if rng.random() < 0.5 else EI_base / spans.mean() * float(
                    10 ** rng.uniform(-0.5, 1.5))
                supports.append(trundle.Spring(k, kr))
            else:
                supports.append(str(kind))
        hinges: list[float] = []
        for _ in range(int(rng.integers(0, 3))):
            if rng.random() < 0.3:
                hinges.append(float(np.cumsum(spans)[rng.integers(0, n)]))  # over a support
            else:
                hinges.append(float(np.round(rng.uniform(0.05, 0.95) * L, 2)))
        EI: object = EI_base
        if stepped and rng.random() < 0.6:
            cuts = np.sort(np.round(rng.uniform(0.1, 0.9, int(rng.integers(1, 3))) * L, 2))
            edges = np.concatenate([[0.0], cuts, [L]])
            EI = [(float(a), float(b), EI_base * float(rng.uniform(0.3, 3.0)))
                  for a, b in zip(edges[:-1], edges[1:], strict=True)]
        try:
            beam = trundle.Beam(spans=spans.tolist(), EI=EI, supports=supports,
                                hinges=sorted(set(hinges)))
        except trundle.ModelError:
            continue
        gap = MIN_NODE_GAP * beam.length if min_node_gap is None else min_node_gap
        if np.min(np.diff(beam_nodes(beam))) >= gap:
            return beam
    raise RuntimeError("no stable random beam in 1000 draws")
