#!/usr/bin/python3
"""Reference check of tram solve --fit-scale (the sensor's length scale,
docs/solve.md) against an independent fit of the same similarity problem
written on SciPy's scipy.optimize.least_squares (Debian python3-scipy).

Stations with a planted sensor scale (sensor lengths x 1.003 = robot
lengths) are generated with NumPy (fixed, printed seed) and written as
record and point files:

- pose records, solved with fixed weights (--noise) and plain least squares
  (--no-robust): the reference minimises, per station, the rotation vector
  of R_Z^T R_pred over the angle noise and t_pred - t_Z over the length
  noise, pred = P_i X S_i(s) with S_i(s) = (R_Si, s t_Si), over X, Z and s;
- observed points without a model (--points, --no-robust): the reference
  minimises sum |P_i (R_X s p + t_X) - q_k|^2 over X, s and every q_k.

The scale's 1 sigma of the reference is sqrt(chi2/dof (J^T J)^-1) at its
solution (SciPy's Jacobian).  tram and the reference must agree to 1e-7 in
the scale and 2% in its sigma; the planted scale must lie within 4 sigma.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.optimize import least_squares
from scipy.spatial.transform import Rotation

SEED = 20231207
SCALE = 1.003
SIG_DEG, SIG_MM, SIG_PT = 0.05, 0.2, 0.1


def pose(rot, t):
    T = np.eye(4)
    T[:3, :3] = rot.as_matrix()
    T[:3, 3] = t
    return T


def inv(T):
    R, t = T[:3, :3], T[:3, 3]
    out = np.eye(4)
    out[:3, :3] = R.T
    out[:3, 3] = -R.T @ t
    return out


def noisy(rng, T, sdeg, smm):
    R = Rotation.from_matrix(T[:3, :3]) * Rotation.from_rotvec(np.radians(rng.normal(0, sdeg, 3)))
    return pose(R, T[:3, 3] + rng.normal(0, smm, 3))


def quat_cols(T):
    q = Rotation.from_matrix(T[:3, :3]).as_quat()  # x, y, z, w
    return list(T[:3, 3]) + [q[3], q[0], q[1], q[2]]


def write_records(path, F, S=None):
    with open(path, "w") as f:
        f.write("# setup: eye-in-hand\n# length-unit: mm\n")
        f.write("station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz")
        f.write(",sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz\n" if S else "\n")
        for i, a in enumerate(F):
            cols = quat_cols(a) + (quat_cols(S[i]) if S else [])
            f.write(f"s{i + 1}," + ",".join(repr(float(c)) for c in cols) + "\n")


def ref_poses(P, S, X0, Z0):
    sa, sl = np.radians(SIG_DEG), SIG_MM

    def residuals(x):
        X = pose(Rotation.from_rotvec(x[0:3]), x[3:6])
        Z = pose(Rotation.from_rotvec(x[6:9]), x[9:12])
        out = []
        for Pi, Si in zip(P, S):
            Ss = Si.copy()
            Ss[:3, 3] *= x[12]
            pred = Pi @ X @ Ss
            dr = Rotation.from_matrix(Z[:3, :3].T @ pred[:3, :3]).as_rotvec()
            out += list(dr / sa) + list((pred[:3, 3] - Z[:3, 3]) / sl)
        return np.array(out)

    x0 = np.concatenate([Rotation.from_matrix(X0[:3, :3]).as_rotvec(), X0[:3, 3],
                         Rotation.from_matrix(Z0[:3, :3]).as_rotvec(), Z0[:3, 3], [1.0]])
    sol = least_squares(residuals, x0, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    J = sol.jac
    cov = np.linalg.inv(J.T @ J) * (sol.fun @ sol.fun) / (len(sol.fun) - 13)
    return sol.x[12], float(np.sqrt(cov[12, 12]))


def ref_points(P, obs, m, X0):
    def residuals(x):
        R = Rotation.from_rotvec(x[0:3]).as_matrix()
        q = x[7:].reshape(m, 3)
        out = []
        for i, k, p in obs:
            w = P[i][:3, :3] @ (R @ (x[6] * p) + x[3:6]) + P[i][:3, 3]
            out += list(w - q[k])
        return np.array(out)

    # start: X perturbed, s = 1, each q_k the mean of its observations under X0
    R0 = X0[:3, :3]
    q0 = np.zeros((m, 3))
    cnt = np.zeros(m)
    for i, k, p in obs:
        q0[k] += P[i][:3, :3] @ (R0 @ p + X0[:3, 3]) + P[i][:3, 3]
        cnt[k] += 1
    q0 /= cnt[:, None]
    x0 = np.concatenate([Rotation.from_matrix(R0).as_rotvec(), X0[:3, 3], [1.0], q0.ravel()])
    sol = least_squares(residuals, x0, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    J = sol.jac
    cov = np.linalg.inv(J.T @ J) * (sol.fun @ sol.fun) / (len(sol.fun) - len(x0))
    return sol.x[6], float(np.sqrt(cov[6, 6]))


def run_tram(tram, args):
    out = subprocess.run([tram, "solve", "--json", "--fit-scale", "--no-robust",
                          "--no-convention-check"] + args, capture_output=True, text=True)
    if out.returncode not in (0, 3):
        print(out.stderr)
        return None
    return json.loads(out.stdout)["sensor_scale"]


def compare(name, k, s_ref, sig_ref):
    good = (k is not None and k["fitted"] and abs(k["scale"] - s_ref) < 1e-7
            and abs(k["sigma"] / sig_ref - 1) < 0.02 and abs(s_ref - SCALE) < 4 * sig_ref)
    if k is None:
        print(f"FAIL {name}: tram failed")
        return False
    print(f"{'ok  ' if good else 'FAIL'} {name}: scale tram {k['scale']:.8f} +- {k['sigma']:.6f}, "
          f"scipy.optimize.least_squares {s_ref:.8f} +- {sig_ref:.6f}: differ by "
          f"{abs(k['scale'] - s_ref):.1e} (planted {SCALE})")
    return good


def main():
    tram = os.path.abspath(sys.argv[1])
    rng = np.random.default_rng(SEED)
    print(f"check_scale_scipy: seed {SEED}")
    X = pose(Rotation.random(random_state=rng), np.array([40.0, -20.0, 90.0]))
    Z = pose(Rotation.from_euler("z", 20, degrees=True), np.array([700.0, -100.0, 0.0]))
    model = np.array([[40.0 * (k % 4), 40.0 * (k // 4), 0.0] for k in range(12)])
    F = []
    for _ in range(15):
        Rf = Rotation.from_euler("x", 180, degrees=True) * Rotation.from_rotvec(
            rng.normal(0, [0.5, 0.5, 1.5]))
        F.append(pose(Rf, rng.uniform([600, -200, 400], [800, 0, 600])))
    fails = checks = 0
    with tempfile.TemporaryDirectory() as d:
        # pose records: the sensor's translations carry the scale
        S = []
        for Fi in F:
            Si = inv(Fi @ X) @ Z
            Si[:3, 3] /= SCALE
            S.append(noisy(rng, Si, SIG_DEG, SIG_MM))
        path = os.path.join(d, "stations.csv")
        write_records(path, F, S)
        k = run_tram(tram, ["--noise", f"{SIG_MM}mm,{SIG_DEG}deg", path])
        s_ref, sig_ref = ref_poses(F, S, noisy(rng, X, 2.0, 5.0), noisy(rng, Z, 2.0, 5.0))
        checks += 1
        fails += 0 if compare("pose records", k, s_ref, sig_ref) else 1
        # observed points, model solved too
        obs = []
        rows = ["# length-unit: mm", "station,point,x,y,z"]
        for i, Fi in enumerate(F):
            T = inv(Fi @ X)
            for kk in range(len(model)):
                q = Z[:3, :3] @ model[kk] + Z[:3, 3]
                p = (T[:3, :3] @ q + T[:3, 3]) / SCALE + rng.normal(0, SIG_PT, 3)
                obs.append((i, kk, p))
                rows.append(f"s{i + 1},c{kk},{p[0]!r},{p[1]!r},{p[2]!r}")
        opath, rpath = os.path.join(d, "points.csv"), os.path.join(d, "robot.csv")
        with open(opath, "w") as f:
            f.write("\n".join(rows) + "\n")
        write_records(rpath, F)
        k = run_tram(tram, ["--points", opath, rpath])
        s_ref, sig_ref = ref_points(F, obs, len(model), noisy(rng, X, 1.0, 3.0))
        checks += 1
        fails += 0 if compare("points, model solved", k, s_ref, sig_ref) else 1
    print(f"{checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
