# tests/cli/plan.sh - command-line tests of tram plan (sourced by run.sh):
# the examples of docs/plan.md, the record file it writes (read back, and
# through tram fk with a chain), refusals with file:line:column and exit
# statuses 2 and 3, and the safety caution.
demo="$here/../../datasets/demo"
cell="$demo/cell_wrist.json"

# Every command example of docs/plan.md (its sh blocks) runs, in order, from
# the repository root, in a scratch copy of the outputs' folder.
plan_docs="$tmp/docs-plan"
mkdir -p "$plan_docs/bin"
printf '#!/bin/sh\nexec "%s" "$@"\n' "$TRAM" >"$plan_docs/bin/tram"
chmod +x "$plan_docs/bin/tram"
awk '/^```sh$/ { on = 1; next } /^```/ { on = 0 } on' "$here/../../docs/plan.md" |
    sed "s|datasets/|$here/../../datasets/|g" >"$plan_docs/examples.sh"
if [ -s "$plan_docs/examples.sh" ] && (cd "$plan_docs" && PATH="$plan_docs/bin:$PATH" sh -e examples.sh >"$plan_docs/out" 2>"$plan_docs/err"); then
    ok
else
    bad "docs/plan.md examples"; cat "$plan_docs/err"
fi
[ -s "$plan_docs/next.csv" ] && [ -s "$plan_docs/plan.json" ] && ok || bad "docs/plan.md examples wrote no files"

# docs/plan.md shows the demo cell file as it is
awk '/^```json$/ { on = 1; next } /^```/ { on = 0 } on' "$here/../../docs/plan.md" | cmp -s - "$cell" && ok || bad "docs/plan.md's cell differs from $cell"

# The report: the three sigmas, the seed, the stations and the caution.
"$TRAM" plan --setup eye-in-hand --cell "$cell" -o "$tmp/next.csv" >"$tmp/plan.txt" 2>"$tmp/err"
if [ $? -eq 0 ] && grep -q 'predicted after the 6 proposed stations' "$tmp/plan.txt" &&
   grep -q 'after 6 random feasible ones (median of 20)' "$tmp/plan.txt" &&
   grep -q 'seed 1)' "$tmp/plan.txt" && grep -q 'NOT verified on the cell' "$tmp/plan.txt" &&
   grep -q 'reduced speed' "$tmp/plan.txt" && grep -q 'robot-safety standards and local codes' "$tmp/plan.txt"; then ok
else bad "plan report"; cat "$tmp/plan.txt" "$tmp/err"; fi
# predicted sigma below the random one (both translation and rotation)
awk '/predicted after/ { p = $(NF-1); pr = $NF } /random feasible/ { r = $(NF-1); rr = $NF }
     END { exit !(p + 0 < r + 0 && pr + 0 < rr + 0) }' "$tmp/plan.txt" && ok || bad "planned sigma not below random"
# The record file: 6 stations in the cell's convention, read back by tram.
[ "$(grep -c '^plan[0-9]' "$tmp/next.csv")" -eq 6 ] && grep -q '^# robot-euler: zyx-intrinsic' "$tmp/next.csv" &&
    grep -q '^station,robot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3$' "$tmp/next.csv" && ok || { bad "plan record file"; cat "$tmp/next.csv"; }
"$TRAM" convert --to quat "$tmp/next.csv" >/dev/null 2>"$tmp/err" && ok || { bad "plan record file does not read back"; cat "$tmp/err"; }
expect_error "plan: -o exists" 2 "exists" plan --setup eye-in-hand --cell "$cell" -o "$tmp/next.csv"
# The same seed gives the same plan; JSON form of the stations.
"$TRAM" plan --setup eye-in-hand --cell "$cell" -o "$tmp/again.csv" >/dev/null 2>&1 && cmp -s "$tmp/next.csv" "$tmp/again.csv" && ok || bad "plan not repeatable with one seed"
"$TRAM" plan --setup eye-in-hand --cell "$cell" --format json -o "$tmp/next.json" >/dev/null 2>&1 &&
    "$TRAM" convert --to quat "$tmp/next.json" >/dev/null 2>&1 && ok || bad "plan --format json"

# With a chain: joint_ columns beside the pose, which tram fk checks.
sed -e "s|\"box\": {\"min\": \[450, -550, 350\], \"max\": \[1050, 250, 950\]},|\"chain\": \"$demo/arm_dh.json\",|" \
    -e 's|"output": {"robot_rotation": "euler:zyx-intrinsic", "angle_unit": "deg"}|"output": {"robot_rotation": "quat"}|' "$cell" >"$tmp/cell_chain.json"
grep -q '"chain"' "$tmp/cell_chain.json" || bad "test data: chain not put in the cell"
if "$TRAM" plan --setup eye-in-hand --cell "$tmp/cell_chain.json" --stations 4 --candidates 40 -o "$tmp/joints.csv" >"$tmp/pj.txt" 2>"$tmp/err" &&
   grep -q '^station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,joint_1,joint_2,joint_3,joint_4,joint_5,joint_6$' "$tmp/joints.csv" &&
   "$TRAM" fk --chain "$demo/arm_dh.json" "$tmp/joints.csv" >"$tmp/fk.csv" 2>>"$tmp/err"; then ok
