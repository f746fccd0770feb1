#!/usr/bin/python3
"""Reference check of the Euler-angle intervals of tram (tram_euler_covariance,
shown by `tram report` and by `tram convert --to euler:SEQ` on a calibration
file) against SciPy Rotation:

  - the 1-sigma of e1, e2, e3: the calibration's rotation covariance (about
    the transform's own axes: the truth is R exp(w), docs/solve.md)
    propagated through a central-difference Jacobian of SciPy's
    Rotation.as_euler at R exp(+-h u_k) (upper-case axes: intrinsic,
    lower-case: extrinsic), for Tait-Bryan and proper sequences of both
    kinds, against what tram convert prints and what the report prints;
  - the 95% half-widths: the same factor (the solve's Student t) times sigma;
  - a Monte Carlo check of coverage: w drawn from N(0, covariance) with a fixed
    printed seed, as_euler of R exp(w) by SciPy, the share of draws inside
    tram's +-1.96 sigma per angle (normal quantile, as the covariance here is
    exact) must be 95% within 4 binomial sigmas, each and pooled;
  - a rotation within a hundredth of a degree of gimbal lock (the demo's
    T_base_target, almost a pure z turn, in proper zyz/zxz sequences): tram
    says the interval is not defined instead of printing a number.

The calibration comes from the demo scenario (datasets/demo, invented).
Usage: check_euler_cov_scipy.py path/to/tram
"""
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
CONVENTIONS = ["zyx-intrinsic", "xyz-extrinsic", "zxz-intrinsic", "yxy-extrinsic", "yzx-intrinsic"]
SEED = 20261202
DRAWS = 4000


def scipy_seq(name):
    axes, kind = name.split("-")
    return axes.upper() if kind == "intrinsic" else axes


def euler_jacobian(R, seq, h=1e-6):
    """d(e1, e2, e3)/dw at R exp(w), w = 0, by central differences of SciPy."""
    J = np.empty((3, 3))
    for k in range(3):
        w = np.zeros(3)
        w[k] = h
        ep = (R * Rotation.from_rotvec(w)).as_euler(seq)
        em = (R * Rotation.from_rotvec(-w)).as_euler(seq)
        J[:, k] = np.remainder(ep - em + np.pi, 2 * np.pi) - np.pi
    return J / (2 * h)


def run(tram, *args):
    return subprocess.run([tram, *args], capture_output=True, text=True,
                          env=dict(os.environ, SOURCE_DATE_EPOCH="1796212800"))


def convert_lines(tram, calp, conv):
    out = run(tram, "convert", "--to", "euler:" + conv, calp).stdout
    got = {}
    for m in re.finditer(r"# (T_\w+) e1,e2,e3 1-sigma \(deg\): (\S+),(\S+),(\S+); 95% half-width "
                         r"\((\S+) sigma\): (\S+),(\S+),(\S+)", out):
        got[m.group(1)] = (np.array([float(m.group(i)) for i in (2, 3, 4)]), float(m.group(5)),
                           np.array([float(m.group(i)) for i in (6, 7, 8)]))
    for m in re.finditer(r"# (T_\w+) e1,e2,e3: intervals not defined", out):
        got[m.group(1)] = None
    return got


