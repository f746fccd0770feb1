# tests/cli/tool.sh - robot poses logged as tool (TCP) poses (sourced by run.sh):
# robot-pose: tool-in-base with tool-in-flange or --tool, and the refusals with
# file:line:column.  The numbers against NumPy: tests/ref/check_tool_numpy.py.
demo="$here/../../datasets/demo"
tcp="$demo/wrist_camera_tcp.csv"
tool='0,0,150mm euler:zyx-intrinsic:30,0,0deg'
"$TRAM" solve --json --force -o "$tmp/tcp.cal.json" --tool "$tool" "$tcp" >"$tmp/tcp.json" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && /usr/bin/python3 - "$tmp/tcp.json" "$tmp/tcp.cal.json" <<'PY'
import json, sys
import numpy as np
for p in sys.argv[1:]:
    d = json.load(open(p))
    X = np.array(d["transforms"]["T_flange_sensor"]["matrix"])
    Tt = np.array(d["transforms"]["T_tool_sensor"]["matrix"])
    F = np.array(d["tool_frame"]["T_flange_tool"]["matrix"])
    # NumPy composition: T_tool_sensor = T_flange_tool^-1 T_flange_sensor
    assert np.abs(np.linalg.inv(F) @ X - Tt).max() < 1e-9
    # truth of the invented demo (tools/gen_demo.c): 40, -12, 80 mm
    assert np.abs(X[:3, 3] - [40, -12, 80]).max() < 1.0, X[:3, 3]
    assert d["tool_frame"]["source"] == "--tool" and d["tool_frame"]["robot_pose"] == "tool-in-base"
PY
then ok; else bad "solve --tool (rc $rc)"; cat "$tmp/err"; fi
# the same file with the tool declared in it
sed 's|^# robot-pose: tool-in-base$|&\n# tool-in-flange: 0,0,15cm quat:0.96592582628906831,0,0,0.25881904510252074|' "$tcp" >"$tmp/tcp-dir.csv"
"$TRAM" solve "$tmp/tcp-dir.csv" >"$tmp/out" 2>"$tmp/err" && grep -q "T_flange_tool (tool-in-flange, line 11)" "$tmp/out" && grep -q '^T_tool_sensor' "$tmp/out" && ok || { bad "solve with tool-in-flange"; cat "$tmp/err"; }
# the mount check with tool poses (the calibration's own stations: ok)
"$TRAM" check --calibration "$tmp/tcp.cal.json" --tool "$tool" "$tcp" >"$tmp/out" 2>&1; rc=$?
[ $rc -eq 0 ] && grep -q '^VERDICT: ok' "$tmp/out" && ok || { bad "check --tool (rc $rc)"; cat "$tmp/out"; }
"$TRAM" convert --to quat --tool "$tool" "$tcp" >"$tmp/flange.csv" 2>"$tmp/err" && grep -q '^# robot-pose: flange-in-base' "$tmp/flange.csv" && ok || { bad "convert --tool"; cat "$tmp/err"; }
# the report carries the tool transform through
SOURCE_DATE_EPOCH=1796212800 "$TRAM" report "$tmp/tcp.cal.json" -o "$tmp/tcp.pdf" --euler zyx-intrinsic >/dev/null 2>&1 &&
    pdftotext "$tmp/tcp.pdf" - | tr '\n' ' ' | grep -q "T_tool_sensor.*T_flange_tool" && ok || bad "report shows the tool"
# refusals
expect_error "tool poses without a tool" 2 "wrist_camera_tcp.csv:10: error: robot-pose: tool-in-base: .*not given: add '# tool-in-flange" solve "$tcp"
expect_error "check without a tool" 2 "wrist_camera_tcp.csv:10: error: robot-pose: tool-in-base" check --calibration "$tmp/tcp.cal.json" "$tcp"
expect_error "convert without a tool" 2 "wrist_camera_tcp.csv:10: error: robot-pose: tool-in-base" convert --to quat "$tcp"
expect_error "tool for flange poses" 2 "wrist_camera.csv:[0-9]+: error: a tool was given, but the robot poses are not declared as tool poses" solve --tool "$tool" "$demo/wrist_camera.csv"
expect_error "two tools" 2 "tcp-dir.csv:11: error: the file declares the tool" solve --tool "$tool" "$tmp/tcp-dir.csv"
expect_error "tool without unit" 2 "--tool: tool '0,0,150 quat:1,0,0,0' \(at character 1\): the tool's translation needs its unit" solve --tool '0,0,150 quat:1,0,0,0' "$tcp"
expect_error "tool without rotation" 2 "the tool's rotation is missing: give it even when there is none, as quat:1,0,0,0" solve --tool '0,0,150mm' "$tcp"
expect_error "tool angle unit" 2 "the tool's angles need their unit, deg or rad" solve --tool '0,0,150mm rotvec:0,0,30' "$tcp"
sed 's|^# robot-pose: tool-in-base$|&\n# tool-in-flange: 0,0,15cm euler:zyx:30,0,0deg|' "$tcp" >"$tmp/tcp-bad.csv"
expect_error "tool directive bad convention" 2 "tcp-bad.csv:11:[0-9]+: error: tool-in-flange: Euler convention 'zyx': expected e.g. zyx-intrinsic" solve "$tmp/tcp-bad.csv"
sed 's|^# robot-pose: tool-in-base$|# tool-in-flange: 0,0,15cm quat:1,0,0,0|' "$tcp" >"$tmp/tcp-noflag.csv"
expect_error "tool directive for flange poses" 2 "tcp-noflag.csv:10: error: tool-in-flange is declared, but the robot poses are not declared as tool poses" solve "$tmp/tcp-noflag.csv"
expect_error "robot-pose unknown" 2 "robot-pose 'tcp-in-base': expected flange-in-base .*tool-in-base" convert --to quat "$(sed 's|tool-in-base|tcp-in-base|' "$tcp" | mk tcp-unknown.csv)"
