"""NumPy reference for bench/bench_register.c (a benchmark, never product code).

Reads N point pairs written by the C benchmark (float64: 3N "from" coordinates,
then 3N "to" coordinates), and times the usual SVD solution of the rigid
registration (Kabsch 1976; Arun, Huang & Blostein 1987; reflection handled as in
Umeyama 1991): centroids, centred cross-covariance, numpy.linalg.svd, rotation
and translation.  Prints "seconds S angle_deg A": the best of REPS runs, and the
angle between the solved rotation and the benchmark's true rotation (the
rotation vector (0.3, -0.2, 0.9) rad, as a check that both sides solved the same
problem).  Usage: ref_register_numpy.py FILE N REPS
"""
import sys
import time

import numpy as np
from scipy.spatial.transform import Rotation


def solve(x, y):
    mx = x.mean(axis=0)
    my = y.mean(axis=0)
    h = (x - mx).T @ (y - my)  # sum of dx dy^T, 3x3
    u, _, vt = np.linalg.svd(h)
    d = np.sign(np.linalg.det(vt.T @ u.T))
    r = vt.T @ np.diag([1.0, 1.0, d]) @ u.T
    return r, my - r @ mx


def main():
    path, n, reps = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    a = np.fromfile(path, dtype=np.float64, count=6 * n)
    x = a[: 3 * n].reshape(n, 3)
    y = a[3 * n :].reshape(n, 3)
    best = float("inf")
    for _ in range(reps):
        t0 = time.perf_counter()
        r, _t = solve(x, y)
        best = min(best, time.perf_counter() - t0)
    truth = Rotation.from_rotvec([0.3, -0.2, 0.9]).as_matrix()
    ang = np.degrees(np.arccos(np.clip((np.trace(truth.T @ r) - 1) / 2, -1, 1)))
    print(f"seconds {best:.9g} angle_deg {ang:.12g}")


if __name__ == "__main__":
    main()
