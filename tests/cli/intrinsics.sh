# tests/cli/intrinsics.sh - tram intrinsics: Zhang's published example
# (Zhang 1998/2000, the report's data and calibration, read from
# ../shared/datasets/zhang1998 at test time and converted to tram's formats
# here), the pictures, and the refusals (exit 2 with file:line, exit 3).

zhang="$here/../../../shared/datasets/zhang1998"

# zhang_check JSON LABEL: compare a --json report with the published
# calibration (calib_results.txt) and print the figures.
zhang_check() {
    /usr/bin/python3 - "$1" "$zhang/calib_results.txt" "$2" <<'PY'
import json, math, sys
d = json.load(open(sys.argv[1]))
nums = [float(x) for x in open(sys.argv[2]).read().split()]
a, c, b, u0, v0, k1, k2 = nums[:7]
cam = d["camera"]
i, dist = cam["intrinsics"], cam["distortion"]
got = {"alpha (fx)": (i["fx"], a, 0.5), "beta (fy)": (i["fy"], b, 0.5), "u0 (cx)": (i["cx"], u0, 0.5),
       "v0 (cy)": (i["cy"], v0, 0.5), "k1": (dist["k1"], k1, 0.002), "k2": (dist["k2"], k2, 0.002)}
ok = True
print(f"[ info ] Zhang (2000) example, {sys.argv[3]}: tram against the published calibration")
for name, (g, p, tol) in got.items():
    flag = "" if abs(g - p) <= tol else "   FAIL"
    ok &= abs(g - p) <= tol
    print(f"[ info ]   {name:10s} tram {g:12.6f}  published {p:12.6f}  diff {g - p:+.6f} (tol {tol}){flag}")
print(f"[ info ]   skew       tram {i['skew']:12.6f}  published {c:12.6f}  (1-sigma {cam['calibration']['sigma']['skew']:.4f})")
rms = d["rms_px"]
print(f"[ info ]   rms        tram {rms:.5f} px  reported 0.335 px (tol 0.005)")
ok &= abs(rms - 0.335) <= 0.005
rest = nums[7:]
for v in range(5):
    R = [rest[12 * v + 3 * r: 12 * v + 3 * r + 3] for r in range(3)]
    t = rest[12 * v + 9: 12 * v + 12]
    T = d["views"][v]["T_sensor_target"]
    # angle of M = R_pub^T R_tram from its skew part and trace (the published
    # matrices have 6 digits, so acos of the trace alone would amplify their
    # rounding); translation in inches (the report is in mm)
    M = [[sum(R[k][a] * T[k][b] for k in range(3)) for b in range(3)] for a in range(3)]
    w = [M[2][1] - M[1][2], M[0][2] - M[2][0], M[1][0] - M[0][1]]
    ang = math.degrees(math.atan2(0.5 * math.sqrt(sum(x * x for x in w)), 0.5 * (M[0][0] + M[1][1] + M[2][2] - 1)))
    dt = max(abs(T[r][3] / 25.4 - t[r]) for r in range(3))
    flag = "" if ang <= 0.05 and dt <= 0.01 else "   FAIL"
    ok &= ang <= 0.05 and dt <= 0.01
    print(f"[ info ]   view{v + 1}: rotation differs by {ang:.4f} deg (tol 0.05), translation by {dt:.5f} in (tol 0.01){flag}")
sys.exit(0 if ok else 1)
PY
}