def check_setup(tram, tmp, setup, rec, rng, pooled):
    fails = 0
    calp = os.path.join(tmp, setup + ".json")
    cal = solve_calibration(tram, calp, os.path.join(DEMO, rec))
    if cal is None:
        return 1
    C = np.array(cal["covariance"]).reshape(12, 12)
    names = list(cal["transforms"])
    for conv in CONVENTIONS + ["zyz-intrinsic", "zxz-extrinsic"]:
        got = convert_lines(tram, calp, conv)
        pdf = os.path.join(tmp, "r.pdf")
        rr = run(tram, "report", calp, "-o", pdf, "--euler", conv, "--force")
        text = subprocess.run(["pdftotext", "-layout", pdf, "-"], capture_output=True,
                              text=True).stdout if rr.returncode == 0 else ""
        rows = re.findall(r"Euler e(\d) \(deg\)\s+(\S+)\s+(\S+)\s+\S+ \.\. \S+\s+\(\+-(\S+)\)", text)
        undefined = text.count(f"Euler angles {conv}: intervals not defined")
        nrow = 0
        for b, name in enumerate(names):
            M = np.array(cal["transforms"][name]["matrix"])[:3, :3]
            R = Rotation.from_matrix(M)
            seq = scipy_seq(conv)
            e = R.as_euler(seq)
            S = C[6 * b + 3:6 * b + 6, 6 * b + 3:6 * b + 6]
            J = euler_jacobian(R, seq)
            # distance from lock: |cos e2| (Tait-Bryan) or |sin e2| (proper)
            lock = np.degrees(np.arcsin(min(1.0, abs(np.sin(e[1]) if conv[0] == conv[2] else np.cos(e[1])))))
            if name not in got:
                print(f"  FAIL: {setup} {conv} {name}: no interval line from tram convert")
                fails += 1
                continue
            if lock < 1.0:
                ok = got[name] is None
                print(f"  {setup:11s} {conv:14s} {name:16s} {lock:.4f} deg from gimbal lock: tram says "
                      f"{'not defined' if got[name] is None else 'a number'} {'ok' if ok else 'FAIL'}")
                fails += not ok
                continue
            sig_ref = np.degrees(np.sqrt(np.diag(J @ S @ J.T)))
            sig, _, hw = got[name]
            # the factor: the largest of the rotation axes' 95% / sigma in the file (Student t)
            u = cal["uncertainty"][name]
            k = max(h / s for h, s in zip(u["rotation_95_deg"], u["rotation_sigma_deg"]))
            d = np.max(np.abs(sig - sig_ref) / sig_ref)
            d95 = np.max(np.abs(hw - k * sig_ref) / (k * sig_ref))
            # the report's rows, in the order of the transforms
            rep = rows[3 * nrow:3 * nrow + 3]
            nrow += 1
            drep = max(abs(float(x[2]) - s) for x, s in zip(rep, sig_ref)) if len(rep) == 3 else np.inf
            # Monte Carlo (normal quantile: the covariance here is exact)
            w = rng.multivariate_normal(np.zeros(3), S, size=DRAWS)
            E = (R * Rotation.from_rotvec(w)).as_euler(seq)
            dev = np.remainder(E - e + np.pi, 2 * np.pi) - np.pi
            cover = np.mean(np.abs(dev) <= 1.96 * np.radians(sig), axis=0)
            pooled.append(cover)
            # +-4 binomial sigmas of 95% at DRAWS (about 66 such figures here)
            okc = np.all(np.abs(cover - 0.95) <= 4 * np.sqrt(0.95 * 0.05 / DRAWS))
            ok = d < 2e-4 and d95 < 2e-4 and drep < 2e-6 + 1e-6 and okc
            print(f"  {setup:11s} {conv:14s} {name:16s} sigma tram {np.round(sig, 6)} SciPy "
                  f"{np.round(sig_ref, 6)} deg: rel diff {d:.1e} (95%: {d95:.1e}, report {drep:.1e} deg); "
                  f"coverage of +-1.96 sigma {np.round(100 * cover, 1)}% {'ok' if ok else 'FAIL'}")
            fails += not ok
        nundef = sum(1 for n in names if got.get(n, 0) is None)
        if undefined != nundef:
            print(f"  FAIL: {setup} {conv}: the report says 'not defined' {undefined} times, convert {nundef}")
            fails += 1
    return fails


def main():
    tram = os.path.abspath(sys.argv[1])
    print(f"check_euler_cov_scipy: Monte Carlo seed {SEED}, {DRAWS} draws per transform and convention")
    rng = np.random.default_rng(SEED)
    fails, pooled = 0, []
    with tempfile.TemporaryDirectory() as tmp:
        for setup, rec in (("eye-in-hand", "wrist_camera.csv"), ("eye-to-hand", "overhead_camera.csv")):
            fails += check_setup(tram, tmp, setup, rec, rng, pooled)
    allc = np.mean(pooled)
    n = len(pooled) * 3 * DRAWS
    okp = abs(allc - 0.95) <= 4 * np.sqrt(0.95 * 0.05 / n)
    print(f"  pooled coverage of +-1.96 sigma over {len(pooled) * 3} angles: {100 * allc:.2f}% "
          f"(95% +- {400 * np.sqrt(0.95 * 0.05 / n):.2f}) {'ok' if okp else 'FAIL'}")
    fails += not okp
    print(f"check_euler_cov_scipy: {'FAIL' if fails else 'ok'} ({fails} failed)")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
