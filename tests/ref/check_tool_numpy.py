#!/usr/bin/python3
"""Reference check of tool (TCP) poses: robot poses logged with a tool offset
active (robot-pose: tool-in-base) and the tool declared (directive
tool-in-flange, or --tool) must give the same T_flange_sensor as the flange
poses themselves, and T_tool_sensor = T_flange_tool^-1 T_flange_sensor.

The scenario is synthetic (seed fixed and printed), made and composed here
with NumPy 4x4 matrices independently of tram (rotations from SciPy
Rotation): T_base_tool = T_base_flange T_flange_tool, T_sensor_target =
(T_base_flange X)^-1 Z.  Checked for eye-in-hand and eye-to-hand, the tool
given in another unit (cm) and convention (Euler angles, rotation vector),
tram convert --tool against the NumPy flange poses, and the refusals.
Usage: check_tool_numpy.py path/to/tram
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation

from refcommon import pose as T, rot_deg, write_records

SEED = 190190


def solve(tram, path, *extra):
    r = subprocess.run([tram, "solve", "--json", *extra, path], capture_output=True, text=True)
    return r.returncode, (json.loads(r.stdout) if r.stdout.strip() else None), r.stderr


def main():
    tram = os.path.abspath(sys.argv[1])
    rng = np.random.default_rng(SEED)
    print(f"check_tool_numpy: seed {SEED}")
    fails = checks = 0

    def check(ok, what):
        nonlocal fails, checks
        checks += 1
        fails += not ok
        print(f"  {'ok' if ok else 'FAIL'}: {what}")

    # the tool: 150 mm along the flange's z, turned 30 deg about z and 10 deg about x
    tool_R = Rotation.from_euler("ZYX", [30, 0, 10], degrees=True)  # zyx-intrinsic
    T_flange_tool = T(tool_R, [12.0, -4.0, 150.0])
    tool_text = "1.2,-0.4,15cm euler:zyx-intrinsic:30,0,10deg"
    rv = tool_R.as_rotvec(degrees=True)
    tool_text_rv = "0.012,-0.004,0.15m rotvec:%.17g,%.17g,%.17gdeg" % tuple(rv)
    with tempfile.TemporaryDirectory() as tmp:
        for setup in ("eye-in-hand", "eye-to-hand"):
            # the transform fixed to the flange is short (a bracket), the other one long
            X = T(Rotation.random(random_state=rng.integers(1 << 31)), rng.normal(0, 60 if setup == 'eye-in-hand' else 400, 3))
            Z = T(Rotation.random(random_state=rng.integers(1 << 31)), rng.normal(0, 400 if setup == 'eye-in-hand' else 60, 3))
            flange, sensor = [], []
            for _ in range(12):
                P = T(Rotation.random(random_state=rng.integers(1 << 31)), rng.normal(0, 300, 3) + [600, 0, 400])
                flange.append(P)
                if setup == "eye-in-hand":  # P X S = Z
                    sensor.append(np.linalg.inv(P @ X) @ Z)
                else:  # X = T_base_sensor, Z = T_flange_target: X S = P Z
                    sensor.append(np.linalg.inv(X) @ P @ Z)
            tool = [P @ T_flange_tool for P in flange]  # what the controller logged
            xn, zn = (("T_flange_sensor", "T_base_target") if setup == "eye-in-hand"
                      else ("T_base_sensor", "T_flange_target"))
            fixed_on_flange = X if setup == "eye-in-hand" else Z
            tn = "T_tool_sensor" if setup == "eye-in-hand" else "T_tool_target"
            want_tool = np.linalg.inv(T_flange_tool) @ fixed_on_flange  # NumPy composition

            p_dir = os.path.join(tmp, setup + "-tcp.csv")
            write_records(p_dir, setup, tool, sensor, ["robot-pose: tool-in-base", "tool-in-flange: " + tool_text])
            rc, d, err = solve(tram, p_dir)
            ok = rc == 0 and d is not None
            check(ok, f"{setup}: solve tool poses with tool-in-flange (rc {rc}) {err.strip()[:200]}")
            if ok:
                got = {k: np.array(v["matrix"]) for k, v in d["transforms"].items()}
                for name, want in ((xn, X), (zn, Z), (tn, want_tool)):
                    dt = np.linalg.norm(got[name][:3, 3] - want[:3, 3])
                    dr = rot_deg(got[name], want)
                    check(dt < 1e-6 and dr < 1e-7, f"{setup}: {name} against NumPy: {dt:.1e} mm, {dr:.1e} deg")
                Tt = np.array(d["tool_frame"]["T_flange_tool"]["matrix"])
                check(np.abs(Tt - T_flange_tool).max() < 1e-9, f"{setup}: T_flange_tool read from cm and zyx-intrinsic")

            p_opt = os.path.join(tmp, setup + "-tcp-opt.csv")
            write_records(p_opt, setup, tool, sensor, ["robot-pose: tool-in-base"])
            rc, d2, err = solve(tram, p_opt, "--tool", tool_text_rv)
            ok = rc == 0 and d2 is not None
            check(ok, f"{setup}: solve with --tool (m, rotation vector) (rc {rc})")
            if ok:
                dx = np.abs(np.array(d2["transforms"][xn]["matrix"]) - X).max()
                check(dx < 1e-6, f"{setup}: {xn} with --tool against NumPy: {dx:.1e}")
                check(d2["tool_frame"]["source"] == "--tool", f"{setup}: the tool's source is --tool")

            # the refusals: tool poses without a tool; a tool for flange poses
            rc, _, err = solve(tram, p_opt)
            check(rc == 2 and f"{os.path.basename(p_opt)}:3: error: robot-pose: tool-in-base" in err
                  and "tool's pose in the flange frame is not given" in err,
                  f"{setup}: tool poses without a tool refused: {err.strip()[:160]}")
            p_fl = os.path.join(tmp, setup + "-flange.csv")
            write_records(p_fl, setup, flange, sensor, [])
            rc, _, err = solve(tram, p_fl, "--tool", tool_text)
            check(rc == 2 and "not declared as tool poses" in err, f"{setup}: --tool for flange poses refused")

            # tram convert --tool: the flange poses, as NumPy composes them
            r = subprocess.run([tram, "convert", "--to", "matrix", "--tool", tool_text, p_opt],
                               capture_output=True, text=True)
            ok = r.returncode == 0
            if ok:
                lines = [l for l in r.stdout.splitlines() if l and not l.startswith("#")]
                hdr = lines[0].split(",")
                worst = 0.0
                for l, P in zip(lines[1:], flange):
                    v = dict(zip(hdr, l.split(",")))
                    M = np.eye(4)
                    for i in range(3):
                        M[i, 3] = float(v["robot_" + "xyz"[i]])
                        for j in range(3):
                            M[i, j] = float(v[f"robot_r{i + 1}{j + 1}"])
                    worst = max(worst, np.abs(M - P).max())
                ok = worst < 1e-9 and "# robot-pose: flange-in-base" in r.stdout
                print(f"    convert --tool: largest difference from NumPy's flange poses {worst:.1e}")
            check(ok, f"{setup}: convert --tool writes flange poses")
    print(f"check_tool_numpy: {checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
