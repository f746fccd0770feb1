# tests/cli/convert.sh - tram convert on calibration files (for a robot
# controller), scalar-last quaternions, --digits, and the one-pose form's
# units.  The numbers are checked against SciPy Rotation (Debian's
# python3-scipy, run as /usr/bin/python3).  Sourced by run.sh.

demo=$here/../../datasets/demo
"$TRAM" solve --force -o "$tmp/conv.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 && ok || bad "convert: solve -o for the calibration"
# a calibration file: both transforms, scalar-last quaternion, in m
"$TRAM" convert --to quat-xyzw --length-unit m "$tmp/conv.cal.json" >"$tmp/conv.xyzw" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && grep -q '^transform,x,y,z,qx,qy,qz,qw$' "$tmp/conv.xyzw" &&
   grep -q '^T_flange_sensor,0\.03977' "$tmp/conv.xyzw" && grep -q '^T_base_target,' "$tmp/conv.xyzw" &&
   grep -q 'NOT verified on the cell' "$tmp/conv.xyzw" && grep -q '^# SAFETY:' "$tmp/conv.xyzw"; then ok
else bad "convert of a calibration file: rc $rc: $(cat "$tmp/conv.xyzw" "$tmp/err")"; fi
"$TRAM" convert --to euler:zyx-intrinsic --angle-unit deg "$tmp/conv.cal.json" >"$tmp/conv.eul" 2>"$tmp/err" && ok || bad "convert calibration to Euler: $(cat "$tmp/err")"
# SciPy Rotation: as_quat() is scalar last; as_euler('ZYX') is intrinsic z-y-x.
if /usr/bin/python3 -c 'import scipy' 2>/dev/null; then
    /usr/bin/python3 - "$tmp/conv.cal.json" "$tmp/conv.xyzw" "$tmp/conv.eul" <<'PY' && ok || bad "convert calibration against SciPy Rotation"
import json, sys
import numpy as np
from scipy.spatial.transform import Rotation
cal = json.load(open(sys.argv[1]))
def rows(path):
    return {l.split(",")[0]: [float(x) for x in l.strip().split(",")[1:]]
            for l in open(path) if l.startswith("T_")}
q, e = rows(sys.argv[2]), rows(sys.argv[3])
for name in ("T_flange_sensor", "T_base_target"):
    M = np.array(cal["transforms"][name]["matrix"])
    R = Rotation.from_matrix(M[:3, :3])
    assert np.allclose(q[name][:3], M[:3, 3] / 1000.0, atol=1e-12), name   # mm -> m
    ref = R.as_quat()
    got = np.array(q[name][3:])
    assert min(np.abs(got - ref).max(), np.abs(got + ref).max()) < 1e-12, (name, got, ref)
    assert np.allclose(e[name][3:], R.as_euler("ZYX", degrees=True), atol=1e-9), name
PY
else skipped=$((skipped + 1)); echo "skipped: SciPy not installed (/usr/bin/python3)"; fi
# --format json on a calibration is refused; a damaged one names the file
expect_error "convert calibration as json" 2 "a calibration file is already JSON" convert --to quat --format json "$tmp/conv.cal.json"
printf '{"format": "tram-calibration", "version": 1}\n' >"$tmp/broken.cal.json"
expect_error "damaged calibration" 2 "broken.cal.json" convert --to quat "$tmp/broken.cal.json"

# quat-xyzw record files read back to the same poses (the names keep meaning)
"$TRAM" convert --to quat-xyzw "$here/data/mixed.csv" >"$tmp/xyzw.csv" 2>"$tmp/err" &&
    "$TRAM" convert --to quat "$tmp/xyzw.csv" >"$tmp/xyzw_back.csv" 2>>"$tmp/err" &&
    "$TRAM" convert --to quat "$here/data/mixed.csv" >"$tmp/xyzw_ref.csv" 2>>"$tmp/err" &&
    numclose "$tmp/xyzw_ref.csv" "$tmp/xyzw_back.csv" && grep -q 'robot_qz,robot_qw' "$tmp/xyzw.csv" && ok ||
    bad "quat-xyzw round trip: $(cat "$tmp/err")"

# --digits: for people; the default stays exact
out=$("$TRAM" convert --pose quat:42.004073,0,5,1,0,0,0 --to quat 2>&1)
case "$out" in *"length-unit: as given"*"42.004072999999998,0,5,1,0,0,0"*) ok ;; *) bad "one pose without a unit: $out" ;; esac
out=$("$TRAM" convert --pose quat:42.004073,0,5,1,0,0,0 --to quat --digits 8 2>&1)
case "$out" in *"42.004073,0,5,1,0,0,0"*) ok ;; *) bad "--digits 8: $out" ;; esac
out=$("$TRAM" convert --pose quat:42.004073,0,5,1,0,0,0 --from-length-unit mm --length-unit m --to quat --digits 6 2>&1)
case "$out" in *"length-unit: m,"*"0.0420041,0,0.005,1,0,0,0"*) ok ;; *) bad "--pose mm to m: $out" ;; esac
expect_error "--digits out of range" 2 "--digits '18': expected a whole number 1..17" convert --to quat --digits 18 "$here/data/mixed.csv"
# the --pose examples of tram convert --help
out=$("$TRAM" convert --pose euler:zyx-intrinsic:0,0,0,90,0,0 --from-angle-unit deg --to quat-xyzw --digits 12 2>&1)
case "$out" in *"0,0,0,0,0,0.707106781187,0.707106781187"*) ok ;; *) bad "--pose euler example: $out" ;; esac
expect_error "--pose angles without a unit" 2 "give --from-angle-unit deg or rad" convert --pose euler:zyx-intrinsic:0,0,0,90,0,0 --to quat
