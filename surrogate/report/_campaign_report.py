"""The campaign report: one self-contained HTML file plus its PNG figures and CSV tables.

:func:`write_campaign_report` opens the store read-only (it never writes to it),
reads everything with :func:`read_campaign`, draws the figures, writes the tables
and assembles ``report.html`` in the output folder.  Sections the store cannot fill
yet (no models, no front, no verifications) say what is missing and which command
produces it.
"""

from __future__ import annotations

import html
import math
from dataclasses import dataclass
from pathlib import Path

from ..errors import InvalidParameterError
from . import _campaign_figures as cf
from . import _tables as tb
from ._figures import draw_field_map, draw_spectrum
from ._gather import read_campaign
from ._html import HtmlPage, figure_html, notice_html, paragraph, table_html

__all__ = ["ReportOutcome", "SECTIONS", "report_folder", "write_campaign_report", "CAUTIONS"]

#: Section ids and headings, in order.
SECTIONS = {
    "campaign": "The campaign",
    "coverage": "Design-space coverage",
    "surrogates": "Surrogate quality",
    "front": "Pareto front and top candidates",
    "verification": "Verification",
    "best-design": "Best design: field map and spectrum",
    "cautions": "Cautions",
}

CAUTIONS = (
    "Surrogate predictions are statistical models fitted to a finite set of simulations. Every number "
    "marked as predicted (medians, intervals, robustness percentiles, the front itself) must be confirmed "
    "by a full simulation of that design before it is used; flagged designs especially.",
    "The simulations use an idealised geometry, bulk optical constants and a discretised lattice; "
    "fabricated antennas differ (grain size, surface roughness, adhesion layers, rounding).",
    "Laser safety: when fabricated antennas are tested with lasers, follow your local laser-safety rules "
    "and the instructions of your laser safety officer; near-infrared beams are invisible, and focused beams "
    "heat samples and can damage eyes and skin.",
)

DEFAULT_TOP = 10
_TRAINING_WINDOW_NM = 15.0


@dataclass(frozen=True)
class ReportOutcome:
    """What :func:`write_campaign_report` wrote.

    Attributes
    ----------
    html_path : Path
        ``report.html``.
    folder : Path
    figures : dict
        Figure id -> PNG path.
    tables : dict
        Table id -> CSV path.
    missing : dict
        Part -> what is missing and what to run.
    size_bytes : int
        Size of ``report.html`` [bytes].
    """

    html_path: Path
    folder: Path
    figures: dict
    tables: dict
    missing: dict
    size_bytes: int


def report_folder(store_path, out=None, *, reports_root="reports", allow_outside=False):
    """The output folder: ``out``, or ``<reports_root>/<store stem>``.

    Parameters
    ----------
    store_path : str or Path
    out : str or Path, optional
        Requested folder.
    reports_root : str or Path, default "reports"
        The project's reports folder.
    allow_outside : bool, default False
        Accept an ``out`` outside ``reports_root`` (the command line's explicit --out).

    Raises
    ------
    InvalidParameterError
        ``out`` outside ``reports_root`` without ``allow_outside``, or an existing file.
    """
    root = Path(reports_root)
    folder = root / Path(store_path).stem if out is None else Path(out)
    if not allow_outside:
        inside = folder.resolve() == root.resolve() or root.resolve() in folder.resolve().parents
        if not inside:
            raise InvalidParameterError(f"report folder must be inside {root.resolve()}; got {folder}")
    if folder.exists() and not folder.is_dir():
        raise InvalidParameterError(f"report folder must be a folder; got the existing file {folder}")
    return folder


class _Writer:
    """Writes figures and CSVs into the folder and remembers them."""

    def __init__(self, folder):
        self.folder = folder
        self.figures, self.tables = {}, {}

    def png(self, name):
        path = self.folder / f"{name}.png"
        self.figures[name] = path
        return path

    def csv(self, frame, name):
        path = self.folder / f"{name}.csv"
        tmp = path.with_name(path.name + ".partial")
        frame.to_csv(tmp, index=False)
        tmp.replace(path)
        self.tables[name] = path
        return path

    def table(self, frame, name, caption, digits=6):
        self.csv(frame, name)
        return table_html(frame, table_id=name, caption=f"{caption} (file {name}.csv)", digits=digits)

    def figure(self, name, caption):
        return figure_html(self.figures[name], figure_id=name, caption=caption)


