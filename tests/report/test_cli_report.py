"""``surrogate report`` on the command line: output, default folder, exit codes."""

import os

from surrogate.cli import main

from .helpers import read_report


def test_cli_writes_the_report_where_asked(bare_store, tmp_path, capsys):
    out = tmp_path / "anywhere" / "r1"
    assert main(["report", str(bare_store), "--out", str(out)]) == 0  # an explicit --out may be outside reports/
    page = read_report(out / "report.html")
    assert "missing-models" in page.notices
    text = capsys.readouterr().out
    assert str(out / "report.html") in text
    assert "missing models" in text


def test_cli_default_folder_is_reports_store_stem(bare_store, tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["report", str(bare_store)]) == 0
    assert (tmp_path / "reports" / bare_store.stem / "report.html").is_file()


def test_cli_missing_store_exits_2_with_one_line(tmp_path, capsys):
    missing = tmp_path / "nope.sqlite"
    assert main(["report", str(missing)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: store") and str(missing) in err and "does not exist" in err
    assert err.count("\n") == 1
    assert not os.path.exists(tmp_path / "reports")


def test_cli_bad_top_exits_2(bare_store, tmp_path, capsys):
    assert main(["report", str(bare_store), "--out", str(tmp_path / "r"), "--top", "0"]) == 2
    assert "top must be" in capsys.readouterr().err
