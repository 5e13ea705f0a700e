"""The cluster path (synth.cluster): a Dask distributed cluster started here on loopback only.

A sweep run on the cluster must give the points of the same sweep run in this process,
in the same order, figure for figure [LIB-dask-distributed].
"""

from __future__ import annotations

import sys

import pytest
from distributed import Client, LocalCluster

import synth.cluster
from synth.errors import DesignError
from synth.sweep import sweep


@pytest.fixture(scope="module")
def cluster():
    # loopback only, no dashboard, the workers as threads of this process
    with LocalCluster(host="127.0.0.1", protocol="tcp", n_workers=1, threads_per_worker=2,
                      processes=False, dashboard_address=None) as local:
        yield local


def square(x: int) -> int:
    return x * x


def test_results_come_back_in_the_order_of_the_tasks(cluster):
    assert synth.cluster.run_on_cluster(cluster.scheduler_address, square,
                                        list(range(20))) == [x * x for x in range(20)]


TABLES = {
    "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd", "value": "12 V"}],
    "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24", "range": ["1k", "2k"],
                  "package": "0603"},
                 {"ref": "R2", "nodes": ["out", "gnd"], "value": "4.7k", "package": "0603"}],
    "target": [{"name": "tap", "voltage": "out", "equals": "3.3 V", "within": "1%"}],
}


def test_a_sweep_on_the_cluster_equals_the_local_sweep(cluster):
    tables = TABLES
    axes = ["source.V1.value=4.2V:40V:3", "design.ambient=25C:125C:2"]
    local = sweep(tables, axes, jobs=1)
    by_address = sweep(tables, axes, cluster=cluster.scheduler_address)
    with Client(cluster) as client:
        by_client = sweep(tables, axes, cluster=client)
        assert client.status == "running"  # a client handed in is left open
    assert by_address.runner == by_client.runner == "cluster"
    assert by_address.points == local.points == by_client.points
    assert {p.verdict for p in local.points} == {"meets", "fails"}


def test_an_unreachable_scheduler_is_bad_input(monkeypatch):
    monkeypatch.setattr(synth.cluster, "CONNECT_SECONDS", 0.5)
    with pytest.raises(DesignError, match=r"--cluster tcp://127.0.0.1:9: cannot reach a Dask "
                                          r"scheduler there \(Timed out"):
        synth.cluster.run_on_cluster("tcp://127.0.0.1:9", square, [1])
    with pytest.raises(DesignError, match="cannot reach a Dask scheduler there"):
        synth.cluster.run_on_cluster("nonsense", square, [1])
    with pytest.raises(DesignError, match="give a scheduler address"):
        synth.cluster.run_on_cluster(" ", square, [1])


def test_a_missing_distributed_names_the_extra(monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)  # import distributed fails
    with pytest.raises(DesignError, match=r"pip install 'rnsynth\[cluster\]'"):
        synth.cluster.run_on_cluster("tcp://127.0.0.1:9", square, [1])
