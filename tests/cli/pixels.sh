# tests/cli/pixels.sh - tram pose and tram solve --pixels on the synthetic
# scene in tests/cli/data/pixels (10 eye-in-hand stations, a 9x6 board of
# 25 mm squares, 0.2 px noise; X = T_flange_sensor has translation
# 35, -60, 110 mm - a scenario of our own).
px="$here/data/pixels"
# tram pose writes a record file that the records reader takes as it is.
"$TRAM" pose --camera "$px/camera.json" --board "$px/board.json" "$px/pixels.csv" >"$tmp/poses.csv" 2>"$tmp/err" \
    && "$TRAM" convert --to quat "$tmp/poses.csv" >/dev/null 2>>"$tmp/err" \
    && grep -q '^# sensor-pose: target-in-sensor' "$tmp/poses.csv" \
    && grep -q '^# Station s01: reprojection RMS 0\.[0-9]* px' "$tmp/poses.csv" && ok || { bad "tram pose output read back"; cat "$tmp/err"; }
# Joined with the robot poses, the pose path solves.
"$TRAM" pose --camera "$px/camera.json" --board "$px/board.json" --robot "$px/robot.csv" "$px/pixels.csv" \
    -o "$tmp/joined.csv" >"$tmp/out" 2>"$tmp/err" && "$TRAM" solve --json "$tmp/joined.csv" >"$tmp/pose.json" 2>>"$tmp/err" \
    && ok || { bad "pose path solve"; cat "$tmp/err"; }
expect_error "pose -o exists" 2 "exists" pose --camera "$px/camera.json" --board "$px/board.json" "$px/pixels.csv" -o "$tmp/joined.csv"
# The pixel path: exit 0, residuals in px, and X closer to the truth than the pose path here.
"$TRAM" solve --json --pixels "$px/pixels.csv" --camera "$px/camera.json" --board "$px/board.json" "$px/robot.csv" \
    >"$tmp/pix.json" 2>"$tmp/err" && /usr/bin/python3 - "$tmp/pix.json" "$tmp/pose.json" <<'PY' && ok || { bad "solve --pixels"; cat "$tmp/err"; }
import json, sys, math
a = json.load(open(sys.argv[1])); b = json.load(open(sys.argv[2]))
def err(d):
    m = d["transforms"]["T_flange_sensor"]["matrix"]
    return math.dist([m[0][3], m[1][3], m[2][3]], [35.0, -60.0, 110.0])
p = a["pixels"]
assert p["unit"] == "px" and len(p["stations"]) == 10 and 0.1 < p["residual"]["rms"] < 0.5, p
print("  pixels.sh: X translation error: --pixels %.4f mm, pose path %.4f mm; rms %.4f px" % (err(a), err(b), p["residual"]["rms"]))
assert err(a) <= err(b)
PY
"$TRAM" solve --pixels "$px/pixels.csv" --camera "$px/camera.json" --board "$px/board.json" --refine-intrinsics "$px/robot.csv" \
    >"$tmp/out" 2>"$tmp/err" && grep -q "camera refined with the mount" "$tmp/out" && ok || { bad "refine-intrinsics"; cat "$tmp/err"; }
# A robot station without pixels is left out as "no data", never as an outlier.
{ cat "$px/robot.csv"; echo "s11,900,200,650,1,0,0,0"; } >"$tmp/robot_extra.csv"
"$TRAM" solve --json --pixels "$px/pixels.csv" --camera "$px/camera.json" --board "$px/board.json" "$tmp/robot_extra.csv" \
    >"$tmp/nodata.json" 2>"$tmp/err" && /usr/bin/python3 - "$tmp/nodata.json" <<'PY' && ok || { bad "station without pixels"; cat "$tmp/err"; }
import json, sys
d = json.load(open(sys.argv[1]))
s = {x["station"]: x for x in d["residuals"]["stations"]}["s11"]
assert s.get("no_data") is True and s["outlier"] is False and s["rotation_deg"] is None, s
assert d["observability"]["outliers"] == 0, d["observability"]
assert any(g["code"] == "stations-without-pixels" for g in d["diagnostics"]), d["diagnostics"]
PY
# Bad input: a station with pixels but no robot pose; a point id not on the board.
{ cat "$px/pixels.csv"; echo "s77,3,100.5,100.5"; } >"$tmp/extra.csv"
n=$(wc -l <"$tmp/extra.csv" | tr -d ' ')
expect_error "pixels: station without robot pose" 2 "extra.csv:$n: error: station 's77' has pixels but no robot pose" \
    solve --pixels "$tmp/extra.csv" --camera "$px/camera.json" --board "$px/board.json" "$px/robot.csv"
