"""A small real store for report tests (analytic rod figures, no solver) and an HTML reader.

The store holds finished designs with spectra and field maps, a pending, a failed and a
not-converged design, a surrogate trained with cross-validation, a search front and
verification records written through the store's own API.  The report is read back
with :mod:`html.parser` (standard library), so the tests see what a browser would.
"""

from __future__ import annotations

import base64
from html.parser import HTMLParser

import numpy as np

from surrogate.campaign import Store
from surrogate.models import GPSurrogate, load_bundle, load_training_set, save_bundle
from tests.search.helpers import LASER_NM, ROD_BOUNDS, ROD_FIXED, rod_designs, rod_figures

WAVELENGTHS_NM = [700.0, 750.0, 800.0, 830.0, 850.0, 900.0]


def rod_result(params):
    """Figures, spectrum and field map of one rod design (closed forms shaped like the physics; not physics)."""
    fig = rod_figures(params)
    fig.update(worst_residual=1e-6, total_iterations=40)
    res = fig["resonance_nm"]
    spectrum = []
    for wl in WAVELENGTHS_NM:
        line = 1.0 / (1.0 + ((wl - res) / 60.0) ** 2)
        spectrum.append({"wavelength_nm": wl, "c_ext_nm2": 2e4 * line, "c_abs_nm2": 8e3 * line,
                         "c_sca_nm2": 1.2e4 * line, "enhancement": 1.0 + fig["enhancement_at_laser"] * line,
                         "converged": True, "n_iter": 20, "residual": 1e-6})
    y = np.linspace(-40.0, 40.0, 17)
    z = np.linspace(-30.0, 30.0, 13)
    inten = 1.0 + fig["enhancement_at_laser"] * np.exp(-(y[:, None] ** 2 + z[None, :] ** 2) / 200.0)
    return fig, spectrum, (LASER_NM, y, z, inten)


def add_results(store, designs, *, source="sample", elapsed_s=0.5):
    store.add_designs(designs, source=source)
    for k, (design_id, params) in enumerate(designs):
        fig, spectrum, field = rod_result(params)
        store.record_result(design_id, figures=fig, solver={"spacing_nm": 2.0, "method": "test closed form"},
                            spectrum=spectrum, field_map=field, elapsed_s=elapsed_s + 0.01 * k)


def make_store(path, n=45, seed=5):
    """A finished rod store with one pending, one failed and one not-converged design (no models)."""
    spec = {"name": "rod-report", "family": "rod", "bounds": ROD_BOUNDS, "fixed": ROD_FIXED, "laser_nm": LASER_NM,
            "seed": seed, "material": "gold", "medium_index": 1.0, "spacing_nm": 2.0, "wavelengths_nm": "700:900:50",
            "tol": 1e-5, "max_iter": 100, "polarizability": "ldr", "designs": n + 3}
    store = Store.create(path, spec=spec, code_version="test")
    designs = rod_designs(n + 3, seed)
    add_results(store, designs[:n])
    pending, failed, slow = designs[n:]
    store.add_designs([pending, failed, slow])
    store.mark(failed[0], "failed", "test failure")
    fig, spectrum, _ = rod_result(slow[1])
    store.record_result(slow[0], figures=dict(fig, converged=False), solver={"spacing_nm": 2.0}, spectrum=spectrum,
                        elapsed_s=2.0)
    return store


def train_cv(store, seed=0):
    """Fit and save a surrogate with 3-fold cross-validation (parity and calibration exist)."""
    data = load_training_set(store)
    model = GPSurrogate(bounds=data.bounds, targets=list(data.Y.columns), cv_folds=3, n_restarts=0, seed=seed)
    model.fit(data.X, data.Y)
    return save_bundle(model, data, store, seed=seed, plots=False)


def add_verifications(store, n=3):
    """Queue the first ``n`` front points, 'simulate' them with the closed forms, record the comparisons."""
    from surrogate.verify import compare, prediction_record, round_metrics

    front = store.fronts()[-1]
    points = store.front_points(front["front_id"])[:n]
    bundle = load_bundle(store, allow_stale=True)
    params = [dict(p["params"], **ROD_FIXED) for p in points]
    predicted = prediction_record(bundle.model, params)
    ids = [f"v-{p['point_index']:03d}" for p in points]
    added, _ = store.enqueue([{"design_id": i, "params": q, "reason": "front-top", "front_id": front["front_id"],
                               "point_index": p["point_index"], "model_version": bundle.version, "predicted": pr}
                              for i, q, p, pr in zip(ids, params, points, predicted)])
    add_results(store, list(zip(ids, params)), source="verification")
    comparisons = []
    for entry_id, design_id, q, pr in zip(added, ids, params, predicted):
        fig = rod_result(q)[0]
        comp = compare(pr, fig)
        comparisons.append(comp)
        store.record_verification(entry_id, design_id=design_id, spacing_nm=2.0, simulated=fig, comparison=comp)
    store.record_refine_round(round=1, front_id=front["front_id"], model_version=bundle.version, n_verified=len(added),
                              hypervolume_simulated=1.25, metrics={"targets": round_metrics(comparisons)})
    return ids


class ReportReader(HTMLParser):
    """Sections, figures, tables (by id, cells by column), notices and outside references of a page."""

    def __init__(self):
        super().__init__()
        self.sections, self.figures, self.tables, self.notices, self.outside = [], {}, {}, {}, []
        self._table = self._row = self._cell = self._figure = self._notice = None
        self._text = []
        self.text = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        for key in ("src", "href"):
            v = a.get(key)
            if v is not None and not (v.startswith("data:") or v.startswith("#")):
                self.outside.append(v)
        if tag == "link":
            self.outside.append(a.get("href", "link"))
        if tag == "section":
            self.sections.append(a["id"])
        elif tag == "figure":
            self._figure = a["id"]
            self.figures[a["id"]] = {"file": a.get("data-file")}
        elif tag == "img" and self._figure:
            self.figures[self._figure]["src"] = a["src"]
        elif tag == "table":
            self._table = a.get("id")
            self.tables[self._table] = []
        elif tag == "tr" and self._table:
            self._row = {}
        elif tag == "td" and self._row is not None:
            self._cell = a.get("data-column")
            self._text = []
        elif tag == "div" and "missing" in (a.get("class") or ""):
            self._notice = a.get("id")
            self._text = []

    def handle_endtag(self, tag):
        if tag == "figure":
            self._figure = None
        elif tag == "td" and self._cell is not None:
            self._row[self._cell] = "".join(self._text)
            self._cell = None
        elif tag == "tr" and self._row is not None:
            if self._row:
                self.tables[self._table].append(self._row)
            self._row = None
        elif tag == "table":
            self._table = None
        elif tag == "div" and self._notice is not None:
            self.notices[self._notice] = "".join(self._text)
            self._notice = None

    def handle_data(self, data):
        self._text.append(data)
        self.text.append(data)


def read_report(path):
    reader = ReportReader()
    reader.feed(path.read_text(encoding="utf-8"))
    reader.close()
    return reader


def png_bytes(src):
    prefix = "data:image/png;base64,"
    assert src.startswith(prefix), src[:40]
    return base64.b64decode(src[len(prefix):])
