# tests/cli/options.sh - the command's options beyond the defaults: help and
# version, register's text output and methods, solve's method, pair, noise,
# bootstrap and output options, and refusals of malformed option values.
# The demo data is invented (tools/gen_demo.c); the Umeyama (1991) example is
# from the paper.
demo="$here/../../datasets/demo"

"$TRAM" --help | grep -q '^usage: tram SUBCOMMAND' && ok || bad "--help"
"$TRAM" help | grep -q '  register ' && ok || bad "help lists the subcommands"
"$TRAM" solve --help | grep -q '^usage: tram solve' && ok || bad "solve --help"
expect_error "no subcommand" 2 "usage: tram SUBCOMMAND" 
expect_error "help for an unknown subcommand" 2 "unknown subcommand 'nosuch'" help nosuch

# register: text output of the Umeyama (1991) worked example, quaternion method
f=$(printf '# length-unit: mm\nfrom_x,from_y,to_x,to_y\n0,0,0,0\n1,0,-1,0\n0,2,0,2\n' | mk ume.csv)
out=$("$TRAM" register --scale --method quaternion "$f" 2>&1)
case "$out" in *"0.83205029   0.55470020      -0.800000"*"scale 0.721110255"*"SAFETY"*) ok ;; *) bad "register text (Umeyama 1991): $out" ;; esac
# 3D, weighted, in m: the exact rotation of 90 deg about z and t = (1, 2, 3)
f=$(printf '# length-unit: m\npoint,from_x,from_y,from_z,to_x,to_y,to_z,weight\na,0,0,0,1,2,3,1\nb,1,0,0,1,3,3,0.5\nc,0,1,0,0,2,3,2\nd,0,0,1,1,2,4,1\n' | mk w3.csv)
out=$("$TRAM" register "$f" 2>&1)
case "$out" in *"translation (m)  1.000000 2.000000 3.000000"*"quaternion (w, x, y, z)  0.707106781 0.000000000 0.000000000 0.707106781"*) ok ;; *) bad "register 3D weighted: $out" ;; esac
"$TRAM" register --robust --seed 3 "$f" >"$tmp/out" 2>"$tmp/err" && grep -q '4 point(s); inlier threshold .*, 0 outlier(s)' "$tmp/out" && ok || { bad "register --robust"; cat "$tmp/out" "$tmp/err"; }
expect_error "register bad method" 2 "--method 'fancy'" register --method fancy "$f"
expect_error "register bad threshold" 2 "--threshold" register --robust --threshold 5furlong "$f"
expect_error "register bad threads" 2 "--threads" register --threads zero "$f"
expect_error "register two files" 2 "one" register "$f" "$f"
expect_error "register unit conflict" 2 "w3.csv:1: error: the file declares length-unit m but --length-unit mm" register --length-unit mm "$f"

# solve: one closed form on consecutive pairs; an explicit pair selection
"$TRAM" solve --method park-martin --pairs consecutive --closed-form "$demo/wrist_camera.csv" >"$tmp/out" 2>"$tmp/err"
grep -q 'method: park-martin closed form (not refined)' "$tmp/out" && ok || { bad "solve --method --closed-form"; cat "$tmp/err"; }
"$TRAM" solve --noise 0.2mm,0.05deg --bootstrap 30 --seed 5 --no-robust --no-convention-check \
    --pairs p01:p02,p01:p07,p03:p09,p04:p12 "$demo/wrist_camera.csv" >"$tmp/out" 2>"$tmp/err"
grep -q 'sensor noise, 1-sigma per axis of the sensor frame (given): rotation 0.05 0.05 0.05 deg, translation 0.2 0.2 0.2 mm' "$tmp/out" && grep -q '(30 resamples)' "$tmp/out" && ok || { bad "solve --noise --bootstrap --pairs"; cat "$tmp/out" "$tmp/err"; }
expect_error "solve bad noise" 2 "--noise" solve --noise 0.2 "$demo/wrist_camera.csv"
# per-axis sensor noise (the sensor frame's x/y/z) and the robot's noise (docs/solve.md, "Noise model")
"$TRAM" solve --json --noise 0.1/0.1/0.3mm,0.05deg --robot-noise 0.02mm,0.005deg --no-convention-check \
    "$demo/wrist_camera.csv" >"$tmp/out" 2>"$tmp/err"
