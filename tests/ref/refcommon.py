"""Helpers shared by the reference checks in tests/ref/: rigid transforms as
4x4 NumPy arrays, tram record files written from them, and running the tram
command.  Rotations go through SciPy Rotation (Debian python3-scipy); nothing
here computes what a check compares against."""
import json
import subprocess

import numpy as np
from scipy.spatial.transform import Rotation


def pose(R, t):
    """T from a rotation (SciPy Rotation or 3x3 matrix) and a translation."""
    T = np.eye(4)
    T[:3, :3] = R.as_matrix() if isinstance(R, Rotation) else R
    T[:3, 3] = t
    return T


def inv(T):
    R, t = T[:3, :3], T[:3, 3]
    return pose(R.T, -R.T @ t)


def noisy(rng, T, sdeg, smm):
    """T with an isotropic rotation (deg, per axis, applied on the right) and
    translation (per axis) perturbation drawn from rng."""
    R = Rotation.from_matrix(T[:3, :3]) * Rotation.from_rotvec(np.radians(rng.normal(0, sdeg, 3)))
    return pose(R, T[:3, 3] + rng.normal(0, smm, 3))


def quat_cols(T):
    """x, y, z, qw, qx, qy, qz of T: the record files' column order."""
    q = Rotation.from_matrix(T[:3, :3]).as_quat()  # SciPy order: x, y, z, w
    return list(T[:3, 3]) + [q[3], q[0], q[1], q[2]]


ROBOT_COLS = "robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz"
SENSOR_COLS = "sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz"


def write_records(path, setup, F, S=None, directives=()):
    """A CSV record file in mm: stations s01, s02, ... with the robot poses F
    and, when given, the sensor poses S (17 significant digits)."""
    with open(path, "w") as f:
        f.write(f"# setup: {setup}\n# length-unit: mm\n")
        for d in directives:
            f.write(f"# {d}\n")
        f.write("station," + ROBOT_COLS + ("," + SENSOR_COLS if S is not None else "") + "\n")
        for i, a in enumerate(F):
            cols = quat_cols(a) + (quat_cols(S[i]) if S is not None else [])
            f.write(f"s{i + 1:02d}," + ",".join("%.17g" % float(c) for c in cols) + "\n")


def rot_deg(A, B):
    """The angle between the rotations of A and B, in degrees."""
    return np.degrees(Rotation.from_matrix(A[:3, :3] @ B[:3, :3].T).magnitude())


def tram_json(tram, *args):
    """Run tram with --json; return (exit code, parsed stdout or None, stderr)."""
    r = subprocess.run([tram, *args], capture_output=True, text=True)
    return r.returncode, (json.loads(r.stdout) if r.stdout.strip() else None), r.stderr


def solve_calibration(tram, out_path, records):
    """tram solve -o out_path records; the calibration file as a dict, or
    None (with the failure printed as FAIL)."""
    r = subprocess.run([tram, "solve", "-o", out_path, records], capture_output=True, text=True)
    if r.returncode != 0:
        print(f"FAIL: solve {records}: {r.stderr}")
        return None
    with open(out_path) as f:
        return json.load(f)
