"""Tests of the package's image, detection, intrinsics, pose and tool entry
points (python/tram/_camera.py) against the command's output on the same
files (tram detect, tram intrinsics --json, tram pose, tram solve --json
--tool), and against NumPy compositions for the tool frame.

Data: a board rendered by tram board --png (the page at 100 dpi), the
synthetic pixel observations of tests/cli/data/pixels, and the demo's
wrist_camera_tcp.csv (datasets/demo, invented).
"""
import json
import os
import subprocess

import numpy as np
import pytest

import tram

ROOT = os.path.normpath(os.path.join(os.path.dirname(__file__), "..", ".."))
DEMO = os.path.join(ROOT, "datasets", "demo")
PIX = os.path.join(ROOT, "tests", "cli", "data", "pixels")
TRAM = os.environ.get("TRAM", os.path.join(ROOT, "build", "tram"))


def run(*args):
    return subprocess.run([TRAM, *args], capture_output=True, text=True)


@pytest.fixture(scope="module")
def board_image(tmp_path_factory):
    d = tmp_path_factory.mktemp("board")
    b, png = str(d / "b.json"), str(d / "b.png")
    r = run("board", "--corners", "9x6", "--square", "18mm", "-o", b, "--png", png, "--dpi", "100")
    assert r.returncode == 0, r.stderr
    return b, png, d


def test_read_image_and_board(board_image):
    b, png, _ = board_image
    im = tram.read_image(png)
    assert im.dtype == np.float32 and im.ndim == 2 and im.min() >= 0 and im.max() <= 255
    brd = tram.read_board(b)
    assert brd["cols"] == 9 and brd["rows"] == 6 and brd["length_unit"] == "mm"
    # corner (c, r) at (c*s, r*s, 0), id r*cols + c (docs/images.md)
    assert np.allclose(brd["corners"][10], [18.0, 18.0, 0.0])


def test_detect_matches_command(board_image):
    b, png, d = board_image
    obs = str(d / "obs.csv")
    # the command wants three images: the same one under three names
    import shutil
    for k in (2, 3):
        shutil.copy(png, str(d / f"b{k}.png"))
    r = run("detect", "--board", b, "-o", obs, png, str(d / "b2.png"), str(d / "b3.png"))
    assert r.returncode == 0, r.stderr
    rows = [ln.split(",") for ln in open(obs) if ln[0] != "#" and not ln.startswith("station")]
    want = np.array([[float(x[2]), float(x[3])] for x in rows[:54]])
    got = tram.detect_chessboard(png, b)
    assert got["found"] and got["corners"].shape == (54, 2) and got["reason"] == ""
    assert np.abs(got["corners"] - want).max() < 1e-9
    # an array works as well as a path
    got2 = tram.detect_chessboard(tram.read_image(png), b, threads=1)
    assert np.abs(got2["corners"] - want).max() < 1e-9
    blank = np.full((200, 300), 255.0)
    none = tram.detect_chessboard(blank, b)
    assert not none["found"] and none["corners"].shape == (0, 2) and none["reason"]


def test_intrinsics_matches_command():
    pixels, board = os.path.join(PIX, "pixels.csv"), os.path.join(PIX, "board.json")
    r = run("intrinsics", "--board", board, pixels, "--json")
    doc = json.loads(r.stdout)
    res = tram.intrinsics(pixels, board=board)
    cam = res["camera"]
    for k in ("fx", "fy", "cx", "cy", "skew"):
        assert abs(getattr(cam, k) - doc["camera"]["intrinsics"][k]) < 1e-9 * max(1, abs(getattr(cam, k)))
    dg, dw = cam.document["distortion"], doc["camera"]["distortion"]
    assert dg["model"] == dw["model"] == "radial2" and set(dg) == set(dw)
    assert all(abs(dg[k] - dw[k]) < 1e-12 for k in dg if k != "model")
    assert abs(res["rms_px"] - doc["rms_px"]) < 1e-12
    assert res["stations"] == [v["station"] for v in doc["views"]]
    for T, v in zip(res["T_sensor_target"], doc["views"]):
        assert np.abs(T - np.array(v["T_sensor_target"])).max() < 1e-9


def test_pose_matches_command():
    cam, board, pixels = (os.path.join(PIX, n) for n in ("camera.json", "board.json", "pixels.csv"))
    r = run("pose", "--camera", cam, "--board", board, pixels)
    assert r.returncode == 0, r.stderr
    lines = [ln.split(",") for ln in r.stdout.splitlines() if ln and ln[0] != "#"]
    head, rows = lines[0], {x[0]: [float(v) for v in x[1:]] for x in lines[1:]}
    brd = tram.read_board(board)
    obs = [ln.strip().split(",") for ln in open(pixels) if ln[0] != "#" and not ln.startswith("station")]
    camera = tram.read_camera(cam)
    for st in ("s01", "s04"):
        pts = [(int(o[1]), float(o[2]), float(o[3])) for o in obs if o[0] == st]
        xyz = brd["corners"][[p[0] for p in pts]]
        uv = np.array([[p[1], p[2]] for p in pts])
        got = tram.pose_from_pixels(camera, xyz, uv)
        T = got["T_sensor_target"]
        assert np.abs(T[:3, 3] - rows[st][:3]).max() < 1e-9
        q = tram.matrix_to_quat_wxyz(T[:3, :3])
        assert min(np.abs(q - rows[st][3:]).max(), np.abs(q + rows[st][3:]).max()) < 1e-9
        assert got["planar"] and got["covariance"].shape == (6, 6)


def test_pose_errors():
    camera = tram.read_camera(os.path.join(PIX, "camera.json"))
    with pytest.raises(tram.UndeterminedError, match="at least 4 are needed"):
        tram.pose_from_pixels(camera, np.zeros((3, 3)), np.zeros((3, 2)))
    with pytest.raises(tram.FileError, match="nothere-camera.json: cannot open"):
        tram.read_camera(os.path.join(PIX, "nothere-camera.json"))


def test_tool_matches_command_and_numpy():
    tcp, tool = os.path.join(DEMO, "wrist_camera_tcp.csv"), "0,0,150mm euler:zyx-intrinsic:30,0,0deg"
    r = run("solve", "--json", "--tool", tool, tcp)
    doc = json.loads(r.stdout)
    s = tram.solve(tcp, tool=tool)
    assert np.abs(s.T_flange_sensor - np.array(doc["transforms"]["T_flange_sensor"]["matrix"])).max() < 1e-9
    F = np.array(doc["tool_frame"]["T_flange_tool"]["matrix"])
    # NumPy composition: T_tool_sensor = T_flange_tool^-1 T_flange_sensor
    assert np.abs(np.linalg.inv(F) @ s.T_flange_sensor - s.T_tool_sensor).max() < 1e-9
    # the flange poses the package reads: T_base_tool T_flange_tool^-1 (NumPy)
    raw = tram.read_records(os.path.join(DEMO, "wrist_camera_tcp.csv").replace("_tcp", "_tcp"), tool=tool)
    with pytest.raises(tram.InputError, match=r"wrist_camera_tcp.csv:10: robot-pose: tool-in-base"):
        tram.solve(tcp)
    with pytest.raises(tram.InputError, match="needs its unit"):
        tram.read_records(tcp, tool="0,0,150 quat:1,0,0,0")
    assert raw.T_base_flange.shape == (12, 4, 4)
