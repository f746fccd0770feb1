#!/usr/bin/python3
"""Reference check of tram plan's information matrix, its log determinant and
the predicted 1-sigma of X, recomputed with NumPy (numpy.linalg.slogdet,
numpy.linalg.inv; Debian python3-numpy) and SciPy's
scipy.spatial.transform.Rotation (rotation vectors) from the poses that
`tram plan --json` prints: the estimate X, Z, the noise and per station the
flange pose and the observation predicted there.

The residual of a station, its parameters and their order follow docs/plan.md
and docs/solve.md, written here independently: with Zhat = P X S,
    r = (rotvec(R_Z^T R_Zhat) / sigma_angle, (t_Zhat - t_Z) / sigma_length),
X(x) = (R_X exp(w_X), t_X + dt_X), likewise Z, x = (w_X, dt_X, w_Z, dt_Z);
its Jacobian by central differences (steps 1e-6 rad and 1e-4 of the length
scale).  Information H = sum J^T J; predicted covariance H^-1.  Plans of two
demo cells (eye-in-hand with a box, and with the demo arm's chain), seeds 1
and 5, printed.
"""
import json
import os
import re
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation


def pose(m):
    return np.array(m, dtype=float)


def perturbed(T, w, dt):
    out = T.copy()
    out[:3, :3] = T[:3, :3] @ Rotation.from_rotvec(w).as_matrix()
    out[:3, 3] = T[:3, 3] + dt
    return out


def residual(P, S, X, Z, sl, sa):
    Zh = P @ X @ S
    rv = Rotation.from_matrix(Z[:3, :3].T @ Zh[:3, :3]).as_rotvec()
    return np.concatenate([rv / sa, (Zh[:3, 3] - Z[:3, 3]) / sl])


def jacobian(P, S, X, Z, sl, sa, ht):
    J = np.zeros((6, 12))
    for p in range(12):
        h = 1e-6 if p % 6 < 3 else ht
        cols = []
        for sgn in (1, -1):
            x = np.zeros(12)
            x[p] = sgn * h
            Xp = perturbed(X, x[0:3], x[3:6])
            Zp = perturbed(Z, x[6:9], x[9:12])
            cols.append(residual(P, S, Xp, Zp, sl, sa))
        J[:, p] = (cols[0] - cols[1]) / (2 * h)
    return J


def check(tram, cell, seed, label, extra):
    out = subprocess.run([tram, "plan", "--setup", "eye-in-hand", "--cell", cell, "--seed", str(seed),
                          "--json"] + extra, capture_output=True, text=True)
    if out.returncode != 0:
        print(f"FAIL {label}: tram plan exited {out.returncode}: {out.stderr.strip()}")
        return 1
    d = json.loads(out.stdout)
    X = pose(d["estimate"]["T_flange_sensor"])
    Z = pose(d["estimate"]["T_base_target"])
    sl = d["noise"]["length"]
    sa = np.radians(d["noise"]["angle_deg"])
    lo, hi = [float(v) for v in re.findall(r'"distance": \[([0-9.]+), ([0-9.]+)\]', open(cell).read())[0]]
    ht = 1e-4 * (lo + hi) / 2
    H = np.zeros((12, 12))
    for st in d["stations"]:
        P = pose(st["T_base_flange"])
        S = pose(st["T_sensor_target_predicted"])
        J = jacobian(P, S, X, Z, sl, sa, ht)
        H += J.T @ J
    Ht = np.array(d["information"]).reshape(12, 12)
    rel_info = np.max(np.abs(H - Ht)) / np.max(np.abs(H))
    sign, logdet = np.linalg.slogdet(H)
    C = np.linalg.inv(H)
    sig_t = np.sqrt(np.trace(C[3:6, 3:6]))
    sig_r = np.degrees(np.sqrt(np.trace(C[0:3, 0:3])))
    pl = d["sigma_X"]["planned"]
    e_logdet = abs(logdet - d["logdet_planned"])
    e_t = abs(sig_t / pl["translation"] - 1)
    e_r = abs(sig_r / pl["rotation_deg"] - 1)
    # Central differences of both sides agree to about 1e-7 relative.
    good = sign > 0 and rel_info < 1e-6 and e_logdet < 1e-5 and e_t < 1e-6 and e_r < 1e-6
    print(f"{'ok  ' if good else 'FAIL'} {label} (seed {seed}, {len(d['stations'])} stations): information "
          f"rel. diff {rel_info:.1e}, log det {logdet:.6f} vs {d['logdet_planned']:.6f}, sigma "
          f"{sig_t:.5g} mm / {sig_r:.5g} deg vs {pl['translation']:.5g} / {pl['rotation_deg']:.5g}")
    return 0 if good else 1


def main():
    tram = os.path.abspath(sys.argv[1])
    root = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..")
    cell = os.path.join(root, "datasets", "demo", "cell_wrist.json")
    arm = os.path.join(root, "datasets", "demo", "arm_dh.json")
    print("check_plan_numpy: tram plan's information against NumPy / SciPy Rotation")
    fails = check(tram, cell, 1, "demo cell, flange box", [])
    with tempfile.TemporaryDirectory() as tmp:
        text = open(cell).read()
        text = re.sub(r'"box": \{[^}]*\},', f'"chain": "{arm}",', text)
        chain_cell = os.path.join(tmp, "cell_chain.json")
        open(chain_cell, "w").write(text)
        fails += check(tram, chain_cell, 5, "demo cell, arm chain", ["--stations", "5", "--candidates", "60"])
    print(f"{2 - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
