"""Shards on an existing Dask distributed cluster (``--scheduler ADDRESS``), with a bounded wait.

An address where nothing usable answers must be refused within 30 s, naming it. Three cases:

- nothing listens (connection refused) or nobody answers the connection: the TCP probe fails within
  ``PROBE_TIMEOUT`` seconds;
- something accepts the connection but is silent: a Dask scheduler sends its handshake as soon as it
  accepts (Dask's TCP comm: both ends write a handshake frame on connect), so no byte within
  ``PROBE_TIMEOUT`` seconds means it is not one;
- something answers but is not a usable scheduler (or a non-TCP address): ``Client`` is built in a
  helper thread and given up after ``CLIENT_TIMEOUT`` seconds, whatever Dask's own retries do.

The probe runs before the campaign is planned, so a bad address costs only the probe.
"""

from __future__ import annotations

import re
import socket
import threading
from collections.abc import Iterator, Sequence
from typing import Any

from memcheck.bist.campaign.rtl import Harness, ShardJob, ShardResult, run_shard
from memcheck.errors import BistError

PROBE_TIMEOUT = 4.0
CLIENT_TIMEOUT = 10.0
_ADDRESS = re.compile(r"^(?:tcp://)?\[?([^\]/]+?)\]?:(\d+)/?$")


def unreachable(address: str, why: str) -> BistError:
    return BistError(
        f"cannot reach the Dask scheduler at {address} ({why}); start one with 'dask scheduler' and workers "
        "with 'dask worker ADDRESS', or drop --scheduler to use local worker processes"
    )


def probe(address: str) -> None:
    """Refuse (BistError naming ``address``) a tcp:// address where no Dask scheduler answers; other
    protocols are left to :func:`connect`."""
    m = _ADDRESS.match(address.strip())
    if m is None:
        if "://" in address and not address.startswith("tcp://"):
            return
        raise unreachable(address, "not a host:port address")
    try:
        with socket.create_connection((m[1], int(m[2])), timeout=PROBE_TIMEOUT) as sock:
            sock.settimeout(PROBE_TIMEOUT)
            first = sock.recv(1)
    except TimeoutError:
        raise unreachable(address, f"no answer within {PROBE_TIMEOUT:.0f} s") from None
    except OSError as exc:
        raise unreachable(address, exc.strerror or type(exc).__name__) from None
    if not first:
        raise unreachable(address, "the connection was closed without a Dask handshake")


def connect(address: str) -> Any:
    """A ``dask.distributed.Client`` on ``address``, or BistError within ``CLIENT_TIMEOUT`` (+1) s."""
    try:
        from dask.distributed import Client
    except ModuleNotFoundError:
        raise BistError("--scheduler needs Dask: pip install 'memcheck[cluster]'") from None
    box: dict[str, Any] = {}

    def build() -> None:
        try:
            box["client"] = Client(address, timeout=f"{CLIENT_TIMEOUT:.0f}s")  # type: ignore[no-untyped-call]
        except Exception as exc:  # whatever answered at the address, it is not a usable scheduler
            box["error"] = exc

    worker = threading.Thread(target=build, name="memcheck-dask-connect", daemon=True)
    worker.start()
    worker.join(CLIENT_TIMEOUT + 1)
    if "client" in box:
        return box["client"]
    why = type(box["error"]).__name__ if "error" in box else f"no scheduler handshake within {CLIENT_TIMEOUT:.0f} s"
    raise unreachable(address, why)


def on_cluster(harness: Harness, jobs: Sequence[ShardJob], address: str) -> Iterator[ShardResult]:
    """Every shard's result from the cluster at ``address`` (in completion order)."""
    client = connect(address)
    from dask.distributed import as_completed as dask_completed

    with client:
        shared = client.scatter(harness, broadcast=True)
        futures = client.map(run_shard, [shared] * len(jobs), list(jobs), pure=False)
        for fut in dask_completed(futures):  # type: ignore[no-untyped-call]
            yield fut.result()
