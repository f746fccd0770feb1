# tests/cli/scale.sh - the sensor's length scale (issue 13, section 7;
# docs/solve.md "Sensor length scale"): a scale planted in the demo's
# sensor translations (an invented scenario of our own) by a plain text
# edit; the open Jin et al. (2023) set read from ../shared at test time.
# Sourced by run.sh.
demo="$here/../../datasets/demo"

# scale_rc NAME STATUS REGEX ARGS...: exit STATUS and REGEX in stdout or stderr.
scale_rc() {
    name=$1; want=$2; re=$3; shift 3
    "$TRAM" "$@" >"$tmp/out" 2>"$tmp/err"
    rc=$?
    if [ "$rc" -ne "$want" ]; then bad "$name: exit $rc, expected $want"; head -c 2000 "$tmp/err"; return; fi
    if ! cat "$tmp/out" "$tmp/err" | grep -Eq -- "$re"; then bad "$name: output lacks /$re/"; head -c 2000 "$tmp/err"; return; fi
    ok
}

# plant_scale F FILE: sensor translations (columns 8..10) divided by F, so
# that sensor lengths x F = robot lengths.
plant_scale() {
    awk -F, -v OFS=, -v f="$1" '/^#/ {print; next} !h {print; h=1; next}
        {$8=sprintf("%.4f",$8/f); $9=sprintf("%.4f",$9/f); $10=sprintf("%.4f",$10/f); print}' "$2"
}

scale_rc "scale: honest demo, tested only" 0 "sensor length scale .*tested only: the result uses 1" solve "$demo/wrist_camera.csv"
if grep -q "sensor-scale" "$tmp/out"; then bad "scale: a note on the honest demo"; else ok; fi
plant_scale 1.003 "$demo/wrist_camera.csv" >"$tmp/scale3.csv"
scale_rc "scale: 0.3% planted, note" 0 "\[note\] sensor-scale-significant: .*pass --fit-scale" solve "$tmp/scale3.csv"
"$TRAM" solve --fit-scale --json "$tmp/scale3.csv" >"$tmp/scale3.json" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && /usr/bin/python3 - "$tmp/scale3.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
k = d["sensor_scale"]
# the demo's own sensor noise gives 0.99946 +- 0.0007 unplanted: 1.003 x that
print(f"[ info ] demo, 0.3% planted: scale {k['scale']:.5f}, 1 sigma {k['sigma']:.5f}, z {k['z']:.2f}")
assert k["fitted"] and abs(k["scale"] - 1.003) < 3 * k["sigma"], k
assert not [g for g in d["diagnostics"] if g["code"].startswith("sensor-scale")]
PY
then ok; else bad "scale: --fit-scale on the planted demo (rc $rc)"; cat "$tmp/err"; fi
plant_scale 1.05 "$demo/wrist_camera.csv" >"$tmp/scale50.csv"
scale_rc "scale: 5% planted, warning" 3 "sensor-scale-far: the sensor's lengths differ from the robot's by the factor 1.049" solve --fit-scale "$tmp/scale50.csv"
scale_rc "scale: not with --pixels" 2 "--fit-scale goes with sensor poses or --points" solve --fit-scale --pixels x --camera y --board z "$demo/wrist_camera.csv"
scale_rc "scale: not with --closed-form" 2 "--fit-scale needs the refinement" solve --fit-scale --closed-form "$demo/wrist_camera.csv"

# Jin et al. (2023): a 3D camera whose lengths differ from the robot's.
jin="$here/../../../shared/datasets/jin2023/eyeinhand_pattern"
if have_dataset "$jin"; then
    sh "$here/../../tools/jin2023_to_tram.sh" "$jin" "$tmp/jinsc" xyz-extrinsic
    "$TRAM" solve --json --points "$tmp/jinsc/points.csv" "$tmp/jinsc/records.csv" >"$tmp/jin1.json" 2>"$tmp/err"; rc1=$?
    "$TRAM" solve --json --fit-scale --points "$tmp/jinsc/points.csv" "$tmp/jinsc/records.csv" >"$tmp/jin2.json" 2>>"$tmp/err"; rc2=$?
    if [ $rc1 -eq 0 ] && [ $rc2 -eq 0 ] && /usr/bin/python3 - "$tmp/jin1.json" "$tmp/jin2.json" <<'PY'
import json, sys
t, f = (json.load(open(p)) for p in sys.argv[1:3])
kt, kf = t["sensor_scale"], f["sensor_scale"]
rt, rf = t["residuals"]["point"]["rms"], f["residuals"]["point"]["rms"]
print(f"[ info ] Jin et al. 2023: sensor scale {kf['scale']:.5f}, 1 sigma {kf['sigma']:.5f} "
      f"({kf['z']:.1f} sigma from 1); point rms {rt:.3f} mm with scale 1, {rf:.3f} mm fitted")
assert not kt["fitted"] and kf["fitted"]
assert 1.001 < kf["scale"] < 1.004 and kf["sigma"] < 0.001
assert "sensor-scale-significant" in [g["code"] for g in t["diagnostics"]]
assert rf < rt
PY
    then ok; else bad "Jin 2023 scale (rc $rc1 $rc2)"; cat "$tmp/err"; fi
fi
