#!/usr/bin/python3
"""Reference check of tram fk against an independent composition of random
kinematic chains with SciPy's scipy.spatial.transform.Rotation (Debian
python3-scipy): random generic chains (fixed transforms with random rotations,
revolute and prismatic joints about random unit axes, offsets, encoder
scales), random joint readings, and the flange pose composed element by
element in NumPy.  Seed fixed and printed.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation

SEED = 777


def main():
    tram = os.path.abspath(sys.argv[1])
    rng = np.random.default_rng(SEED)
    print(f"check_chain_scipy: seed {SEED}, 20 random chains x 10 stations")
    fails = checks = 0
    worst = 0.0
    for trial in range(20):
        elements, spec = [], []
        for _ in range(int(rng.integers(2, 8))):
            rot = Rotation.random(random_state=rng)
            t = rng.uniform(-300, 300, 3)
            q = rot.as_quat()
            spec.append({"fixed": {"translation": list(t),
                                   "rotation": {"quat_wxyz": [q[3], q[0], q[1], q[2]]}}})
            elements.append(("fixed", rot, t))
            axis = rng.normal(size=3)
            axis /= np.linalg.norm(axis)
            kind = "revolute" if rng.uniform() < 0.75 else "prismatic"
            offset = float(rng.uniform(-30, 30))
            scale = float(rng.choice([1.0, -1.0, 0.5]))
            spec.append({"joint": kind, "axis": list(axis), "offset": offset, "scale": scale})
            elements.append((kind, axis, offset, scale))
        chain = {"format": "tram-chain", "version": 1, "length_unit": "mm", "angle_unit": "deg",
                 "elements": spec}
        nj = sum(1 for e in elements if e[0] != "fixed")
        readings = rng.uniform(-90, 90, (10, nj))
        want = []
        for q in readings:
            R, p, j = Rotation.identity(), np.zeros(3), 0
            for e in elements:
                if e[0] == "fixed":
                    p, R = p + R.apply(e[2]), R * e[1]
                    continue
                v = e[3] * q[j] + e[2]
                j += 1
                if e[0] == "revolute":
                    R = R * Rotation.from_rotvec(np.radians(v) * e[1])
                else:
                    p = p + R.apply(v * e[1])
            want.append((R, p))
        with tempfile.TemporaryDirectory() as d:
            cpath, rpath = os.path.join(d, "chain.json"), os.path.join(d, "joints.csv")
            json.dump(chain, open(cpath, "w"))
            with open(rpath, "w") as f:
                f.write("# length-unit: mm\n# angle-unit: deg\nstation,"
                        + ",".join(f"joint_{k + 1}" for k in range(nj)) + "\n")
                for i, q in enumerate(readings):
                    f.write(f"s{i}," + ",".join(repr(float(x)) for x in q) + "\n")
            out = subprocess.run([tram, "fk", "--chain", cpath, "--to", "matrix", rpath],
                                 capture_output=True, text=True)
        if out.returncode != 0:
            print(out.stderr)
            return 1
        rows = [l.split(",") for l in out.stdout.splitlines() if l.startswith("s") and not l.startswith("station")]
        for (R, p), row in zip(want, rows):
            v = np.array([float(x) for x in row[1:13]])
            err_t = np.max(np.abs(v[0:3] - p))
            err_r = np.max(np.abs(v[3:12].reshape(3, 3) - R.as_matrix()))
            worst = max(worst, err_t / 1000, err_r)
            checks += 1
            if not (err_t < 1e-9 * 1000 and err_r < 1e-12):
                fails += 1
    print(f"{'ok  ' if not fails else 'FAIL'} tram fk vs SciPy Rotation composition: worst "
          f"error {worst:.2e} (rotation entries; translation per m)")
    print(f"{checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