if /usr/bin/python3 - "$tmp/out" <<'PY'
import json, sys
n = json.load(open(sys.argv[1]))["noise"]
assert n["source"] == "given" and n["frame"] == "sensor", n
assert [round(x, 12) for x in n["length_per_axis"]] == [0.1, 0.1, 0.3], n
assert abs(n["angle_per_axis_deg"][2] - 0.05) < 1e-12 and abs(n["robot_length"] - 0.02) < 1e-12, n
assert abs(n["robot_angle_deg"] - 0.005) < 1e-12, n
PY
then ok; else bad "solve --noise per axis, --robot-noise"; cat "$tmp/err"; fi
# the docs' example (docs/solve.md, "Noise model"): the demo's bad station p14 is still flagged
"$TRAM" solve --noise 0.1/0.1/0.3mm,0.05deg --robot-noise 0.02mm,0.005deg "$demo/wrist_camera.csv" >"$tmp/out" 2>"$tmp/err"
rc=$?
[ "$rc" -eq 0 ] && grep -q 'robot noise (given, isotropic): 0.005 deg, 0.02 mm' "$tmp/out" && grep -q '^  p14 .*OUTLIER' "$tmp/out" \
    && ok || { bad "docs noise example (exit $rc)"; cat "$tmp/out" "$tmp/err"; }
expect_error "solve noise with two axes" 2 "--noise '0.1/0.3mm,0.05deg': expected" solve --noise 0.1/0.3mm,0.05deg "$demo/wrist_camera.csv"
expect_error "solve robot noise per axis" 2 "--robot-noise '0.1/0.1/0.3mm,0.01deg': expected" solve --robot-noise 0.1/0.1/0.3mm,0.01deg "$demo/wrist_camera.csv"
expect_error "solve bad pair" 2 "--pairs 'p01': expected auto, all, consecutive or ID:ID" solve --pairs p01 "$demo/wrist_camera.csv"
expect_error "solve unknown station in pairs" 2 "--pairs: no station 'zz'" solve --pairs p01:zz "$demo/wrist_camera.csv"
expect_error "solve bad method" 2 "--method" solve --method best "$demo/wrist_camera.csv"
expect_error "solve bad setup" 2 "--setup" solve --setup eye-on-hand "$demo/wrist_camera.csv"
expect_error "solve bad bootstrap" 2 "--bootstrap" solve --bootstrap many "$demo/wrist_camera.csv"
expect_error "solve setup conflict" 2 "setup" solve --setup eye-to-hand "$demo/wrist_camera.csv"
# -o refuses to replace a file without --force, and leaves it as it was
echo keep >"$tmp/cal.json"
expect_error "solve -o existing" 2 "cal.json: error: already exists" solve -o "$tmp/cal.json" "$demo/wrist_camera.csv"
[ "$(cat "$tmp/cal.json")" = keep ] && ok || bad "solve -o replaced a file without --force"
expect_error "solve -o into a missing directory" 2 "cannot create a temporary file" solve -o "$tmp/nodir/cal.json" "$demo/wrist_camera.csv"
"$TRAM" solve --force -o "$tmp/cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 && grep -q '"tram-calibration"' "$tmp/cal.json" && ok || bad "solve -o --force"
# help texts are printed as they are: no printf escapes left in them
for c in solve check register convert fk plot; do
    "$TRAM" help "$c" 2>&1 | grep -q '%%' && bad "help $c prints a doubled percent sign" || ok
done
# a directive value too long to keep is refused, not cut (found by fuzzing the pixel reader)
long=$(printf 'x%.0s' $(seq 1 100))
f=$(printf '# format: tram-pixels-1\n# pixel-origin: top-left-pixel-centre\n# image-size: 128x96\n# board: %s\nstation,point,u,v\nim,1,1.5,0.5\n' "$long" | mk longdir.csv)
expect_error "directive value too long" 2 "longdir.csv:4:3: error: directive 'board': value longer than 79 characters" \
    intrinsics --board "$here/data/pixels/board.json" "$f"
