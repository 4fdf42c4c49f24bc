"""Background jobs of the app (retrain, verify): one thread each, in a small module-level registry.

A job belongs to the app process, not to a browser session, so a reload or a second
tab sees the same job; one job of a kind per store runs at a time.  The registry is
guarded by a lock; a job's fields are written by its thread and read by the pages.
"""

from __future__ import annotations

import threading
import time
import traceback
from dataclasses import dataclass, field

__all__ = ["Job", "start_job", "get_job", "wait_for"]

_LOCK = threading.Lock()
_JOBS: dict = {}


@dataclass
class Job:
    """One background job.

    Attributes
    ----------
    kind : str
        ``"retrain"`` or ``"verify"``.
    store : str
        The store path.
    state : str
        ``"running"``, ``"finished"``, ``"failed"`` or ``"stopped"``.
    progress : dict
        The latest progress report (``finished``, ``total``, ...), empty when none.
    message : str
        What happened, for people (the error on failure).
    result : object
        What the work returned.
    started_s : float
        ``time.monotonic()`` at the start.
    """

    kind: str
    store: str
    state: str = "running"
    progress: dict = field(default_factory=dict)
    message: str = ""
    result: object = None
    started_s: float = field(default_factory=time.monotonic)
    finished_s: float | None = None
    stop: threading.Event = field(default_factory=threading.Event)
    thread: threading.Thread | None = None

    @property
    def running(self):
        return self.state == "running"

    @property
    def elapsed_s(self):
        return (self.finished_s or time.monotonic()) - self.started_s


def get_job(kind, store):
    """The latest job of ``kind`` on ``store`` or None."""
    with _LOCK:
        return _JOBS.get((kind, str(store)))


def start_job(kind, store, work):
    """Start ``work(job)`` in a thread unless a job of this kind runs on this store; return the job.

    ``work`` returns the result (stored in ``job.result``) and may update ``job.progress``
    and watch ``job.stop``; an exception fails the job with its one-line message.
    """
    key = (kind, str(store))
    with _LOCK:
        old = _JOBS.get(key)
        if old is not None and old.running:
            return old
        job = Job(kind=kind, store=str(store))
        _JOBS[key] = job

    def run():
        try:
            job.result = work(job)
            job.state = "stopped" if job.stop.is_set() else "finished"
        except Exception as exc:  # noqa: BLE001 - reported on the page, the app stays up
            job.state = "failed"
            job.message = f"{type(exc).__name__}: {exc}" if not str(exc) else str(exc)
            job.result = traceback.format_exc(limit=3)
        finally:
            job.finished_s = time.monotonic()

    job.thread = threading.Thread(target=run, name=f"surrogate-{kind}", daemon=True)
    job.thread.start()
    return job


def wait_for(kind, store, timeout_s=600.0):
    """Block until the job of ``kind`` on ``store`` ends (for tests and the command line); return it."""
    job = get_job(kind, store)
    if job is not None and job.thread is not None:
        job.thread.join(timeout_s)
    return job
