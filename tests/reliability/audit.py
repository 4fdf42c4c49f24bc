"""Read a store back with plain SQL and check the storage contract's invariants after a fault."""

from __future__ import annotations

import hashlib
import sqlite3
from pathlib import Path


def integrity(path):
    """``PRAGMA integrity_check`` of the store (a writable connection, so a WAL left by a kill is recovered)."""
    db = sqlite3.connect(str(path), timeout=30)
    try:
        return [r[0] for r in db.execute("PRAGMA integrity_check")]
    finally:
        db.close()


def audit(path):
    """Check the invariants; return a snapshot of every committed record (dicts keyed by id).

    Invariants: integrity_check ok; design ids and queue design ids unique; at most one
    verification per entry, and exactly one for every ``done`` entry (none for others);
    every finished design has exactly one results row; no results without a finished event.
    """
    assert integrity(path) == ["ok"]
    db = sqlite3.connect(str(path), timeout=30)
    try:
        q = lambda sql: db.execute(sql).fetchall()  # noqa: E731
        designs = q("SELECT design_id, source, params_json FROM designs")
        assert len({d[0] for d in designs}) == len(designs)
        entries = q("SELECT entry_id, design_id, params_json, reason, predicted_json FROM queue")
        assert len({e[1] for e in entries}) == len(entries), "a design was queued twice"
        state = dict(q("SELECT entry_id, state FROM queue_status"))
        assert set(state) == {e[0] for e in entries}
        ver = q("SELECT entry_id, design_id, spacing_nm, simulated_json, comparison_json, fine_json FROM verifications")
        per_entry = {}
        for v in ver:
            per_entry[v[0]] = per_entry.get(v[0], 0) + 1
        assert all(n == 1 for n in per_entry.values()), "an entry has two verifications"
        done = {eid for eid, s in state.items() if s == "done"}
        assert set(per_entry) == done, "done entries and verifications disagree"
        by_design = {e[0]: e[1] for e in entries}
        assert all(by_design[v[0]] == v[1] for v in ver)
        status = dict(q("SELECT design_id, status FROM design_status"))
        results = q("SELECT design_id, figures_json, solver_json FROM results")
        assert len({r[0] for r in results}) == len(results)
        finished = {d for d, s in status.items() if s in ("done", "not_converged")}
        assert {r[0] for r in results} == finished, "a result without its finished event, or the reverse"
        n_spectra = dict(q("SELECT design_id, COUNT(*) FROM spectra GROUP BY design_id"))
        assert all(n_spectra.get(d, 0) >= 1 for d in finished)
        return {
            "entries": {e[0]: e for e in entries},
            "state": state,
            "verifications": {v[0]: v for v in ver},
            "results": {r[0]: r for r in results},
            "status": status,
        }
    finally:
        db.close()


def assert_kept(before, after):
    """Every record of ``before`` is in ``after``, unchanged."""
    for key in ("entries", "verifications", "results"):
        for k, row in before[key].items():
            assert after[key].get(k) == row, f"{key} {k} changed or vanished"


def sha256(path):
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def tree_digest(folder):
    """Names, sizes and SHA-256 of every file under ``folder`` (a change anywhere shows)."""
    folder = Path(folder)
    return sorted((str(p.relative_to(folder)), p.stat().st_size, sha256(p))
                  for p in folder.rglob("*") if p.is_file())
