#!/usr/bin/python3
"""Reference check of tram report (the PDF calibration record) against the
calibration file it was made from and against outside references:

  - the Euler angles printed for a convention, against SciPy Rotation's
    as_euler on the file's rotation matrix (upper-case axes: intrinsic,
    lower-case: extrinsic, SciPy's convention), for Tait-Bryan and proper
    sequences of both kinds, and the printed angles rebuilt by SciPy's
    from_euler, compared with the matrix by rotation angle;
  - the SHA-256 of the input files, against Python's hashlib;
  - translation, quaternion (SciPy Rotation.as_quat, sign fixed w > 0),
    rotation vector, 1-sigma and 95% bounds, residual statistics, against
    the calibration file's JSON values;
  - the page count (pdfinfo) against what the command reports, and every
    page rendered by pdftoppm (poppler-utils).

The calibration comes from the demo scenario (datasets/demo, invented).
Usage: check_report_scipy.py path/to/tram
"""
import hashlib
import os
import re
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation

from refcommon import solve_calibration

HERE = os.path.dirname(os.path.abspath(__file__))
DEMO = os.path.join(HERE, "..", "..", "datasets", "demo")
CONVENTIONS = ["zyx-intrinsic", "xyz-extrinsic", "zxz-intrinsic", "yxy-extrinsic", "xzy-intrinsic"]


def scipy_seq(name):
    axes, kind = name.split("-")
    return axes.upper() if kind == "intrinsic" else axes


def pdf_text(path):
    return subprocess.run(["pdftotext", "-layout", path, "-"], check=True, capture_output=True,
                          text=True).stdout


def run(tram, *args, env=None):
    return subprocess.run([tram, *args], capture_output=True, text=True, env=env)


def check_numbers(text, cal, names):
    """Every key number of the file, formatted as the report prints it."""
    fails = 0
    def need(s, what):
        nonlocal fails
        if s not in text:
            print(f"  FAIL: {what}: '{s}' not in the report")
            fails += 1
    for name in names:
        tr = cal["transforms"][name]
        M = np.array(tr["matrix"])
        t = tr["translation"]
        need(f"x {t[0]:.6f}", f"{name} translation x")
        need(f"z {t[2]:.6f}", f"{name} translation z")
        q = Rotation.from_matrix(M[:3, :3]).as_quat()  # x, y, z, w (SciPy)
        q = q if q[3] >= 0 else -q
        need(f"{q[3]:.9f}", f"{name} quaternion w (SciPy)")
        for v in tr["rotation_vector_deg"]:
            need(f"{v:.6f}", f"{name} rotation vector")
        u = cal["uncertainty"][name]
        for s, b in zip(u["translation_sigma"], u["translation_95"]):
            need(f"{s:.6f}", f"{name} 1-sigma")
            need(f"+-{b:.6f}", f"{name} 95% half-width")
        for i, row in enumerate(M[:3]):
            need(f"{row[0]:.9f}", f"{name} matrix row {i}")
    for k in ("rms", "median", "max"):
        need(f"{cal['residuals']['rotation_deg'][k]:.5f}", f"rotation residual {k}")
        need(f"{cal['residuals']['translation'][k]:.5f}", f"translation residual {k}")
    for s in cal["residuals"]["stations"]:
        need(s["station"], "station id")
    return fails


def check_euler(text, cal, names, conv):
    fails = 0
    got = re.findall(r"Euler angles " + conv + r" \(deg\)\s+e1 (\S+)\s+e2 (\S+)\s+e3 (\S+)", text)
    if len(got) != len(names):
        print(f"  FAIL: {conv}: {len(got)} Euler lines, expected {len(names)}")
        return 1
    for name, g in zip(names, got):
        R = np.array(cal["transforms"][name]["matrix"])[:3, :3]
        e = np.array([float(x) for x in g])
        ref = Rotation.from_matrix(R).as_euler(scipy_seq(conv), degrees=True)
        back = Rotation.from_euler(scipy_seq(conv), e, degrees=True)
        ang = np.degrees((back * Rotation.from_matrix(R).inv()).magnitude())
        d = np.max(np.abs(e - ref))
        ok = d < 2e-6 and ang < 1e-5
        print(f"  {conv:14s} {name:16s} tram {e} SciPy {np.round(ref, 6)}: max diff {d:.1e} deg, "
              f"rebuilt rotation off by {ang:.1e} deg {'ok' if ok else 'FAIL'}")
        fails += not ok
    return fails


def main():
    tram = os.path.abspath(sys.argv[1])
    fails = checks = 0
    env = dict(os.environ, SOURCE_DATE_EPOCH="1796212800")
    with tempfile.TemporaryDirectory() as tmp:
        for setup, rec in (("eye-in-hand", "wrist_camera.csv"), ("eye-to-hand", "overhead_camera.csv")):
            calp = os.path.join(tmp, setup + ".json")
            cal = solve_calibration(tram, calp, os.path.join(DEMO, rec))
            if cal is None:
                return 1
            names = list(cal["transforms"])
            for conv in CONVENTIONS:
                pdf = os.path.join(tmp, f"{setup}-{conv}.pdf")
                r = run(tram, "report", calp, "-o", pdf, "--euler", conv, env=env)
                checks += 1
                if r.returncode != 0:
                    print(f"FAIL: report {setup} {conv}: {r.stderr}")
                    fails += 1
                    continue
                text = pdf_text(pdf)
                f = check_euler(text, cal, names, conv)
                if conv == CONVENTIONS[0]:
                    f += check_numbers(text, cal, names)
                    # hashes (Python hashlib) of the calibration and the records
                    for p in (calp, os.path.join(DEMO, rec)):
                        h = hashlib.sha256(open(p, "rb").read()).hexdigest()
                        if h not in text:
                            print(f"  FAIL: SHA-256 of {p} (hashlib {h}) not in the report")
                            f += 1
                    pages = int(re.search(r"report: (\d+) pages", r.stdout).group(1))
                    info = subprocess.run(["pdfinfo", pdf], capture_output=True, text=True).stdout
                    n = int(re.search(r"Pages:\s+(\d+)", info).group(1))
                    subprocess.run(["pdftoppm", "-r", "20", "-png", pdf, os.path.join(tmp, "pg")], check=True)
                    rendered = len([x for x in os.listdir(tmp) if x.startswith("pg")])
                    for x in os.listdir(tmp):
                        if x.startswith("pg"):
                            os.remove(os.path.join(tmp, x))
                    print(f"  {setup}: {pages} pages reported, pdfinfo {n}, pdftoppm rendered {rendered}")
                    f += not (pages == n == rendered == 4)
                    if "2026-12-02T12:00:00Z" not in text:
                        print("  FAIL: the date of SOURCE_DATE_EPOCH is not in the report")
                        f += 1
                fails += f > 0
    print(f"check_report_scipy: {checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