if have_dataset "$zhang"; then
    mkdir -p "$tmp/zhang"
    sh "$here/../../tools/zhang1998_to_tram.sh" "$zhang" "$tmp/zhang"
    # default loss (Huber at 5 robust sigmas, outliers over 8 left out)
    "$TRAM" intrinsics --model "$tmp/zhang/model.csv" --free-skew --json -o "$tmp/zhang/camera.json" \
        "$tmp/zhang/obs.csv" >"$tmp/zhang/r.json" 2>"$tmp/err"
    rc=$?
    [ $rc -eq 0 ] && zhang_check "$tmp/zhang/r.json" "radial2, free skew, default Huber loss" && ok ||
        { bad "Zhang example, default loss (rc $rc)"; cat "$tmp/err"; }
    "$TRAM" intrinsics --model "$tmp/zhang/model.csv" --free-skew --no-robust --json \
        "$tmp/zhang/obs.csv" >"$tmp/zhang/ls.json" 2>"$tmp/err"
    rc=$?
    [ $rc -eq 0 ] && zhang_check "$tmp/zhang/ls.json" "radial2, free skew, squared loss (--no-robust)" && ok ||
        { bad "Zhang example, squared loss (rc $rc)"; cat "$tmp/err"; }
    # the camera file states the convention and the model by name
    /usr/bin/python3 - "$tmp/zhang/camera.json" <<'PY' && ok || bad "Zhang camera file"
import json, sys
c = json.load(open(sys.argv[1]))
assert c["format"] == "tram-camera" and c["version"] == 1
assert c["pixel_origin"] == "top-left-pixel-centre"
assert c["image_size"] == {"width": 640, "height": 480}
assert c["distortion"]["model"] == "radial2" and set(c["distortion"]) == {"model", "k1", "k2"}
assert c["calibration"]["fixed"] == [] and set(c["calibration"]["sigma"]) == {"fx", "fy", "cx", "cy", "skew", "k1", "k2"}
PY
    # the --json report writes its numbers as every JSON output of tram
    # (17 significant digits, %.17g: they read back to the same double)
    /usr/bin/python3 - "$tmp/zhang/r.json" "$tmp/zhang/camera.json" <<'PY' && ok || bad "intrinsics --json number format"
