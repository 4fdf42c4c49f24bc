"""A corrupt or truncated store, a store of a newer schema, a model bundle that does not match its store:
every command refuses in one line (exit 2) and never writes the file (SHA-256 unchanged).

Store.open's own refusals are unit-tested in tests/campaign/test_store.py and the bundle checks in
tests/models/test_bundle.py; these tests run them through the command line.
"""

import json
import shutil
import sqlite3

import pytest

from surrogate.campaign import SCHEMA_VERSION
from surrogate.cli import main
from tests.verify.synthetic import make_store

from .audit import sha256, tree_digest

COMMANDS = [["status"], ["train", "--no-plots"], ["search", "--trials", "20"], ["queue", "--front-top", "1"],
            ["queue"], ["verify", "--workers", "1"]]


def _run_all(capsys, store):
    out = {}
    for cmd in COMMANDS:
        code = main([cmd[0], str(store), *cmd[1:]])
        o, e = capsys.readouterr()
        out[" ".join(cmd)] = (code, o, e)
    return out


def _assert_refused(runs, fragment):
    for cmd, (code, out, err) in runs.items():
        assert code == 2, (cmd, out, err)
        assert err.startswith("error: ") and err.count("\n") == 1, (cmd, err)
        assert fragment in err, (cmd, err)


def _corrupt_middle(path):
    data = bytearray(path.read_bytes())
    page = 4096
    for i in range(page * 2, len(data) - page, page * 3):  # garble every third page after the header pages
        data[i:i + 64] = b"\xde\xad\xbe\xef" * 16
    path.write_bytes(bytes(data))


def _checkpointed(store_copy):
    # fold the WAL into the file, so that the file alone is the store
    db = sqlite3.connect(store_copy)
    db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    db.close()
    return store_copy


@pytest.mark.parametrize("damage", ["garbled pages", "truncated", "zeroed header"])
def test_a_damaged_store_is_refused_by_every_command_and_not_written(store_copy, capsys, damage):
    path = _checkpointed(store_copy)
    if damage == "garbled pages":
        _corrupt_middle(path)
        fragment = f"store {path} is "
    elif damage == "truncated":
        data = path.read_bytes()
        path.write_bytes(data[: len(data) // 2])
        fragment = f"store {path} is "
    else:
        data = bytearray(path.read_bytes())
        data[:100] = bytes(100)
        path.write_bytes(bytes(data))
        fragment = f"store {path} is not a readable campaign store"
    folder = _files(path.parent)
    runs = _run_all(capsys, path)
    _assert_refused(runs, fragment)
    for cmd, (_, _, err) in runs.items():
        assert "it was left untouched" in err, (cmd, err)
    assert _files(path.parent) == folder  # the store and its models unchanged


def _files(folder):
    """:func:`tree_digest` without SQLite's side files, after checking they hold no write (an empty WAL)."""
    rows = tree_digest(folder)
    for name, size, _ in rows:
        if name.endswith("-wal"):
            assert size == 0, f"{name} holds {size} bytes: something was written"
    return [r for r in rows if not r[0].endswith(("-wal", "-shm"))]


def test_a_store_of_a_newer_schema_is_refused_by_every_command(store_copy, capsys):
    path = _checkpointed(store_copy)
    db = sqlite3.connect(path)
    db.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    db.commit()
    db.close()
    folder = tree_digest(path.parent)
    runs = _run_all(capsys, path)
    _assert_refused(runs, f"has schema version {SCHEMA_VERSION + 1}, newer than this program's {SCHEMA_VERSION}; "
                          "upgrade the program; the store was left untouched")
    assert tree_digest(path.parent) == folder


def _tamper(store_copy):
    model = store_copy.with_name("rod.models") / "v0001" / "model.skops"
    data = bytearray(model.read_bytes())
    data[len(data) // 2] ^= 0x01
    model.write_bytes(bytes(data))
    return model


def test_a_tampered_model_file_is_refused_by_queue_and_search(store_copy, capsys):
    model = _tamper(store_copy)
    digest, folder = sha256(store_copy), tree_digest(store_copy.parent)
    for argv in (["queue", str(store_copy), "--front-top", "2"], ["search", str(store_copy), "--trials", "20"]):
        assert main(argv) == 2, argv
        err = capsys.readouterr().err
        assert err == (f"error: model file {model} was modified after training (its SHA-256 differs from the "
                       "card's); it was not loaded; train a new version\n"), argv
    assert sha256(store_copy) == digest and tree_digest(store_copy.parent) == folder
    # nothing was queued without its prediction
    assert main(["queue", str(store_copy), "--json"]) == 0
    assert json.loads(capsys.readouterr().out) == []


def test_a_bundle_copied_from_another_store_is_refused_by_queue_and_search(store_copy, tmp_path, capsys):
    other = tmp_path / "other" / "rod.sqlite"
    make_store(other, seed=9).close()
    shutil.copytree(store_copy.with_name("rod.models"), other.with_name("rod.models"))
    # the front of the original store is not in the other one: queue a design of the other store by id
    db = sqlite3.connect(other)
    design = db.execute("SELECT design_id FROM designs LIMIT 1").fetchone()[0]
    db.close()
    folder = tree_digest(other.parent)
    for argv in (["queue", str(other), "--design", design], ["search", str(other), "--trials", "20"]):
        assert main(argv) == 2, argv
        err = capsys.readouterr().err
        assert err.startswith("error: model v0001 was trained on other data than store "
                              f"{other} holds") and err.count("\n") == 1, argv
    assert tree_digest(other.parent) == folder
