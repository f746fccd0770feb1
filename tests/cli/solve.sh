# tests/cli/solve.sh - command-line tests of tram solve (sourced by run.sh).
demo="$here/../../datasets/demo"

"$TRAM" solve "$demo/wrist_camera.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && grep -q '^T_flange_sensor' "$tmp/out" && grep -q '^SAFETY' "$tmp/out" &&
   grep -q 'p14 .*OUTLIER' "$tmp/out" && grep -q 'NOT verified on the cell' "$tmp/out"; then ok
else bad "solve demo (rc $rc)"; cat "$tmp/err"; fi

"$TRAM" solve --json "$demo/overhead_camera.csv" >"$tmp/o.json" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && /usr/bin/python3 - "$tmp/o.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
assert d["setup"] == "eye-to-hand" and d["length_unit"] == "mm"
t = d["transforms"]["T_base_sensor"]
assert len(t["matrix"]) == 4 and len(t["translation"]) == 3 and len(t["quaternion_wxyz"]) == 4
assert len(t["rotation_vector_deg"]) == 3 and "T_flange_target" in d["transforms"]
for k in ("rms", "median", "max"):
    assert k in d["residuals"]["rotation_deg"] and k in d["residuals"]["translation"]
s = d["residuals"]["stations"][0]
assert set(s) >= {"station", "rotation_deg", "translation", "outlier"}
assert "uncertainty" in d and isinstance(d["diagnostics"], list)
PY
then ok; else bad "solve --json schema"; cat "$tmp/err"; fi 2>/dev/null

# -o writes atomically and refuses to overwrite without --force
rm -f "$tmp/cal.json"
"$TRAM" solve -o "$tmp/cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 && grep -q '"tram-calibration"' "$tmp/cal.json" && ok || bad "solve -o"
cp "$tmp/cal.json" "$tmp/cal.before"
expect_error "solve -o existing" 2 "cal.json: error: already exists; not overwritten \\(pass --force" solve --json -o "$tmp/cal.json" "$demo/wrist_camera.csv" 
cmp -s "$tmp/cal.json" "$tmp/cal.before" && ok || bad "existing calibration changed"
"$TRAM" solve --force -o "$tmp/cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 && ok || bad "solve --force"
ls "$tmp" | grep -q 'cal.json.tmp' && bad "temporary file left behind" || ok

expect_error "setup conflict" 2 "wrist_camera.csv:5: error: the file declares setup eye-in-hand but --setup eye-to-hand" solve --setup eye-to-hand "$demo/wrist_camera.csv"
f=$(printf '# length-unit: mm\nrobot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n1,0,0,1,0,0,0\n' | mk robot_only.csv)
expect_error "no sensor block" 2 "robot_only.csv:[0-9]+: error: solving needs both" solve --setup eye-in-hand "$f"
f=$(sed 's/^# setup: eye-in-hand$//' "$demo/wrist_camera.csv" | mk nosetup.csv)
expect_error "no setup" 2 "nosetup.csv:[0-9]+: error: no setup" solve "$f"
expect_error "bad method" 2 "--method 'magic'" solve --method magic "$demo/wrist_camera.csv"
expect_error "bad noise" 2 "--noise '0.2,0.05'" solve --noise 0.2,0.05 "$demo/wrist_camera.csv"

# A convention mistake: exit 3, the fix on stderr, and the result marked untrustworthy.
f=$(sed 's/# robot-pose: flange-in-base/# robot-pose: base-in-flange/' "$demo/wrist_camera.csv" | mk inverted.csv)
"$TRAM" solve "$f" >"$tmp/out" 2>"$tmp/err"; rc=$?
if [ $rc -eq 3 ] && grep -q "add '# robot-pose: flange-in-base'" "$tmp/err" && grep -q 'NOT TRUSTWORTHY' "$tmp/out"; then ok
else bad "inverted robot poses (rc $rc)"; cat "$tmp/err"; fi

# Planar (SCARA-like) motion: exit 3, what cannot be determined, what to add.
{
    printf '# setup: eye-in-hand\n# length-unit: mm\n# angle-unit: deg\nstation,robot_x,robot_y,robot_z,robot_rx,robot_ry,robot_rz,sensor_x,sensor_y,sensor_z,sensor_rx,sensor_ry,sensor_rz\n'
    for k in 0 1 2 3 4 5; do
        printf '%s,%s,%s,400,0,0,%s,%s,0,500,0,0,%s\n' "$k" "$((k * 30))" "$((k * 10))" "$((k * 25))" "$((k * 7))" "$((k * -25))"
    done
} >"$tmp/planar.csv"
"$TRAM" solve "$tmp/planar.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
if [ $rc -eq 3 ] && grep -q "translation along this axis cannot be determined" "$tmp/err" && grep -q "tilt the flange about a different axis" "$tmp/err"; then ok
else bad "planar motion (rc $rc)"; cat "$tmp/err"; fi

# The committed demo data are exactly what the generator makes.
if [ -n "${GEN_DEMO:-}" ]; then
    mkdir -p "$tmp/gen" && "$GEN_DEMO" "$tmp/gen" "$demo/arm_dh.json" &&
    cmp -s "$tmp/gen/wrist_camera.csv" "$demo/wrist_camera.csv" &&
    cmp -s "$tmp/gen/overhead_camera.csv" "$demo/overhead_camera.csv" &&
    cmp -s "$tmp/gen/truth.json" "$demo/truth.json" &&
    cmp -s "$tmp/gen/wrist_recheck.csv" "$demo/wrist_recheck.csv" &&
    cmp -s "$tmp/gen/wrist_bumped.csv" "$demo/wrist_bumped.csv" &&
    cmp -s "$tmp/gen/truth_bump.json" "$demo/truth_bump.json" &&
    cmp -s "$tmp/gen/wrist_camera_joints.csv" "$demo/wrist_camera_joints.csv" &&
    cmp -s "$tmp/gen/wrist_camera_tcp.csv" "$demo/wrist_camera_tcp.csv" && ok || bad "demo data differ from tools/gen_demo.c output"
fi