else bad "plan with a chain"; cat "$tmp/err"; fi
# a joint reading changed by 1 degree no longer gives the written pose
awk -F, 'BEGIN { OFS = "," } /^plan1,/ { $9 = $9 + 1 } { print }' "$tmp/joints.csv" >"$tmp/joints_bad.csv"
expect_error "plan: joints against pose" 2 "joints_bad.csv:[0-9]+: error: station 'plan1': the robot_ pose and the chain's pose" fk --chain "$demo/arm_dh.json" "$tmp/joints_bad.csv"

# --plot DIR: the plan's picture
"$TRAM" plan --cell "$cell" --stations 4 --plot "$tmp/planplot" "$demo/wrist_camera.csv" >/dev/null 2>"$tmp/err" &&
    [ "$(head -c 8 "$tmp/planplot/plan.png" | od -An -tx1 | tr -d ' \n')" = 89504e470d0a1a0a ] && ok || { bad "plan --plot"; cat "$tmp/err"; }

# JSON report (the outside check reads it: tests/ref/check_plan_numpy.py)
"$TRAM" plan --setup eye-in-hand --cell "$cell" --stations 5 --json >"$tmp/plan.json" 2>"$tmp/err" &&
    /usr/bin/python3 -c 'import json,sys; d=json.load(open(sys.argv[1])); assert d["format"]=="tram-plan" and len(d["stations"])==5 and d["sigma_X"]["planned"]["valid"]' "$tmp/plan.json" &&
    grep -q 'SAFETY' "$tmp/err" && ok || bad "plan --json"

# Refusals: exit 3 with the reason, exit 2 with file:line:column.
sed 's|"min": \[450, -550, 350\], "max": \[1050, 250, 950\]|"min": [450, -550, 1500], "max": [1050, 250, 1800]|' "$cell" >"$tmp/cell_high.json"
expect_error "plan: unreachable distance" 3 "the working distance 350-650 mm cannot be reached inside the flange box" plan --setup eye-in-hand --cell "$tmp/cell_high.json"
sed 's|"max_tilt_deg": 45, "margin_px": 40|"max_tilt_deg": 45, "margin_px": 40, "margin_mm": 3|' "$cell" >"$tmp/cell_key.json"
expect_error "plan: unknown key" 2 "cell_key.json:13:66: error: unknown key \"margin_mm\" in view" plan --setup eye-in-hand --cell "$tmp/cell_key.json"
sed 's|"T_base_target"|"T_flange_target"|' "$cell" >"$tmp/cell_setup.json"
expect_error "plan: guess of the other setup" 2 "cell_setup.json:7:[0-9]+: error: unknown key \"T_flange_target\" in guess" plan --setup eye-in-hand --cell "$tmp/cell_setup.json"
sed 's|"version": 1|"version": 7|' "$cell" >"$tmp/cell_v.json"
expect_error "plan: version" 2 "cell_v.json:2:[0-9]+: error: version: expected 1" plan --setup eye-in-hand --cell "$tmp/cell_v.json"
sed 's|"distance": \[350, 650\]|"distance": [350]|' "$cell" >"$tmp/cell_d.json"
expect_error "plan: distance range" 2 "cell_d.json:13:17: error: \"view.distance\": expected an array of 2 numbers" plan --setup eye-in-hand --cell "$tmp/cell_d.json"
sed 's|"field_of_view_deg": {"horizontal": 65, "vertical": 51},|"camera": "no-such-camera.json",|; /"image_size"/d' "$cell" >"$tmp/cell_cam.json"
expect_error "plan: missing camera file" 2 "no-such-camera.json" plan --setup eye-in-hand --cell "$tmp/cell_cam.json"
expect_error "plan: no cell" 2 "--cell FILE is required" plan --setup eye-in-hand
expect_error "plan: no setup" 2 "no setup" plan --cell "$cell"
expect_error "plan: bad stations" 2 "--stations '0': expected a whole number from 1 to 60" plan --setup eye-in-hand --cell "$cell" --stations 0
expect_error "plan: setup conflict" 2 "wrist_camera.csv:5: error: the file declares setup eye-in-hand but --setup eye-to-hand" plan --setup eye-to-hand --cell "$cell" "$demo/wrist_camera.csv"
"$TRAM" help plan | grep -q 'usage: tram plan' && ok || bad "help plan"
# the records' length unit must be the cell's (nothing is rescaled silently)
"$TRAM" convert --to quat --length-unit m "$demo/wrist_camera.csv" >"$tmp/wrist_m.csv" 2>/dev/null
expect_error "plan: records in another unit" 2 "the cell's length_unit is mm but the records' is m" plan --cell "$cell" "$tmp/wrist_m.csv"
