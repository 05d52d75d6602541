"""Fixtures shared by the screening tests: the demo context and loopback Dask clusters."""
from pathlib import Path

import pytest

from engine import screening
from engine.io import sitefile

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_sites" / "larkspur_yard.json"


@pytest.fixture(scope="module")
def ctx():
    """Screening context of the invented demo site (its climate, turbines and losses)."""
    return screening.context_from_assessment(sitefile.load(DEMO))


def _loopback_client(processes: bool):
    distributed = pytest.importorskip("distributed")
    kwargs = {} if processes else {"protocol": "tcp"}
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=processes,
                                       host="127.0.0.1", dashboard_address=None, **kwargs)
    client = distributed.Client(cluster)
    try:
        yield client
    finally:
        client.close()
        cluster.close()


@pytest.fixture(scope="module")
def dask_client():
    """A two-worker Dask cluster of processes on the loopback interface, closed after the tests."""
    yield from _loopback_client(processes=True)


@pytest.fixture(scope="module")
def thread_client():
    """A two-worker in-process Dask cluster on the loopback interface, closed after the tests."""
    yield from _loopback_client(processes=False)
