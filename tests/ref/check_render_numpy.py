#!/usr/bin/python3
"""Reference check of the test renderer (tools/render/) with NumPy (Debian
python3-numpy), independently of src/camera/camera.c:

- the true corners: the board corners (c s, r s, 0) mapped by T_sensor_target
  and projected with the Brown-Conrady model as published (Brown 1966:
  radial k1, k2, k3 and decentring p1, p2), written here from the formula,
  agree with the renderer's to 1e-9 px;
- the clean image (no blur, noise or lighting): rendered here by full
  supersampling on the same sub-sample lattice (N = n^2 samples
  (u - 0.5 + (k + 0.5)/N, v - 0.5 + frac((k g + 0.5)/N))), each
  sample undistorted by fixed-point iteration (not the Gauss-Newton of
  camera.c), intersected with the board plane and coloured by the board
  convention (square (-1, -1) black, border white, back side plate, outside
  background).  The renderer only samples pixels whose corners hit
  different cells, so agreement also checks that adaptive rule.

Usage: check_render_numpy.py RENDER_REF   (the program tests/ref/render_ref.c)
"""
import subprocess
import sys

import numpy as np


def distort(cam, x, y):
    k1, k2, k3, p1, p2 = cam["k"]
    r2 = x * x + y * y
    radial = 1 + r2 * (k1 + r2 * (k2 + r2 * k3))
    xd = x * radial + 2 * p1 * x * y + p2 * (r2 + 2 * x * x)
    yd = y * radial + p1 * (r2 + 2 * y * y) + 2 * p2 * x * y
    return xd, yd


def project(cam, T, P):
    q = P @ T[:3, :3].T + T[:3, 3]
    xd, yd = distort(cam, q[:, 0] / q[:, 2], q[:, 1] / q[:, 2])
    u = cam["fx"] * xd + cam["skew"] * yd + cam["cx"]
    v = cam["fy"] * yd + cam["cy"]
    return u, v, q[:, 2] > 0


def undistort(cam, u, v):
    """Fixed-point iteration x = (xd - decentring(x)) / radial(x)."""
    k1, k2, k3, p1, p2 = cam["k"]
    yd = (v - cam["cy"]) / cam["fy"]
    xd = (u - cam["cx"] - cam["skew"] * yd) / cam["fx"]
    x, y = xd.copy(), yd.copy()
    for _ in range(300):
        r2 = x * x + y * y
        radial = 1 + r2 * (k1 + r2 * (k2 + r2 * k3))
        x = (xd - 2 * p1 * x * y - p2 * (r2 + 2 * x * x)) / radial
        y = (yd - p1 * (r2 + 2 * y * y) - 2 * p2 * x * y) / radial
    ex, ey = distort(cam, x, y)
    ok = (np.abs(ex - xd) < 1e-10) & (np.abs(ey - yd) < 1e-10)
    return x, y, ok


def lattice(n):
    """The rank-1 lattice of N = n^2 samples per pixel: generator g, the
    integer coprime to N nearest N / golden ratio (Niederreiter 1992)."""
    N = n * n
    want = N / ((1 + 5 ** 0.5) / 2)
    cands = [c for c in range(1, N + 1) if np.gcd(c, N) == 1]
    return N, min(cands, key=lambda c: (abs(c - want), c))


def render(sc):
    cam, T = sc["camera"], sc["pose"]
    W, H, n = cam["width"], cam["height"], sc["n"]
    cols, rows, s, B = sc["cols"], sc["rows"], sc["square"], sc["border"]
    black, white, background, plate = sc["levels"]
    N, g = lattice(n)
    k = np.arange(N)
    du, dv = (k + 0.5) / N - 0.5, np.mod(k * g + 0.5, N) / N - 0.5
    U = np.arange(W)[None, :, None] + du[None, None, :] + np.zeros((H, 1, 1))   # H x W x N
    V = np.arange(H)[:, None, None] + dv[None, None, :] + np.zeros((1, W, 1))
    x, y, ok = undistort(cam, U, V)
    R, t = T[:3, :3], T[:3, 3]
    o = -R.T @ t
    d = np.stack([x, y, np.ones_like(x)], axis=-1) @ R               # rows: R^T (x, y, 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        lam = -o[2] / d[..., 2]
        X = o[0] + lam * d[..., 0]
        Y = o[1] + lam * d[..., 1]
        hit = ok & (np.abs(d[..., 2]) > 1e-300) & (lam > 0)
        a = np.floor(X / s)
        b = np.floor(Y / s)
    on = hit & (a >= -1 - B) & (a <= cols - 1 + B) & (b >= -1 - B) & (b <= rows - 1 + B)
    pattern = (a >= -1) & (a <= cols - 1) & (b >= -1) & (b <= rows - 1)
    even = np.mod(np.where(on, a + b, 0), 2) == 0
    if o[2] < 0:
        col = np.where(pattern & even, black, white)
    else:
        col = np.full(U.shape, plate)
    img = np.where(on, col, background)
    return img.mean(axis=2)


