"""Run a campaign's pending designs in parallel and commit each result as it completes.

Two runners share one loop: local worker processes (``concurrent.futures`` with the
``spawn`` start method) and a Dask distributed cluster (an existing scheduler or a
``LocalCluster`` on loopback).  Only the coordinating process writes the store.

At most ``workers`` designs are in flight; each is marked ``running`` when it is
submitted and finished (``done`` / ``not_converged`` with its data, or ``failed``
with the error message) when its future completes.  On Ctrl-C the in-flight designs
return to ``pending`` and the run stops; after a crash the next run returns them to
``pending`` itself (see the store contract).
"""

from __future__ import annotations

import concurrent.futures as cf
import multiprocessing
import os
import signal
import threading
import time
import traceback
from dataclasses import dataclass

from .. import __version__
from ._store import Status

__all__ = ["run_campaign", "RunSummary", "solve_jobs"]


@dataclass(frozen=True)
class RunSummary:
    """What one run did."""

    run_id: int
    done: int
    not_converged: int
    failed: int
    remaining: int
    elapsed_s: float
    interrupted: bool


def _noop(_):
    return None


def _limit_threads():
    # Ctrl-C is the coordinator's to handle: it returns in-flight designs to pending.
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    # One design per core: keep each worker's numerical libraries single-threaded.
    from threadpoolctl import threadpool_limits

    from ..solver import set_fft_workers

    threadpool_limits(limits=1)
    set_fft_workers(1)


def _guarded(task, spec, design_id, params):
    """Run ``task`` in a worker; return ("ok", payload) or ("error", message)."""
    start = time.perf_counter()
    try:
        payload = task(spec, params)
    except Exception as exc:  # a design that raises is recorded failed with its message
        last = traceback.extract_tb(exc.__traceback__)[-1]
        return ("error", f"{type(exc).__name__}: {exc} (at {os.path.basename(last.filename)}:{last.lineno})", 0.0)
    return ("ok", payload, time.perf_counter() - start)


_WORKER_DIED = "worker process died"


class _LocalPool:
    def __init__(self, workers):
        self.workers = workers
        self.pool = self._new()

    def _new(self):
        ctx = multiprocessing.get_context("spawn")
        main = threading.current_thread() is threading.main_thread()
        previous = signal.signal(signal.SIGINT, signal.SIG_IGN) if main else None
        try:
            pool = cf.ProcessPoolExecutor(max_workers=self.workers, mp_context=ctx, initializer=_limit_threads)
            # start the workers now, while Ctrl-C is ignored: they inherit the ignore, so an
            # interrupt during their start-up cannot reach them
            list(pool.map(_noop, range(self.workers)))
        finally:
            if main:
                signal.signal(signal.SIGINT, previous)
        return pool

    def submit(self, fn, *args, key=None):
        try:
            return self.pool.submit(fn, *args)
        except cf.process.BrokenProcessPool:
            # a worker died: the pool is unusable; start a fresh one
            self.pool.shutdown(wait=False, cancel_futures=True)
            self.pool = self._new()
            return self.pool.submit(fn, *args)

    def wait_one(self, futures):
        done, _ = cf.wait(futures, return_when=cf.FIRST_COMPLETED)
        return done

    @staticmethod
    def outcome(future):
        try:
            return future.result()
        except cf.process.BrokenProcessPool as exc:
            return ("error", f"{_WORKER_DIED} ({exc})", 0.0)

    def close(self, cancel=False):
        if cancel:
            for proc in list(getattr(self.pool, "_processes", {}).values()):
                proc.terminate()
        self.pool.shutdown(wait=not cancel, cancel_futures=True)


class _DaskPool:
    def __init__(self, scheduler=None, n_workers=None):
        from distributed import Client, LocalCluster

        self.cluster = None
        if scheduler is None:
            self.cluster = LocalCluster(
                n_workers=n_workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                dashboard_address="127.0.0.1:0", silence_logs=40,
            )
            self.client = Client(self.cluster)
            self.client.run(_limit_threads)
        else:
            self.client = Client(scheduler, timeout="30s")

    def submit(self, fn, *args, key=None):
        return self.client.submit(fn, *args, key=key, pure=False, retries=1)

    def wait_one(self, futures):
        from distributed import wait

        return wait(list(futures), return_when="FIRST_COMPLETED").done

    @staticmethod
    def outcome(future):
        try:
            return future.result()
        except Exception as exc:  # KilledWorker after the retries, lost scheduler, ...
            return ("error", f"{type(exc).__name__}: {exc}", 0.0, "final")

    def close(self, cancel=False):
        self.client.close()
        if self.cluster is not None:
            self.cluster.close()


def _make_pool(workers, scheduler, dask_workers):
    if scheduler is not None or dask_workers is not None:
        pool = _DaskPool(scheduler, dask_workers)
        return pool, dask_workers or max(1, len(pool.client.scheduler_info().get("workers", {})))
    slots = workers or os.cpu_count() or 1
    return _LocalPool(slots), slots


