"""Loading libtram and the ctypes declarations of its public C API.

The library is found by this rule (docs/python.md):
  1. the file named by the environment variable TRAM_LIBRARY;
  2. libtram.so.0 (or libtram.so) next to this package: in the package
     folder, or in the lib/ folder of the same install prefix
     (PREFIX/lib/python3/dist-packages/tram -> PREFIX/lib);
  3. the system loader (ld.so's search path).

Only small structs whose layout is part of the C contract are mirrored here
(tram_error, tram_se3, the register and check options); solve options are
set by name through tram_solve_options_set, and results come back as the
library's own JSON documents, so that this package holds no logic.
"""
import ctypes
import os

_HERE = os.path.dirname(os.path.abspath(__file__))


def _candidates():
    env = os.environ.get("TRAM_LIBRARY")
    if env:
        return [env]
    prefix_lib = os.path.normpath(os.path.join(_HERE, "..", "..", ".."))
    names = ["libtram.so.0", "libtram.so"]
    out = [os.path.join(_HERE, n) for n in names]
    out += [os.path.join(prefix_lib, n) for n in names]
    return out + names


def _load():
    errors = []
    for path in _candidates():
        if os.sep in path and not os.path.exists(path):
            continue
        try:
            return ctypes.CDLL(path)
        except OSError as e:
            errors.append(f"{path}: {e}")
            if os.environ.get("TRAM_LIBRARY"):
                break
    raise ImportError("libtram not found (set TRAM_LIBRARY to libtram.so): " + "; ".join(errors))


lib = _load()

c_double_p = ctypes.POINTER(ctypes.c_double)
c_int_p = ctypes.POINTER(ctypes.c_int)


class Error(ctypes.Structure):
    _fields_ = [("status", ctypes.c_int), ("file", ctypes.c_char * 256), ("line", ctypes.c_long),
                ("column", ctypes.c_long), ("message", ctypes.c_char * 768)]


class SE3(ctypes.Structure):
    _fields_ = [("m", (ctypes.c_double * 4) * 4)]


class Mat3(ctypes.Structure):
    _fields_ = [("m", (ctypes.c_double * 3) * 3)]


class ReadOptions(ctypes.Structure):
    _fields_ = [("length_unit", ctypes.c_int), ("angle_unit", ctypes.c_int),
                ("reorthonormalize", ctypes.c_int), ("quat_norm_tol", ctypes.c_double),
                ("matrix_tol", ctypes.c_double), ("need_setup", ctypes.c_int)]


class RegisterOptions(ctypes.Structure):
    _fields_ = [("method", ctypes.c_int), ("scale", ctypes.c_int), ("dim", ctypes.c_int),
                ("threads", ctypes.c_int)]


class RegisterResult(ctypes.Structure):
    _fields_ = [("T_to_from", SE3), ("scale", ctypes.c_double), ("rms", ctypes.c_double),
                ("weight_sum", ctypes.c_double), ("n", ctypes.c_size_t),
                ("translation_sigma", ctypes.c_double * 3),
                ("rotation_sigma_deg", ctypes.c_double * 3), ("scale_sigma", ctypes.c_double),
                ("spread", ctypes.c_double * 3)]


class CheckOptions(ctypes.Structure):
    # all of tram_check_options: the library reads every field
    _fields_ = [("use_tolerance", ctypes.c_int), ("tol_length", ctypes.c_double),
                ("tol_angle_rad", ctypes.c_double), ("no_plausibility", ctypes.c_int),
                ("pairing_permutations", ctypes.c_size_t), ("seed", ctypes.c_ulonglong)]


class ChainHead(ctypes.Structure):
    """The leading fields of tram_chain (its units and joint count)."""
    _fields_ = [("length_unit", ctypes.c_int), ("angle_unit", ctypes.c_int),
                ("n_elements", ctypes.c_size_t), ("n_joints", ctypes.c_size_t)]


def _fn(name, restype, *argtypes):
    f = getattr(lib, name)
    f.restype = restype
    f.argtypes = list(argtypes)
    return f


V, P, S, I, D, Z = None, ctypes.c_void_p, ctypes.c_char_p, ctypes.c_int, ctypes.c_double, ctypes.c_size_t
E = ctypes.POINTER(Error)
PP = ctypes.POINTER(ctypes.c_void_p)

version = _fn("tram_version", S)
free = _fn("tram_free", V, P)
unit_length_parse = _fn("tram_unit_length_parse", I, S)
unit_length_name = _fn("tram_unit_length_name", S, I)
unit_angle_parse = _fn("tram_unit_angle_parse", I, S)
unit_angle_name = _fn("tram_unit_angle_name", S, I)
setup_parse = _fn("tram_setup_parse", I, S)
setup_name = _fn("tram_setup_name", S, I)
method_parse = _fn("tram_method_parse", I, S)

