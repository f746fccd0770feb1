"""Tests of the Python package (python/tram) against the command's JSON on
the same files, against SciPy Rotation (Debian python3-scipy) for the
rotation conversions, and against Umeyama's (1991) worked example for the
registration.  Run by `make python-tests` (Debian's python3-pytest):

    TRAM=build/tram TRAM_LIBRARY=build/libtram.so PYTHONPATH=python \
        /usr/bin/python3 -m pytest tests/python

Data: the demo scenario (datasets/demo, invented) and files made here.
"""
import json
import os
import subprocess

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import tram

ROOT = os.path.normpath(os.path.join(os.path.dirname(__file__), "..", ".."))
DEMO = os.path.join(ROOT, "datasets", "demo")
TRAM = os.environ.get("TRAM", os.path.join(ROOT, "build", "tram"))
SEED = 20261202


def run_json(*args):
    p = subprocess.run([TRAM, *args], capture_output=True, text=True)
    assert p.stdout, p.stderr
    return json.loads(p.stdout), p.returncode


def angle_deg(Ra, Rb):
    return np.degrees(Rotation.from_matrix(Ra.T @ Rb).magnitude())


def test_read_records_matches_command():
    r = tram.read_records(os.path.join(DEMO, "wrist_camera.csv"))
    assert len(r) == 20 and r.length_unit == "mm" and r.setup == "eye-in-hand"
    assert r.T_base_flange.shape == (20, 4, 4) and r.T_sensor_target.shape == (20, 4, 4)
    # the command's matrix form of the same file, read back
    p = subprocess.run([TRAM, "convert", "--to", "matrix", os.path.join(DEMO, "wrist_camera.csv")],
                       capture_output=True, text=True, check=True)
    rows = [ln.split(",") for ln in p.stdout.splitlines() if ln and not ln.startswith("#")]
    head, rows = rows[0], rows[1:]
    col = {n: i for i, n in enumerate(head)}
    for k, row in enumerate(rows):
        assert row[col["station"]] == r.station_ids[k]
        for a in range(3):
            assert abs(float(row[col["robot_" + "xyz"[a]]]) - r.T_base_flange[k, a, 3]) < 1e-9
            for b in range(3):
                assert abs(float(row[col[f"robot_r{a + 1}{b + 1}"]]) - r.T_base_flange[k, a, b]) < 1e-12


@pytest.mark.parametrize("name", ["wrist_camera.csv", "overhead_camera.csv"])
def test_solve_matches_command(name):
    path = os.path.join(DEMO, name)
    doc, rc = run_json("solve", "--json", path)
    s = tram.solve(path)
    assert s.trustworthy == doc["trustworthy"] and rc == (0 if s.trustworthy else 3)
    for k, v in doc["transforms"].items():
        assert np.allclose(getattr(s, k), np.array(v["matrix"]), rtol=0, atol=1e-9)
    assert s.station_ids == [x["station"] for x in doc["residuals"]["stations"]]
    assert list(s.outliers) == [x["outlier"] for x in doc["residuals"]["stations"]]
    x_name = list(doc["transforms"])[0]
    sig = doc["uncertainty"][x_name]["translation_sigma"]
    assert np.allclose(np.sqrt(np.diag(s.covariance)[:3]), sig, rtol=1e-9)
    if name.startswith("wrist"):
        assert s.setup == "eye-in-hand" and s.T_flange_sensor.shape == (4, 4)
    else:
        assert s.setup == "eye-to-hand" and s.T_base_sensor.shape == (4, 4)


def test_solve_fit_scale_matches_command():
    path = os.path.join(DEMO, "wrist_camera.csv")
    doc, rc = run_json("solve", "--json", "--fit-scale", path)
    s = tram.solve(path, fit_scale=True)
    assert s.sensor_scale["fitted"] and doc["sensor_scale"]["fitted"]
    assert abs(s.sensor_scale["scale"] - doc["sensor_scale"]["scale"]) < 1e-12
    assert not tram.solve(path).sensor_scale["fitted"]


def test_solve_from_arrays_equals_file():
    r = tram.read_records(os.path.join(DEMO, "wrist_camera.csv"))
    a = tram.records_from_poses(r.T_base_flange, r.T_sensor_target, length_unit="mm",
                                setup="eye-in-hand", station_ids=r.station_ids)
    s1, s2 = tram.solve(r), tram.solve(a)
    assert np.allclose(s1.T_flange_sensor, s2.T_flange_sensor, atol=1e-9)
    assert angle_deg(s1.T_base_target[:3, :3], s2.T_base_target[:3, :3]) < 1e-9