def solve_jobs(jobs, spec, task, *, workers=None, scheduler=None, dask_workers=None, should_stop=None):
    """Run ``task(spec, params)`` for each ``(key, params)`` of ``jobs`` in parallel, writing nothing.

    For solves that are not campaign results (a verification on a finer lattice).
    Yields ``(key, payload, elapsed_s, None)`` for a success and ``(key, None, 0.0,
    message)`` for a failure, in completion order; a KeyboardInterrupt stops the
    workers and propagates.  ``should_stop`` as in :func:`run_campaign`.
    """
    jobs = list(jobs)
    if not jobs:
        return
    pool, slots = _make_pool(workers, scheduler, dask_workers)
    in_flight = {}
    try:
        while jobs or in_flight:
            if jobs and should_stop is not None and should_stop():
                jobs = []
                if not in_flight:
                    break
            while jobs and len(in_flight) < slots:
                key, params = jobs.pop(0)
                in_flight[pool.submit(_guarded, task, spec, key, params, key=f"job-{key}-{time.time_ns()}")] = key
            for fut in pool.wait_one(in_flight):
                key = in_flight.pop(fut)
                result = pool.outcome(fut)
                if result[0] == "ok":
                    yield key, result[1], result[2], None
                else:
                    yield key, None, 0.0, result[1]
    except BaseException:
        pool.close(cancel=True)
        raise
    pool.close()


def run_campaign(
    store,
    spec,
    task,
    *,
    workers=None,
    scheduler=None,
    dask_workers=None,
    retry_failed=False,
    command="generate",
    progress=None,
    design_ids=None,
    should_stop=None,
):
    """Solve every pending design of ``store``.

    Parameters
    ----------
    store : Store
    spec : dict
        The campaign spec passed to ``task``.
    task : callable(spec, params) -> dict
        Top-level (picklable) function returning ``figures``, ``solver``, ``spectrum``,
        ``field_map`` for :meth:`Store.record_result`.
    workers : int, optional
        Local worker processes (default: all cores).
    scheduler : str, optional
        Address of a Dask scheduler (``tcp://HOST:PORT``) to submit to.
    dask_workers : int, optional
        Start a Dask ``LocalCluster`` with this many workers on loopback.
    retry_failed : bool
        Also solve designs that failed before.
    progress : callable(event: dict), optional
        Called after each finished design with counts and timing.
    design_ids : collection of str, optional
        Solve only these designs (those of them that are pending, or failed with
        ``retry_failed``); default every one.
    should_stop : callable() -> bool, optional
        Polled before each submission; once it returns True no new design is started,
        the ones in flight finish and are recorded, the rest stay pending.

    Returns
    -------
    RunSummary
    """
    run_id = store.start_run(command, __version__)
    wanted = [Status.PENDING] + ([Status.FAILED] if retry_failed else [])
    queue = store.designs(status=wanted)
    if design_ids is not None:
        design_ids = set(design_ids)
        queue = [d for d in queue if d["design_id"] in design_ids]
    total = len(queue)
    pool, slots = _make_pool(workers, scheduler, dask_workers)
    counts = {"done": 0, "not_converged": 0, "failed": 0}
    in_flight = {}
    by_id = {d["design_id"]: d for d in queue}
    attempts = {}
    suspects = set()
    start = time.perf_counter()
    interrupted = False
    try:
        while queue or in_flight:
            if queue and should_stop is not None and should_stop():
                queue = []
                if not in_flight:
                    break
            while queue and len(in_flight) < slots:
                # a design that was in flight when a worker died runs alone, so the one that
                # kills its worker is found and no bystander is blamed twice
                if any(v in suspects for v in in_flight.values()):
                    break
                if queue[0]["design_id"] in suspects and in_flight:
                    break
                d = queue.pop(0)
                attempts[d["design_id"]] = attempts.get(d["design_id"], 0) + 1
                store.mark(d["design_id"], Status.RUNNING, run_id=run_id)
                fut = pool.submit(_guarded, task, spec, d["design_id"], d["params"], key=f"design-{d['design_id']}-{run_id}")
                in_flight[fut] = d["design_id"]
            for fut in pool.wait_one(in_flight):
                design = in_flight.pop(fut)
                result = pool.outcome(fut)
                if result[0] == "ok":
                    payload, elapsed = result[1], result[2]
                    status = store.record_result(design, elapsed_s=elapsed, run_id=run_id, **payload)
                    counts[status.value] += 1
                elif result[1].startswith(_WORKER_DIED) and attempts[design] < 2:
                    # the pool lost a worker; every design in flight saw it: try each once more
                    store.mark(design, Status.PENDING, message=f"{result[1]}; retrying alone", run_id=run_id)
                    suspects.add(design)
                    queue.insert(0, by_id[design])
                    continue
                else:
                    store.mark(design, Status.FAILED, message=result[1], run_id=run_id)
                    counts["failed"] += 1
                if progress is not None:
                    finished = sum(counts.values())
                    elapsed_all = time.perf_counter() - start
                    progress({
                        "finished": finished, "total": total, **counts,
                        "seconds_per_design": elapsed_all / finished,
                        "eta_s": elapsed_all / finished * (total - finished),
                    })
    except KeyboardInterrupt:
        interrupted = True
        pool.close(cancel=True)
        for design in in_flight.values():
            store.mark(design, Status.PENDING, message="stopped by the user; returned to pending", run_id=run_id)
        in_flight.clear()
    else:
        pool.close()
    finally:
        store.finish_run(run_id, note=" interrupted" if interrupted else "")
    remaining = store.counts()["pending"]
    return RunSummary(run_id, counts["done"], counts["not_converged"], counts["failed"], remaining,
                      time.perf_counter() - start, interrupted)
