"""tram - hand-eye calibration and sensor-mount checks, from Python.

A thin layer over libtram (ctypes and NumPy): every function calls the C
library and turns its results into NumPy arrays; nothing is computed here.
Frames stay in the names: ``result.T_flange_sensor`` is the pose of the
sensor frame in the flange frame (p_flange = T_flange_sensor @ p_sensor),
as everywhere in tram (docs/notation.md).  Units are those of the data and
are carried beside the numbers (``length_unit``); angles are radians unless
a name says ``_deg``.

A result of tram is at best consistent with the data, never verified on the
cell: check ``result.trustworthy`` and the diagnostics, verify any new or
changed calibration at reduced speed with the robot's safety functions
active, keep clear of the working envelope, and follow the applicable
robot-safety standards and local codes.

docs/python.md describes the package; errors raise tram.Error subclasses
that carry the library's message with file:line:column.
"""
import ctypes
import json

import numpy as np

from . import _lib
from ._camera import (Camera, detect_chessboard, intrinsics, pose_from_pixels, read_board,
                      read_camera, read_image)

__all__ = ["Error", "InputError", "UndeterminedError", "OutOfMemoryError", "FileError",
           "NumericError", "Records", "Solution", "read_records", "records_from_poses", "solve",
           "register", "check", "fk", "euler_to_matrix", "matrix_to_euler",
           "quat_wxyz_to_matrix", "matrix_to_quat_wxyz", "rotvec_to_matrix", "matrix_to_rotvec",
           "version", "read_image", "read_board", "detect_chessboard", "Camera", "read_camera",
           "intrinsics", "pose_from_pixels", "report"]


class Error(Exception):
    """An error reported by libtram: status, file, line, column, message."""

    def __init__(self, status, file, line, column, message):
        self.status, self.file, self.line, self.column = status, file, line, column
        self.message = message
        where = file
        if file and line:
            where += f":{line}"
            if column:
                where += f":{column}"
        super().__init__(f"{where}: {message}" if where else message)


class InputError(Error):
    """Bad input: a malformed file or value (status 2, the command's exit 2)."""


class UndeterminedError(Error):
    """The data cannot determine a trustworthy answer (status 3)."""


class OutOfMemoryError(Error):
    """An allocation failed (status 4)."""


class FileError(Error):
    """A file could not be read or written (status 5)."""


class NumericError(Error):
    """A LAPACK routine failed to converge (status 6)."""


_ERRORS = {2: InputError, 3: UndeterminedError, 4: OutOfMemoryError, 5: FileError, 6: NumericError}


def _raise(status, err):
    cls = _ERRORS.get(status, Error)
    raise cls(status, err.file.decode(), err.line, err.column, err.message.decode())


def _enc(s):
    return s.encode() if s is not None else None


def version():
    """The library's version string ("0.1.0")."""
    return _lib.version().decode()


def _length_unit(name, what="length_unit"):
    if name is None:
        return 0
    u = _lib.unit_length_parse(_enc(name))
    if u == 0:
        raise InputError(2, "", 0, 0, f"{what} '{name}': expected mm, cm, m or in")
    return u


def _angle_unit(name):
    if name is None:
        return 0
    u = _lib.unit_angle_parse(_enc(name))
    if u == 0:
        raise InputError(2, "", 0, 0, f"angle_unit '{name}': expected deg or rad")
    return u


def _setup(name):
    if name is None:
        return 0
    s = _lib.setup_parse(_enc(name))
    if s == 0:
        raise InputError(2, "", 0, 0, f"setup '{name}': expected eye-in-hand or eye-to-hand")
    return s


class Records:
    """A record set: station ids, poses as N x 4 x 4 arrays (None when the
    block is absent), and the declared conventions.  Owns the C records."""

    def __init__(self, handle):
        self._h = handle
        n = _lib.records_count(handle)
        self.station_ids = [_lib.records_station_id(handle, i).decode() for i in range(n)]
        self.T_base_flange = self._block(0, n)
        self.T_sensor_target = self._block(1, n)
        r = ctypes.cast(handle, ctypes.POINTER(_RecordsHead)).contents
        self.length_unit = _lib.unit_length_name(r.length_unit).decode()
        self.angle_unit = _lib.unit_angle_name(r.angle_unit).decode() if r.angle_unit else None
        self.setup = _lib.setup_name(r.setup).decode() if r.setup else None

    def _block(self, block, n):
        out = np.empty((n, 4, 4))
        for i in range(n):
            if not _lib.records_pose(self._h, i, block,
                                     out[i].ctypes.data_as(_lib.c_double_p)):
                return None
        return out

    def __len__(self):
        return len(self.station_ids)

    def __del__(self):
        h, self._h = getattr(self, "_h", None), None
        if h:
            _lib.records_destroy(h)


