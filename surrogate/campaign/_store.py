"""The campaign store: one SQLite file per campaign, crash-safe and append-only.

Storage contract
----------------
1. One file per campaign, SQLite in WAL mode with ``synchronous=FULL``; every
   write is one transaction (``BEGIN IMMEDIATE`` ... ``COMMIT``).  A crash or
   ``kill -9`` at any moment loses at most the transactions in flight; SQLite's
   journal guarantees that no half-written row survives.
2. Records are never edited in place.  A design row (its parameters, its source)
   is written once.  Its status is the latest row of the append-only ``events``
   table: ``pending`` -> ``running`` -> ``done`` | ``not_converged`` | ``failed``.
   A finished result (figures, spectrum, field map) is inserted in the same
   transaction as its ``done`` / ``not_converged`` event and never changes.
3. Resume: on opening for a run, designs whose latest event is ``running`` (their
   process died) get a new ``pending`` event saying so.  ``done`` and
   ``not_converged`` designs are never solved again; ``failed`` ones only when the
   caller asks for a retry.  Design ids are unique, so a design is never
   duplicated.
4. The dataset fingerprint is a SHA-256 over the finished designs' ids,
   parameters and figures, in id order: it changes exactly when finished data
   change, and is what model bundles are tagged with.
5. A schema version in ``meta``; an older file is migrated forward in one
   transaction; a newer one, or a file that is not a store, is refused and never
   written.  Version 2 adds the search fronts (``fronts``, ``front_points``):
   append-only, one transaction per front, guarded by triggers that refuse any
   UPDATE or DELETE.  Version 3 adds the verification queue: ``queue`` (one entry
   per design, ever: a design is never queued twice), its append-only state events
   ``queue_events`` (``queued`` -> ``running`` -> ``done`` | ``failed``; a failed or
   interrupted entry goes back to ``queued``), ``verifications`` (predicted vs
   simulated, one row per entry, written with its ``done`` event) and
   ``refine_rounds``; all guarded against UPDATE and DELETE.
6. Thread safety: a :class:`Store` object belongs to one thread; several
   processes may open the same file (SQLite locking, a busy timeout of 30 s).
7. A store whose file or folder cannot be written is refused for writing up
   front, in one message; it still opens read-only (as immutable when its folder
   cannot be written and no WAL holds commits).  A write that fails (disk full,
   I/O error) rolls back its whole transaction and raises one :class:`StoreError`
   naming SQLite's reason.
"""

from __future__ import annotations

import enum
import hashlib
import json
import os
import sqlite3
import zlib
from contextlib import contextmanager
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from ..errors import StoreError

__all__ = ["Store", "Status", "Source", "QueueState", "StoreError", "SCHEMA_VERSION"]

SCHEMA_VERSION = 3
_APPLICATION_ID = 0x414E5453  # "ANTS": marks our files in the SQLite header


class Status(str, enum.Enum):
    """State of a design in a campaign."""

    PENDING = "pending"
    RUNNING = "running"
    DONE = "done"
    FAILED = "failed"
    NOT_CONVERGED = "not_converged"

    def is_finished(self):
        """True for states whose result is final (done, not_converged)."""
        return self in (Status.DONE, Status.NOT_CONVERGED)


class QueueState(str, enum.Enum):
    """State of a verification-queue entry."""

    QUEUED = "queued"
    RUNNING = "running"
    DONE = "done"
    FAILED = "failed"

    def is_finished(self):
        """True for ``done`` (a failed entry may be queued again)."""
        return self is QueueState.DONE


class Source(str, enum.Enum):
    """Where a design came from."""

    SAMPLE = "sample"
    SEARCH = "search"
    VERIFICATION = "verification"
    MANUAL = "manual"


