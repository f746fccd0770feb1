#!/usr/bin/python3
"""Reference check of tram's rotation conversions and transform algebra
against SciPy's scipy.spatial.transform.Rotation (Debian python3-scipy).

Every number tram computes here is compared with SciPy's result for the same
input: quaternion <-> matrix, rotation vector <-> matrix, Euler angles in
all 24 conventions (SciPy: upper-case sequence = intrinsic, lower-case =
extrinsic), composition, inversion, applying to points, and the chordal
rotation mean (SciPy Rotation.mean).  Random inputs use a fixed, printed
seed.  Exit status 0 when every check passes.
"""
import os
import subprocess
import sys

import numpy as np
from scipy.spatial.transform import Rotation

SEED = 20261201
N = 2000
SEQS = ["xyz", "xzy", "yxz", "yzx", "zxy", "zyx", "xyx", "xzx", "yxy", "yzy", "zxz", "zyz"]


def run(helper, lines):
    out = subprocess.run([helper], input="\n".join(lines) + "\n", capture_output=True,
                         text=True, check=True).stdout
    return np.array([[float(x) for x in l.split()] for l in out.strip().split("\n")])


def quat_wxyz(rot):
    q = rot.as_quat()  # SciPy stores x, y, z, w (scalar last)
    return np.concatenate([q[..., 3:4], q[..., 0:3]], axis=-1)


def canonical(q):
    q = np.array(q, dtype=float)
    for row in q:
        nz = row[np.abs(row) > 0]
        if nz.size and nz[0] < 0:
            row *= -1
    return q


def fmt(v):
    return " ".join(repr(float(x)) for x in np.ravel(v))


def angdiff(a, b):
    d = np.abs(a - b) % (2 * np.pi)
    return np.minimum(d, 2 * np.pi - d)


def main():
    helper = os.path.abspath(sys.argv[1])
    print(f"check_rotation_scipy: seed {SEED}, {N} random rotations, SciPy Rotation")
    rng = np.random.default_rng(SEED)
    rots = Rotation.random(N, random_state=SEED)
    mats = rots.as_matrix()
    fails = 0
    checks = 0

    def expect(name, got, want, tol):
        nonlocal fails, checks
        checks += 1
        err = float(np.max(np.abs(np.asarray(got) - np.asarray(want))))
        if not err <= tol:
            fails += 1
            print(f"FAIL {name}: max error {err:.3g} > {tol:g}")
        else:
            print(f"ok   {name}: max error {err:.3g} (SciPy Rotation)")

    q = quat_wxyz(rots)
    got = run(helper, ["quat2mat " + fmt(x) for x in q]).reshape(N, 3, 3)
    expect("quaternion -> matrix", got, mats, 1e-14)
    got = run(helper, ["mat2quat " + fmt(m) for m in mats])
    expect("matrix -> quaternion (canonical sign)", got, canonical(q), 1e-14)

    rv = rots.as_rotvec()
    got = run(helper, ["rotvec2mat " + fmt(x) for x in rv]).reshape(N, 3, 3)
    expect("rotation vector -> matrix", got, mats, 1e-14)
    got = run(helper, ["mat2rotvec " + fmt(m) for m in mats])
    expect("matrix -> rotation vector", got, rv, 1e-12)

    for seq in SEQS:
        for kind, sc in (("intrinsic", seq.upper()), ("extrinsic", seq)):
            name = f"{seq}-{kind}"
            ang = rots.as_euler(sc)
            got = run(helper, [f"euler2mat {name} " + fmt(a) for a in ang]).reshape(N, 3, 3)
            expect(f"euler {name} -> matrix", got, Rotation.from_euler(sc, ang).as_matrix(),
                   1e-14)
            got = run(helper, [f"mat2euler {name} " + fmt(m) for m in mats])
            expect(f"matrix -> euler {name}", angdiff(got, ang), np.zeros_like(ang), 1e-10)

    # Composition, inversion and points: T = (R, t) with SciPy doing R.
    ta = rng.uniform(-500, 500, (N, 3))
    tb = rng.uniform(-500, 500, (N, 3))
    rb = Rotation.random(N, random_state=SEED + 1)
    qa, qb = quat_wxyz(rots), quat_wxyz(rb)
    got = run(helper, ["compose " + fmt(np.concatenate([qa[i], ta[i], qb[i], tb[i]]))
                       for i in range(N)]).reshape(N, 4, 4)
    want_r = (rots * rb).as_matrix()
    want_t = rots.apply(tb) + ta
    expect("compose rotation (SciPy Rotation product)", got[:, :3, :3], want_r, 1e-14)
    expect("compose translation", got[:, :3, 3], want_t, 1e-10)
    got = run(helper, ["invert " + fmt(np.concatenate([qa[i], ta[i]])) for i in range(N)]).reshape(N, 4, 4)
    inv = rots.inv()
    expect("invert rotation (SciPy Rotation.inv)", got[:, :3, :3], inv.as_matrix(), 1e-14)
    expect("invert translation", got[:, :3, 3], -inv.apply(ta), 1e-10)
    p = rng.uniform(-100, 100, (N, 3))
    got = run(helper, ["apply " + fmt(np.concatenate([qa[i], ta[i], p[i]])) for i in range(N)])
    expect("apply to point (SciPy Rotation.apply)", got, rots.apply(p) + ta, 1e-10)

    # Chordal L2 mean of clusters of rotations.
    lines, want = [], []
    for k in range(50):
        centre = Rotation.random(random_state=SEED + 10 + k)
        spread = Rotation.from_rotvec(rng.normal(0, 0.3, (20, 3)))
        cluster = centre * spread
        lines.append("mean 20 " + fmt(quat_wxyz(cluster)))
        want.append(canonical(quat_wxyz(cluster.mean())[None, :])[0])
    got = run(helper, lines)
    expect("chordal rotation mean (SciPy Rotation.mean)", got, np.array(want), 1e-12)

    print(f"{checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