expect_error "pose: station without robot pose" 2 "extra.csv:$n: error: station 's77'" \
    pose --robot "$px/robot.csv" --camera "$px/camera.json" --board "$px/board.json" "$tmp/extra.csv"
{ cat "$px/pixels.csv"; echo "s01,54,100.5,100.5"; } >"$tmp/offboard.csv"
expect_error "pixels: point not on the board" 2 "offboard.csv:$n: error: point '54' is not a corner of the 9x6 board" \
    solve --pixels "$tmp/offboard.csv" --camera "$px/camera.json" --board "$px/board.json" "$px/robot.csv"
expect_error "pose: point not on the board" 2 "offboard.csv:$n: error: point '54'" \
    pose --camera "$px/camera.json" --board "$px/board.json" "$tmp/offboard.csv"
# A degenerate view: station s02 keeps only its first row of corners (collinear).
awk -F, '/^s02,/ { if ($2 + 0 >= 9) next } { print }' "$px/pixels.csv" >"$tmp/line.csv"
expect_error "pixels: collinear view" 3 "station 's02'.*one line" \
    solve --pixels "$tmp/line.csv" --camera "$px/camera.json" --board "$px/board.json" "$px/robot.csv"
expect_error "pose: collinear view" 3 "station 's02'.*one line" \
    pose --camera "$px/camera.json" --board "$px/board.json" "$tmp/line.csv"
# Unobservable motion: every station rotated about one axis only.
/usr/bin/python3 - "$px/robot.csv" "$tmp/oneaxis.csv" <<'PY'
import sys, math
out = []
for line in open(sys.argv[1]):
    if line.startswith("#") or line.startswith("station"):
        out.append(line.rstrip("\n")); continue
    f = line.strip().split(","); k = int(f[0][1:])
    a = 0.3 * k
    out.append("%s,%.6f,%.6f,%.6f,%.12f,0,0,%.12f" % (f[0], 500 + 10 * k, 20 * k, 300, math.cos(a / 2), math.sin(a / 2)))
open(sys.argv[2], "w").write("\n".join(out) + "\n")
PY
"$TRAM" solve --pixels "$px/pixels.csv" --camera "$px/camera.json" --board "$px/board.json" "$tmp/oneaxis.csv" >"$tmp/out" 2>"$tmp/err"
rc=$?
[ $rc -eq 3 ] && grep -qi "axis" "$tmp/out" && ok || { bad "pixels: one-axis motion exit $rc"; cat "$tmp/err"; }
expect_error "pixels without camera" 2 "needs --camera" solve --pixels "$px/pixels.csv" --board "$px/board.json" "$px/robot.csv"
# Every command example of docs/pixels.md (its sh blocks) runs, in order, in
# an empty directory that links the repository's tests/ for the example data.
pdocs="$tmp/docs-pixels"
mkdir -p "$pdocs/bin"
printf '#!/bin/sh\nexec "%s" "$@"\n' "$TRAM" >"$pdocs/bin/tram"
chmod +x "$pdocs/bin/tram"
ln -s "$here/.." "$pdocs/tests"
awk '/^```sh$/ { on = 1; next } /^```/ { on = 0 } on' "$here/../../docs/pixels.md" >"$pdocs/examples.sh"
if [ -s "$pdocs/examples.sh" ] && (cd "$pdocs" && PATH="$pdocs/bin:$PATH" sh -e examples.sh >/dev/null 2>"$pdocs/err"); then
    ok
else
    bad "docs/pixels.md examples"; cat "$pdocs/err"
fi
# A model file in cm instead of the board (the same corners: id r*9+c at
# (2.5 c, 2.5 r, 0) cm): tram pose converts it to the output unit and says
# which (mm by default, cm with --length-unit cm), and solve --pixels gives the
# same X in the record file's mm.
awk 'BEGIN { print "# length-unit: cm"; print "point,x,y,z"; for (r = 0; r < 6; r++) for (c = 0; c < 9; c++) printf "%d,%.1f,%.1f,0\n", r * 9 + c, 2.5 * c, 2.5 * r }' >"$tmp/model_cm.csv"
"$TRAM" pose --camera "$px/camera.json" --model "$tmp/model_cm.csv" "$px/pixels.csv" >"$tmp/poses_model.csv" 2>"$tmp/err" \
    && "$TRAM" pose --camera "$px/camera.json" --model "$tmp/model_cm.csv" --length-unit cm "$px/pixels.csv" >"$tmp/poses_model_cm.csv" 2>>"$tmp/err" \
    && /usr/bin/python3 - "$tmp/poses.csv" "$tmp/poses_model.csv" "$tmp/poses_model_cm.csv" <<'PY' && ok || { bad "pose --model in cm"; cat "$tmp/err"; }
import sys
def read(p):
    unit, rows, head = None, [], None
    for line in open(p):
        if line.startswith("# length-unit:"): unit = line.split(":")[1].strip()
        if line.startswith("#") or not line.strip(): continue
        f = line.strip().split(",")
        if head is None: head = f; continue
        rows.append(dict(zip(head, f)))
    return unit, rows
