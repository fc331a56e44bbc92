"""Running a vectorized solve over large inputs in blocks, on a few threads.

The equations of state (AGA8 DETAIL, GERG-2008) solve their points in blocks of a bounded size
(the 2-D work arrays stay small) and the blocks are independent, so they may share threads:
numpy releases the GIL inside its loops. While they run, the BLAS library is held to one
thread: the matrix products are small (inner size the number of terms), so BLAS threads only
add hand-over costs, and on a busy machine or under several worker processes they
oversubscribe the cores.
"""

from __future__ import annotations

import contextlib
import os
from typing import Callable

import numpy as np

from .base import REASON_INVALID_INPUT, invalid_points

#: dtype of the reason arrays
REASON_DTYPE = "<U16"
#: at most this many threads by default
MAX_WORKERS = 4

_CONTROLLER = []


def split_blocks(idx: np.ndarray, chunk: int) -> list:
    """``idx`` split into the fewest blocks of equal size (within one) of at most ``chunk`` points."""
    n_blocks = -(-idx.size // chunk)
    return np.array_split(idx, n_blocks) if n_blocks else []


def worker_count(workers, n_blocks: int) -> int:
    """Threads to use: ``workers`` if given (at most one per block), else one per CPU core, at
    most MAX_WORKERS, from two blocks up."""
    if workers is None:
        if n_blocks < 2:
            return 1
        workers = min(MAX_WORKERS, os.cpu_count() or 1)
    return max(1, min(int(workers), n_blocks))


def blas_single_thread():
    """Context holding the BLAS library to one thread (threadpoolctl)."""
    try:
        from threadpoolctl import ThreadpoolController
    except ImportError:  # pragma: no cover - threadpoolctl is a dependency
        return contextlib.nullcontext()
    if not _CONTROLLER:
        _CONTROLLER.append(ThreadpoolController())  # inspecting the loaded libraries once
    return _CONTROLLER[0].limit(limits=1, user_api="blas")


def run_blocks(run: Callable, blocks: list, n_work: int) -> None:
    """Run ``run(list_of_blocks)`` in the caller's thread or shared among ``n_work`` threads
    (block k goes to thread k mod n_work), with BLAS held to one thread meanwhile."""
    if not blocks:
        return
    with blas_single_thread():
        if n_work <= 1:
            run(blocks)
            return
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(max_workers=n_work) as ex:
            for f in [ex.submit(run, blocks[k::n_work]) for k in range(n_work)]:
                f.result()


def solve_in_blocks(run: Callable, idx: np.ndarray, chunk: int, workers) -> None:
    """Split the point indices ``idx`` with :func:`split_blocks` and hand them to
    :func:`run_blocks` on :func:`worker_count` threads. ``run(list_of_blocks)`` writes its
    results into the caller's arrays."""
    blocks = split_blocks(idx, chunk)
    run_blocks(run, blocks, worker_count(workers, len(blocks)))


def solve_points(pressure, temperature, make_workspace: Callable, solve_block: Callable,
                 chunk: int, workers):
    """Broadcast and flatten (p, T), mark the invalid points, solve the valid ones in blocks.

    Parameters
    ----------
    pressure : float or ndarray [Pa]
    temperature : float or ndarray [K]     broadcast against ``pressure``
    make_workspace : callable   ``make_workspace(n)``: the work arrays of one thread for blocks
                                of up to ``n`` points
    solve_block : callable      ``solve_block(ws, p, t) -> (z, rho, w, reason)`` for one block
                                of valid points (p [Pa], t [K]); rho [mol/m3], w [m/s]; w may be
                                a scalar NaN and reason a scalar '' (none for the whole block)
    chunk : int                 points per block at the most
    workers : int or None       threads, see :func:`worker_count`

    Returns
    -------
    shape : tuple                  the broadcast shape
    pf, tf : ndarray [Pa], [K]     the flat pressures and temperatures
    bad : ndarray of bool          invalid input (non-finite, p <= 0 or T <= 0)
    z, rho, w : ndarray            flat results, NaN at the invalid points
    reason : ndarray of str        flat reasons, ``invalid-input`` at the invalid points
    """
    p, t = np.broadcast_arrays(np.asarray(pressure, dtype=float), np.asarray(temperature, dtype=float))
    shape = p.shape
    pf, tf = p.ravel(), t.ravel()
    bad = invalid_points(pf, tf)
    z = np.full(pf.size, np.nan)
    rho = np.full(pf.size, np.nan)
    w = np.full(pf.size, np.nan)
    # zero-filled by the operating system ('' everywhere): blocks without a failure leave it
    # untouched, so the pages of a large call are never written (64 bytes a point)
    reason = np.zeros(pf.size, dtype=REASON_DTYPE)
    reason[bad] = REASON_INVALID_INPUT
    idx = np.flatnonzero(~bad)

    def run(block_list):
        ws = make_workspace(min(chunk, idx.size))
        for j in block_list:
            z[j], rho[j], wj, rj = solve_block(ws, pf[j], tf[j])
            if not (np.ndim(wj) == 0 and np.isnan(wj)):
                w[j] = wj
            if not (np.ndim(rj) == 0 and rj == ""):
                reason[j] = rj

    solve_in_blocks(run, idx, chunk, workers)
    return shape, pf, tf, bad, z, rho, w, reason
