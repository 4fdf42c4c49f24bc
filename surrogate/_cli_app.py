"""``surrogate app`` and ``surrogate demo``: the browser app on a store, and the demo in one command."""

from __future__ import annotations

import argparse
import ipaddress
import os
import signal
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

from ._validation import check_int
from .errors import InvalidParameterError, StoreError

__all__ = ["add_app_commands", "run_app", "run_demo", "APP_FILE", "DEMO_STORE"]

#: The streamlit router (``app.py`` at the repository root, beside the package).
APP_FILE = Path(__file__).resolve().parents[1] / "app.py"
#: The shipped demo store.
DEMO_STORE = Path(__file__).resolve().parents[1] / "datasets" / "demo.sqlite"

_APP = """Start the browser app on a campaign store.

Pages: Front (the Pareto front of the newest search; select designs to see their
details and queue them for verification; download as CSV), Training data (designs
by status, coverage of each parameter, failures), Models (cross-validated metrics,
parity and calibration plots, versions, retrain in the background) and Queue
(verifications queued, running and finished, predicted vs simulated; start and
cancel). The app binds to 127.0.0.1 (this machine only) unless --address is given,
on a free port unless --port is given, and prints its address. Opening the store
upgrades an older store layout (nothing stored is changed). Stop it with Ctrl-C."""

_DEMO = """Run the demo: the browser app on the shipped demo store (datasets/demo.sqlite).

Before starting the app it trains the surrogates if the store has no model or only
one trained before its newest results, and runs the search (--trials trials) if the
store has no front of the newest model, printing each step. Then it starts the app
as 'surrogate app' does and prints its address."""


def add_app_commands(sub, units):
    """Register ``app`` and ``demo`` on an argparse subparsers object."""
    a = sub.add_parser("app", help="the browser app on a store: front, training data, models, queue",
                       description=_APP, epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    a.add_argument("store", metavar="STORE", nargs="?", help="the campaign store (.sqlite); without it the app asks")
    _server_options(a)
    a.set_defaults(run=run_app)
    d = sub.add_parser("demo", help="train and search the demo store if needed, then start the app on it",
                       description=_DEMO, epilog=units, formatter_class=argparse.RawDescriptionHelpFormatter)
    d.add_argument("--store", default=str(DEMO_STORE), metavar="STORE",
                   help="the store to run the demo on (default: the shipped datasets/demo.sqlite)")
    d.add_argument("--trials", type=int, default=2000, metavar="N", help="search trials when a search is needed "
                   "(default 2000)")
    d.add_argument("--no-app", action="store_true", help="only bring the models and the front up to date")
    _server_options(d)
    d.set_defaults(run=run_demo)


def _server_options(p):
    p.add_argument("--port", type=int, default=None, metavar="N", help="port (default: a free one)")
    p.add_argument("--address", default=None, metavar="ADDR",
                   help="address to bind (default 127.0.0.1; another address lets other machines reach the app)")


def _check_address(address):
    if address is None:
        return "127.0.0.1", False
    try:
        ip = ipaddress.ip_address(address)
    except ValueError:
        raise InvalidParameterError(f"--address must be an IP address such as 127.0.0.1 or 0.0.0.0; got {address!r}") from None
    return str(ip), not ip.is_loopback


def _free_port(address):
    with socket.socket(socket.AF_INET6 if ":" in address else socket.AF_INET) as s:
        s.bind((address, 0))
        return s.getsockname()[1]


def _check_port_free(address, port):
    with socket.socket(socket.AF_INET6 if ":" in address else socket.AF_INET) as s:
        try:
            s.bind((address, port))
        except OSError:
            raise InvalidParameterError(f"--port {port} is in use on {address}; choose another or leave --port out "
                                        "for a free one") from None


def _open_store_for_app(path):
    from .campaign import Store

    path = Path(path)
    Store.open(path).close()  # refuses a missing or foreign file; migrates an older layout
    return path.resolve()


def _wait_until_up(proc, url, timeout_s=90.0):
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise StoreError(f"the app server stopped at start-up with exit code {proc.returncode}; "
                             "see the messages above")
        try:
            with urllib.request.urlopen(url + "_stcore/health", timeout=2) as r:
                if r.status == 200:
                    return
        except OSError:
            pass
        time.sleep(0.2)
    proc.terminate()
    raise StoreError(f"the app server did not answer at {url} within {timeout_s:.0f} s")


def _interrupt(signum, frame):
    raise KeyboardInterrupt


def serve(store, *, port=None, address=None, out=sys.stdout):
    """Start streamlit on ``app.py``, print the URL, wait until it stops; return the exit code."""
    if not APP_FILE.is_file():
        raise StoreError(f"the app file {APP_FILE} is missing; install the package from the repository "
                         "(pip install -e .)")
    address, exposed = _check_address(address)
    if port is None:
        port = _free_port(address)
    else:
        port = check_int("--port", port, low=1, high=65535)
        _check_port_free(address, port)
    env = dict(os.environ)
    env.pop("SURROGATE_STORE", None)
    if store is not None:
        env["SURROGATE_STORE"] = str(store)
    cmd = [sys.executable, "-m", "streamlit", "run", str(APP_FILE), "--server.address", address,
           "--server.port", str(port), "--server.headless", "true", "--browser.gatherUsageStats", "false",
           "--server.fileWatcherType", "none", "--global.developmentMode", "false", "--client.toolbarMode", "viewer"]
    if exposed:
        sys.stderr.write(f"warning: the app listens on {address}, reachable from other machines; it has no login "
                         "and can write the store\n")
    proc = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL)
    previous = signal.signal(signal.SIGTERM, _interrupt)  # a terminated app stops its server too
    host = f"[{address}]" if ":" in address else address
    url = f"http://{host}:{port}/"
    try:
        _wait_until_up(proc, url)
        out.write(f"app running at {url}" + (f" on store {store}" if store else "") + " (Ctrl-C stops it)\n")
        out.flush()
        return proc.wait()
    except KeyboardInterrupt:
        return 0
    finally:
        signal.signal(signal.SIGTERM, previous)
        if proc.poll() is None:
            proc.terminate()
            try:
                proc.wait(10)
            except subprocess.TimeoutExpired:
                proc.kill()


