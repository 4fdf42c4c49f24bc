"""The study file beside a store: optuna's own storage, so a search can be resumed and inspected.

Layout (our own): ``<store stem>.search.journal`` (optuna's journal storage, one JSON
line per operation, the default) or ``<store stem>.search.sqlite3`` (optuna's RDB
storage on SQLite), in the store's folder.  Either opens with plain optuna, e.g.
``optuna.load_study(study_name=NAME, storage=JournalStorage(JournalFileBackend(PATH)))``
or ``storage="sqlite:///PATH"``.

The search itself runs on optuna's in-memory storage; after every batch the new
finished trials are appended to the file (``Study.add_trials``), and a resumed search
first copies the file's finished trials back into memory.  Measured on this machine
(2 cores, shared): an RDB-backed study asked and told trial by trial costs about
50 ms per trial (every sampler call queries SQLite), a journal file written
operation by operation about 40 ms (one file lock and fsync per operation);
appending finished trials costs about 7 ms per trial to SQLite (ORM inserts) and a
few hundred microseconds to the journal when a batch's operations are written with
one lock (:class:`_BatchedJournal`).  Hence the journal is the default.

Contract: one search process writes a study file at a time (checked before each
append: a file that grew behind our back is refused); trials are appended, never
edited.
"""

from __future__ import annotations

import sqlite3
from pathlib import Path

from .._validation import check_choice
from ..errors import StoreError

__all__ = ["STUDY_FORMATS", "study_file", "StudyArchive"]

#: Formats of the study file.
STUDY_FORMATS = ("journal", "sqlite")


def study_file(store_path, study_format="journal"):
    """Path of the study file beside ``store_path`` for ``study_format`` (see the module docstring)."""
    check_choice("study_format", study_format, STUDY_FORMATS)
    p = Path(store_path)
    return p.with_name(p.stem + (".search.journal" if study_format == "journal" else ".search.sqlite3"))


def _batched_journal_class():
    from optuna.storages.journal import BaseJournalBackend, JournalFileBackend

    class _BatchedJournal(BaseJournalBackend):
        """optuna's journal file, with the operations of a batch written under one lock."""

        def __init__(self, path):
            self._path = Path(path)
            self._file = JournalFileBackend(str(path))
            self._n_file = sum(1 for _ in self._file.read_logs(0))
            self._pending = []

        def read_logs(self, log_number_from):
            if log_number_from < self._n_file:
                yield from self._file.read_logs(log_number_from)
            yield from self._pending[max(0, log_number_from - self._n_file):]

        def append_logs(self, logs):
            self._pending.extend(logs)

        def flush(self):
            if not self._pending:
                return
            on_disk = sum(1 for _ in self._file.read_logs(self._n_file)) + self._n_file
            if on_disk != self._n_file:
                raise StoreError(f"study file {self._path} was written by another process during this search; "
                                 "run one search per study file at a time")
            self._file.append_logs(self._pending)
            self._n_file += len(self._pending)
            self._pending = []

    return _BatchedJournal


def _sqlite_creator(path):
    def connect():
        db = sqlite3.connect(str(path), timeout=30.0, check_same_thread=False)
        db.execute("PRAGMA journal_mode=WAL")
        db.execute("PRAGMA synchronous=NORMAL")
        return db

    return connect


class StudyArchive:
    """One optuna study in a study file (journal or SQLite), opened for appending.

    Parameters
    ----------
    path : str or pathlib.Path
        The study file (see :func:`study_file`).
    study_name : str
    directions : sequence of {"minimize", "maximize"}
    study_format : {"journal", "sqlite"}, default "journal"
    user_attrs : dict, optional
        Recorded on a new study (JSON-ready); an existing study keeps its own.
    """

    def __init__(self, path, study_name, directions, *, study_format="journal", user_attrs=None):
        import optuna

        check_choice("study_format", study_format, STUDY_FORMATS)
        optuna.logging.set_verbosity(optuna.logging.WARNING)  # the library logs each new study otherwise
        self.path = Path(path)
        self.study_format = study_format
        self.study_name = study_name
        self._flush = lambda: None
        try:
            if study_format == "journal":
                backend = _batched_journal_class()(self.path)
                storage = optuna.storages.JournalStorage(backend)
                self._flush = backend.flush
            else:
                storage = optuna.storages.RDBStorage(f"sqlite:///{self.path}",
                                                     engine_kwargs={"creator": _sqlite_creator(self.path)})
        except (OSError, ValueError, RuntimeError) as exc:
            raise StoreError(f"study file {self.path} cannot be opened ({exc}); move it aside to start afresh") from None
        known = {s.study_name: s for s in optuna.get_all_study_summaries(storage, include_best_trial=False)}
        if study_name in known:
            old = [d.name.lower() for d in known[study_name].directions]
            if old != [str(d).lower() for d in directions]:
                raise StoreError(f"study {study_name!r} in {self.path} has directions {old}; got {list(directions)}")
        self.study = optuna.create_study(storage=storage, study_name=study_name, directions=list(directions),
                                         load_if_exists=True)
        if study_name not in known:
            for k, v in (user_attrs or {}).items():
                self.study.set_user_attr(k, v)
        self._flush()

    def finished_trials(self):
        """The study's complete trials (FrozenTrial list, in trial order)."""
        from optuna.trial import TrialState

        return self.study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))

    def append(self, trials):
        """Append finished trials (from another study) and write them to the file."""
        trials = list(trials)
        if trials:
            self.study.add_trials(trials)
            self._flush()
