"""Tests of tram.report (the PDF calibration record through
tram_report_write_pdf) against the command `tram report` on the same
calibration: the text of both PDFs (pdftotext, Debian's poppler-utils) holds
the same key numbers - the transforms, 1-sigma and 95% half-widths, the Euler
angles and their intervals, the SHA-256 of the input files, the safety text -
and the same page count; and the errors, raised as tram.Error with the
message the command prints.  Data: the demo scenario (datasets/demo,
invented).
"""
import os
import re
import subprocess

import pytest

import tram

ROOT = os.path.normpath(os.path.join(os.path.dirname(__file__), "..", ".."))
DEMO = os.path.join(ROOT, "datasets", "demo")
TRAM = os.environ.get("TRAM", os.path.join(ROOT, "build", "tram"))
DATE = "2026-12-02T12:00:00Z"
ENV = dict(os.environ, SOURCE_DATE_EPOCH="1796212800")


def pdf_text(path):
    return subprocess.run(["pdftotext", "-layout", str(path), "-"], check=True, capture_output=True,
                          text=True).stdout


def command(*args):
    return subprocess.run([TRAM, *map(str, args)], capture_output=True, text=True, env=ENV, cwd=ROOT)


@pytest.fixture(scope="module")
def calibration(tmp_path_factory):
    path = tmp_path_factory.mktemp("report") / "wrist.json"
    p = command("solve", "-o", path, os.path.join("datasets", "demo", "wrist_camera.csv"))
    assert p.returncode == 0, p.stderr
    return path


# numbers of the report: matrix rows, translation, quaternion, rotation vector,
# sigmas, intervals, Euler angles, hashes (every number with 5 or more decimals)
NUMBER = re.compile(r"-?\d+\.\d{5,}|[0-9a-f]{64}")


@pytest.mark.parametrize("euler,page", [("zyx-intrinsic", "a4"), ("xyz-extrinsic", "letter")])
def test_report_matches_command(calibration, tmp_path, euler, page, monkeypatch):
    monkeypatch.chdir(ROOT)  # the records path in the calibration is relative to the top
    cli_pdf, py_pdf = tmp_path / "cli.pdf", tmp_path / "py.pdf"
    p = command("report", calibration, "-o", cli_pdf, "--euler", euler, "--page", page,
                "--computed-by", "A. Integrator")
    assert p.returncode == 0, p.stderr
    cli_pages = int(re.search(r"report: (\d+) pages", p.stdout).group(1))
    n = tram.report(calibration, py_pdf, euler=euler, page=page, computed_by="A. Integrator",
                    date_utc=DATE)
    assert n == cli_pages
    a, b = pdf_text(cli_pdf), pdf_text(py_pdf)
    assert NUMBER.findall(a) == NUMBER.findall(b) and len(NUMBER.findall(a)) > 150
    for t in (" ".join(a.split()), " ".join(b.split())):  # phrases across line ends
        assert "NOT verified on the cell" in t and "verify it on the cell at reduced speed" in t
        assert "keep clear of the working envelope" in t
        assert f"Euler angles {euler} (deg)" in t and "Euler e1 (deg)" in t
        assert "Computed by: A. Integrator" in t and DATE in t
    # the same text but for nothing at all
    assert a == b


def test_report_date_from_source_date_epoch(calibration, tmp_path, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1796212800")
    tram.report(calibration, tmp_path / "r.pdf", euler="zyx-intrinsic")
    assert DATE in pdf_text(tmp_path / "r.pdf")
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "soon")
    with pytest.raises(tram.InputError, match="SOURCE_DATE_EPOCH 'soon': expected whole seconds"):
        tram.report(calibration, tmp_path / "s.pdf", euler="zyx-intrinsic")


def test_report_history(calibration, tmp_path, monkeypatch):
    monkeypatch.chdir(ROOT)
    hist = tmp_path / "h.jsonl"
    for rec in ("wrist_recheck.csv", "wrist_bumped.csv"):
        p = command("check", "--calibration", calibration, "--history", hist,
                    os.path.join("datasets", "demo", rec))
        assert hist.exists(), p.stderr
    n = tram.report(calibration, tmp_path / "h.pdf", euler="zyx-intrinsic", history=hist, date_utc=DATE)
    t = pdf_text(tmp_path / "h.pdf")
    assert n >= 4 and "Mount-check history" in t and "2 checks" in t
    assert tram.report(calibration, tmp_path / "h2.pdf", euler="zyx-intrinsic", history=str(hist),
                       date_utc=DATE) == n


def errors_of_both(tmp_path, cli_args, **py):
    p = command("report", *cli_args)
    with pytest.raises(tram.Error) as e:
        tram.report(**py)
    return p, e.value


def test_report_errors_as_the_command(calibration, tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "tram-calibration", "version": 1,\n  "setup": 7}\n')
    out = tmp_path / "x.pdf"
    # a damaged calibration: file:line:column and what was expected, as the command says it
    p, e = errors_of_both(tmp_path, [bad, "-o", out, "--euler", "zyx-intrinsic"],
                          calibration=bad, output=out, euler="zyx-intrinsic", date_utc=DATE)
    assert p.returncode == 2 and isinstance(e, tram.InputError)
    assert e.file == str(bad) and e.line >= 1
    assert f"{e}" in p.stderr.replace("error: ", "")
    # a missing file
    p, e = errors_of_both(tmp_path, [tmp_path / "none.json", "-o", out, "--euler", "zyx-intrinsic"],
                          calibration=tmp_path / "none.json", output=out, euler="zyx-intrinsic",
                          date_utc=DATE)
    assert p.returncode != 0 and e.message in p.stderr
    # an existing output without force
    out.write_bytes(b"x")
    p, e = errors_of_both(tmp_path, [calibration, "-o", out, "--euler", "zyx-intrinsic"],
                          calibration=calibration, output=out, euler="zyx-intrinsic", date_utc=DATE)
    assert p.returncode == 2 and "already exists" in e.message and e.message in p.stderr
    assert out.read_bytes() == b"x"
    # no Euler convention: the library's message (the command refuses it before)
    with pytest.raises(tram.InputError, match="needs an Euler convention"):
        tram.report(calibration, tmp_path / "y.pdf", euler=None, date_utc=DATE)
    with pytest.raises(tram.InputError, match="Euler convention 'zyx'"):
        tram.report(calibration, tmp_path / "y.pdf", euler="zyx", date_utc=DATE)
    # a page other than a4 or letter
    with pytest.raises(tram.InputError, match="report page '420x297': expected a4 or letter"):
        tram.report(calibration, tmp_path / "y.pdf", euler="zyx-intrinsic", page="420x297",
                    date_utc=DATE)
    with pytest.raises(tram.InputError, match="report date 'today'"):
        tram.report(calibration, tmp_path / "y.pdf", euler="zyx-intrinsic", date_utc="today")
    assert not (tmp_path / "y.pdf").exists()