import json, sys
nums = []
keep = lambda t: nums.append(t) or float(t)
json.load(open(sys.argv[1]), parse_float=keep, parse_int=keep)  # the numbers as written
assert len(nums) > 100, len(nums)
bad = [t for t in nums if t != "%.17g" % float(t)]
assert not bad, bad[:5]
r, c = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
assert r["rms_px"] == c["calibration"]["rms_px"] and r["camera"]["intrinsics"] == c["intrinsics"]
PY
    # text report, pictures, and no replacement without --force
    "$TRAM" intrinsics --model "$tmp/zhang/model.csv" --plot "$tmp/zhang/pics" "$tmp/zhang/obs.csv" >"$tmp/out" 2>"$tmp/err"
    [ $? -eq 0 ] && grep -q "pixel convention: top-left-pixel-centre" "$tmp/out" && grep -q "NOT verified on the cell" "$tmp/out" &&
        grep -q "verify it at reduced speed" "$tmp/out" && [ -s "$tmp/zhang/pics/view3-residuals.png" ] &&
        [ -s "$tmp/zhang/pics/residuals.png" ] && [ -s "$tmp/zhang/pics/distortion.png" ] && ok ||
        { bad "intrinsics text report and pictures"; cat "$tmp/err"; }
    expect_error "intrinsics picture exists" 2 "view1-residuals.png: error: already exists" \
        intrinsics --model "$tmp/zhang/model.csv" --plot "$tmp/zhang/pics" "$tmp/zhang/obs.csv"
    expect_error "intrinsics -o exists" 2 "camera.json: error: already exists" \
        intrinsics --model "$tmp/zhang/model.csv" -o "$tmp/zhang/camera.json" "$tmp/zhang/obs.csv"
    # a point id that is not on the model: exit 2 at the observation's line
    sed '11s/^view1,5,/view1,999,/' "$tmp/zhang/obs.csv" >"$tmp/zhang/unknown.csv"
    expect_error "intrinsics unknown point" 2 "unknown.csv:11: error: point '999' of station 'view1' is not a point of the target" \
        intrinsics --model "$tmp/zhang/model.csv" "$tmp/zhang/unknown.csv"
    # two image sizes in one file
    sed '4a# image-size: 800x600' "$tmp/zhang/obs.csv" >"$tmp/zhang/sizes.csv"
    expect_error "intrinsics mixed image sizes" 2 "sizes.csv:5:3: error: directive 'image-size' given twice" \
        intrinsics --model "$tmp/zhang/model.csv" "$tmp/zhang/sizes.csv"
    # a model that is not planar
    sed '8s/,0$/,0.25/' "$tmp/zhang/model.csv" >"$tmp/zhang/bent.csv"
    expect_error "intrinsics non-planar model" 2 "bent.csv:8: error: point '4' has z = 6.35 mm" \
        intrinsics --model "$tmp/zhang/bent.csv" "$tmp/zhang/obs.csv"
    # two views: exit 3
    grep -v '^view[345],' "$tmp/zhang/obs.csv" >"$tmp/zhang/two.csv"
    expect_error "intrinsics two views" 3 "two.csv: error: 2 views: Zhang's method needs at least 3 views" \
        intrinsics --model "$tmp/zhang/model.csv" "$tmp/zhang/two.csv"
    # five fronto-parallel views (only moved and rolled): exit 3 with the advice
    awk 'BEGIN { srand(7); print "# pixel-origin: top-left-pixel-centre"; print "# image-size: 640x480"; print "station,point,u,v" }
         FNR > 3 { split($0, f, ","); p[f[1]] = f[2] " " f[3] }
         END { for (v = 0; v < 5; v++) { th = 0.3 * v; z = 12 + v
                 for (id in p) { split(p[id], xy, " "); x = xy[1] * cos(th) - xy[2] * sin(th) - 3; y = xy[1] * sin(th) + xy[2] * cos(th) + 3
                   printf "f%d,%s,%.4f,%.4f\n", v, id, 320 + 830 * x / z + 0.1 * (rand() - 0.5), 240 + 830 * y / z + 0.1 * (rand() - 0.5) } } }' \
        "$tmp/zhang/model.csv" >"$tmp/zhang/flat.csv"
    expect_error "intrinsics parallel views" 3 "error: .*tilt the board 20-45 degrees about both image axes" \
        intrinsics --model "$tmp/zhang/model.csv" "$tmp/zhang/flat.csv"
    expect_error "intrinsics no pixel-origin" 2 "noorigin.csv:4: error: no pixel-origin" \
        intrinsics --model "$tmp/zhang/model.csv" "$(grep -v pixel-origin "$tmp/zhang/obs.csv" | mk noorigin.csv)"
fi
expect_error "intrinsics both targets" 2 "exactly one of --board FILE and --model FILE" intrinsics --board a --model b o.csv
expect_error "intrinsics no target" 2 "exactly one of --board FILE and --model FILE" intrinsics o.csv
expect_error "intrinsics bad distortion" 2 "--distortion 'radial4': expected none, radial2, radial3 or full" \
    intrinsics --distortion radial4 --model m.csv o.csv
"$TRAM" help intrinsics | grep -q 'usage: tram intrinsics' && ok || bad "help intrinsics"

# Every command example of docs/camera.md (its sh blocks) runs, in order,
# from the repository root (they convert Zhang's example into build/zhang).
if [ -d "$zhang" ]; then
    cam_docs="$tmp/docs-camera"
    mkdir -p "$cam_docs/bin"
    printf '#!/bin/sh\nexec "%s" "$@"\n' "$TRAM" >"$cam_docs/bin/tram"
    chmod +x "$cam_docs/bin/tram"
    awk '/^```sh$/ { on = 1; next } /^```/ { on = 0 } on' "$here/../../docs/camera.md" >"$cam_docs/examples.sh"
    if [ -s "$cam_docs/examples.sh" ] && (cd "$here/../.." && PATH="$cam_docs/bin:$PATH" sh -e "$cam_docs/examples.sh" >/dev/null 2>"$cam_docs/err"); then
        ok
    else
        bad "docs/camera.md examples"; cat "$cam_docs/err"
    fi
fi