records_read_file = _fn("tram_records_read_file", I, S, ctypes.POINTER(ReadOptions), PP, E)
records_from_poses = _fn("tram_records_from_poses", I, Z, ctypes.POINTER(S), c_double_p,
                         c_double_p, I, I, ctypes.POINTER(ReadOptions), PP, E)
records_destroy = _fn("tram_records_destroy", V, P)
records_count = _fn("tram_records_count", Z, P)
records_station_id = _fn("tram_records_station_id", S, P, Z)
records_pose = _fn("tram_records_pose", I, P, Z, I, c_double_p)
records_apply_chain = _fn("tram_records_apply_chain", I, P, P, E)

solve_options_create = _fn("tram_solve_options_create", P)
solve_options_set = _fn("tram_solve_options_set", I, P, S, D)
solve_options_destroy = _fn("tram_solve_options_destroy", V, P)
solve = _fn("tram_solve", I, P, I, P, PP, E)
solution_destroy = _fn("tram_solution_destroy", V, P)
solution_covariance = _fn("tram_solution_covariance", I, P, c_double_p)
solution_to_json = _fn("tram_solution_to_json", I, P, P, S, I, ctypes.POINTER(ctypes.c_void_p), E)

register_points = _fn("tram_register_points", I, c_double_p, c_double_p, c_double_p, Z,
                      ctypes.POINTER(RegisterOptions), ctypes.POINTER(RegisterResult), E)
register_residuals = _fn("tram_register_residuals", V, c_double_p, c_double_p, Z, I,
                         ctypes.POINTER(RegisterResult), c_double_p)

calibration_read_file = _fn("tram_calibration_read_file", I, S, PP, E)
calibration_destroy = _fn("tram_calibration_destroy", V, P)
check = _fn("tram_check", I, P, P, ctypes.POINTER(CheckOptions), PP, E)
check_result_destroy = _fn("tram_check_result_destroy", V, P)
check_result_to_json = _fn("tram_check_result_to_json", I, P, P, I, S,
                           ctypes.POINTER(ctypes.c_void_p), E)

chain_read_file = _fn("tram_chain_read_file", I, S, PP, E)
chain_destroy = _fn("tram_chain_destroy", V, P)
chain_forward = _fn("tram_chain_forward", V, P, c_double_p, ctypes.POINTER(SE3), P)
chain_limit_violation = _fn("tram_chain_limit_violation", I, P, c_double_p)

euler_parse = _fn("tram_euler_parse", I, S)
euler_to_mat3 = _fn("tram_euler_to_mat3", V, I, c_double_p, ctypes.POINTER(Mat3))
euler_from_mat3 = _fn("tram_euler_from_mat3", V, I, ctypes.POINTER(Mat3), c_double_p)
quat_to_mat3 = _fn("tram_quat_wxyz_to_mat3", V, c_double_p, ctypes.POINTER(Mat3))
quat_from_mat3 = _fn("tram_quat_wxyz_from_mat3", V, ctypes.POINTER(Mat3), c_double_p)
rotvec_to_mat3 = _fn("tram_rotvec_to_mat3", V, c_double_p, ctypes.POINTER(Mat3))
rotvec_from_mat3 = _fn("tram_rotvec_from_mat3", V, ctypes.POINTER(Mat3), c_double_p)


# ---- images, cameras, poses (tram/image.h, tram/camera.h, tram/pose.h) ----

class GreyImage(ctypes.Structure):
    _fields_ = [("width", ctypes.c_size_t), ("height", ctypes.c_size_t),
                ("pixels", ctypes.POINTER(ctypes.c_float))]


class Board(ctypes.Structure):
    _fields_ = [("kind", ctypes.c_int), ("cols", ctypes.c_int), ("rows", ctypes.c_int),
                ("square", ctypes.c_double), ("unit", ctypes.c_int)]


class DetectOptions(ctypes.Structure):
    _fields_ = [("min_square_px", ctypes.c_double), ("threads", ctypes.c_int)]


class Detection(ctypes.Structure):
    _fields_ = [("found", ctypes.c_int), ("ncorners", ctypes.c_size_t),
                ("uv", ctypes.POINTER(ctypes.c_double)), ("nseen", ctypes.c_size_t),
                ("sharpness", ctypes.c_double), ("reason", ctypes.c_char * 256)]


class Camera(ctypes.Structure):
    _fields_ = [(n, ctypes.c_double) for n in ("fx", "fy", "cx", "cy", "skew", "k1", "k2", "k3", "p1", "p2")] + \
               [("distortion", ctypes.c_int), ("width", ctypes.c_size_t), ("height", ctypes.c_size_t)]


class PlanarTarget(ctypes.Structure):
    _fields_ = [("n", ctypes.c_size_t), ("id", ctypes.POINTER(ctypes.c_char_p)),
                ("xy", ctypes.POINTER(ctypes.c_double))]