def _campaign_section(w, rec, report_version):
    spec = rec.spec
    parts = [paragraph(f"Campaign {spec.get('name')!s}: family {spec.get('family')}, material {spec.get('material')}, "
                       f"laser {spec.get('laser_nm')} nm, store {rec.store_path}.")]
    parts += ["<h3>Campaign file (as stored)</h3>", w.table(tb.spec_table(spec), "campaign_spec", "campaign settings")]
    if spec.get("material"):
        frame, desc, note = tb.material_table(spec)
        parts += ["<h3>Material</h3>",
                  paragraph(f"{desc['name']} ({desc['kind']}); source: {desc['source']}; interpolation: "
                            f"{desc['interpolation']}; tabulated range {desc['wavelength_min_nm']:g} to "
                            f"{desc['wavelength_max_nm']:g} nm. Wavelengths below: {note}. "
                            "eps = (n + i k)^2 [-], time dependence exp(-i w t)."),
                  w.table(frame, "material_nk", "optical constants on the campaign wavelengths")]
    else:
        parts.append(notice_html("the campaign names no material, so no material table", notice_id="missing-material"))
    parts += ["<h3>Solver settings</h3>", w.table(tb.solver_table(spec, rec.results), "solver_settings",
                                                   "solver settings: the campaign's, then the finished designs' records")]
    parts += ["<h3>Designs by status</h3>", w.table(tb.counts_table(rec.counts), "status_counts", "designs per status")]
    parts += ["<h3>Compute time</h3>", w.table(tb.compute_table(rec.results), "compute_time",
                                                "solver time of the finished designs"),
              w.table(tb.runs_table(rec.runs), "runs", "logged runs")]
    parts += ["<h3>Provenance</h3>", w.table(tb.provenance_table(rec, report_version=report_version), "provenance",
                                              "code versions and dataset fingerprint")]
    return parts


def _coverage_section(w, rec, designs):
    bounds = rec.spec.get("bounds") or {}
    if designs.empty or not bounds:
        return [notice_html("no designs (or no varied parameters) in the store; run 'surrogate generate' first",
                            notice_id="missing-designs")]
    cf.draw_histograms(designs, bounds, w.png("coverage_histograms"))
    cf.draw_pair_plot(designs, bounds, w.png("coverage_pairs"))
    w.csv(designs, "designs")
    return [paragraph(f"{len(designs)} designs over {len(bounds)} varied parameters; every design with its status, "
                      "parameters and solver values is in designs.csv."),
            w.figure("coverage_histograms", "designs per bin of each varied parameter"),
            w.figure("coverage_pairs", "pairs of varied parameters; marker = status")]


def _surrogate_section(w, rec):
    if rec.bundle is None:
        return [notice_html(rec.notes["models"], notice_id="missing-models")]
    b = rec.bundle
    card = b.card
    parts = [paragraph(f"Model version v{b.version:04d}, created {card['created_utc']} by surrogate "
                       f"{card['code_version']}; {card['model']['kernel']}; {card['model']['cv_folds']}-fold "
                       f"cross-validation; seed {card['model']['seed']}; trained on {card['training']['n_designs']} "
                       f"designs (fingerprint {card['store']['fingerprint']})"
                       + ("; STALE: the store has results the model was not trained on." if b.stale else ".")),
             w.table(tb.cv_table(card), "cv_metrics",
                     "cross-validated accuracy per target (R² in model space and physical space, RMSE and MAE "
                     "of the median in the unit column, interval coverage [-], MSLL [-])")]
    if b.model.cv_predictions_:
        from ..models import draw_calibration, draw_parity

        draw_parity(b.model, w.png("parity"))
        draw_calibration(b.model, w.png("calibration"))
        parts += [w.figure("parity", "cross-validated parity per target"),
                  w.figure("calibration", "calibration of the cross-validated intervals per target")]
    else:
        parts.append(notice_html(f"model v{b.version:04d} was trained without cross-validation, so there are no "
                                 f"parity or calibration plots; run 'surrogate train {rec.store_path}' with folds",
                                 notice_id="missing-cv"))
    parts.append(w.table(tb.versions_table(rec.versions), "model_versions", "every model version of this store"))
    return parts