_SCHEMA = """
CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE designs (
    design_id TEXT PRIMARY KEY,
    seq INTEGER NOT NULL UNIQUE,
    source TEXT NOT NULL CHECK (source IN ('sample', 'search', 'verification', 'manual')),
    params_json TEXT NOT NULL,
    created_utc TEXT NOT NULL
);
CREATE TABLE events (
    event_id INTEGER PRIMARY KEY AUTOINCREMENT,
    design_id TEXT NOT NULL REFERENCES designs(design_id),
    status TEXT NOT NULL CHECK (status IN ('pending', 'running', 'done', 'failed', 'not_converged')),
    at_utc TEXT NOT NULL,
    message TEXT NOT NULL DEFAULT '',
    run_id INTEGER REFERENCES runs(run_id)
);
CREATE INDEX events_by_design ON events(design_id, event_id);
CREATE TABLE results (
    design_id TEXT PRIMARY KEY REFERENCES designs(design_id),
    figures_json TEXT NOT NULL,
    solver_json TEXT NOT NULL,
    elapsed_s REAL NOT NULL,
    finished_utc TEXT NOT NULL
);
CREATE TABLE spectra (
    design_id TEXT NOT NULL REFERENCES results(design_id),
    wavelength_nm REAL NOT NULL,
    c_ext_nm2 REAL, c_abs_nm2 REAL, c_sca_nm2 REAL, enhancement REAL,
    converged INTEGER NOT NULL, n_iter INTEGER NOT NULL, residual REAL NOT NULL,
    PRIMARY KEY (design_id, wavelength_nm)
);
CREATE TABLE field_maps (
    design_id TEXT PRIMARY KEY REFERENCES results(design_id),
    wavelength_nm REAL NOT NULL,
    y_nm BLOB NOT NULL, z_nm BLOB NOT NULL, intensity BLOB NOT NULL,
    n_y INTEGER NOT NULL, n_z INTEGER NOT NULL
);
CREATE TABLE runs (
    run_id INTEGER PRIMARY KEY AUTOINCREMENT,
    command TEXT NOT NULL, code_version TEXT NOT NULL, started_utc TEXT NOT NULL,
    finished_utc TEXT, note TEXT NOT NULL DEFAULT ''
);
CREATE VIEW design_status AS
    SELECT d.design_id, d.seq, d.source, d.params_json, e.status, e.message, e.at_utc
    FROM designs d JOIN events e ON e.event_id = (
        SELECT MAX(event_id) FROM events WHERE design_id = d.design_id);
"""

# schema version -> SQL that brings the previous version to it; a new file runs them all
_MIGRATIONS: dict[int, str] = {
    2: """
CREATE TABLE fronts (
    front_id INTEGER PRIMARY KEY AUTOINCREMENT,
    created_utc TEXT NOT NULL,
    model_version INTEGER NOT NULL,
    objectives_json TEXT NOT NULL,
    reference_json TEXT NOT NULL,
    hypervolume REAL NOT NULL,
    n_trials INTEGER NOT NULL,
    n_feasible INTEGER NOT NULL,
    n_points INTEGER NOT NULL,
    study_json TEXT NOT NULL,
    settings_json TEXT NOT NULL,
    code_version TEXT NOT NULL,
    run_id INTEGER REFERENCES runs(run_id)
);
CREATE TABLE front_points (
    front_id INTEGER NOT NULL REFERENCES fronts(front_id),
    point_index INTEGER NOT NULL,
    trial_number INTEGER NOT NULL,
    params_json TEXT NOT NULL,
    objectives_json TEXT NOT NULL,
    predictions_json TEXT NOT NULL,
    flags_json TEXT NOT NULL,
    robustness_json TEXT NOT NULL,
    PRIMARY KEY (front_id, point_index)
);
CREATE TRIGGER fronts_no_update BEFORE UPDATE ON fronts
    BEGIN SELECT RAISE(ABORT, 'fronts are append-only'); END;
CREATE TRIGGER fronts_no_delete BEFORE DELETE ON fronts
    BEGIN SELECT RAISE(ABORT, 'fronts are append-only'); END;
CREATE TRIGGER front_points_no_update BEFORE UPDATE ON front_points
    BEGIN SELECT RAISE(ABORT, 'front points are append-only'); END;
CREATE TRIGGER front_points_no_delete BEFORE DELETE ON front_points
    BEGIN SELECT RAISE(ABORT, 'front points are append-only'); END;
""",
    3: """
CREATE TABLE queue (
    entry_id INTEGER PRIMARY KEY AUTOINCREMENT,
    design_id TEXT NOT NULL UNIQUE,
    params_json TEXT NOT NULL,
    reason TEXT NOT NULL,
    front_id INTEGER REFERENCES fronts(front_id),
    point_index INTEGER,
    model_version INTEGER,
    predicted_json TEXT,
    refine_round INTEGER,
    created_utc TEXT NOT NULL
);
CREATE TABLE queue_events (
    event_id INTEGER PRIMARY KEY AUTOINCREMENT,
    entry_id INTEGER NOT NULL REFERENCES queue(entry_id),
    state TEXT NOT NULL CHECK (state IN ('queued', 'running', 'done', 'failed')),
    at_utc TEXT NOT NULL,
    message TEXT NOT NULL DEFAULT '',
    run_id INTEGER REFERENCES runs(run_id)
);
CREATE INDEX queue_events_by_entry ON queue_events(entry_id, event_id);
CREATE VIEW queue_status AS
    SELECT q.*, e.state, e.message, e.at_utc
    FROM queue q JOIN queue_events e ON e.event_id = (
        SELECT MAX(event_id) FROM queue_events WHERE entry_id = q.entry_id);
CREATE TABLE verifications (
    entry_id INTEGER PRIMARY KEY REFERENCES queue(entry_id),
    design_id TEXT NOT NULL,
    spacing_nm REAL NOT NULL,
    simulated_json TEXT NOT NULL,
    comparison_json TEXT NOT NULL,
    fine_spacing_nm REAL,
    fine_json TEXT,
    finished_utc TEXT NOT NULL,
    run_id INTEGER REFERENCES runs(run_id)
);
CREATE TABLE refine_rounds (
    round_id INTEGER PRIMARY KEY AUTOINCREMENT,
    run_id INTEGER REFERENCES runs(run_id),
    round INTEGER NOT NULL,
    front_id INTEGER REFERENCES fronts(front_id),
    model_version INTEGER,
    n_verified INTEGER NOT NULL,
    hypervolume_simulated REAL,
    metrics_json TEXT NOT NULL,
    created_utc TEXT NOT NULL
);
CREATE TRIGGER queue_no_update BEFORE UPDATE ON queue
    BEGIN SELECT RAISE(ABORT, 'queue entries are append-only'); END;
CREATE TRIGGER queue_no_delete BEFORE DELETE ON queue
    BEGIN SELECT RAISE(ABORT, 'queue entries are append-only'); END;
CREATE TRIGGER queue_events_no_update BEFORE UPDATE ON queue_events
    BEGIN SELECT RAISE(ABORT, 'queue events are append-only'); END;
CREATE TRIGGER queue_events_no_delete BEFORE DELETE ON queue_events
    BEGIN SELECT RAISE(ABORT, 'queue events are append-only'); END;
CREATE TRIGGER verifications_no_update BEFORE UPDATE ON verifications
    BEGIN SELECT RAISE(ABORT, 'verifications are append-only'); END;
CREATE TRIGGER verifications_no_delete BEFORE DELETE ON verifications
    BEGIN SELECT RAISE(ABORT, 'verifications are append-only'); END;
CREATE TRIGGER refine_rounds_no_update BEFORE UPDATE ON refine_rounds
    BEGIN SELECT RAISE(ABORT, 'refine rounds are append-only'); END;
CREATE TRIGGER refine_rounds_no_delete BEFORE DELETE ON refine_rounds
    BEGIN SELECT RAISE(ABORT, 'refine rounds are append-only'); END;
""",
}


