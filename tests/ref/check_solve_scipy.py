#!/usr/bin/python3
"""Reference check of tram solve against an independent solver written on
SciPy's scipy.optimize.least_squares (Debian python3-scipy).

Noisy eye-in-hand and eye-to-hand stations are generated with NumPy (fixed,
printed seed) and written as record files.  tram solves them with fixed
weights (--noise) and plain least squares (--no-robust); the reference
minimises the same objective - per station, the rotation vector of
R_Z^T R_pred over the angle noise and t_pred - t_Z over the length noise,
with pred = P_i X S_i - from a perturbed truth with scipy.optimize.
least_squares (method "lm"), rotations via SciPy Rotation.  Both answers
must agree to 1e-6 deg and 1e-6 mm.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.optimize import least_squares
from scipy.spatial.transform import Rotation

from refcommon import inv, noisy, pose, write_records

SEED = 424242
SIG_DEG, SIG_MM = 0.05, 0.2


def reference(P, S, X0, Z0):
    sa, sl = np.radians(SIG_DEG), SIG_MM

    def unpack(x):
        X = pose(Rotation.from_rotvec(x[0:3]), x[3:6])
        Z = pose(Rotation.from_rotvec(x[6:9]), x[9:12])
        return X, Z

    def residuals(x):
        X, Z = unpack(x)
        out = []
        for Pi, Si in zip(P, S):
            pred = Pi @ X @ Si
            dr = Rotation.from_matrix(Z[:3, :3].T @ pred[:3, :3]).as_rotvec()
            out += list(dr / sa) + list((pred[:3, 3] - Z[:3, 3]) / sl)
        return np.array(out)

    x0 = np.concatenate([Rotation.from_matrix(X0[:3, :3]).as_rotvec(), X0[:3, 3],
                         Rotation.from_matrix(Z0[:3, :3]).as_rotvec(), Z0[:3, 3]])
    sol = least_squares(residuals, x0, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    return unpack(sol.x)


def compare(name, A, B):
    ang = np.degrees(Rotation.from_matrix(A[:3, :3].T @ B[:3, :3]).magnitude())
    dist = float(np.linalg.norm(A[:3, 3] - B[:3, 3]))
    good = ang < 1e-6 and dist < 1e-6
    print(f"{'ok  ' if good else 'FAIL'} {name}: tram vs scipy.optimize.least_squares differ by "
          f"{ang:.2e} deg, {dist:.2e} mm")
    return good


def main():
    tram = os.path.abspath(sys.argv[1])
    rng = np.random.default_rng(SEED)
    print(f"check_solve_scipy: seed {SEED}")
    fails = checks = 0
    for setup in ("eye-in-hand", "eye-to-hand"):
        X = pose(Rotation.random(random_state=rng), rng.uniform(-100, 100, 3))
        Z = pose(Rotation.random(random_state=rng), np.array([700.0, -100.0, 300.0]))
        F, S = [], []
        for _ in range(18):
            Rf = Rotation.from_euler("x", 180, degrees=True) * Rotation.from_rotvec(
                rng.normal(0, [0.6, 0.6, 1.5]))
            Fi = pose(Rf, rng.uniform([500, -200, 400], [800, 200, 700]))
            P = Fi if setup == "eye-in-hand" else inv(Fi)
            Si = inv(P @ X) @ Z
            F.append(noisy(rng, Fi, 0.01, 0.05))
            S.append(noisy(rng, Si, SIG_DEG, SIG_MM))
        with tempfile.TemporaryDirectory() as d:
            path = os.path.join(d, "stations.csv")
            write_records(path, setup, F, S)
            out = subprocess.run([tram, "solve", "--json", "--no-robust", "--no-convention-check",
                                  "--noise", f"{SIG_MM}mm,{SIG_DEG}deg", path],
                                 capture_output=True, text=True)
        if out.returncode not in (0, 3):
            print(out.stderr)
            return 1
        doc = json.loads(out.stdout)
        names = ("T_flange_sensor", "T_base_target") if setup == "eye-in-hand" else \
            ("T_base_sensor", "T_flange_target")
        tX = np.array(doc["transforms"][names[0]]["matrix"])
        tZ = np.array(doc["transforms"][names[1]]["matrix"])
        P = F if setup == "eye-in-hand" else [inv(a) for a in F]
        X0 = noisy(rng, X, 2.0, 5.0)
        Z0 = noisy(rng, Z, 2.0, 5.0)
        rX, rZ = reference(P, S, X0, Z0)
        for nm, a, b in ((names[0], tX, rX), (names[1], tZ, rZ)):
            checks += 1
            fails += 0 if compare(f"{setup} {nm}", a, b) else 1
    print(f"{checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