def _front_section(w, rec, designs, top):
    if rec.front is None:
        return [notice_html(rec.notes["front"], notice_id="missing-front")]
    f = rec.front
    target, direction = tb.primary_objective(f)
    points = tb.front_points_table(rec.front_points)
    w.csv(points, "front_points")
    training = designs[designs["status"] == "done"]
    cf.draw_front(points, f["objectives"], w.png("pareto_front"), training=training)
    n_flagged = int((points["n_flags"] > 0).sum())
    parts = [w.table(tb.fronts_table(rec.fronts), "fronts", "search fronts in the store (the newest is shown)"),
             paragraph(f"Front {f['front_id']}: {f['n_points']} designs ({n_flagged} flagged) from {f['n_trials']} "
                       f"trials ({f['n_feasible']} feasible) on model v{f['model_version']:04d}; hypervolume "
                       f"{f['hypervolume']:.6g} in model space, minimisation form. Every point is in front_points.csv "
                       "with its flag reasons."),
             w.figure("pareto_front", "Pareto front: predicted medians with 95 % intervals; open markers are flagged"),
             w.table(tb.top_candidates(f, rec.front_points, top), "top_candidates",
                     f"top {top} candidates: fewest trust flags first, then {direction} {target} (predicted median); "
                     "intervals are central 95 %; robustness percentiles from the Monte Carlo under the length "
                     "tolerance")]
    reasons = [f"<li>point {p['point_index']}: {html.escape(fl['flag'])}: {html.escape(fl['reason'])}</li>"
               for p in rec.front_points for fl in p["flags"]]
    if reasons:
        parts += ["<h3>Flag reasons</h3>", f"<ul id=\"flag_reasons\">{''.join(reasons)}</ul>"]
    return parts


def _verification_section(w, rec, targets):
    if not rec.verifications:
        parts = [notice_html(rec.notes["verification"], notice_id="missing-verification")]
        if rec.queue:
            parts.append(paragraph(_queue_text(rec.queue)))
        return parts
    table = tb.verification_table(rec.verifications, rec.queue)
    cf.draw_verification(table, targets, w.png("verification"))
    parts = [paragraph(_queue_text(rec.queue or []) + " Errors in sigma units: z = (T(simulated) - mu) / sigma with T "
                       "the model's transform (log for log targets)."),
             w.table(table, "verifications", "predicted against simulated per verified design"),
             w.figure("verification", "predicted median and 95 % interval against the simulated value")]
    if rec.refine_rounds:
        rt = tb.refine_table(rec.refine_rounds)
        cf.draw_refine_rounds(rt, targets, w.png("refine_rounds"))
        parts += [w.table(rt, "refine_rounds", "per refine round: simulated hypervolume and surrogate error on the "
                          "newly simulated designs"),
                  w.figure("refine_rounds", "hypervolume and surrogate error per refine round")]
    else:
        parts.append(notice_html(f"no refine rounds recorded; run 'surrogate refine {rec.store_path} --rounds R "
                                 "--batch K'", notice_id="missing-refine"))
    return parts


def _queue_text(queue):
    states = {}
    for q in queue:
        s = getattr(q["state"], "value", q["state"])
        states[s] = states.get(s, 0) + 1
    return "Verification queue: " + (", ".join(f"{n} {s}" for s, n in sorted(states.items())) or "empty") + "."


def _best(rec):
    """``(kind, design_id, value, rule)`` of the design whose field map is shown, or None."""
    target, direction = tb.primary_objective(rec.front)
    better = max if direction == "maximize" else min
    verified = [(v["simulated"][target], v["design_id"]) for v in rec.verifications
                if isinstance(v["simulated"].get(target), (int, float))]
    if verified:
        value, did = better(verified)
        return "verified", did, value, f"the verified design with the {direction[:3]}imum simulated {target}"
    laser = rec.spec.get("laser_nm")
    window = (rec.front or {}).get("settings", {}).get("window_nm") or _TRAINING_WINDOW_NM
    rows = [r for r in rec.results if getattr(r["status"], "value", r["status"]) == "done"
            and isinstance(r["figures"].get(target), (int, float))]
    in_window = [r for r in rows if laser is not None and r["figures"].get("resonance_resolved", True)
                 and abs(r["figures"].get("resonance_nm", math.inf) - laser) <= window]
    pool, rule = (in_window, f"resonance within {window:g} nm of the laser") if in_window else (rows, "any resonance")
    if not pool:
        return None
    r = better(pool, key=lambda r: r["figures"][target])
    return ("training", r["design_id"], r["figures"][target],
            f"the simulated training design ({rule}) with the {direction[:3]}imum {target}")


