"""Images, chessboard detection, camera intrinsics and target poses: thin
wrappers over tram/image.h, tram/camera.h and tram/pose.h (the same library
calls as tram detect, tram intrinsics and tram pose).  Pixel convention:
the centre of the top-left pixel is (0, 0), u to the right, v down.
"""
import ctypes
import json

import numpy as np

from . import _lib


def _errors():
    # the error classes live in the package (imported lazily: no cycle)
    from . import _raise, InputError, OutOfMemoryError
    return _raise, InputError, OutOfMemoryError


def _enc(s):
    return str(s).encode()


def _text(ptr):
    try:
        return ctypes.string_at(ptr.value).decode()
    finally:
        _lib.free(ptr)


def read_image(path):
    """A PNG or JPEG file as grey levels 0 .. 255 (ITU-R BT.601 luma), an
    (height, width) float32 array, top row first."""
    _raise, _, _ = _errors()
    im, err = ctypes.POINTER(_lib.GreyImage)(), _lib.Error()
    st = _lib.grey_image_read_file(_enc(path), ctypes.byref(im), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    try:
        w, h = im.contents.width, im.contents.height
        return np.ctypeslib.as_array(im.contents.pixels, shape=(h * w,)).reshape(h, w).copy()
    finally:
        _lib.grey_image_destroy(im)


def _grey(image):
    """A library image from a path or a 2-D array of grey levels."""
    _raise, InputError, _ = _errors()
    if isinstance(image, (str, bytes)) or hasattr(image, "__fspath__"):
        im, err = ctypes.POINTER(_lib.GreyImage)(), _lib.Error()
        st = _lib.grey_image_read_file(_enc(image), ctypes.byref(im), ctypes.byref(err))
        if st != 0:
            _raise(st, err)
        return im
    a = np.ascontiguousarray(image, dtype=np.float32)
    if a.ndim != 2:
        raise InputError(2, "", 0, 0, "image: expected a path or an (height, width) array of grey levels")
    im, err = ctypes.POINTER(_lib.GreyImage)(), _lib.Error()
    st = _lib.grey_image_create(a.shape[1], a.shape[0], ctypes.byref(im), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    ctypes.memmove(im.contents.pixels, a.ctypes.data, a.nbytes)
    return im


def read_board(path):
    """A board file (tram board): a dict with cols, rows, square, length_unit
    and corners, the (cols*rows, 3) corner positions in the target frame
    (corner id r*cols + c, docs/images.md)."""
    b = _board(path)
    n = _lib.board_corner_count(ctypes.byref(b))
    xyz = np.empty((n, 3))
    for k in range(n):
        _lib.board_corner(ctypes.byref(b), k, xyz[k].ctypes.data_as(_lib.c_double_p))
    return {"cols": b.cols, "rows": b.rows, "square": b.square,
            "length_unit": _lib.unit_length_name(b.unit).decode(), "corners": xyz}


def _board(path):
    _raise, _, _ = _errors()
    b, err = _lib.Board(), _lib.Error()
    st = _lib.board_read_file(_enc(path), ctypes.byref(b), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    return b


def detect_chessboard(image, board, *, min_square_px=None, threads=None):
    """Find the board (a board file's path) in an image (a path, or an
    (height, width) array of grey levels).  Returns a dict: found, corners
    (an (n, 2) array of pixels, corner id = row index; empty when not
    found), seen (corners of a lattice seen), sharpness (pixels; -1 when not
    found) and reason (why not found)."""
    _raise, _, _ = _errors()
    b = _board(board)
    im = _grey(image)
    try:
        opt = _lib.DetectOptions()
        _lib.detect_options_init(ctypes.byref(opt))
        if min_square_px is not None:
            opt.min_square_px = float(min_square_px)
        if threads is not None:
            opt.threads = int(threads)
        d, err = ctypes.POINTER(_lib.Detection)(), _lib.Error()
        st = _lib.detect_chessboard(im, ctypes.byref(b), ctypes.byref(opt), ctypes.byref(d), ctypes.byref(err))
        if st != 0:
            _raise(st, err)
        try:
            c = d.contents
            uv = (np.ctypeslib.as_array(c.uv, shape=(2 * c.ncorners,)).reshape(-1, 2).copy()
                  if c.ncorners else np.empty((0, 2)))
            return {"found": bool(c.found), "corners": uv, "seen": c.nseen,
                    "sharpness": c.sharpness, "reason": c.reason.decode()}
        finally:
            _lib.detection_destroy(d)
    finally:
        _lib.grey_image_destroy(im)


class Camera:
    """A camera (pinhole + Brown-Conrady, docs/camera.md): ``document`` is
    the camera file's content as the library writes it."""

    def __init__(self, struct, document):
        self._c = struct
        self.document = document
        self.width, self.height = struct.width, struct.height
        self.distortion = document["distortion"]["model"]

    def __getattr__(self, name):
        if name in ("fx", "fy", "cx", "cy", "skew", "k1", "k2", "k3", "p1", "p2"):
            return getattr(self.__dict__["_c"], name)
        raise AttributeError(name)


def _camera_doc(c):
    _raise, _, _ = _errors()
    text, err = ctypes.c_void_p(), _lib.Error()
    st = _lib.camera_to_json(ctypes.byref(c), None, ctypes.byref(text), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    return json.loads(_text(text))


def read_camera(path):
    """A camera file (tram-camera, version 1)."""
    _raise, _, _ = _errors()
    c, err = _lib.Camera(), _lib.Error()
    st = _lib.camera_read_file(_enc(path), ctypes.byref(c), None, ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    return Camera(c, _camera_doc(c))


def intrinsics(pixels, *, board, distortion="radial2", free_skew=False, robust=True):
    """Camera intrinsics from the pixel observations of a board (tram
    intrinsics --board): pixels is a pixel-observation file (tram-pixels-1),
    board a board file.  Returns a dict: camera (a Camera; its document
    holds the calibration block with the 1-sigma of every parameter),
    rms_px, stations, T_sensor_target (n x 4 x 4, the board's length unit)
    and view_rms_px."""
    _raise, InputError, _ = _errors()
    dm = _lib.distortion_parse(_enc(distortion))
    if dm < 0:
        raise InputError(2, "", 0, 0, f"distortion '{distortion}': expected none, radial2, radial3 or full")
    brd = read_board(board)
    n = len(brd["corners"])
    ids = (ctypes.c_char_p * n)(*[str(k).encode() for k in range(n)])
    xy = np.ascontiguousarray(brd["corners"][:, :2])
    target = _lib.PlanarTarget(n, ids, xy.ctypes.data_as(_lib.c_double_p))
    opt = _lib.IntrinsicsOptions()
    _lib.intrinsics_options_init(ctypes.byref(opt))
    opt.distortion, opt.free_skew, opt.robust = dm, int(free_skew), int(robust)
    obs, err = ctypes.c_void_p(), _lib.Error()
    st = _lib.pixel_obs_read_file(_enc(pixels), ctypes.byref(obs), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    try:
        res = ctypes.c_void_p()
        st = _lib.intrinsics_calibrate(obs, ctypes.byref(target), ctypes.byref(opt), ctypes.byref(res),
                                       ctypes.byref(err))
        if st != 0:
            _raise(st, err)
        try:
            text = ctypes.c_void_p()
            st = _lib.intrinsics_camera_json(res, ctypes.byref(text), ctypes.byref(err))
            if st != 0:
                _raise(st, err)
            doc = json.loads(_text(text))
            nv = _lib.intrinsics_view_count(res)
            T = np.empty((nv, 4, 4))
            rms = np.empty(nv)
            r1 = ctypes.c_double()
            for i in range(nv):
                _lib.intrinsics_view_pose(res, i, T[i].ctypes.data_as(_lib.c_double_p), ctypes.byref(r1))
                rms[i] = r1.value
            cam = _lib.Camera()
            _lib.intrinsics_camera(res, ctypes.byref(cam))
            return {"camera": Camera(cam, doc), "rms_px": _lib.intrinsics_rms_px(res),
                    "stations": [_lib.intrinsics_view_id(res, i).decode() for i in range(nv)],
                    "T_sensor_target": T, "view_rms_px": rms, "length_unit": brd["length_unit"]}
        finally:
            _lib.intrinsics_result_destroy(res)
    finally:
        _lib.pixel_obs_destroy(obs)


def pose_from_pixels(camera, xyz_target, uv_px):
    """The target's pose in the camera from n points (xyz_target, (n, 3),
    target frame) and their pixels (uv_px, (n, 2)) (tram pose): a dict with
    T_sensor_target (4 x 4, the points' length unit), n, planar,
    iterations, rms_px, max_px, sigma_px and covariance (6 x 6: translation,
    then rotation about the target's own axes in rad; None when not
    valid).  camera: a Camera or a camera file's path."""
    _raise, InputError, _ = _errors()
    if not isinstance(camera, Camera):
        camera = read_camera(camera)
    X = np.ascontiguousarray(xyz_target, dtype=np.float64)
    U = np.ascontiguousarray(uv_px, dtype=np.float64)
    if X.ndim != 2 or X.shape[1] != 3 or U.shape != (X.shape[0], 2):
        raise InputError(2, "", 0, 0, "xyz_target and uv_px: expected (n, 3) and (n, 2) arrays")
    res, err = _lib.PoseResult(), _lib.Error()
    st = _lib.pose_from_pixels(ctypes.byref(camera._c), X.ctypes.data_as(_lib.c_double_p),
                               U.ctypes.data_as(_lib.c_double_p), X.shape[0], ctypes.byref(res),
                               ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    return {"T_sensor_target": np.array(res.T_sensor_target.m), "n": res.n, "planar": bool(res.planar),
            "iterations": res.iterations, "rms_px": res.rms_px, "max_px": res.max_px,
            "sigma_px": res.sigma_px,
            "covariance": np.array(res.cov).reshape(6, 6) if res.cov_valid else None}
