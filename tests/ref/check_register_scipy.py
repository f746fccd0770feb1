#!/usr/bin/python3
"""Reference check of tram register against SciPy's
scipy.spatial.transform.Rotation.align_vectors (rigid, weighted, on centred
points) and a NumPy SVD reference (Umeyama's similarity, written out in
NumPy), on random point sets with noise (seed fixed and printed).
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation

SEED = 31337


def umeyama_numpy(x, y, w, scale):
    w = w / w.sum()
    mx, my = w @ x, w @ y
    xc, yc = x - mx, y - my
    sig = (yc * w[:, None]).T @ xc
    U, D, Vt = np.linalg.svd(sig)
    S = np.eye(3)
    if np.linalg.det(U) * np.linalg.det(Vt) < 0:
        S[2, 2] = -1
    R = U @ S @ Vt
    c = np.trace(np.diag(D) @ S) / (w @ (xc ** 2).sum(1)) if scale else 1.0
    return R, c, my - c * R @ mx


def main():
    tram = os.path.abspath(sys.argv[1])
    rng = np.random.default_rng(SEED)
    print(f"check_register_scipy: seed {SEED}")
    fails = checks = 0
    for trial in range(40):
        n = int(rng.integers(4, 200))
        R = Rotation.random(random_state=rng)
        c = float(rng.uniform(0.5, 2.0)) if trial % 2 else 1.0
        t = rng.uniform(-500, 500, 3)
        x = rng.normal(0, 200, (n, 3)) + rng.uniform(-1000, 1000, 3)
        y = c * R.apply(x) + t + rng.normal(0, 0.5, (n, 3))
        w = rng.uniform(0.2, 2.0, n) if trial % 3 else np.ones(n)
        with tempfile.TemporaryDirectory() as d:
            path = os.path.join(d, "pairs.csv")
            with open(path, "w") as f:
                f.write("# length-unit: mm\nfrom_x,from_y,from_z,to_x,to_y,to_z,weight\n")
                for a, b, ww in zip(x, y, w):
                    f.write(",".join(repr(float(v)) for v in list(a) + list(b) + [ww]) + "\n")
            args = [tram, "register", "--json", path] + (["--scale"] if c != 1.0 else [])
            out = subprocess.run(args, capture_output=True, text=True)
        if out.returncode != 0:
            print(out.stderr)
            return 1
        doc = json.loads(out.stdout)
        M = np.array(doc["transforms"]["T_to_from"]["matrix"])
        Rn, cn, tn = umeyama_numpy(x, y, w, c != 1.0)
        checks += 1
        ok = np.abs(M[:3, :3] - Rn).max() < 1e-9 and abs(doc["scale"] - cn) < 1e-9 and \
            np.abs(M[:3, 3] - tn).max() < 1e-6
        if c == 1.0:
            wn = w / w.sum()
            ra, _ = Rotation.align_vectors(y - wn @ y, x - wn @ x, weights=w)
            ok = ok and np.abs(ra.as_matrix() - M[:3, :3]).max() < 1e-9
        fails += 0 if ok else 1
        if not ok:
            print(f"FAIL trial {trial}: n={n} scale={c}")
    print(f"{'ok  ' if not fails else 'FAIL'} tram register vs NumPy SVD (Umeyama) and "
          f"SciPy Rotation.align_vectors: {checks} random cases")
    print(f"{checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
