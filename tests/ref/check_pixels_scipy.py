#!/usr/bin/python3
"""Reference check of tram solve --pixels against a maximum-likelihood
solver written on SciPy's scipy.optimize.least_squares (Debian
python3-scipy), with rotations through SciPy Rotation.

Eye-in-hand scenes of our own are generated here with NumPy (fixed, printed
seeds): a 9x6 board of 25 mm squares, 10 stations, the pinhole camera with
Brown-Conrady distortion as written in tram/camera.h (Brown 1966), corners
projected and perturbed by 0.3 px Gaussian noise.  tram solves them from the
pixel files with the camera known (--no-robust, plain least squares); the
reference minimises the sum of squared pixel residuals over X and Z (12
parameters) from a perturbed truth.  Over the seeds, the RMSE of tram's X
(translation, mm; rotation, deg) must be at most 1.1 times the reference's,
and each answer must agree with the reference to 1e-4 mm / 1e-5 deg.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.optimize import least_squares
from scipy.spatial.transform import Rotation

SEEDS = range(57001, 57051)
CAM = dict(fx=1210.5, fy=1204.25, cx=643.2, cy=478.9, skew=0.0,
           k1=-0.21, k2=0.08, k3=0.0, p1=8e-4, p2=-5e-4)
COLS, ROWS, SQ = 9, 6, 25.0


def T_of(rotvec, t):
    T = np.eye(4)
    T[:3, :3] = Rotation.from_rotvec(rotvec).as_matrix()
    T[:3, 3] = t
    return T


def inv(T):
    R, t = T[:3, :3], T[:3, 3]
    Ti = np.eye(4)
    Ti[:3, :3] = R.T
    Ti[:3, 3] = -R.T @ t
    return Ti


def project(p):
    x, y = p[:, 0] / p[:, 2], p[:, 1] / p[:, 2]
    r2 = x * x + y * y
    rad = 1 + CAM["k1"] * r2 + CAM["k2"] * r2 ** 2 + CAM["k3"] * r2 ** 3
    xd = x * rad + 2 * CAM["p1"] * x * y + CAM["p2"] * (r2 + 2 * x * x)
    yd = y * rad + CAM["p1"] * (r2 + 2 * y * y) + 2 * CAM["p2"] * x * y
    return np.stack([CAM["fx"] * xd + CAM["skew"] * yd + CAM["cx"], CAM["fy"] * yd + CAM["cy"]], 1)


BOARD = np.array([[c * SQ, r * SQ, 0.0] for r in range(ROWS) for c in range(COLS)])
X_TRUE = T_of([0.1, -0.2, 1.3], [35.0, -60.0, 110.0])
Z_TRUE = T_of([3.0, 0.2, -0.1], [800.0, 150.0, -20.0])


def scene(rng):
    P, uv = [], []
    for i in range(10):
        w = [rng.uniform(-0.5, 0.5), rng.uniform(-0.5, 0.5), rng.uniform(0, 2 * np.pi)]
        z = rng.uniform(450, 750)
        S = T_of(w, [rng.uniform(-0.05, 0.05) * z, rng.uniform(-0.05, 0.05) * z, z])
        S[:3, 3] -= S[:3, :3] @ np.array([4 * SQ, 2.5 * SQ, 0])
        P.append(Z_TRUE @ inv(S) @ inv(X_TRUE))
        q = (S[:3, :3] @ BOARD.T).T + S[:3, 3]
        uv.append(project(q) + rng.normal(0, 0.3, (len(BOARD), 2)))
    return P, uv


def write(d, P, uv):
    with open(os.path.join(d, "robot.csv"), "w") as f:
        f.write("# length-unit: mm\n# setup: eye-in-hand\n# robot-pose: flange-in-base\n")
        f.write("station,robot_x,robot_y,robot_z," + ",".join("robot_r%d%d" % (a, b) for a in (1, 2, 3) for b in (1, 2, 3)) + "\n")
        for i, T in enumerate(P):
            f.write("s%02d," % (i + 1) + ",".join("%.17g" % v for v in list(T[:3, 3]) + list(T[:3, :3].ravel())) + "\n")
    with open(os.path.join(d, "pixels.csv"), "w") as f:
        f.write("# format: tram-pixels-1\n# pixel-origin: top-left-pixel-centre\n# image-size: 1280x960\n")
        f.write("station,point,u,v\n")
        for i, u in enumerate(uv):
            for k, (a, b) in enumerate(u):
                f.write("s%02d,%d,%.17g,%.17g\n" % (i + 1, k, a, b))
    cam = {"format": "tram-camera", "version": 1, "pixel_origin": "top-left-pixel-centre",
           "image_size": {"width": 1280, "height": 960},
           "intrinsics": {k: CAM[k] for k in ("fx", "fy", "cx", "cy", "skew")},
           "distortion": {"model": "full", **{k: CAM[k] for k in ("k1", "k2", "k3", "p1", "p2")}}}
    json.dump(cam, open(os.path.join(d, "camera.json"), "w"))
    board = {"format": "tram-board", "version": 1, "kind": "chessboard", "cols": COLS, "rows": ROWS,
             "square": SQ, "length_unit": "mm"}
    json.dump(board, open(os.path.join(d, "board.json"), "w"))


def reference(P, uv):
    def unpack(x):
        return T_of(x[0:3], x[3:6]), T_of(x[6:9], x[9:12])

    def res(x):
        X, Z = unpack(x)
        out = []
        for Pi, u in zip(P, uv):
            S = inv(X) @ inv(Pi) @ Z
            out.append((project((S[:3, :3] @ BOARD.T).T + S[:3, 3]) - u).ravel())
        return np.concatenate(out)

    x0 = np.concatenate([Rotation.from_matrix(X_TRUE[:3, :3]).as_rotvec() + 0.01, X_TRUE[:3, 3] + 2,
                         Rotation.from_matrix(Z_TRUE[:3, :3]).as_rotvec() - 0.01, Z_TRUE[:3, 3] - 2])
    sol = least_squares(res, x0, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    return unpack(sol.x)[0]


def pose_path(tram, d):
    """tram pose (each station's target pose from its pixels) then tram solve."""
    poses = os.path.join(d, "poses.csv")
    run = lambda args: subprocess.run([tram] + args, capture_output=True, text=True)
    out = run(["pose", "--camera", os.path.join(d, "camera.json"), "--board", os.path.join(d, "board.json"),
               "--robot", os.path.join(d, "robot.csv"), os.path.join(d, "pixels.csv"), "-o", poses])
    if out.returncode != 0:
        print(out.stderr)
        sys.exit(1)
    out = run(["solve", "--json", "--no-convention-check", poses])
    if out.returncode not in (0, 3) or not out.stdout:
        print(out.stderr)
        sys.exit(1)
    return np.array(json.loads(out.stdout)["transforms"]["T_flange_sensor"]["matrix"])


def x_err(X):
    dt = np.linalg.norm(X[:3, 3] - X_TRUE[:3, 3])
    da = np.degrees(Rotation.from_matrix(X_TRUE[:3, :3].T @ X[:3, :3]).magnitude())
    return dt, da


def main():
    tram = sys.argv[1]
    et, er, rt, rr, agree_t, agree_r = [], [], [], [], 0.0, 0.0
    pt, pr, dev_ml, dev_gap, rot_ml, rot_gap = [], [], [], [], [], []
    print("check_pixels_scipy: seeds %d .. %d" % (SEEDS[0], SEEDS[-1]))
    for seed in SEEDS:
        rng = np.random.default_rng(seed)
        P, uv = scene(rng)
        with tempfile.TemporaryDirectory() as d:
            write(d, P, uv)
            out = subprocess.run([tram, "solve", "--json", "--no-robust", "--no-convention-check",
                                  "--pixels", os.path.join(d, "pixels.csv"), "--camera", os.path.join(d, "camera.json"),
                                  "--board", os.path.join(d, "board.json"), os.path.join(d, "robot.csv")],
                                 capture_output=True, text=True)
            if out.returncode not in (0, 3) or not out.stdout:
                print(out.stderr)
                sys.exit(1)
            X = np.array(json.loads(out.stdout)["transforms"]["T_flange_sensor"]["matrix"])
            Xp = pose_path(tram, d)
        Xr = reference(P, uv)
        c = x_err(Xp)
        pt.append(c[0]); pr.append(c[1])
        dev_ml.append(Xr[:3, 3] - X_TRUE[:3, 3])
        dev_gap.append(Xp[:3, 3] - Xr[:3, 3])
        rot_ml.append(Rotation.from_matrix(X_TRUE[:3, :3].T @ Xr[:3, :3]).as_rotvec())
        rot_gap.append(Rotation.from_matrix(Xr[:3, :3].T @ Xp[:3, :3]).as_rotvec())
        a, b = x_err(X), x_err(Xr)
        et.append(a[0]); er.append(a[1]); rt.append(b[0]); rr.append(b[1])
        agree_t = max(agree_t, np.linalg.norm(X[:3, 3] - Xr[:3, 3]))
        agree_r = max(agree_r, np.degrees(Rotation.from_matrix(Xr[:3, :3].T @ X[:3, :3]).magnitude()))
    rmse = lambda v: float(np.sqrt(np.mean(np.square(v))))
    print("check_pixels_scipy: X RMSE over %d seeds: tram %.5f mm / %.6f deg, SciPy ML reference "
          "%.5f mm / %.6f deg; largest difference %.2e mm / %.2e deg"
          % (len(SEEDS), rmse(et), rmse(er), rmse(rt), rmse(rr), agree_t, agree_r))
    # The issue's per-seed figure: how often the pixels' error is at most the
    # pose path's.  The ML reference bounds what the pixel solve can reach
    # here (tram agrees with it per seed, to the tolerances above): when the
    # pose path is near-efficient its error is the ML error plus a nearly
    # independent part (Hausman 1978: an efficient estimator is uncorrelated
    # with its difference from any consistent one), and the ML's error is
    # then the larger on a share of seeds fixed by their sizes alone.  The
    # same count with each ML error paired with the other seeds' differences
    # shows what independence gives.
    wins = lambda a, b: sum(x <= y for x, y in zip(a, b))
    n = len(SEEDS)

    def independent(dev, gp):
        ml, gap = np.array(dev), np.array(gp)
        corr = float(np.sum(ml * gap) / np.sqrt(np.sum(ml * ml) * np.sum(gap * gap)))
        mixed = np.mean([np.linalg.norm(ml[i]) <= np.linalg.norm(ml[i] + gap[j])
                         for i in range(n) for j in range(n) if i != j])
        return corr, mixed
    corr, mixed = independent(dev_ml, dev_gap)
    corr_r, mixed_r = independent(rot_ml, rot_gap)
    print("check_pixels_scipy: against the pose path (tram pose, then tram solve) over %d seeds: the "
          "error of X is at most the pose path's on %d (tram) and %d (SciPy ML) seeds in translation, "
          "%d and %d in rotation; pose path RMSE %.5f mm / %.6f deg (ratio ML / pose %.2f, %.2f)"
          % (n, wins(et, pt), wins(rt, pt), wins(er, pr), wins(rr, pr), rmse(pt), rmse(pr),
             rmse(rt) / rmse(pt), rmse(rr) / rmse(pr)))
    print("check_pixels_scipy: error of the ML against (pose path - ML): correlation %.3f in translation, "
          "%.3f in rotation; with independent pairs the ML would win on %.1f%% (translation) and %.1f%% "
          "(rotation) of seeds" % (corr, corr_r, 100 * mixed, 100 * mixed_r))
    ok = wins(et, pt) == wins(rt, pt) and wins(er, pr) == wins(rr, pr)
    ok = ok and rmse(et) <= 1.1 * rmse(rt) and rmse(er) <= 1.1 * rmse(rr) and agree_t < 1e-4 and agree_r < 1e-5
    print("check_pixels_scipy: %s" % ("ok" if ok else "FAILED"))
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