class IntrinsicsOptions(ctypes.Structure):
    _fields_ = [("distortion", ctypes.c_int), ("free_skew", ctypes.c_int), ("robust", ctypes.c_int),
                ("huber_k", ctypes.c_double), ("outlier_k", ctypes.c_double),
                ("max_iterations", ctypes.c_int), ("max_relative_sigma_f", ctypes.c_double)]


class PoseResult(ctypes.Structure):
    _fields_ = [("T_sensor_target", SE3), ("n", ctypes.c_size_t), ("planar", ctypes.c_int),
                ("iterations", ctypes.c_int), ("rms_px", ctypes.c_double), ("max_px", ctypes.c_double),
                ("sigma_px", ctypes.c_double), ("cov_valid", ctypes.c_int), ("cov", ctypes.c_double * 36)]


grey_image_read_file = _fn("tram_grey_image_read_file", I, S, ctypes.POINTER(ctypes.POINTER(GreyImage)), E)
grey_image_create = _fn("tram_grey_image_create", I, Z, Z, ctypes.POINTER(ctypes.POINTER(GreyImage)), E)
grey_image_destroy = _fn("tram_grey_image_destroy", V, ctypes.POINTER(GreyImage))
board_read_file = _fn("tram_board_read_file", I, S, ctypes.POINTER(Board), E)
board_corner_count = _fn("tram_board_corner_count", Z, ctypes.POINTER(Board))
board_corner = _fn("tram_board_corner", V, ctypes.POINTER(Board), Z, c_double_p)
detect_options_init = _fn("tram_detect_options_init", V, ctypes.POINTER(DetectOptions))
detect_chessboard = _fn("tram_detect_chessboard", I, ctypes.POINTER(GreyImage), ctypes.POINTER(Board),
                        ctypes.POINTER(DetectOptions), ctypes.POINTER(ctypes.POINTER(Detection)), E)
detection_destroy = _fn("tram_detection_destroy", V, ctypes.POINTER(Detection))
camera_read_file = _fn("tram_camera_read_file", I, S, ctypes.POINTER(Camera), P, E)
camera_to_json = _fn("tram_camera_to_json", I, ctypes.POINTER(Camera), P, ctypes.POINTER(ctypes.c_void_p), E)
distortion_parse = _fn("tram_distortion_parse", I, S)
pixel_obs_read_file = _fn("tram_pixel_obs_read_file", I, S, PP, E)
pixel_obs_destroy = _fn("tram_pixel_obs_destroy", V, P)
intrinsics_options_init = _fn("tram_intrinsics_options_init", V, ctypes.POINTER(IntrinsicsOptions))
intrinsics_calibrate = _fn("tram_intrinsics_calibrate", I, P, ctypes.POINTER(PlanarTarget),
                           ctypes.POINTER(IntrinsicsOptions), PP, E)
intrinsics_result_destroy = _fn("tram_intrinsics_result_destroy", V, P)
intrinsics_camera_json = _fn("tram_intrinsics_camera_json", I, P, ctypes.POINTER(ctypes.c_void_p), E)
intrinsics_rms_px = _fn("tram_intrinsics_rms_px", D, P)
intrinsics_camera = _fn("tram_intrinsics_camera", V, P, ctypes.POINTER(Camera))
intrinsics_view_count = _fn("tram_intrinsics_view_count", Z, P)
intrinsics_view_id = _fn("tram_intrinsics_view_id", S, P, Z)
intrinsics_view_pose = _fn("tram_intrinsics_view_pose", I, P, Z, c_double_p, c_double_p)
pose_from_pixels = _fn("tram_pose_from_pixels", I, ctypes.POINTER(Camera), c_double_p, c_double_p, Z,
                       ctypes.POINTER(PoseResult), E)

tool_parse = _fn("tram_tool_parse", I, S, ctypes.POINTER(SE3), c_int_p, E)
records_set_tool = _fn("tram_records_set_tool", I, P, ctypes.POINTER(SE3), I, E)


# ---- the calibration report (tram/report.h, tram/plot.h) ----

class PlotPage(ctypes.Structure):
    _fields_ = [("width_mm", ctypes.c_double), ("height_mm", ctypes.c_double),
                ("named", ctypes.c_int), ("name", ctypes.c_char * 24)]


class ReportOptions(ctypes.Structure):
    _fields_ = [("page", PlotPage), ("euler", ctypes.c_int), ("history_path", ctypes.c_char_p),
                ("date_utc", ctypes.c_char_p), ("computed_by", ctypes.c_char_p)]


plot_page_parse = _fn("tram_plot_page_parse", I, S, ctypes.POINTER(PlotPage), E)
report_date_now = _fn("tram_report_date_now", I, ctypes.c_char_p, Z, E)
report_write_pdf = _fn("tram_report_write_pdf", I, S, ctypes.POINTER(ReportOptions), S, I, c_int_p, E)
