"""``surrogate app`` and ``surrogate demo`` from the command line (real server processes)."""

import os
import signal
import socket
import subprocess
import sys
import urllib.request

import pytest

from surrogate.campaign import Store
from surrogate.models import list_versions

from .helpers import make_app_store


def start_app(args, timeout_s=90):
    """Start ``surrogate app ARGS``; return (process, URL) once it prints its address."""
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    proc = subprocess.Popen([sys.executable, "-m", "surrogate", "app", *args], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=env, start_new_session=True)
    line = proc.stdout.readline()
    if not line.startswith("app running at "):
        proc.kill()
        raise AssertionError(f"no address printed: {line!r} {proc.stderr.read()}")
    return proc, line.split()[3]


def stop_app(proc):
    proc.send_signal(signal.SIGTERM)
    try:
        proc.wait(30)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)


def _port_open(port):
    with socket.socket() as s:
        return s.connect_ex(("127.0.0.1", port)) == 0


def _free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_app_serves_the_store_on_localhost_and_stops_with_its_server(store):
    port = _free_port()
    proc, url = start_app([str(store), "--port", str(port)])
    try:
        assert url == f"http://127.0.0.1:{port}/"
        with urllib.request.urlopen(url + "_stcore/health", timeout=10) as r:
            assert r.read().decode() == "ok"
        with urllib.request.urlopen(url, timeout=10) as r:
            assert r.status == 200 and b"<html" in r.read().lower()
    finally:
        stop_app(proc)
    assert proc.returncode == 0
    assert not _port_open(port)  # the streamlit server went with it


def test_app_picks_a_free_port_and_warns_when_exposed(store):
    proc, url = start_app([str(store), "--address", "0.0.0.0"])
    try:
        assert url.startswith("http://0.0.0.0:")
    finally:
        stop_app(proc)
    assert "warning: the app listens on 0.0.0.0, reachable from other machines" in proc.stderr.read()


@pytest.mark.parametrize(("args", "message"), [
    (["--port", "0"], "error: --port must be an integer in [1, 65535]; got 0"),
    (["--address", "localhost-ish"], "error: --address must be an IP address such as 127.0.0.1 or 0.0.0.0; "
                                     "got 'localhost-ish'"),
])
def test_app_refuses_bad_options_in_one_line(store, args, message):
    out = subprocess.run([sys.executable, "-m", "surrogate", "app", str(store), *args], capture_output=True, text=True)
    assert out.returncode == 2 and out.stderr.strip() == message


def test_app_refuses_a_port_in_use(store):
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        s.listen()
        port = s.getsockname()[1]
        out = subprocess.run([sys.executable, "-m", "surrogate", "app", str(store), "--port", str(port)],
                             capture_output=True, text=True)
    assert out.returncode == 2
    assert out.stderr.strip() == (f"error: --port {port} is in use on 127.0.0.1; choose another or leave --port out "
                                  "for a free one")


def test_app_refuses_a_missing_store(tmp_path):
    out = subprocess.run([sys.executable, "-m", "surrogate", "app", str(tmp_path / "none.sqlite")],
                         capture_output=True, text=True)
    assert out.returncode == 2 and "does not exist" in out.stderr and out.stderr.count("\n") == 1


def test_demo_trains_and_searches_only_when_needed(tmp_path):
    path = make_app_store(tmp_path / "rod.sqlite", model=False, front=False)
    cmd = [sys.executable, "-m", "surrogate", "demo", "--store", str(path), "--trials", "200", "--no-app"]
    first = subprocess.run(cmd, capture_output=True, text=True, timeout=600)
    assert first.returncode == 0, first.stderr
    assert "[1/2] training the surrogates on 40 designs" in first.stdout
    assert "[2/2] searching model v0001" in first.stdout
    with Store.open(path, readonly=True) as store:
        versions = list_versions(store)
        fronts = store.fronts()
    assert [v["version"] for v in versions] == [1] and versions[0]["current"]
    assert len(fronts) == 1 and fronts[0]["model_version"] == 1 and fronts[0]["n_trials"] == 200
    again = subprocess.run(cmd, capture_output=True, text=True, timeout=600)
    assert again.returncode == 0, again.stderr
    assert "[1/2] surrogates up to date (model v0001)" in again.stdout
    assert f"[2/2] front up to date (front #{fronts[0]['front_id']}" in again.stdout
    with Store.open(path, readonly=True) as store:
        assert len(store.fronts()) == 1