def test_register_umeyama_example_and_command(tmp_path):
    # Umeyama (1991), section IV: the 2D example with a similarity
    src = np.array([[0, 0], [1, 0], [0, 2]], float)
    dst = np.array([[0, 0], [-1, 0], [0, 2]], float)
    res = tram.register(src, dst, scale=True)
    T = res["T_to_from"]
    assert abs(res["scale"] - 0.721) < 5e-4
    assert abs(T[0, 0] - 0.832) < 5e-4 and abs(T[0, 1] - 0.555) < 5e-4
    f = tmp_path / "pairs.csv"
    f.write_text("# length-unit: mm\nfrom_x,from_y,to_x,to_y\n0,0,0,0\n1,0,-1,0\n0,2,0,2\n")
    doc, rc = run_json("register", "--scale", "--json", str(f))
    assert rc == 0 and abs(doc["scale"] - res["scale"]) < 1e-12


def test_register_against_numpy_svd():
    rng = np.random.default_rng(SEED)
    print(f"seed {SEED}")
    R = Rotation.random(random_state=SEED).as_matrix()
    A = rng.normal(size=(50, 3)) * 100
    B = A @ R.T + np.array([10.0, -5.0, 3.0])
    res = tram.register(A, B)
    assert angle_deg(res["T_to_from"][:3, :3], R) < 1e-9
    assert res["rms"] < 1e-9


def test_check_matches_command(tmp_path):
    cal = str(tmp_path / "cal.json")
    subprocess.run([TRAM, "solve", "-o", cal, os.path.join(DEMO, "wrist_camera.csv")],
                   capture_output=True, check=True)
    for name, verdict in [("wrist_recheck.csv", "ok"), ("wrist_bumped.csv", "sensor-moved")]:
        doc, _ = run_json("check", "--json", "--calibration", cal, os.path.join(DEMO, name))
        mine = tram.check(cal, os.path.join(DEMO, name))
        assert mine["verdict"] == doc["verdict"] == verdict


def test_fk_matches_command():
    chain = os.path.join(DEMO, "arm_dh.json")
    r = tram.read_records(os.path.join(DEMO, "wrist_camera_joints.csv"))
    p = subprocess.run([TRAM, "fk", "--chain", chain, "--to", "matrix",
                        os.path.join(DEMO, "wrist_camera_joints.csv")], capture_output=True, text=True)
    assert p.returncode == 0, p.stderr
    rows = [ln.split(",") for ln in p.stdout.splitlines() if ln and not ln.startswith("#")]
    head, rows = rows[0], rows[1:]
    col = {n: i for i, n in enumerate(head)}
    src = open(os.path.join(DEMO, "wrist_camera_joints.csv")).read().splitlines()
    jhead = [ln for ln in src if ln and not ln.startswith("#")][0].split(",")
    jrows = [ln.split(",") for ln in src if ln and not ln.startswith("#")][1:]
    jcols = [i for i, n in enumerate(jhead) if n.startswith("joint_")]
    q = np.array([[float(x[i]) for i in jcols] for x in jrows])
    T = tram.fk(chain, q)
    assert len(T) == len(rows) == len(r)
    for k, row in enumerate(rows):
        for a in range(3):
            assert abs(float(row[col["robot_" + "xyz"[a]]]) - T[k, a, 3]) < 1e-9


EULER = [f"{s}-{k}" for k in ("intrinsic", "extrinsic")
         for s in ("xyz", "xzy", "yxz", "yzx", "zxy", "zyx", "xyx", "xzx", "yxy", "yzy", "zxz", "zyz")]


@pytest.mark.parametrize("seq", EULER)
def test_euler_against_scipy(seq):
    # SciPy Rotation: upper-case axes are intrinsic, lower-case extrinsic
    axes, kind = seq.split("-")
    sp = axes.upper() if kind == "intrinsic" else axes
    rng = np.random.default_rng(SEED)
    ang = rng.uniform(-np.pi, np.pi, size=(200, 3))
    ang[:, 1] = rng.uniform(0.1, np.pi - 0.1, size=200) if axes[0] == axes[2] else rng.uniform(-1.4, 1.4, size=200)
    R = tram.euler_to_matrix(seq, ang)
    assert np.allclose(R, Rotation.from_euler(sp, ang).as_matrix(), atol=1e-12)
    back = tram.matrix_to_euler(seq, R)
    assert np.allclose(tram.euler_to_matrix(seq, back), R, atol=1e-12)


