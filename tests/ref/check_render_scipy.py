#!/usr/bin/python3
"""Reference check of tram solve --pixels on rendered and detected corners
against a maximum-likelihood solve written on SciPy's
scipy.optimize.least_squares (Debian python3-scipy), rotations through SciPy
Rotation.

The scene is the demo's invented one (datasets/demo: the wrist camera of
truth.json, the board and camera of truth_images.json, the robot poses of
wrist_camera.csv taken as exact).  tests/test_pixel_render.c renders each
station once, adds each seed's grey-level noise, runs the chessboard
detector and writes the first seeds' corners to
TRAM_TEST_OUT/render-seeds/seed_K.csv.  Here, on those same corners, with
the camera known:
  - tram solve --pixels --no-robust (plain least squares, as the reference);
  - the reference: the sum of squared pixel residuals over X and Z (12
    parameters), Brown-Conrady projection as written in tram/camera.h
    (Brown 1966), from a perturbed truth.
Held: tram's RMSE of X over the seeds at most 1.1 times the reference's
(issue #15), and each seed's X within 1e-4 mm / 1e-5 deg of it.

Usage: check_render_scipy.py TRAM OUT_DIR
"""
import csv
import glob
import io
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.optimize import least_squares
from scipy.spatial.transform import Rotation

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from refcommon import inv, rot_deg  # noqa: E402

DEMO = "datasets/demo"


def load_scene(tram):
    ti = json.load(open(os.path.join(DEMO, "truth_images.json")))
    tr = json.load(open(os.path.join(DEMO, "truth.json")))
    cam = ti["camera"]
    X = np.array(tr["wrist_camera"]["T_flange_sensor"], dtype=float)
    Z = np.array(ti["T_base_target"], dtype=float)
    out = subprocess.run([tram, "convert", "--to", "matrix", os.path.join(DEMO, "wrist_camera.csv")],
                         capture_output=True, text=True, check=True).stdout
    rows = csv.DictReader(io.StringIO("".join(l for l in out.splitlines(True) if not l.startswith("#"))))
    P = {}
    for r in rows:
        T = np.eye(4)
        T[:3, :3] = np.array([[float(r["robot_r%d%d" % (a, b)]) for b in (1, 2, 3)] for a in (1, 2, 3)])
        T[:3, 3] = [float(r["robot_x"]), float(r["robot_y"]), float(r["robot_z"])]
        P[r["station"]] = T
    return cam, ti["board"], X, Z, P


def project(cam, p):
    x, y = p[:, 0] / p[:, 2], p[:, 1] / p[:, 2]
    r2 = x * x + y * y
    rad = 1 + cam["k1"] * r2 + cam["k2"] * r2 ** 2
    return np.stack([cam["fx"] * x * rad + cam["cx"], cam["fy"] * y * rad + cam["cy"]], 1)


def read_obs(path):
    obs = {}
    with open(path) as f:
        for r in csv.DictReader(l for l in f if not l.startswith("#")):
            obs.setdefault(r["station"], []).append((int(r["point"]), float(r["u"]), float(r["v"])))
    return obs


def reference(cam, board, P, obs, X0, Z0):
    cols, sq = board["cols"], board["square"]
    data = []
    for st, pts in obs.items():
        xyz = np.array([[(k % cols) * sq, (k // cols) * sq, 0.0] for k, _, _ in pts])
        data.append((P[st], xyz, np.array([[u, v] for _, u, v in pts])))

    def T_of(w, t):
        T = np.eye(4)
        T[:3, :3] = Rotation.from_rotvec(w).as_matrix()
        T[:3, 3] = t
        return T

    def res(x):
        X, Z = T_of(x[0:3], x[3:6]), T_of(x[6:9], x[9:12])
        out = []
        for Pi, xyz, uv in data:
            S = inv(X) @ inv(Pi) @ Z
            out.append((project(cam, (S[:3, :3] @ xyz.T).T + S[:3, 3]) - uv).ravel())
        return np.concatenate(out)

    x0 = np.concatenate([Rotation.from_matrix(X0[:3, :3]).as_rotvec() + 0.01, X0[:3, 3] + 2,
                         Rotation.from_matrix(Z0[:3, :3]).as_rotvec() - 0.01, Z0[:3, 3] - 2])
    sol = least_squares(res, x0, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    return T_of(sol.x[0:3], sol.x[3:6])


def tram_pixels(tram, d, obs_path, cam, board):
    camf, boardf = os.path.join(d, "camera.json"), os.path.join(d, "board.json")
    json.dump({"format": "tram-camera", "version": 1, "pixel_origin": "top-left-pixel-centre",
               "image_size": {"width": cam["width"], "height": cam["height"]},
               "intrinsics": {k: cam[k] for k in ("fx", "fy", "cx", "cy", "skew")},
               "distortion": {"model": "radial2", "k1": cam["k1"], "k2": cam["k2"]}}, open(camf, "w"))
    json.dump({"format": "tram-board", "version": 1, "kind": "chessboard", "cols": board["cols"],
               "rows": board["rows"], "square": board["square"], "length_unit": "mm"}, open(boardf, "w"))
    out = subprocess.run([tram, "solve", "--json", "--no-robust", "--no-convention-check", "--pixels", obs_path,
                          "--camera", camf, "--board", boardf, os.path.join(DEMO, "wrist_camera.csv")],
                         capture_output=True, text=True)
    if out.returncode not in (0, 3) or not out.stdout:
        print(out.stderr)
        sys.exit(1)
    return np.array(json.loads(out.stdout)["transforms"]["T_flange_sensor"]["matrix"])


def main():
    tram, out_dir = sys.argv[1], sys.argv[2]
    files = sorted(glob.glob(os.path.join(out_dir, "render-seeds", "seed_*.csv")),
                   key=lambda p: int(p.rsplit("_", 1)[1].split(".")[0]))
    if not files:
        print("check_render_scipy: FAILED: no detections in %s/render-seeds (written by "
              "tests/test_pixel_render.c)" % out_dir)
        sys.exit(1)
    cam, board, X_true, Z_true, P = load_scene(tram)
    et, er, rt, rr, gap_t, gap_r = [], [], [], [], 0.0, 0.0
    print("check_render_scipy: %d seeds of rendered, detected corners (noise seeds 59001 ..)" % len(files))
    with tempfile.TemporaryDirectory() as d:
        for path in files:
            obs = read_obs(path)
            X = tram_pixels(tram, d, path, cam, board)
            Xr = reference(cam, board, P, obs, X_true, Z_true)
            et.append(np.linalg.norm(X[:3, 3] - X_true[:3, 3]))
            er.append(rot_deg(X, X_true))
            rt.append(np.linalg.norm(Xr[:3, 3] - X_true[:3, 3]))
            rr.append(rot_deg(Xr, X_true))
            gap_t = max(gap_t, np.linalg.norm(X[:3, 3] - Xr[:3, 3]))
            gap_r = max(gap_r, rot_deg(X, Xr))
    rmse = lambda v: float(np.sqrt(np.mean(np.square(v))))
    print("check_render_scipy: X RMSE: tram %.6f mm / %.7f deg, SciPy ML reference %.6f mm / %.7f deg; "
          "largest difference %.2e mm / %.2e deg" % (rmse(et), rmse(er), rmse(rt), rmse(rr), gap_t, gap_r))
    ok = rmse(et) <= 1.1 * rmse(rt) and rmse(er) <= 1.1 * rmse(rr) and gap_t < 1e-4 and gap_r < 1e-5
    print("check_render_scipy: %s" % ("ok" if ok else "FAILED"))
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
