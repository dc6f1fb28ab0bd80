"""The fleet workflow on Dask: a LocalCluster of 2 workers on loopback gives the single-process
result (to 1e-12; in fact bit for bit, every row being the same pure computation), whatever
the number of workers and the size of the work units; a rerun skips written partitions; a
worker killed during a run loses nothing and duplicates nothing (Dask reschedules its units).

Kept few and small: CI has 2 cores. The reference is the single-process run, itself checked
truck by truck against the single-vehicle envelope in test_fleet_batched.py.
"""

from __future__ import annotations

import os
import signal
import threading
import time
from pathlib import Path

import numpy as np
import pytest

from trundle.io.design_models import design_model, permit_vehicle
from trundle.io.inventory import read_inventory
from trundle.io.traffic_generator import invented_traffic
from trundle.workflows.fleet import FleetSpec, read_partitions, run
from trundle.workflows.permit import PermitSpec
from trundle.workflows.permit import run as run_permit

PERMIT = str(Path(__file__).parents[1] / "examples" / "fleet" / "permit_crane_carrier.toml")

INVENTORY = """name,units,spans,supports,stiffness,effects
three-span,SI,20 26 20,pin pin pin pin,1 1.5 1,
single,US,60,pin pin,,midspan-moments end-shears
"""


@pytest.fixture(scope="module")
def inputs(tmp_path_factory: pytest.TempPathFactory):
    folder = tmp_path_factory.mktemp("fleet")
    (folder / "inventory.csv").write_text(INVENTORY)
    bridges = tuple(read_inventory(folder / "inventory.csv"))
    traffic = invented_traffic(240, seed=5, days=20)
    return folder, traffic, bridges


@pytest.fixture(scope="module")
def reference(inputs):
    folder, traffic, bridges = inputs
    result = run(FleetSpec(traffic, bridges, folder / "single", truck_chunk=97, bridge_chunk=1,
                           scheduler="none", progress=False, n_bootstrap=10))
    return result


def _values(result) -> np.ndarray:
    table = read_partitions(result.partitions)
    return np.column_stack([table.column(c).to_numpy() for c in
                            ("truck", "effect", "max", "min", "x_at_max", "x_at_min")])


def _assert_same(result, reference) -> None:
    got, want = _values(result), _values(reference)
    assert got.shape == want.shape
    np.testing.assert_array_equal(got[:, :2], want[:, :2])
    scale = np.nanmax(np.abs(want[:, 2:4]))
    np.testing.assert_allclose(got[:, 2:4], want[:, 2:4], rtol=0, atol=1e-12 * scale)
    np.testing.assert_allclose(got[:, 4:], want[:, 4:], rtol=0, atol=1e-12 * 100)


def test_local_cluster_equals_single_process_whatever_the_partitioning(inputs, reference):
    """An existing cluster (its address passed as the scheduler), two unit sizes."""
    from distributed import LocalCluster

    folder, traffic, bridges = inputs
    with LocalCluster(n_workers=2, threads_per_worker=1, host="127.0.0.1",
                      dashboard_address=None, processes=True) as cluster:
        for k, (trucks, per) in enumerate(((40, 2), (240, 1))):
            result = run(FleetSpec(traffic, bridges, folder / f"cluster{k}", truck_chunk=trucks,
                                   bridge_chunk=per, scheduler=cluster.scheduler_address,
                                   progress=False, n_bootstrap=10))
            assert result.written == len(result.partitions)
            assert result.engine.startswith("Dask scheduler tcp://127.0.0.1:")
            _assert_same(result, reference)
            for a, b in zip(result.summaries, reference.summaries, strict=True):
                assert (a.maximum, a.minimum, a.truck_at_max) == (b.maximum, b.minimum,
                                                                  b.truck_at_max)
        # the permit check runs on the same engine and gives the same rows
        permit = dict(vehicles=(PERMIT,), read_vehicle=permit_vehicle, bridges=bridges,
                      design=design_model("demo-heavy-vehicle-5-axle+demo-lane-load"),
                      impact=0.1, limit=1.0)
        here = run_permit(PermitSpec(**permit, scheduler="none"))
        there = run_permit(PermitSpec(**permit, scheduler=cluster.scheduler_address))
        assert here.engine == "this process"
        assert there.engine.startswith("Dask scheduler tcp://127.0.0.1:")

        def rows(result):
            return [(r.bridge, r.effect, r.permit_max, r.permit_min, r.x_front_axle,
                     r.direction, r.verdict) for r in result.rows]

        assert rows(there) == rows(here) and len(here.rows) > 0


def test_a_rerun_skips_the_partitions_already_written(inputs, reference):
    folder, traffic, bridges = inputs
    again = run(FleetSpec(traffic, bridges, folder / "single", truck_chunk=97, bridge_chunk=1,
                          scheduler="none", progress=False, n_bootstrap=10))
    assert again.written == 0 and again.skipped == len(reference.partitions)
    # an interrupted job: one partition missing is the only one written again
    reference.partitions[1].unlink()
    again = run(FleetSpec(traffic, bridges, folder / "single", truck_chunk=97, bridge_chunk=1,
                          scheduler="none", progress=False, n_bootstrap=10))
    assert again.written == 1 and again.skipped == len(reference.partitions) - 1
    _assert_same(again, reference)


def test_a_killed_worker_loses_and_duplicates_nothing(inputs, reference):
    folder, traffic, bridges = inputs
    out = folder / "killed"
    killed: dict[str, int] = {}

    def kill_one_worker(client) -> None:
        pids = sorted(client.run(os.getpid).values())

        def killer() -> None:
            deadline = time.monotonic() + 120
            partitions = out / "partitions"
            while time.monotonic() < deadline:
                done = len(list(partitions.glob("part-*.parquet")))
                if done >= 1:
                    killed["done_at_kill"] = done
                    os.kill(pids[0], signal.SIGKILL)
                    killed["pid"] = pids[0]
                    return
                time.sleep(0.01)

        threading.Thread(target=killer, daemon=True).start()

    # trundle's own LocalCluster (started and stopped by run), 2 workers on 127.0.0.1; small
    # units with the (slower) fatigue histories, so the run outlasts the kill
    result = run(FleetSpec(traffic, bridges, out, truck_chunk=8, bridge_chunk=2, n_workers=2,
                           progress=False, n_bootstrap=10, fatigue=True),
                 on_started=kill_one_worker)
    assert result.engine.startswith("LocalCluster (2")
    assert "pid" in killed, "no worker was killed"
    assert killed["done_at_kill"] < len(result.partitions), "the run ended before the kill"
    table = read_partitions(result.partitions)
    keys = np.column_stack([np.unique(table.column("bridge").to_numpy(zero_copy_only=False),
                                      return_inverse=True)[1],
                            table.column("effect").to_numpy(), table.column("truck").to_numpy()])
    n_rows = sum(len(b.effects) for b in bridges) * traffic.n_trucks
    assert keys.shape[0] == n_rows
    assert np.unique(keys, axis=0).shape[0] == n_rows  # nothing duplicated, nothing missing
    _assert_same(result, reference)
