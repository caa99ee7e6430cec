"""Many machines: run batches on a Dask cluster (``pip install 'gammatrace[dask]'``).

Work is cut into partitions — whole files, or ranges of frames of a large file — and each worker
reads its partition with the Rust reader and analyses it with :func:`gammatrace.batch.iter_batch`.
The gathered table is in input order and equal to a local run.

Point it at a real cluster with the scheduler's address::

    from dask.distributed import Client
    from gammatrace.batch.distributed import analyze_distributed
    client = Client("tcp://scheduler-host:8786")
    table = analyze_distributed(["ensemble_01.xyz", "ensemble_02.xyz"], client, tol=0.01)

Workers need gammatrace installed. Use process-based workers (Dask's default nanny starts them
with the ``spawn`` method), never ``fork`` a process that already runs the Rust thread pool.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from typing import Any

from ..errors import InputError
from ..group import DEFAULT_TOL
from ..io import check_cell_choice
from .run import _concat, convert, iter_batch, ragged_from_file

__all__ = ["analyze_distributed", "plan_partitions"]


def plan_partitions(
    paths: Sequence[str | os.PathLike], frames_per_partition: int | None = None
) -> list[tuple[str, int, int | None]]:
    """Cut files into ``(path, first_frame, stop_frame)`` partitions.

    With ``frames_per_partition`` each file is read once here to count its frames and split
    into ranges of that many frames; without it each file is one partition.
    """
    parts: list[tuple[str, int, int | None]] = []
    for p in paths:
        path = os.fspath(p)
        if not frames_per_partition:
            parts.append((path, 0, None))
            continue
        if frames_per_partition < 1:
            raise InputError(
                f"frames_per_partition: must be at least 1, got {frames_per_partition}"
            )
        n = len(ragged_from_file(path))
        for a in range(0, max(n, 1), frames_per_partition):
            parts.append((path, a, min(a + frames_per_partition, n)))
    return parts


def _analyze_partition(
    path: str, start: int, stop: int | None, tol: float, n_threads: int, cell: str | None = None
):
    """Worker side: read the partition's frames and analyse them (returns a dict of columns)."""
    data = ragged_from_file(path, cell)
    stop = len(data) if stop is None else stop
    return _concat(list(iter_batch(data.slice(start, stop), tol=tol, n_threads=n_threads)))


def analyze_distributed(
    paths: Sequence[str | os.PathLike],
    client: Any,
    *,
    tol: float = DEFAULT_TOL,
    frames_per_partition: int | None = None,
    n_threads: int = 0,
    output: str = "pandas",
    cell: str | None = None,
):
    """Analyse XYZ files on a Dask cluster; returns the same table as a local batch.

    Parameters
    ----------
    paths
        Files readable by every worker (shared file system or object store mount).
    client : dask.distributed.Client
        Connected client (``Client("tcp://host:8786")`` or ``Client(LocalCluster(...))``).
    tol : float
        Distance tolerance in ångström.
    frames_per_partition : int, optional
        Split large files into ranges of this many frames.
    n_threads : int
        Threads each worker's core may use (0 = all of the worker's cores).
    output : {"pandas", "dict", "arrow"}
    cell : {"refuse", "ignore", "unwrap"}, optional
        Periodic frames, as for :func:`gammatrace.batch.analyze_batch`.
    """
    check_cell_choice(cell)
    parts = plan_partitions(paths, frames_per_partition)
    futures = [
        client.submit(_analyze_partition, path, a, b, float(tol), int(n_threads), cell, pure=False)
        for path, a, b in parts
    ]
    results = client.gather(futures)
    return convert(_concat(results), output)
