#!/bin/sh
# make demo: solve the bundled demo scenario (invented: a packaging cell with
# a wrist camera and an overhead camera; see tools/gen_demo.c and truth.json).
set -u
tram=${1:-build/tram}
here=$(dirname "$0")
out=${DEMO_OUT:-build/demo}
mkdir -p "$out"
echo "=== wrist camera (eye-in-hand): $here/wrist_camera.csv"
"$tram" solve --force -o "$out/wrist_camera.calibration.json" "$here/wrist_camera.csv"
rc1=$?
echo
echo "=== overhead camera (eye-to-hand): $here/overhead_camera.csv"
"$tram" solve --force -o "$out/overhead_camera.calibration.json" "$here/overhead_camera.csv"
rc2=$?
echo
echo "ground truth of the invented scenario: $here/truth.json"
echo "calibration files: $out/wrist_camera.calibration.json $out/overhead_camera.calibration.json"
[ "$rc1" -eq 0 ] && [ "$rc2" -eq 0 ]
