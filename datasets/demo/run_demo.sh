#!/bin/sh
# make demo: the bundled demo scenario (invented: a packaging cell with a
# wrist camera and an overhead camera; tools/gen_demo.c, truth*.json):
# solve both cameras, then check the wrist camera twice - months later with
# nothing moved, and after its bracket was bumped; with GEN_IMAGES, render
# the wrist camera's images, find the board in them, calibrate the camera
# from them and refine the mount on their pixels.
set -u
tram=${1:-build/tram}
here=$(dirname "$0")
out=${DEMO_OUT:-build/demo}
mkdir -p "$out"
rm -f "$out/wrist_camera.history.jsonl"
status=0

# truth NAME CAL: the invented scenario's truth (truth.json) beside what
# the solve found in calibration file CAL, for transform NAME.
truth() {
    found=$("$tram" convert --to matrix "$2" 2>/dev/null | grep "^$1,") || return 0
    want=$(grep "\"$1\"" "$here/truth.json" | sed 's/.*: *//')
    echo "$want|$found" | awk -F'|' -v name="$1" '{
        s = $1; gsub(/[][,]/, " ", s); nt = split(s, t, " ")
        nf = split($2, f, ",")
        if (nt < 16 || nf < 13) exit
        # truth row-major 4x4: t[1..16]; found: x,y,z then r11..r33 in f[2..13]
        dx = f[2] - t[4]; dy = f[3] - t[8]; dz = f[4] - t[12]
        err = sqrt(dx * dx + dy * dy + dz * dz)
        # rotation angle between truth and found: trace(R_t^T R_f) = sum of products
        tr = 0
        for (i = 0; i < 3; i++) for (j = 0; j < 3; j++) tr += t[4 * i + j + 1] * f[5 + 3 * i + j]
        c = (tr - 1) / 2; if (c > 1) c = 1; if (c < -1) c = -1
        ang = atan2(sqrt(1 - c * c), c) * 45 / atan2(1, 1)
        printf "  truth (invented scenario, truth.json): %s translation %.3f / %.3f / %.3f mm;\n", name, t[4], t[8], t[12]
        printf "  found %.3f / %.3f / %.3f mm: error %.2f mm and %.3f deg\n", f[2], f[3], f[4], err, ang
    }'
}

echo "=== 1. wrist camera (eye-in-hand): tram solve $here/wrist_camera.csv"
"$tram" solve --force -o "$out/wrist_camera.calibration.json" --plot "$out/wrist_camera" "$here/wrist_camera.csv" || status=1
truth T_flange_sensor "$out/wrist_camera.calibration.json"
echo
echo "=== 2. overhead camera (eye-to-hand): tram solve $here/overhead_camera.csv"
"$tram" solve --force -o "$out/overhead_camera.calibration.json" --plot "$out/overhead_camera" "$here/overhead_camera.csv" || status=1
truth T_base_sensor "$out/overhead_camera.calibration.json"
echo
# The two checks happened on different days of the invented scenario; the
# history records those days (--timestamp) rather than the moment the demo runs.
echo "=== 3. months later, nothing moved: tram check $here/wrist_recheck.csv"
"$tram" check --calibration "$out/wrist_camera.calibration.json" --timestamp 2026-10-05T07:30:00Z \
    --history "$out/wrist_camera.history.jsonl" "$here/wrist_recheck.csv" || status=1
echo
echo "=== 4. after a bumped bracket: tram check $here/wrist_bumped.csv (expected: sensor-moved)"
"$tram" check --calibration "$out/wrist_camera.calibration.json" --timestamp 2026-10-19T14:10:00Z \
    --history "$out/wrist_camera.history.jsonl" "$here/wrist_bumped.csv"
[ $? -eq 1 ] || status=1
"$tram" plot history --force --tolerance 0.5mm,0.1deg -o "$out/wrist_camera_history.png" \
    "$out/wrist_camera.history.jsonl" 2>/dev/null || status=1
# 5. The wrist camera's images at the same stations, rendered with known
# truth (tools/gen_images.c, truth_images.json); make demo passes GEN_IMAGES.
gen_images=${GEN_IMAGES:-}
imgout=${DEMO_IMAGES_OUT:-build/demo-images}
if [ -n "$gen_images" ] && [ -x "$gen_images" ]; then
    echo
    echo "=== 5. the wrist camera's images (rendered, invented scene): $imgout/"
    mkdir -p "$imgout"
    "$gen_images" "$here" "$imgout" >"$imgout/gen_images.log" || status=1
    tail -n 1 "$imgout/gen_images.log"
    if "$tram" help detect >/dev/null 2>&1; then
        "$tram" board --corners 9x6 --square 25mm --page 420x297 --pdf "$imgout/board.pdf" \
            -o "$imgout/board.json" --force || status=1
        "$tram" detect --board "$imgout/board.json" --plot "$imgout/detect" --force \
            -o "$imgout/wrist_camera.pixels.csv" "$imgout"/p*.png || status=1
        echo
        echo "=== 6. the wrist camera's intrinsics from its images: tram intrinsics (Zhang 2000)"
        "$tram" intrinsics --board "$imgout/board.json" --plot "$imgout/intrinsics" --force \
            -o "$imgout/wrist_camera.camera.json" "$imgout/wrist_camera.pixels.csv" || status=1
        echo
        echo "=== 7. the mount refined on the pixels: tram solve --pixels (camera of step 6)"
        "$tram" solve --pixels "$imgout/wrist_camera.pixels.csv" --camera "$imgout/wrist_camera.camera.json" \
            --board "$imgout/board.json" --force -o "$imgout/wrist_camera.pixels.calibration.json" \
            --plot "$imgout/pixels" "$here/wrist_camera.csv" || status=1
    fi
fi
echo
echo "pictures: $out/wrist_camera/frames.png $out/wrist_camera/residuals.png"
echo "          $out/overhead_camera/frames.png $out/overhead_camera/residuals.png"
echo "          $out/wrist_camera_history.png"
[ -n "$gen_images" ] && echo "images:   $imgout/p01.png ... (ground truth $imgout/truth.json)" &&
    echo "          camera $imgout/wrist_camera.camera.json, pictures $imgout/intrinsics/, $imgout/pixels/" &&
    echo "          calibration from the pixels $imgout/wrist_camera.pixels.calibration.json"
echo "ground truth of the invented scenario: $here/truth.json, $here/truth_bump.json"
echo "written: $out/wrist_camera.calibration.json $out/overhead_camera.calibration.json"
echo "         $out/wrist_camera.history.jsonl"
exit $status