def _best_section(w, rec, best, spectrum, field):
    parts = []
    if not rec.verifications:
        parts.append(notice_html("no verified design yet, so there is no best verified design to show (see the "
                                 "verification section for the commands that produce one)",
                                 notice_id="missing-best-verified"))
    if best is None:
        parts.append(notice_html("no finished design to show", notice_id="missing-best"))
        return parts
    kind, did, value, rule = best
    label = "Best verified design" if kind == "verified" else "Best simulated TRAINING design (not a verified candidate)"
    parts.append(f'<p id="best-design-label"><strong>{html.escape(label)}</strong>: {html.escape(did)}, '
                 f"{html.escape(rule)} = {value:.6g}.</p>")
    if field is not None:
        wl, y, z, inten = field
        draw_field_map(y, z, inten, w.png("best_field_map"), title=f"{did} ({kind})", wavelength_nm=wl)
        parts.append(w.figure("best_field_map", f"|E|²/|E0|² in the observation plane of {did} ({kind})"))
    else:
        parts.append(notice_html(f"the store holds no field map for design {did}", notice_id="missing-field-map"))
    if spectrum:
        import pandas as pd

        frame = pd.DataFrame(spectrum)
        w.csv(frame, "best_spectrum")
        wl = frame["wavelength_nm"].to_numpy(float)
        laser = rec.spec.get("laser_nm")
        draw_spectrum(wl, {"extinction c_ext [nm²]": frame["c_ext_nm2"], "absorption c_abs [nm²]": frame["c_abs_nm2"],
                           "scattering c_sca [nm²]": frame["c_sca_nm2"]}, w.png("best_cross_sections"),
                      title=f"cross sections [nm²] of {did} ({kind})", laser_nm=laser)
        draw_spectrum(wl, {"hotspot enhancement |E|²/|E0|² [-]": frame["enhancement"]}, w.png("best_enhancement"),
                      title=f"hotspot enhancement [-] of {did} ({kind})", laser_nm=laser)
        parts += [w.figure("best_cross_sections", f"cross sections of {did} against wavelength (data best_spectrum.csv)"),
                  w.figure("best_enhancement", f"hotspot enhancement of {did} against wavelength")]
    else:
        parts.append(notice_html(f"the store holds no spectrum for design {did}", notice_id="missing-spectrum"))
    return parts


def write_campaign_report(store_path, out=None, *, reports_root="reports", allow_outside=False, top=DEFAULT_TOP):
    """Write the campaign report of a store.

    Parameters
    ----------
    store_path : str or Path
        The campaign store; opened read-only.
    out : str or Path, optional
        Output folder; default ``<reports_root>/<store stem>``.
    reports_root : str or Path, default "reports"
        The project's reports folder; ``out`` must lie inside it unless ``allow_outside``.
    allow_outside : bool, default False
        Accept any ``out`` (only for a folder the user typed on the command line).
    top : int, default 10
        Rows of the top-candidates table.

    Returns
    -------
    ReportOutcome
    """
    from .. import __version__
    from .._validation import check_int
    from ..campaign import Store
    from ..models import DEFAULT_TARGETS

    check_int("top", top, low=1, high=10_000)
    folder = report_folder(store_path, out, reports_root=reports_root, allow_outside=allow_outside)
    with Store.open(store_path, readonly=True) as store:
        rec = read_campaign(store)
        best = _best(rec)
        spectrum = store.spectrum(best[1]) if best else []
        field = store.field_map(best[1]) if best else None
    folder.mkdir(parents=True, exist_ok=True)
    w = _Writer(folder)
    targets = list(rec.bundle.model.targets_) if rec.bundle is not None else list(DEFAULT_TARGETS)
    designs = tb.designs_table(rec.designs, rec.results, targets)
    page = HtmlPage(f"Campaign report: {rec.spec.get('name', Path(store_path).stem)}")
    builders = {
        "campaign": lambda: _campaign_section(w, rec, __version__),
        "coverage": lambda: _coverage_section(w, rec, designs),
        "surrogates": lambda: _surrogate_section(w, rec),
        "front": lambda: _front_section(w, rec, designs, top),
        "verification": lambda: _verification_section(w, rec, targets),
        "best-design": lambda: _best_section(w, rec, best, spectrum, field),
        "cautions": lambda: [paragraph(c, cls="caution") for c in CAUTIONS],
    }
    for sid, heading in SECTIONS.items():
        page.add_section(sid, heading, builders[sid]())
    missing = "".join(f"<li>{html.escape(k)}: {html.escape(v)}</li>" for k, v in rec.notes.items())
    intro = paragraph(f"Store {rec.store_path}, dataset fingerprint {rec.fingerprint}; report by surrogate {__version__}. "
                      "Figures are embedded; the PNG files and CSV tables beside this file hold the same data.")
    if missing:
        intro += f'<div class="missing" id="missing-summary"><strong>Not yet in this store:</strong><ul>{missing}</ul></div>'
    path = folder / "report.html"
    tmp = path.with_name(path.name + ".partial")
    tmp.write_text(page.render(intro=intro), encoding="utf-8")
    tmp.replace(path)
    return ReportOutcome(html_path=path, folder=folder, figures=dict(w.figures), tables=dict(w.tables),
                         missing=dict(rec.notes), size_bytes=path.stat().st_size)