def _now():
    return datetime.now(timezone.utc).isoformat(timespec="milliseconds")


def _pack(array):
    return zlib.compress(np.ascontiguousarray(array, dtype="<f4").tobytes(), 6)


def _unpack(blob, shape):
    return np.frombuffer(zlib.decompress(blob), dtype="<f4").reshape(shape).astype(float)


class Store:
    """A campaign store (see the module docstring for the contract).

    Use :meth:`create` for a new file and :meth:`open` for an existing one.
    """

    def __init__(self, path, connection):
        self.path = Path(path)
        self._db = connection

    # -- opening -------------------------------------------------------------------------
    @classmethod
    def create(cls, path, *, spec, code_version):
        """Create a new store holding ``spec`` (a JSON-ready dict). Refuses an existing file."""
        path = Path(path)
        if path.exists():
            raise StoreError(f"store {path} already exists; open it instead of creating it")
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_name(path.name + ".creating")
        tmp.unlink(missing_ok=True)
        db = cls._connect(tmp)
        try:
            with db:
                db.executescript(_SCHEMA)
                for v in range(2, SCHEMA_VERSION + 1):
                    db.executescript(_MIGRATIONS[v])
            with db:
                db.execute(f"PRAGMA application_id = {_APPLICATION_ID}")
                db.execute(f"PRAGMA user_version = {SCHEMA_VERSION}")
                db.executemany(
                    "INSERT INTO meta(key, value) VALUES (?, ?)",
                    [
                        ("schema_version", str(SCHEMA_VERSION)),
                        ("spec_json", json.dumps(spec, sort_keys=True)),
                        ("code_version", code_version),
                        ("created_utc", _now()),
                    ],
                )
            db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
        finally:
            db.close()
        tmp.replace(path)  # the store appears complete or not at all
        for suffix in ("-wal", "-shm"):
            Path(str(tmp) + suffix).unlink(missing_ok=True)
        return cls.open(path)

    @classmethod
    def open(cls, path, *, readonly=False):
        """Open an existing store; migrate an older schema; refuse a newer one or a foreign file."""
        path = Path(path)
        if not path.is_file():
            raise StoreError(f"store {path} does not exist; check the path, or create it with "
                             "'surrogate generate CAMPAIGN.toml'")
        if not readonly and not (os.access(path, os.W_OK) and os.access(path.parent, os.W_OK)):
            raise StoreError(f"store {path} is read-only (its file or folder cannot be written); nothing was written; "
                             "copy the store and its .models folder to a writable folder")
        try:
            if readonly:
                db = sqlite3.connect(cls._readonly_uri(path), uri=True, timeout=30.0, isolation_level=None)
            else:
                db = cls._connect(path)
            app_id = db.execute("PRAGMA application_id").fetchone()[0]
            version = db.execute("PRAGMA user_version").fetchone()[0]
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"store {path} is not a readable campaign store ({exc}); it was left untouched") from None
        if app_id != _APPLICATION_ID:
            db.close()
            raise StoreError(f"store {path} is not a campaign store of this program; it was left untouched")
        if version > SCHEMA_VERSION:
            db.close()
            raise StoreError(
                f"store {path} has schema version {version}, newer than this program's {SCHEMA_VERSION}; "
                "upgrade the program; the store was left untouched"
            )
        store = cls(path, db)
        if version < SCHEMA_VERSION:
            if readonly:
                raise StoreError(f"store {path} has old schema version {version}; open it writable to migrate")
            store._migrate(version)
        try:
            db.execute("PRAGMA quick_check").fetchone()
        except sqlite3.DatabaseError as exc:
            db.close()
            raise StoreError(f"store {path} is corrupt ({exc}); it was left untouched") from None
        return store

    @staticmethod
    def _readonly_uri(path):
        # In a folder nobody can write (a read-only file system or share) SQLite cannot create the
        # WAL index it reads through; as nothing can change the file there, read it as immutable,
        # unless a WAL holds commits not yet copied into the file (immutable would not see them).
        wal = Path(f"{path}-wal")
        if not os.access(path.parent, os.W_OK) and not (wal.exists() and wal.stat().st_size > 0):
            return f"file:{path}?mode=ro&immutable=1"
        return f"file:{path}?mode=ro"

    @staticmethod
    def _connect(path):
        db = sqlite3.connect(str(path), timeout=30.0, isolation_level=None)
        db.execute("PRAGMA journal_mode=WAL")
        db.execute("PRAGMA synchronous=FULL")
        db.execute("PRAGMA foreign_keys=ON")
        db.execute("PRAGMA busy_timeout=30000")
        return db

    def _migrate(self, version):
        # One script holding BEGIN ... COMMIT: sqlite3's executescript would otherwise commit
        # an open transaction before running, so the migration is atomic only this way.
        script = "BEGIN IMMEDIATE;\n" + "".join(_MIGRATIONS[v] for v in range(version + 1, SCHEMA_VERSION + 1))
        script += (f"\nPRAGMA user_version = {SCHEMA_VERSION};\n"
                   f"UPDATE meta SET value = '{SCHEMA_VERSION}' WHERE key = 'schema_version';\nCOMMIT;\n")
        try:
            self._db.executescript(script)
        except sqlite3.DatabaseError as exc:
            if self._db.in_transaction:
                self._db.execute("ROLLBACK")
            self._db.close()
            raise StoreError(f"store {self.path} could not be migrated to schema {SCHEMA_VERSION} ({exc}); "
                             "it was left at its old version") from None

    def close(self):
        self._db.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    @contextmanager
    def _transaction(self):
        try:
            self._db.execute("BEGIN IMMEDIATE")
        except sqlite3.OperationalError as exc:
            raise StoreError(f"store {self.path} cannot be written ({exc})") from None
        try:
            yield self._db
        except BaseException:
            # SQLite has already rolled back after some errors (disk full, I/O error): a second
            # ROLLBACK would raise and hide the real cause
            if self._db.in_transaction:
                self._db.execute("ROLLBACK")
            raise
        try:
            self._db.execute("COMMIT")
        except sqlite3.DatabaseError as exc:  # disk full, read-only file system, I/O error
            try:
                self._db.execute("ROLLBACK")
            except sqlite3.DatabaseError:
                pass
            raise StoreError(f"store {self.path} could not commit ({exc}); nothing of this step was written") from None

    def _write(self, fn):
        try:
            with self._transaction() as db:
                return fn(db)
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"store {self.path} could not be written ({exc}); nothing of this step was written") from None

    # -- metadata ------------------------------------------------------------------------
    def meta(self, key):
        row = self._db.execute("SELECT value FROM meta WHERE key = ?", (key,)).fetchone()
        return None if row is None else row[0]

    @property
    def spec(self):
        return json.loads(self.meta("spec_json"))

    def set_meta_once(self, key, value):
        """Record a metadata value; refuses to change one already recorded."""
        old = self.meta(key)
        if old is not None:
            if old != value:
                raise StoreError(f"store {self.path}: {key} is already recorded and differs; records are never edited")
            return
        self._write(lambda db: db.execute("INSERT INTO meta(key, value) VALUES (?, ?)", (key, value)))

    # -- runs ----------------------------------------------------------------------------
    def start_run(self, command, code_version, note=""):
        """Log a run; reset designs left ``running`` by a dead process to ``pending``."""

        def fn(db):
            cur = db.execute(
                "INSERT INTO runs(command, code_version, started_utc, note) VALUES (?, ?, ?, ?)",
                (command, code_version, _now(), note),
            )
            run_id = cur.lastrowid
            stale = [r[0] for r in db.execute("SELECT design_id FROM design_status WHERE status = 'running'")]
            db.executemany(
                "INSERT INTO events(design_id, status, at_utc, message, run_id) VALUES (?, 'pending', ?, ?, ?)",
                [(d, _now(), "interrupted run; returned to pending", run_id) for d in stale],
            )
            return run_id

        return self._write(fn)

    def finish_run(self, run_id, note=""):
        self._write(
            lambda db: db.execute(
                "UPDATE runs SET finished_utc = ?, note = note || ? WHERE run_id = ? AND finished_utc IS NULL",
                (_now(), note, run_id),
            )
        )

    def runs(self):
        cols = ("run_id", "command", "code_version", "started_utc", "finished_utc", "note")
        return [dict(zip(cols, r)) for r in self._db.execute(f"SELECT {', '.join(cols)} FROM runs ORDER BY run_id")]

    # -- designs -------------------------------------------------------------------------
    def add_designs(self, designs, *, source=Source.SAMPLE):
        """Add designs (``(design_id, params)`` pairs) as pending, in one transaction.

        Ids already present are refused (nothing is written).
        """
        source = Source(source)
        designs = list(designs)

        def fn(db):
            seq0 = db.execute("SELECT COALESCE(MAX(seq), -1) FROM designs").fetchone()[0] + 1
            now = _now()
            try:
                db.executemany(
                    "INSERT INTO designs(design_id, seq, source, params_json, created_utc) VALUES (?, ?, ?, ?, ?)",
                    [(i, seq0 + k, source.value, json.dumps(p, sort_keys=True), now) for k, (i, p) in enumerate(designs)],
                )
            except sqlite3.IntegrityError as exc:
                raise StoreError(f"store {self.path}: design ids must be new ({exc}); nothing was added") from None
            db.executemany(
                "INSERT INTO events(design_id, status, at_utc) VALUES (?, 'pending', ?)", [(i, now) for i, _ in designs]
            )

        self._write(fn)

    def designs(self, status=None):
        """Designs with their current status, in sequence order (list of dicts)."""
        sql = "SELECT design_id, seq, source, params_json, status, message FROM design_status"
        args = ()
        if status is not None:
            statuses = [Status(s).value for s in (status if isinstance(status, (list, tuple, set)) else [status])]
            sql += f" WHERE status IN ({', '.join('?' * len(statuses))})"
            args = tuple(statuses)
        rows = self._db.execute(sql + " ORDER BY seq", args).fetchall()
        return [
            {"design_id": r[0], "seq": r[1], "source": r[2], "params": json.loads(r[3]), "status": Status(r[4]), "message": r[5]}
            for r in rows
        ]

    def counts(self):
        """Number of designs per status (every status present, zeros included)."""
        out = {s.value: 0 for s in Status}
        for status, n in self._db.execute("SELECT status, COUNT(*) FROM design_status GROUP BY status"):
            out[status] = n
        return out

    def mark(self, design_id, status, message="", run_id=None):
        """Append a status event (``running`` or ``failed``; finished states go through :meth:`record_result`)."""
        status = Status(status)
        if status.is_finished():
            raise StoreError("finished states are recorded with record_result, together with their data")
        self._write(
            lambda db: db.execute(
                "INSERT INTO events(design_id, status, at_utc, message, run_id) VALUES (?, ?, ?, ?, ?)",
                (design_id, status.value, _now(), message[:2000], run_id),
            )
        )

    def record_result(self, design_id, *, figures, solver, spectrum, field_map=None, elapsed_s, run_id=None):
        """Store one finished design in one transaction.

        Parameters
        ----------
        figures : dict
            The figures-of-merit row (must hold ``converged``).
        solver : dict
            Settings and provenance (spacing, dipoles, materials, polarizability, ...).
        spectrum : list of dict
            Rows with wavelength_nm, c_ext_nm2, c_abs_nm2, c_sca_nm2, enhancement,
            converged, n_iter, residual.
        field_map : (wavelength_nm, y_nm, z_nm, intensity) or None
            |E|^2 in the observation plane, stored zlib-compressed as float32.
        """
        status = Status.DONE if figures["converged"] else Status.NOT_CONVERGED
        now = _now()

        def fn(db):
            current = db.execute("SELECT status FROM design_status WHERE design_id = ?", (design_id,)).fetchone()
            if current is None:
                raise StoreError(f"store {self.path}: design {design_id} does not exist")
            if Status(current[0]).is_finished():
                raise StoreError(f"store {self.path}: design {design_id} is already finished; results are never rewritten")
            db.execute(
                "INSERT INTO results(design_id, figures_json, solver_json, elapsed_s, finished_utc) VALUES (?, ?, ?, ?, ?)",
                (design_id, json.dumps(figures, sort_keys=True), json.dumps(solver, sort_keys=True), float(elapsed_s), now),
            )
            db.executemany(
                "INSERT INTO spectra VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                [
                    (design_id, r["wavelength_nm"], r["c_ext_nm2"], r["c_abs_nm2"], r["c_sca_nm2"], r.get("enhancement"),
                     int(bool(r["converged"])), int(r["n_iter"]), float(r["residual"]))
                    for r in spectrum
                ],
            )
            if field_map is not None:
                wl, y, z, inten = field_map
                inten = np.asarray(inten)
                db.execute(
                    "INSERT INTO field_maps VALUES (?, ?, ?, ?, ?, ?, ?)",
                    (design_id, float(wl), _pack(y), _pack(z), _pack(inten), inten.shape[0], inten.shape[1]),
                )
            db.execute(
                "INSERT INTO events(design_id, status, at_utc, message, run_id) VALUES (?, ?, ?, ?, ?)",
                (design_id, status.value, now, "" if status is Status.DONE else "iterative solve hit its cap", run_id),
            )

        self._write(fn)
        return status

    # -- reading results -----------------------------------------------------------------
    def results(self):
        """Finished designs: dicts with design_id, params, status, figures, solver, elapsed_s."""
        rows = self._db.execute(
            "SELECT s.design_id, s.params_json, s.status, r.figures_json, r.solver_json, r.elapsed_s, s.source "
            "FROM design_status s JOIN results r USING (design_id) ORDER BY s.seq"
        ).fetchall()
        return [
            {"design_id": r[0], "params": json.loads(r[1]), "status": Status(r[2]), "figures": json.loads(r[3]),
             "solver": json.loads(r[4]), "elapsed_s": r[5], "source": r[6]}
            for r in rows
        ]

    def spectrum(self, design_id):
        cols = ("wavelength_nm", "c_ext_nm2", "c_abs_nm2", "c_sca_nm2", "enhancement", "converged", "n_iter", "residual")
        rows = self._db.execute(
            f"SELECT {', '.join(cols)} FROM spectra WHERE design_id = ? ORDER BY wavelength_nm", (design_id,)
        ).fetchall()
        return [dict(zip(cols, r)) for r in rows]

    def field_map(self, design_id):
        """``(wavelength_nm, y_nm, z_nm, intensity)`` or None."""
        r = self._db.execute(
            "SELECT wavelength_nm, y_nm, z_nm, intensity, n_y, n_z FROM field_maps WHERE design_id = ?", (design_id,)
        ).fetchone()
        if r is None:
            return None
        return r[0], _unpack(r[1], (r[4],)), _unpack(r[2], (r[5],)), _unpack(r[3], (r[4], r[5]))

    # -- search fronts (schema 2) ---------------------------------------------------------
    def record_front(self, *, model_version, objectives, reference, hypervolume, n_trials, n_feasible, study,
                     settings, points, code_version, run_id=None):
        """Store one Pareto front and its points in one transaction; return its ``front_id``.

        Parameters
        ----------
        model_version : int
            The surrogate version the front was predicted with.
        objectives : list of dict
            ``{"target", "direction", ...}`` per objective, in order.
        reference : list of float
            The hypervolume reference point (minimisation form, model space).
        hypervolume : float
        n_trials, n_feasible : int
        study : dict
            Where the optimisation study lives (file, name, sampler, seed).
        settings : dict
            Every setting of the search (window, cautious k, flag thresholds, tolerances).
        points : list of dict
            Each with ``trial_number``, ``params``, ``objectives``, ``predictions``,
            ``flags`` and ``robustness`` (JSON-ready).
        """
        points = list(points)

        def fn(db):
            cur = db.execute(
                "INSERT INTO fronts(created_utc, model_version, objectives_json, reference_json, hypervolume, n_trials, "
                "n_feasible, n_points, study_json, settings_json, code_version, run_id) "
                "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (_now(), int(model_version), json.dumps(objectives), json.dumps([float(v) for v in reference]),
                 float(hypervolume), int(n_trials), int(n_feasible), len(points), json.dumps(study, sort_keys=True),
                 json.dumps(settings, sort_keys=True), code_version, run_id),
            )
            front_id = cur.lastrowid
            db.executemany(
                "INSERT INTO front_points VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
                [(front_id, i, int(p["trial_number"]), json.dumps(p["params"]), json.dumps(p["objectives"]),
                  json.dumps(p["predictions"]), json.dumps(p["flags"]), json.dumps(p["robustness"]))
                 for i, p in enumerate(points)],
            )
            return front_id

        return self._write(fn)

    def fronts(self):
        """Recorded fronts, oldest first (list of dicts, JSON fields decoded)."""
        cols = ("front_id", "created_utc", "model_version", "objectives_json", "reference_json", "hypervolume", "n_trials",
                "n_feasible", "n_points", "study_json", "settings_json", "code_version", "run_id")
        out = []
        for r in self._db.execute(f"SELECT {', '.join(cols)} FROM fronts ORDER BY front_id"):
            row = dict(zip(cols, r))
            for k in [c for c in cols if c.endswith("_json")]:
                row[k.removesuffix("_json")] = json.loads(row.pop(k))
            out.append(row)
        return out

    def front_points(self, front_id):
        """The points of front ``front_id`` in their recorded order (list of dicts)."""
        if self._db.execute("SELECT 1 FROM fronts WHERE front_id = ?", (front_id,)).fetchone() is None:
            raise StoreError(f"store {self.path}: front {front_id} does not exist")
        rows = self._db.execute(
            "SELECT point_index, trial_number, params_json, objectives_json, predictions_json, flags_json, robustness_json "
            "FROM front_points WHERE front_id = ? ORDER BY point_index", (front_id,)
        ).fetchall()
        return [
            {"point_index": r[0], "trial_number": r[1], "params": json.loads(r[2]), "objectives": json.loads(r[3]),
             "predictions": json.loads(r[4]), "flags": json.loads(r[5]), "robustness": json.loads(r[6])}
            for r in rows
        ]

    # -- verification queue (schema 3) ----------------------------------------------------
    def enqueue(self, entries, *, run_id=None):
        """Queue designs for verification in one transaction; return ``(added, skipped)``.

        Parameters
        ----------
        entries : iterable of dict
            Each with ``design_id``, ``params``, ``reason`` and optionally ``front_id``,
            ``point_index``, ``model_version``, ``predicted`` (JSON-ready) and
            ``refine_round``.

        Returns
        -------
        added : list of int
            New entry ids (and failed entries queued again), in input order.
        skipped : list of (str, str)
            ``(design_id, why)`` for designs already queued, running or verified.
        """
        entries = list(entries)

        def fn(db):
            added, skipped, seen = [], [], set()
            now = _now()
            for e in entries:
                did = e["design_id"]
                if did in seen:
                    skipped.append((did, "listed twice in this request"))
                    continue
                seen.add(did)
                row = db.execute("SELECT entry_id, state FROM queue_status WHERE design_id = ?", (did,)).fetchone()
                if row is not None:
                    if row[1] == QueueState.FAILED.value:
                        db.execute("INSERT INTO queue_events(entry_id, state, at_utc, message, run_id) "
                                   "VALUES (?, 'queued', ?, 'queued again after a failure', ?)", (row[0], now, run_id))
                        added.append(row[0])
                    else:
                        skipped.append((did, f"already in the queue as entry {row[0]} ({row[1]})"))
                    continue
                cur = db.execute(
                    "INSERT INTO queue(design_id, params_json, reason, front_id, point_index, model_version, predicted_json, "
                    "refine_round, created_utc) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                    (did, json.dumps(e["params"], sort_keys=True), str(e["reason"]), e.get("front_id"), e.get("point_index"),
                     e.get("model_version"), None if e.get("predicted") is None else json.dumps(e["predicted"], sort_keys=True),
                     e.get("refine_round"), now),
                )
                db.execute("INSERT INTO queue_events(entry_id, state, at_utc, run_id) VALUES (?, 'queued', ?, ?)",
                           (cur.lastrowid, now, run_id))
                added.append(cur.lastrowid)
            return added, skipped

        return self._write(fn)

    def queue_entries(self, state=None):
        """Queue entries with their current state, oldest first (list of dicts)."""
        cols = ("entry_id", "design_id", "params_json", "reason", "front_id", "point_index", "model_version",
                "predicted_json", "refine_round", "created_utc", "state", "message", "at_utc")
        sql = f"SELECT {', '.join(cols)} FROM queue_status"
        args = ()
        if state is not None:
            states = [QueueState(s).value for s in (state if isinstance(state, (list, tuple, set)) else [state])]
            sql += f" WHERE state IN ({', '.join('?' * len(states))})"
            args = tuple(states)
        out = []
        for r in self._db.execute(sql + " ORDER BY entry_id", args):
            row = dict(zip(cols, r))
            row["params"] = json.loads(row.pop("params_json"))
            pj = row.pop("predicted_json")
            row["predicted"] = None if pj is None else json.loads(pj)
            row["state"] = QueueState(row["state"])
            out.append(row)
        return out

    def mark_entries(self, entry_ids, state, message="", run_id=None):
        """Append one state event per entry (``queued``, ``running`` or ``failed``) in one transaction.

        ``done`` goes through :meth:`record_verification`, together with its data.
        """
        state = QueueState(state)
        if state is QueueState.DONE:
            raise StoreError("a done entry is recorded with record_verification, together with its data")
        now = _now()
        self._write(lambda db: db.executemany(
            "INSERT INTO queue_events(entry_id, state, at_utc, message, run_id) VALUES (?, ?, ?, ?, ?)",
            [(int(i), state.value, now, message[:2000], run_id) for i in entry_ids]))

    def record_verification(self, entry_id, *, design_id, spacing_nm, simulated, comparison, fine_spacing_nm=None,
                            fine=None, run_id=None):
        """Store one verification (predicted vs simulated) with the entry's ``done`` event, in one transaction."""
        now = _now()

        def fn(db):
            row = db.execute("SELECT state FROM queue_status WHERE entry_id = ?", (entry_id,)).fetchone()
            if row is None:
                raise StoreError(f"store {self.path}: queue entry {entry_id} does not exist")
            if row[0] == QueueState.DONE.value:
                raise StoreError(f"store {self.path}: queue entry {entry_id} is already verified; results are never rewritten")
            db.execute(
                "INSERT INTO verifications VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (int(entry_id), design_id, float(spacing_nm), json.dumps(simulated, sort_keys=True),
                 json.dumps(comparison, sort_keys=True), None if fine_spacing_nm is None else float(fine_spacing_nm),
                 None if fine is None else json.dumps(fine, sort_keys=True), now, run_id),
            )
            db.execute("INSERT INTO queue_events(entry_id, state, at_utc, run_id) VALUES (?, 'done', ?, ?)",
                       (int(entry_id), now, run_id))

        self._write(fn)

    def verifications(self):
        """Finished verifications, oldest first (list of dicts, JSON fields decoded)."""
        cols = ("entry_id", "design_id", "spacing_nm", "simulated_json", "comparison_json", "fine_spacing_nm",
                "fine_json", "finished_utc", "run_id")
        out = []
        for r in self._db.execute(f"SELECT {', '.join(cols)} FROM verifications ORDER BY entry_id"):
            row = dict(zip(cols, r))
            for k in ("simulated_json", "comparison_json", "fine_json"):
                v = row.pop(k)
                row[k.removesuffix("_json")] = None if v is None else json.loads(v)
            out.append(row)
        return out

    def record_refine_round(self, *, round, front_id, model_version, n_verified, hypervolume_simulated, metrics,
                            run_id=None):
        """Append one refine round's summary; return its ``round_id``."""
        return self._write(lambda db: db.execute(
            "INSERT INTO refine_rounds(run_id, round, front_id, model_version, n_verified, hypervolume_simulated, "
            "metrics_json, created_utc) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
            (run_id, int(round), front_id, model_version, int(n_verified),
             None if hypervolume_simulated is None else float(hypervolume_simulated),
             json.dumps(metrics, sort_keys=True), _now())).lastrowid)

    def refine_rounds(self):
        """Recorded refine rounds, oldest first (list of dicts)."""
        cols = ("round_id", "run_id", "round", "front_id", "model_version", "n_verified", "hypervolume_simulated",
                "metrics_json", "created_utc")
        out = []
        for r in self._db.execute(f"SELECT {', '.join(cols)} FROM refine_rounds ORDER BY round_id"):
            row = dict(zip(cols, r))
            row["metrics"] = json.loads(row.pop("metrics_json"))
            out.append(row)
        return out

    def fingerprint(self):
        """SHA-256 (hex) over finished designs' ids, parameters and figures, in id order."""
        h = hashlib.sha256()
        for design_id, params, figures in self._db.execute(
            "SELECT d.design_id, d.params_json, r.figures_json FROM designs d JOIN results r USING (design_id) "
            "ORDER BY d.design_id"
        ):
            for part in (design_id, params, figures):
                h.update(part.encode())
                h.update(b"\x1f")
        return h.hexdigest()
