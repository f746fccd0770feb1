# tests/cli/demo.sh - make demo's steps (datasets/demo/run_demo.sh) on the
# invented demo scenario, with the rendered images when GEN_IMAGES is given
# (make cli-tests gives it, except in the sanitizer build): render, detect,
# then the camera's intrinsics (tram intrinsics, Zhang 2000) and the mount
# refined on the pixels (tram solve --pixels) with that camera.  The camera
# and the mount are compared with the scenario's truth (truth_images.json,
# truth.json); the images carry blur and noise, so the tolerances are those
# of a good calibration, not of rounding.
if [ -n "${GEN_IMAGES:-}" ] && [ -x "$GEN_IMAGES" ]; then
    dm="$tmp/demo"
    if DEMO_OUT="$dm/out" DEMO_IMAGES_OUT="$dm/img" GEN_IMAGES="$GEN_IMAGES" \
        sh "$here/../../datasets/demo/run_demo.sh" "$TRAM" >"$dm.log" 2>&1; then
        /usr/bin/python3 - "$dm/img" "$here/../../datasets/demo" <<'PY' && ok || { bad "demo: intrinsics and solve --pixels against the truth"; tail -40 "$dm.log"; }
import json, math, sys
img, demo = sys.argv[1], sys.argv[2]
cam = json.load(open(img + "/wrist_camera.camera.json"))
truth = json.load(open(demo + "/truth_images.json"))["camera"]
got = dict(cam["intrinsics"], **cam["distortion"])
assert cam["calibration"]["correlation"]["fx"]["fy"] > 0, "no correlations in the camera file"
for k, tol in (("fx", 1.0), ("fy", 1.0), ("cx", 1.0), ("cy", 1.0), ("k1", 0.002), ("k2", 0.01)):
    assert abs(got[k] - truth[k]) <= tol, (k, got[k], truth[k])
cal = json.load(open(img + "/wrist_camera.pixels.calibration.json"))
def find(o, key):
    if isinstance(o, dict):
        if key in o: return o[key]
        for v in o.values():
            r = find(v, key)
            if r is not None: return r
    if isinstance(o, list):
        for v in o:
            r = find(v, key)
            if r is not None: return r
    return None
M = find(cal, "T_flange_sensor")
M = M["matrix"] if isinstance(M, dict) else M
T = json.load(open(demo + "/truth.json"))["wrist_camera"]["T_flange_sensor"]
dt = math.dist([M[i][3] for i in range(3)], [T[i][3] for i in range(3)])
tr = sum(M[i][j] * T[i][j] for i in range(3) for j in range(3))
ang = math.degrees(math.acos(max(-1.0, min(1.0, (tr - 1) / 2))))
print("  demo.sh: camera fx %.3f fy %.3f cx %.3f cy %.3f k1 %.5f k2 %.5f (truth %.1f %.1f %.1f %.1f %.3f %.3f); "
      "X from pixels off the truth by %.4f mm, %.5f deg" % (got["fx"], got["fy"], got["cx"], got["cy"], got["k1"],
      got["k2"], truth["fx"], truth["fy"], truth["cx"], truth["cy"], truth["k1"], truth["k2"], dt, ang))
assert dt < 0.5 and ang < 0.05, (dt, ang)
# the renders are clean: no station may be flagged (their corners' noise
# differs from view to view, which the station test must not take for an
# outlier); a few single corners may be (detections 4-7 sigmas off)
so, co = find(cal, "station_outliers"), find(cal, "corner_outliers")
print("  demo.sh: clean renders: %d station(s) and %d corner(s) flagged" % (so, co))
assert so == 0 and co <= 10, (so, co)
PY
        grep -q '^=== 6\. ' "$dm.log" && grep -q '^=== 7\. ' "$dm.log" && [ -s "$dm/img/intrinsics/distortion.png" ] \
            && [ -s "$dm/img/pixels/residuals.png" ] && ok || bad "demo: steps 6 and 7 or their pictures missing"
    else
        bad "make demo's script failed"; tail -40 "$dm.log"
    fi
else
    echo "demo.sh: the demo's image steps not run (no GEN_IMAGES)"
fi
