# tests/cli/chain.sh - command-line tests of tram fk and --chain (sourced by run.sh).
demo="$here/../../datasets/demo"
arm="$demo/arm_dh.json"
"$TRAM" fk --chain "$arm" "$demo/wrist_camera_joints.csv" >"$tmp/poses.csv" 2>"$tmp/err" && grep -q '^j01,' "$tmp/poses.csv" && ok || { bad "fk"; cat "$tmp/err"; }
# Joint records through solve give the same result as the equivalent pose records.
"$TRAM" solve --json --chain "$arm" "$demo/wrist_camera_joints.csv" >"$tmp/sj.json" 2>/dev/null
"$TRAM" solve --json "$tmp/poses.csv" >"$tmp/sp.json" 2>/dev/null
if /usr/bin/python3 - "$tmp/sj.json" "$tmp/sp.json" <<'PY'
import json, sys
a, b = (json.load(open(p)) for p in sys.argv[1:3])
for k in ("T_flange_sensor", "T_base_target"):
    ma, mb = a["transforms"][k]["matrix"], b["transforms"][k]["matrix"]
    assert max(abs(x - y) for ra, rb in zip(ma, mb) for x, y in zip(ra, rb)) < 1e-9, k
PY
then ok; else bad "solve --chain differs from solving the fk poses"; fi
"$TRAM" fk --chain "$arm" --all-frames "$demo/wrist_camera_joints.csv" >"$tmp/frames.csv" 2>"$tmp/err"
[ "$(grep -c '^j01,' "$tmp/frames.csv")" -eq 8 ] && grep -q '^j01,flange,' "$tmp/frames.csv" && grep -q '^j01,j3,' "$tmp/frames.csv" && ok || bad "fk --all-frames"
# the flange row of --all-frames equals the fk pose
a=$(grep '^j01,flange,' "$tmp/frames.csv" | cut -d, -f3-5); b=$(grep '^j01,' "$tmp/poses.csv" | cut -d, -f2-4)
[ "$a" = "$b" ] && ok || bad "fk --all-frames flange row ($a vs $b)"
f=$(sed 's/^j03,-3.731,/j03,-179,/' "$demo/wrist_camera_joints.csv" | mk limits.csv)
grep -q '^j03,-179,' "$f" || bad "test data: j03 not rewritten"
expect_error "joint outside limits" 2 "limits.csv:[0-9]+:5: error: station 'j03': joint_1 \\(j1\\) reads -179 deg, outside its limits \\[-170, 170\\]" fk --chain "$arm" "$f"
expect_error "joints without chain" 2 "pass --chain FILE" solve "$demo/wrist_camera_joints.csv"
f=$(printf '{"convention": "dh", "length_unit": "mm", "angle_unit": "deg", "joints": [{"a": 1, "alpha": 0, "d": 0, "theta": 0, "type": "revolute"}]}' | mk one.json)
expect_error "joint count mismatch" 2 "has 6 joint columns but the chain .* has 1 joints" fk --chain "$f" "$demo/wrist_camera_joints.csv"
f=$(printf '{"length_unit": "mm", "angle_unit": "deg", "elements": [{"fixed": {"rotation": {"quat_wxyz": [1, 1, 0, 0]}}}, {"joint": "revolute", "axis": [0, 0, 1]}]}' | mk badrot.json)
expect_error "chain rotation not a rotation" 2 "badrot.json:1:[0-9]+: error: elements\\[0\\].rotation: quat_wxyz has norm" fk --chain "$f" "$demo/wrist_camera_joints.csv"
(cat "$here/../../datasets/demo/arm_dh.json"; echo '}') >"$tmp/extra.json"
expect_error "chain: text after the document" 2 "extra.json:[0-9]+:1: error: chain file: text after the JSON document" fk --chain "$tmp/extra.json" "$here/../../datasets/demo/wrist_camera_joints.csv"