ub, board = read(sys.argv[1]); um, mm = read(sys.argv[2]); uc, cm = read(sys.argv[3])
assert ub == "mm" and um == "mm" and uc == "cm", (ub, um, uc)
worst = 0.0
for b, m, c in zip(board, mm, cm):
    for k in ("sensor_x", "sensor_y", "sensor_z"):
        worst = max(worst, abs(float(b[k]) - float(m[k])), abs(float(b[k]) - 10 * float(c[k])))
    for k in ("sensor_qw", "sensor_qx", "sensor_qy", "sensor_qz"):
        assert abs(float(b[k]) - float(m[k])) < 1e-9 and abs(float(b[k]) - float(c[k])) < 1e-9, k
assert len(board) == len(mm) == len(cm) == 10 and worst < 1e-6, worst
print("  pixels.sh: pose from the cm model agrees with the board's: %.1e mm (in mm and in cm x 10)" % worst)
PY
"$TRAM" solve --json --pixels "$px/pixels.csv" --camera "$px/camera.json" --model "$tmp/model_cm.csv" "$px/robot.csv" \
    >"$tmp/pix_model.json" 2>"$tmp/err" && "$TRAM" solve --pixels "$px/pixels.csv" --camera "$px/camera.json" \
    --model "$tmp/model_cm.csv" "$px/robot.csv" >"$tmp/pix_model.txt" 2>>"$tmp/err" \
    && grep -q "mm" "$tmp/pix_model.txt" && /usr/bin/python3 - "$tmp/pix.json" "$tmp/pix_model.json" <<'PY' && ok || { bad "solve --pixels --model in cm"; cat "$tmp/err"; }
import json, sys
a = json.load(open(sys.argv[1])); b = json.load(open(sys.argv[2]))
assert a["length_unit"] == b["length_unit"] == "mm", (a["length_unit"], b["length_unit"])
ta = a["transforms"]["T_flange_sensor"]["translation"]; tb = b["transforms"]["T_flange_sensor"]["translation"]
tza = a["transforms"]["T_base_target"]["translation"]; tzb = b["transforms"]["T_base_target"]["translation"]
d = max(abs(x - y) for x, y in zip(ta + tza, tb + tzb))
assert d < 1e-6, d
print("  pixels.sh: solve --pixels with the cm model: X and Z as with the board (%.1e mm), reported in mm" % d)
PY
# --bootstrap with --pixels: a station bootstrap of the pixel fit is reported.
"$TRAM" solve --pixels "$px/pixels.csv" --camera "$px/camera.json" --board "$px/board.json" --bootstrap 100 "$px/robot.csv" \
    >"$tmp/out" 2>"$tmp/err" && grep -q "bootstrap 1-sigma: translation .* (100 resamples)" "$tmp/out" && ok \
    || { bad "solve --pixels --bootstrap"; cat "$tmp/err"; }
# A camera file calibrated with its skew free (calibration block): --refine-intrinsics
# frees the skew too and says so; its sigma and correlations go into the intervals
# when the camera is held fixed (a note says so).
/usr/bin/python3 - "$px/camera.json" "$tmp/camera_cal.json" <<'PY'
import json, sys
c = json.load(open(sys.argv[1]))
names = ["fx", "fy", "cx", "cy", "skew", "k1", "k2", "k3", "p1", "p2"]
c["calibration"] = {"method": "test", "views": 15, "points": 800, "outliers": 0, "rms_px": 0.2,
                    "sigma": {n: 0.05 if n in ("fx", "fy", "cx", "cy", "skew") else 1e-4 for n in names},
                    "fixed": [], "correlation": {n: {m: (0.5 if (n, m) == ("fx", "fy") else 0.0)
                                                   for m in names[i + 1:]} for i, n in enumerate(names[:-1])}}
json.dump(c, open(sys.argv[2], "w"), indent=1)
PY
"$TRAM" solve --pixels "$px/pixels.csv" --camera "$tmp/camera_cal.json" --board "$px/board.json" --refine-intrinsics "$px/robot.csv" \
    >"$tmp/out" 2>"$tmp/err" && grep -q "skew .* px (refined: free in the camera file)" "$tmp/out" && ok \
    || { bad "refine-intrinsics with free skew"; cat "$tmp/err"; }
"$TRAM" solve --pixels "$px/pixels.csv" --camera "$tmp/camera_cal.json" --board "$px/board.json" "$px/robot.csv" \
    >"$tmp/out" 2>"$tmp/err" && grep -q "camera-uncertainty: the intervals of X and Z include the camera's calibration uncertainty" "$tmp/out" \
    && ! grep -q "without their correlations" "$tmp/err" && ok || { bad "camera uncertainty note"; cat "$tmp/err"; }