def run_app(args):
    store = _open_store_for_app(args.store) if args.store else None
    return serve(store, port=args.port, address=args.address)


def _model_is_current(path):
    from .campaign import Store
    from .models import ModelBundleError, load_bundle

    with Store.open(path, readonly=True) as store:
        try:
            return load_bundle(store, allow_stale=False).version
        except ModelBundleError:
            return None


def prepare_demo(path, *, trials, out=sys.stdout):
    """Train and search ``path`` when its model or front is missing or stale, reporting each step."""
    from . import __version__
    from .campaign import Store
    from .models import train_store
    from .search import search_store

    path = _open_store_for_app(path)
    with Store.open(path, readonly=True) as store:
        n = store.counts()["done"]
        seed = store.spec.get("seed")
    version = _model_is_current(path)
    if version is None:
        out.write(f"[1/2] training the surrogates on {n} designs (a new model version; about half a minute) ...\n")
        out.flush()
        t0 = time.perf_counter()
        card = train_store(path)
        version = card["version"]
        out.write(f"      model v{version:04d} trained in {time.perf_counter() - t0:.1f} s\n")
    else:
        out.write(f"[1/2] surrogates up to date (model v{version:04d})\n")
    with Store.open(path, readonly=True) as store:
        fronts = store.fronts()
    if not fronts or fronts[-1]["model_version"] != version:
        out.write(f"[2/2] searching model v{version:04d} for the trade-off front ({trials} trials) ...\n")
        out.flush()
        t0 = time.perf_counter()
        res = search_store(path, n_trials=trials, seed=seed if isinstance(seed, int) else None,
                           code_version=__version__)
        out.write(f"      front #{res.front_id}: {len(res.front)} designs in {time.perf_counter() - t0:.1f} s\n")
    else:
        out.write(f"[2/2] front up to date (front #{fronts[-1]['front_id']}, {fronts[-1]['n_points']} designs)\n")
    out.flush()
    return path


def run_demo(args):
    trials = check_int("--trials", args.trials, low=1, high=10_000_000)
    if not Path(args.store).is_file():
        raise StoreError(f"demo store {args.store} does not exist; run the demo from a clone of the repository")
    path = prepare_demo(args.store, trials=trials)
    if args.no_app:
        return 0
    return serve(path, port=args.port, address=args.address)