class _RecordsHead(ctypes.Structure):
    # the leading fields of tram_records up to the setup
    _fields_ = [("count", ctypes.c_size_t), ("stations", ctypes.c_void_p),
                ("source", ctypes.c_char * 256), ("length_unit", ctypes.c_int),
                ("angle_unit", ctypes.c_int), ("setup", ctypes.c_int)]


# TRAM_QUAT_NORM_MAX_FIX (tram/rotation.h): the tolerance of --rounded-quat
_QUAT_NORM_MAX_FIX = 1e-2


def read_records(path, *, length_unit=None, angle_unit=None, reorthonormalize=False,
                 rounded_quat=False, tool=None):
    """Read a record file (CSV or JSON, docs/records.md).  length_unit and
    angle_unit play the part of the command's --length-unit / --angle-unit
    (they must agree with the file's directives); rounded_quat that of
    --rounded-quat (quaternions within 0.01 of unit norm are normalised);
    tool the part of --tool: the tool's pose in the flange frame,
    "X,Y,ZUNIT ROTATION" (e.g. "0,0,150mm quat:1,0,0,0"), for a file whose
    robot poses are tool (TCP) poses (robot-pose: tool-in-base)."""
    ro = _lib.ReadOptions(_length_unit(length_unit), _angle_unit(angle_unit),
                          1 if reorthonormalize else 0,
                          _QUAT_NORM_MAX_FIX if rounded_quat else 0.0, 0.0)
    h, err = ctypes.c_void_p(), _lib.Error()
    st = _lib.records_read_file(_enc(path), ctypes.byref(ro), ctypes.byref(h), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    if tool is not None:
        T, u = _lib.SE3(), ctypes.c_int()
        st = _lib.tool_parse(_enc(tool), ctypes.byref(T), ctypes.byref(u), ctypes.byref(err))
        if st == 0:
            st = _lib.records_set_tool(h, ctypes.byref(T), u.value, ctypes.byref(err))
        if st != 0:
            _lib.records_destroy(h)
            _raise(st, err)
    return Records(h.value)


def _poses(a, n, name):
    if a is None:
        return None
    a = np.ascontiguousarray(a, dtype=np.float64)
    if a.shape != (n, 4, 4):
        raise InputError(2, "", 0, 0, f"{name}: expected an array of shape ({n}, 4, 4), got {a.shape}")
    return a


def records_from_poses(T_base_flange=None, T_sensor_target=None, *, length_unit, setup=None,
                       station_ids=None, reorthonormalize=False):
    """A record set from N x 4 x 4 arrays of T_base_flange (flange-in-base)
    and T_sensor_target (target-in-sensor), in length_unit (required)."""
    first = T_base_flange if T_base_flange is not None else T_sensor_target
    if first is None:
        raise InputError(2, "", 0, 0, "no poses given")
    n = len(first)
    A, B = _poses(T_base_flange, n, "T_base_flange"), _poses(T_sensor_target, n, "T_sensor_target")
    ids = None
    if station_ids is not None:
        if len(station_ids) != n:
            raise InputError(2, "", 0, 0, f"station_ids: {len(station_ids)} ids for {n} stations")
        ids = (ctypes.c_char_p * n)(*[_enc(str(s)) for s in station_ids])
    ro = _lib.ReadOptions(0, 0, 1 if reorthonormalize else 0, 0.0, 0.0)
    h, err = ctypes.c_void_p(), _lib.Error()
    st = _lib.records_from_poses(n, ids, A.ctypes.data_as(_lib.c_double_p) if A is not None else None,
                                 B.ctypes.data_as(_lib.c_double_p) if B is not None else None,
                                 _length_unit(length_unit), _setup(setup), ctypes.byref(ro),
                                 ctypes.byref(h), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    return Records(h.value)


def _records_arg(records, tool):
    """A Records from a Records or a path (tool given only with a path)."""
    if isinstance(records, (str, bytes)) or hasattr(records, "__fspath__"):
        return read_records(records, tool=tool)
    if tool is not None:
        raise InputError(2, "", 0, 0, "tool: give it to read_records with the file")
    return records


def _json_text(ptr):
    try:
        return ctypes.string_at(ptr.value).decode()
    finally:
        _lib.free(ptr)


class Solution:
    """The result of solve(): the transforms as 4 x 4 arrays named by their
    frames, per-station residuals and outlier flags, the covariance and
    1-sigma, and the diagnostics; ``document`` is the library's JSON
    document (docs/solve.md), the same as ``tram solve --json`` prints."""

    def __init__(self, doc, covariance=None):
        self.document = doc
        self.setup = doc["setup"]
        self.solved = bool(doc.get("solved"))
        self.trustworthy = bool(doc.get("trustworthy"))
        self.verified_on_cell = False
        self.length_unit = doc.get("length_unit")
        self.method = doc.get("start_method")
        self.transforms = {k: np.array(v["matrix"]) for k, v in doc.get("transforms", {}).items()}
        res = doc.get("residuals", {})
        st = res.get("stations", [])
        self.station_ids = [s["station"] for s in st]
        self.residual_rotation_deg = np.array([s.get("rotation_deg", np.nan) for s in st], dtype=float)
        self.residual_translation = np.array([s.get("translation", np.nan) for s in st], dtype=float)
        self.outliers = np.array([bool(s.get("outlier")) for s in st])
        # stations with no sensor data in the solve (no pixels): left out, not outliers
        self.no_data = np.array([bool(s.get("no_data")) for s in st])
        # 12 x 12, order: X translation (length, parent frame), X rotation
        # about its own axes (rad), then Z likewise; None when not valid
        self.covariance = covariance
        self.uncertainty = doc.get("uncertainty") or {}
        self.diagnostics = doc.get("diagnostics", [])
        # the sensor's length scale: fitted, scale, sigma, z, p_value (or {})
        self.sensor_scale = doc.get("sensor_scale") or {}

    def __getattr__(self, name):
        t = self.__dict__.get("transforms", {})
        if name in t:
            return t[name]
        raise AttributeError(name)


def solve(records, *, setup=None, method="auto", refine=True, robust=True, noise_length=None,
          noise_angle_rad=None, bootstrap=0, seed=1, check_conventions=True, tool=None,
          fit_scale=False):
    """Hand-eye calibration (tram solve).  records: a Records, or a path to a
    record file.  Returns a Solution even when it is not trustworthy (check
    ``trustworthy``); raises UndeterminedError only when nothing could be
    solved, and InputError for bad input.  tool: as for read_records (with
    a path)."""
    records = _records_arg(records, tool)
    m = _lib.method_parse(_enc(method))
    opt = _lib.solve_options_create()
    if not opt:
        raise OutOfMemoryError(4, "", 0, 0, "out of memory")
    try:
        sets = {"method": m, "refine": int(refine), "robust": int(robust), "bootstrap": bootstrap,
                "seed": seed, "check_conventions": int(check_conventions),
                "fit_scale": int(fit_scale)}
        if noise_length is not None:
            sets["noise_length"] = noise_length
        if noise_angle_rad is not None:
            sets["noise_angle_rad"] = noise_angle_rad
        for k, v in sets.items():
            if _lib.solve_options_set(opt, _enc(k), float(v)) != 0:
                raise InputError(2, "", 0, 0, f"{k}={v!r}: not an accepted value")
        s, err = ctypes.c_void_p(), _lib.Error()
        su = _setup(setup) or _setup(records.setup)
        if not su:
            raise InputError(2, "", 0, 0, "no setup: give setup='eye-in-hand' or 'eye-to-hand'")
        st = _lib.solve(records._h, su, opt, ctypes.byref(s), ctypes.byref(err))
        if st not in (0, 3) or not s.value:
            _raise(st, err)
        try:
            text = ctypes.c_void_p()
            st2 = _lib.solution_to_json(s, records._h, _enc(method), 0, ctypes.byref(text), ctypes.byref(err))
            if st2 != 0:
                _raise(st2, err)
            cov = np.empty((12, 12))
            have = _lib.solution_covariance(s, cov.ctypes.data_as(_lib.c_double_p))
            return Solution(json.loads(_json_text(text)), cov if have else None)
        finally:
            _lib.solution_destroy(s)
    finally:
        _lib.solve_options_destroy(opt)


def register(from_points, to_points, *, weights=None, scale=False, method="svd"):
    """Point-set registration (tram register): T_to_from with
    p_to = c R p_from + t.  Arrays of shape (n, 3) or (n, 2).  Returns a dict
    with T_to_from (4 x 4), scale, rms, residuals, translation_sigma and
    rotation_sigma_deg."""
    A = np.ascontiguousarray(from_points, dtype=np.float64)
    B = np.ascontiguousarray(to_points, dtype=np.float64)
    if A.ndim != 2 or A.shape != B.shape or A.shape[1] not in (2, 3):
        raise InputError(2, "", 0, 0, "from_points and to_points: expected two (n, 3) or (n, 2) arrays of one shape")
    n, dim = A.shape
    W = None if weights is None else np.ascontiguousarray(weights, dtype=np.float64)
    if W is not None and W.shape != (n,):
        raise InputError(2, "", 0, 0, f"weights: expected {n} values")
    if method not in ("svd", "quaternion"):
        raise InputError(2, "", 0, 0, f"method '{method}': expected svd or quaternion")
    opt = _lib.RegisterOptions(0 if method == "svd" else 1, int(scale), dim, 1)
    res, err = _lib.RegisterResult(), _lib.Error()
    st = _lib.register_points(A.ctypes.data_as(_lib.c_double_p), B.ctypes.data_as(_lib.c_double_p),
                              W.ctypes.data_as(_lib.c_double_p) if W is not None else None, n,
                              ctypes.byref(opt), ctypes.byref(res), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    r = np.empty(n)
    _lib.register_residuals(A.ctypes.data_as(_lib.c_double_p), B.ctypes.data_as(_lib.c_double_p), n,
                            dim, ctypes.byref(res), r.ctypes.data_as(_lib.c_double_p))
    return {"T_to_from": np.array(res.T_to_from.m), "scale": res.scale, "rms": res.rms,
            "residuals": r, "translation_sigma": np.array(res.translation_sigma),
            "rotation_sigma_deg": np.array(res.rotation_sigma_deg), "scale_sigma": res.scale_sigma}


def check(calibration, records, *, tolerance_length=None, tolerance_angle_rad=None, tool=None):
    """Mount check (tram check): has the mount moved since `calibration`
    (a calibration file's path)?  records: a Records or a record file's
    path.  Returns the library's check document (docs/check.md) as a dict;
    its "verdict" is the answer.  tool: as for read_records (with a path)."""
    records = _records_arg(records, tool)
    cal, err = ctypes.c_void_p(), _lib.Error()
    st = _lib.calibration_read_file(_enc(str(calibration)), ctypes.byref(cal), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    try:
        use = tolerance_length is not None or tolerance_angle_rad is not None
        opt = _lib.CheckOptions(int(use), float(tolerance_length or 0), float(tolerance_angle_rad or 0))
        res = ctypes.c_void_p()
        st = _lib.check(cal, records._h, ctypes.byref(opt), ctypes.byref(res), ctypes.byref(err))
        if st != 0 or not res.value:
            _raise(st or 2, err)
        try:
            text = ctypes.c_void_p()
            st = _lib.check_result_to_json(res, records._h, 0, None, ctypes.byref(text), ctypes.byref(err))
            if st != 0:
                _raise(st, err)
            return json.loads(_json_text(text))
        finally:
            _lib.check_result_destroy(res)
    finally:
        _lib.calibration_destroy(cal)


def fk(chain, joints):
    """Forward kinematics (tram fk): the flange poses T_base_flange (n x 4 x 4,
    in the chain file's length unit) of n joint readings (n x joints, in the
    chain's units) of the chain file `chain`."""
    c, err = ctypes.c_void_p(), _lib.Error()
    st = _lib.chain_read_file(_enc(str(chain)), ctypes.byref(c), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    try:
        head = ctypes.cast(c, ctypes.POINTER(_lib.ChainHead)).contents
        q = np.ascontiguousarray(np.atleast_2d(joints), dtype=np.float64)
        if q.shape[1] != head.n_joints:
            raise InputError(2, "", 0, 0, f"joints: {q.shape[1]} values per reading, the chain has {head.n_joints} joints")
        out = np.empty((len(q), 4, 4))
        T = _lib.SE3()
        for i, row in enumerate(q):
            bad = _lib.chain_limit_violation(c, row.ctypes.data_as(_lib.c_double_p))
            if bad >= 0:
                raise InputError(2, "", 0, 0, f"reading {i}: joint {bad + 1} is outside its limits")
            _lib.chain_forward(c, row.ctypes.data_as(_lib.c_double_p), ctypes.byref(T), None)
            out[i] = np.array(T.m)
        return out
    finally:
        _lib.chain_destroy(c)


def _seq(name):
    s = _lib.euler_parse(_enc(name))
    if s < 0:
        raise InputError(2, "", 0, 0, f"Euler convention '{name}': expected e.g. zyx-intrinsic or xyz-extrinsic")
    return s


def _each(x, width, fn, out_shape):
    a = np.ascontiguousarray(x, dtype=np.float64)
    single = a.ndim == len(width)
    a = a.reshape((-1,) + width)
    out = np.empty((len(a),) + out_shape)
    for i in range(len(a)):
        out[i] = fn(a[i])
    return out[0] if single else out


def _m3(R):
    M = _lib.Mat3()
    ctypes.memmove(ctypes.addressof(M), np.ascontiguousarray(R, dtype=np.float64).ctypes.data, 72)
    return M


def euler_to_matrix(seq, angles_rad):
    """Rotation matrices from Euler angles (rad) of the named convention (one
    of the 24, e.g. "zyx-intrinsic"); angles of shape (3,) or (n, 3)."""
    s = _seq(seq)

    def one(e):
        M = _lib.Mat3()
        _lib.euler_to_mat3(s, e.ctypes.data_as(_lib.c_double_p), ctypes.byref(M))
        return np.array(M.m)
    return _each(angles_rad, (3,), one, (3, 3))


def matrix_to_euler(seq, R):
    """Euler angles (rad) of rotation matrices in the named convention."""
    s = _seq(seq)

    def one(m):
        e = np.empty(3)
        _lib.euler_from_mat3(s, ctypes.byref(_m3(m)), e.ctypes.data_as(_lib.c_double_p))
        return e
    return _each(R, (3, 3), one, (3,))


def quat_wxyz_to_matrix(q):
    """Rotation matrices from unit quaternions stored w, x, y, z."""
    def one(v):
        M = _lib.Mat3()
        _lib.quat_to_mat3(v.ctypes.data_as(_lib.c_double_p), ctypes.byref(M))
        return np.array(M.m)
    return _each(q, (4,), one, (3, 3))


def matrix_to_quat_wxyz(R):
    """Unit quaternions (w, x, y, z) of rotation matrices."""
    def one(m):
        q = np.empty(4)
        _lib.quat_from_mat3(ctypes.byref(_m3(m)), q.ctypes.data_as(_lib.c_double_p))
        return q
    return _each(R, (3, 3), one, (4,))


def rotvec_to_matrix(rv_rad):
    """Rotation matrices from rotation vectors (axis times angle in rad)."""
    def one(v):
        M = _lib.Mat3()
        _lib.rotvec_to_mat3(v.ctypes.data_as(_lib.c_double_p), ctypes.byref(M))
        return np.array(M.m)
    return _each(rv_rad, (3,), one, (3, 3))


def matrix_to_rotvec(R):
    """Rotation vectors (rad) of rotation matrices."""
    def one(m):
        v = np.empty(3)
        _lib.rotvec_from_mat3(ctypes.byref(_m3(m)), v.ctypes.data_as(_lib.c_double_p))
        return v
    return _each(R, (3, 3), one, (3,))


def report(calibration, output, *, euler, page="a4", history=None, computed_by=None, force=False,
           date_utc=None):
    """The calibration record as a PDF (tram report, docs/report.md): the
    calibration file `calibration` (tram solve -o) laid out on A4 or US
    Letter pages and written to `output` atomically.  Keyword arguments as
    the command's options: euler (--euler, required: one of the 24
    conventions, e.g. "zyx-intrinsic"), page (--page: "a4" or "letter"),
    history (--history: a check history file), computed_by (--computed-by),
    force (--force: replace an existing output).  date_utc
    ("YYYY-MM-DDTHH:MM:SSZ") is the report's date; None takes it as the
    command does (SOURCE_DATE_EPOCH, else now, UTC).  Returns the page
    count.  The report never calls the result verified or safe."""
    err = _lib.Error()
    opt = _lib.ReportOptions()
    st = _lib.plot_page_parse(_enc(page), ctypes.byref(opt.page), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    opt.euler = _seq(euler) if euler is not None else -1
    date = ctypes.create_string_buffer(32)
    if date_utc is None:
        st = _lib.report_date_now(date, 32, ctypes.byref(err))
        if st != 0:
            _raise(st, err)
    else:
        date.value = _enc(date_utc)
    hist, by = _enc(None if history is None else str(history)), _enc(computed_by)
    opt.history_path, opt.date_utc, opt.computed_by = hist, date.value, by
    pages = ctypes.c_int()
    st = _lib.report_write_pdf(_enc(str(calibration)), ctypes.byref(opt), _enc(str(output)),
                               int(force), ctypes.byref(pages), ctypes.byref(err))
    if st != 0:
        _raise(st, err)
    return pages.value
