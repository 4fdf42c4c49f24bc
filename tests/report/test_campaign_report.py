"""The campaign report: parses as HTML, holds every section and figure, and its numbers are the store's.

Every expected value is read back from the store (or its model card) in the test, never
written down here.  Numbers in the HTML carry 6 significant digits, so they are compared
with a relative tolerance of 1e-5 (just above the rounding); the CSV tables carry full
precision and are compared to 1e-12.
"""

import hashlib

import numpy as np
import pandas as pd
import pytest

from surrogate.campaign import Store
from surrogate.catalog import get_material
from surrogate.errors import InvalidParameterError, SurrogateError
from surrogate.models import load_bundle
from surrogate.report import CAUTIONS, SECTIONS, report_folder, write_campaign_report

from .helpers import png_bytes, read_report

HTML_RTOL = 1e-5  # 6 significant digits in the page
CSV_RTOL = 1e-12


def _num(text):
    return float(text)


@pytest.fixture(scope="module")
def full_report(full_store, tmp_path_factory):
    out = write_campaign_report(full_store, tmp_path_factory.mktemp("out") / "full", allow_outside=True)
    return out, read_report(out.html_path)


def _sha(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_report_has_every_section_and_no_outside_reference(full_report):
    out, page = full_report
    assert page.sections == list(SECTIONS)
    assert page.outside == []
    assert out.missing == {}
    assert page.notices == {}
    text = " ".join(page.text)
    for caution in CAUTIONS:
        assert caution in text
    assert "laser safety officer" in text


def test_every_figure_is_embedded_and_equals_the_png_beside_it(full_report):
    out, page = full_report
    expected = {"coverage_histograms", "coverage_pairs", "parity", "calibration", "pareto_front", "verification",
                "refine_rounds", "best_field_map", "best_cross_sections", "best_enhancement"}
    assert set(page.figures) == expected == set(out.figures)
    for fid, fig in page.figures.items():
        data = png_bytes(fig["src"])
        assert data[:8] == b"\x89PNG\r\n\x1a\n"
        assert data == (out.folder / fig["file"]).read_bytes(), fid


def test_every_table_has_its_csv_beside_it(full_report):
    out, page = full_report
    for tid, rows in page.tables.items():
        csv = pd.read_csv(out.folder / f"{tid}.csv")
        assert len(csv) == len(rows), tid


def test_campaign_numbers_match_the_store(full_store, full_report):
    out, page = full_report
    with Store.open(full_store, readonly=True) as store:
        counts, results, spec = store.counts(), store.results(), store.spec
        fingerprint, code_version = store.fingerprint(), store.meta("code_version")
    shown = {r["status"]: int(r["n_designs"]) for r in page.tables["status_counts"]}
    assert shown == {**counts, "total": sum(counts.values())}
    assert counts["pending"] == counts["failed"] == counts["not_converged"] == 1  # the test store has each status
    prov = {r["item"]: r["value"] for r in page.tables["provenance"]}
    assert prov["dataset fingerprint (SHA-256)"] == fingerprint
    assert prov["store code_version"] == code_version
    compute = {r["quantity"]: _num(r["value"]) for r in page.tables["compute_time"]}
    total = sum(r["elapsed_s"] for r in results)
    assert compute["solver_time_total_s"] == pytest.approx(total, rel=HTML_RTOL)
    assert compute["n_finished"] == len(results)
    settings = {r["setting"]: r["value"] for r in page.tables["campaign_spec"]}
    assert settings["laser_nm"] == format(spec["laser_nm"], "g")
    for name, (lo, hi) in spec["bounds"].items():
        assert settings[f"bounds: {name}"] == f"[{lo:g}, {hi:g}]"
    designs = pd.read_csv(out.folder / "designs.csv")
    assert len(designs) == sum(counts.values())
    by_id = {r["design_id"]: r for r in results}
    for row in designs.itertuples():
        if row.design_id in by_id:
            assert row.resonance_nm == pytest.approx(by_id[row.design_id]["figures"]["resonance_nm"], rel=CSV_RTOL)


def test_material_table_matches_the_material_model(full_store, full_report):
    _, page = full_report
    with Store.open(full_store, readonly=True) as store:
        spec = store.spec
    rows = page.tables["material_nk"]
    wl = np.array([_num(r["wavelength_nm"]) for r in rows])
    assert spec["laser_nm"] in wl
    nk = get_material(spec["material"]).refractive_index(wl)
    assert [_num(r["n"]) for r in rows] == pytest.approx(nk.real.tolist(), rel=HTML_RTOL)
    assert [_num(r["k"]) for r in rows] == pytest.approx(nk.imag.tolist(), rel=HTML_RTOL)


def test_surrogate_table_matches_the_model_card(full_store, full_report):
    _, page = full_report
    with Store.open(full_store, readonly=True) as store:
        card = load_bundle(store, allow_stale=True).card
    rows = {r["target"]: r for r in page.tables["cv_metrics"]}
    assert set(rows) == set(card["targets"])
    for t, info in card["targets"].items():
        cv = info["cv"]
        assert _num(rows[t]["r2_model_space"]) == pytest.approx(cv["r2"], rel=HTML_RTOL)
        assert _num(rows[t]["rmse_in_unit"]) == pytest.approx(cv["rmse"], rel=HTML_RTOL)
        assert _num(rows[t]["coverage_95"]) == pytest.approx(cv["coverage_95"], rel=HTML_RTOL)
        assert int(rows[t]["n_designs"]) == info["n_designs"]
    assert f"v{card['version']:04d}" in " ".join(page.text)


def test_front_and_top_candidates_match_the_store(full_store, full_report):
    out, page = full_report
    with Store.open(full_store, readonly=True) as store:
        front = store.fronts()[-1]
        points = {p["point_index"]: p for p in store.front_points(front["front_id"])}
    fronts = page.tables["fronts"]
    assert _num(fronts[-1]["hypervolume_model_space"]) == pytest.approx(front["hypervolume"], rel=HTML_RTOL)
    top = page.tables["top_candidates"]
    assert 0 < len(top) <= 10
    for row in top:
        p = points[int(row["point_index"])]
        for t, pred in p["predictions"].items():
            for k in ("median", "lower", "upper"):
                assert _num(row[f"{t}_{k}"]) == pytest.approx(pred[k], rel=HTML_RTOL)
        assert _num(row["enhancement_p05"]) == pytest.approx(p["robustness"]["enhancement_p05"], rel=HTML_RTOL)
        assert int(row["n_flags"]) == len(p["flags"])
    # the ranking rule stated in the caption: fewest flags first, then the first objective's median
    target, direction = front["objectives"][0]["target"], front["objectives"][0]["direction"]
    sign = -1.0 if direction == "maximize" else 1.0
    keys = [(int(r["n_flags"]), sign * _num(r[f"{target}_median"])) for r in top]
    assert keys == sorted(keys)
    every = pd.read_csv(out.folder / "front_points.csv")
    assert len(every) == front["n_points"]


def test_verification_numbers_match_the_store(full_store, full_report):
    _, page = full_report
    with Store.open(full_store, readonly=True) as store:
        verifications = {v["entry_id"]: v for v in store.verifications()}
        rounds = store.refine_rounds()
    rows = page.tables["verifications"]
    assert len(rows) == len(verifications) > 0
    for row in rows:
        v = verifications[int(row["entry_id"])]
        assert row["design_id"] == v["design_id"]
        for t, c in v["comparison"].items():
            assert _num(row[f"{t}_simulated"]) == pytest.approx(c["simulated"], rel=HTML_RTOL)
            assert _num(row[f"{t}_z_sigma"]) == pytest.approx(c["z_sigma"], rel=HTML_RTOL, abs=1e-12)
            assert row[f"{t}_inside"] == ("yes" if c["inside"] else "no")
    refine = page.tables["refine_rounds"]
    assert [int(r["round"]) for r in refine] == [r["round"] for r in rounds]
    for row, r in zip(refine, rounds):
        assert _num(row["hypervolume_simulated"]) == pytest.approx(r["hypervolume_simulated"], rel=HTML_RTOL)
        for t, m in r["metrics"]["targets"].items():
            assert _num(row[f"{t}_mean_abs_z_sigma"]) == pytest.approx(m["mean_abs_z"], rel=HTML_RTOL)


def test_best_verified_design_is_the_best_simulated_one(full_store, full_report):
    out, page = full_report
    with Store.open(full_store, readonly=True) as store:
        front = store.fronts()[-1]
        target, direction = front["objectives"][0]["target"], front["objectives"][0]["direction"]
        pick = max if direction == "maximize" else min
        best = pick(store.verifications(), key=lambda v: v["simulated"][target])
        spectrum = store.spectrum(best["design_id"])
    label = "".join(page.text)
    assert f"Best verified design: {best['design_id']}," in label
    csv = pd.read_csv(out.folder / "best_spectrum.csv")
    assert csv["wavelength_nm"].tolist() == [r["wavelength_nm"] for r in spectrum]
    assert csv["c_ext_nm2"].to_numpy() == pytest.approx([r["c_ext_nm2"] for r in spectrum], rel=CSV_RTOL)


def test_the_report_never_writes_to_the_store(full_store, tmp_path):
    models = full_store.with_name(f"{full_store.stem}.models")
    before = (_sha(full_store), sorted(p.name for p in full_store.parent.iterdir()),
              {p: _sha(p) for p in models.rglob("*") if p.is_file()})
    write_campaign_report(full_store, tmp_path / "again", allow_outside=True)
    after = (_sha(full_store), sorted(p.name for p in full_store.parent.iterdir()),
             {p: _sha(p) for p in models.rglob("*") if p.is_file()})
    assert after == before


def test_a_store_without_models_says_what_is_missing(bare_store, tmp_path):
    out = write_campaign_report(bare_store, tmp_path / "bare", allow_outside=True)
    page = read_report(out.html_path)
    assert page.sections == list(SECTIONS)
    assert set(out.missing) == {"models", "front", "verification"}
    assert f"surrogate train {bare_store}" in page.notices["missing-models"]
    assert f"surrogate search {bare_store}" in page.notices["missing-front"]
    assert f"surrogate verify {bare_store}" in page.notices["missing-verification"]
    assert "missing-best-verified" in page.notices
    assert not {"parity", "calibration", "pareto_front", "verification"} & set(page.figures)
    # the campaign and coverage parts are still there, and the best training design is labelled as such
    assert {"status_counts", "provenance", "material_nk"} <= set(page.tables)
    assert {"coverage_histograms", "coverage_pairs", "best_field_map"} <= set(page.figures)
    assert "Best simulated TRAINING design" in " ".join(page.text)


def test_a_store_with_models_but_no_front_says_so(trained_store, tmp_path):
    out = write_campaign_report(trained_store, tmp_path / "trained", allow_outside=True)
    page = read_report(out.html_path)
    assert set(out.missing) == {"front", "verification"}
    assert "cv_metrics" in page.tables and {"parity", "calibration"} <= set(page.figures)
    assert f"surrogate search {trained_store}" in page.notices["missing-front"]
    assert "top_candidates" not in page.tables


def test_a_store_without_verification_tables_is_reported_as_such(trained_store, copy_store, tmp_path):
    import sqlite3

    path = copy_store(trained_store)
    db = sqlite3.connect(path)  # an older layout: the verification tables are not there
    db.executescript("DROP VIEW queue_status; DROP TABLE verifications; DROP TABLE refine_rounds; "
                     "DROP TABLE queue_events; DROP TABLE queue;")
    db.close()
    out = write_campaign_report(path, tmp_path / "old", allow_outside=True)
    page = read_report(out.html_path)
    assert "predates" in page.notices["missing-verification"]


def test_other_database_errors_are_not_taken_for_missing_tables(trained_store, copy_store, tmp_path):
    import sqlite3

    path = copy_store(trained_store)
    db = sqlite3.connect(path)  # a broken view: querying it fails with something other than "no such table"
    db.executescript("DROP VIEW queue_status; CREATE VIEW queue_status AS SELECT 1/0 AS entry_id;")
    db.close()
    with pytest.raises(sqlite3.OperationalError):
        write_campaign_report(path, tmp_path / "broken", allow_outside=True)


def test_default_folder_is_reports_store_stem_and_outside_paths_are_refused(tmp_path):
    root = tmp_path / "reports"
    assert report_folder("x/demo.sqlite", reports_root=root) == root / "demo"
    assert report_folder("demo.sqlite", root / "sub", reports_root=root) == root / "sub"
    with pytest.raises(InvalidParameterError, match="report folder must be inside"):
        report_folder("demo.sqlite", tmp_path / "elsewhere", reports_root=root)
    with pytest.raises(InvalidParameterError, match="report folder must be inside"):
        report_folder("demo.sqlite", root / ".." / "escape", reports_root=root)
    assert report_folder("demo.sqlite", tmp_path / "elsewhere", reports_root=root, allow_outside=True) == tmp_path / "elsewhere"


def test_missing_store_is_a_library_error(tmp_path):
    with pytest.raises(SurrogateError, match="does not exist"):
        write_campaign_report(tmp_path / "none.sqlite", tmp_path / "r", allow_outside=True)
    assert not (tmp_path / "r").exists()


def test_bad_top_is_refused(bare_store, tmp_path):
    with pytest.raises(InvalidParameterError, match="top"):
        write_campaign_report(bare_store, tmp_path / "r", allow_outside=True, top=0)