def test_quat_and_rotvec_against_scipy():
    rot = Rotation.random(500, random_state=SEED)
    R = rot.as_matrix()
    q_xyzw = rot.as_quat()
    q = np.column_stack([q_xyzw[:, 3], q_xyzw[:, :3]])
    assert np.allclose(tram.quat_wxyz_to_matrix(q), R, atol=1e-12)
    mine = tram.matrix_to_quat_wxyz(R)
    # q and -q are the same rotation: compare by angle
    assert all(angle_deg(a, b) < 1e-9 for a, b in zip(tram.quat_wxyz_to_matrix(mine), R))
    assert np.allclose(tram.rotvec_to_matrix(rot.as_rotvec()), R, atol=1e-12)
    assert np.allclose(tram.matrix_to_rotvec(R), rot.as_rotvec(), atol=1e-9)


def test_errors_carry_file_line_column(tmp_path):
    f = tmp_path / "bad.csv"
    f.write_text("# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n"
                 "1,0,zero,0,1,0,0,0\n")
    with pytest.raises(tram.InputError) as e:
        tram.read_records(str(f))
    assert e.value.line == 3 and e.value.column == 5 and "expected a number" in e.value.message
    assert str(e.value).startswith(f"{f}:3:5: ")
    with pytest.raises(tram.FileError):
        tram.read_records(str(tmp_path / "nosuch.csv"))
    with pytest.raises(tram.InputError):
        tram.euler_to_matrix("abc", [0, 0, 0])
    with pytest.raises(tram.InputError):
        tram.records_from_poses(np.eye(4)[None], length_unit="furlong")


def test_untrustworthy_result_is_returned_not_raised():
    r = tram.read_records(os.path.join(DEMO, "wrist_camera.csv"))
    few = tram.records_from_poses(r.T_base_flange[:2], r.T_sensor_target[:2], length_unit="mm",
                                  setup="eye-in-hand")
    s = tram.solve(few)
    assert not s.solved and not s.trustworthy
    assert any(d["severity"] == "error" for d in s.diagnostics)


def rss_kib():
    with open("/proc/self/status") as f:
        for ln in f:
            if ln.startswith("VmRSS:"):
                return int(ln.split()[1])
    return 0


def test_no_leak_over_10000_solves():
    r = tram.read_records(os.path.join(DEMO, "wrist_camera.csv"))
    small = tram.records_from_poses(r.T_base_flange[:6], r.T_sensor_target[:6], length_unit="mm",
                                    setup="eye-in-hand")
    for _ in range(200):
        tram.solve(small, refine=False, check_conventions=False)
    before = rss_kib()
    for _ in range(10000):
        tram.solve(small, refine=False, check_conventions=False)
    grown = rss_kib() - before
    print(f"RSS growth over 10,000 solves: {grown} KiB")
    assert grown < 4096


def test_docs_example_runs():
    """The examples of docs/python.md (the script and the shell lines) run as
    printed there, from the top of the source tree."""
    text = open(os.path.join(ROOT, "docs", "python.md")).read()
    blocks = text.split("```python\n")[1:]
    assert blocks, "docs/python.md has no python example"
    for b in blocks:
        code = b.split("```")[0]
        p = subprocess.run(["/usr/bin/python3", "-c", code], capture_output=True, text=True, cwd=ROOT,
                           env=dict(os.environ))
        assert p.returncode == 0, p.stderr
        assert "T_flange_sensor" in p.stdout
    for b in text.split("```sh\n")[1:]:
        for line in b.split("```")[0].splitlines():
            if not line.strip():
                continue
            p = subprocess.run(["sh", "-c", line], capture_output=True, text=True, cwd=ROOT)
            assert p.returncode == 0, f"{line}: {p.stderr}"


def test_read_records_rounded_quat(tmp_path):
    """rounded_quat= is --rounded-quat: a quaternion printed to 2 decimals is
    refused by default (the message names the option) and normalised with
    it; the rotation agrees with SciPy Rotation of the normalised numbers."""
    f = tmp_path / "rounded.csv"
    f.write_text("# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n"
                 "1,0,0,0,0.99,0.01,-0.12,0.05\n")
    with pytest.raises(tram.InputError, match="--rounded-quat"):
        tram.read_records(str(f))
    rec = tram.read_records(str(f), rounded_quat=True)
    ref = Rotation.from_quat([0.01, -0.12, 0.05, 0.99]).as_matrix()  # SciPy: scalar last, normalises
    assert np.allclose(rec.T_base_flange[0][:3, :3], ref, atol=1e-12)