def parse(text):
    lines = text.splitlines()
    scenes, i = [], 0
    while i < len(lines):
        name = lines[i].split()[1]
        c = lines[i + 1].split()[1:]
        cam = dict(fx=float(c[0]), fy=float(c[1]), cx=float(c[2]), cy=float(c[3]),
                   skew=float(c[4]), k=[float(v) for v in c[5:10]], width=int(c[10]),
                   height=int(c[11]))
        bd = lines[i + 2].split()[1:]
        lv = [float(v) for v in lines[i + 3].split()[1:]]
        pose = np.array([float(v) for v in lines[i + 4].split()[1:]]).reshape(4, 4)
        nc = int(lines[i + 5].split()[1])
        corners = np.array([[float(v) for v in ln.split()] for ln in lines[i + 6:i + 6 + nc]])
        j = i + 6 + nc + 1
        img = np.array([[float(v) for v in ln.split()] for ln in lines[j:j + cam["height"]]])
        scenes.append(dict(name=name, camera=cam, cols=int(bd[0]), rows=int(bd[1]),
                           square=float(bd[2]), border=int(bd[3]), n=int(bd[4]), levels=lv,
                           pose=pose, corners=corners, image=img))
        i = j + cam["height"]
    return scenes


def main():
    out = subprocess.run([sys.argv[1]], capture_output=True, text=True, check=True).stdout
    fails = checks = 0

    def expect(name, ok, detail):
        nonlocal fails, checks
        checks += 1
        fails += 0 if ok else 1
        print(f"{'ok  ' if ok else 'FAIL'} {name}: {detail} (NumPy; Brown 1966 model)")

    for sc in parse(out):
        cols, rows, s = sc["cols"], sc["rows"], sc["square"]
        r, c = np.mgrid[0:rows, 0:cols]
        P = np.stack([c.ravel() * s, r.ravel() * s, np.zeros(rows * cols)], axis=1)
        u, v, front = project(sc["camera"], sc["pose"], P)
        got = sc["corners"]
        W, H = sc["camera"]["width"], sc["camera"]["height"]
        inside = front & (u >= 0) & (u <= W - 1) & (v >= 0) & (v <= H - 1)
        du = np.abs(np.where(front, got[:, 0] - u, 0))
        dv = np.abs(np.where(front, got[:, 1] - v, 0))
        err = float(max(du.max(), dv.max()))
        expect(f"{sc['name']} corners", err < 1e-9 and np.array_equal(inside, got[:, 2] == 1),
               f"max |uv - ref| {err:.2e} px, {int(inside.sum())}/{len(u)} inside agree")
        ref = render(sc)
        diff = np.abs(ref - sc["image"])
        weight = (sc["levels"][1] - sc["levels"][0]) / sc["n"] ** 2   # one sample's worth
        nbad = int((diff > 1e-3).sum())
        expect(f"{sc['name']} image", nbad <= max(2, diff.size // 2000) and diff.max() <= 2.01 * weight,
               f"{W}x{H}, {sc['n'] ** 2} lattice samples: max |pixel - ref| {diff.max():.2e}, "
               f"{nbad} pixels differ by > 1e-3 (one sample = {weight:.2f}); board on "
               f"{100 * float((ref != sc['levels'][2]).mean()):.0f}% of the image")
    print(f"check_render_numpy: {checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
