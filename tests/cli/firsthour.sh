# tests/cli/firsthour.sh - what a new user meets in the first hour: output
# files that follow the umask, solve --plot that refuses to overwrite like
# plot -o, picture paths without '//', the demo printing its (invented)
# truth beside the result on spaced days, solve --points without a model
# printing nothing that reads like a crash, and tools/jin2023_to_tram.sh
# failing clearly on a missing dataset.  Sourced by run.sh.

demo=$here/../../datasets/demo
# output files: 0666 less the umask, like any new file (not mkstemp's 0600)
rm -f "$tmp/mode.cal.json"
(umask 022; "$TRAM" solve -o "$tmp/mode.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1)
mode=$(stat -c %a "$tmp/mode.cal.json" 2>/dev/null)
[ "$mode" = 644 ] && ok || bad "calibration file mode $mode under umask 022, expected 644"
rm -f "$tmp/mode2.cal.json"
(umask 077; "$TRAM" solve -o "$tmp/mode2.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1)
mode=$(stat -c %a "$tmp/mode2.cal.json" 2>/dev/null)
[ "$mode" = 600 ] && ok || bad "calibration file mode $mode under umask 077, expected 600"
chmod 640 "$tmp/mode.cal.json"
(umask 022; "$TRAM" solve --force -o "$tmp/mode.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1)
mode=$(stat -c %a "$tmp/mode.cal.json" 2>/dev/null)
[ "$mode" = 640 ] && ok || bad "a replaced calibration file lost its mode: $mode, expected 640"
(umask 022; "$TRAM" plot frames "$demo/wrist_camera.csv" -o "$tmp/mode.png" >/dev/null 2>&1)
mode=$(stat -c %a "$tmp/mode.png" 2>/dev/null)
[ "$mode" = 644 ] && ok || bad "picture mode $mode under umask 022, expected 644"

# solve --plot: no '//' in the paths, and no silent overwrite
rm -rf "$tmp/fhpics"
"$TRAM" solve --plot "$tmp/fhpics/" "$demo/wrist_camera.csv" >/dev/null 2>"$tmp/err" && ok || bad "solve --plot: $(cat "$tmp/err")"
grep -q "^picture: $tmp/fhpics/frames.png$" "$tmp/err" && ! grep -q '//' "$tmp/err" && ok || bad "picture paths: $(cat "$tmp/err")"
expect_error "solve --plot refuses to overwrite" 2 "--plot: $tmp/fhpics/frames.png already exists; not overwritten \\(pass --force" \
    solve --plot "$tmp/fhpics" "$demo/wrist_camera.csv"
"$TRAM" solve --force --plot "$tmp/fhpics" "$demo/wrist_camera.csv" >/dev/null 2>&1 && ok || bad "solve --force --plot"

# the closed forms' line says why they fit worse (the outlier p14 is in them)
"$TRAM" solve "$demo/wrist_camera.csv" >"$tmp/out" 2>&1
grep -q '^closed forms on every station, the 1 outlier(s) included - hence worse than the refined result' "$tmp/out" && ok ||
    bad "closed-form line: $(grep 'closed forms' "$tmp/out")"

# the demo: truth beside the result, checks on different days
if [ -n "${GEN_DEMO:-}" ]; then
    DEMO_OUT=$tmp/demo sh "$demo/run_demo.sh" "$TRAM" >"$tmp/demo.log" 2>&1
    grep -q 'truth (invented scenario, truth.json): T_flange_sensor translation 40.000 / -12.000 / 80.000 mm' "$tmp/demo.log" &&
        grep -q 'found 39.775 / -12.019 / 79.618 mm: error 0.44 mm' "$tmp/demo.log" &&
        grep -q 'T_base_sensor translation 650.000 / 250.000 / 1600.000 mm' "$tmp/demo.log" && ok ||
        bad "demo truth lines: $(grep -A1 truth "$tmp/demo.log")"
    n=$(sed -n 's/.*"timestamp_utc":"\([^"]*\)".*/\1/p' "$tmp/demo/wrist_camera.history.jsonl" | sort -u | wc -l)
    [ "$n" -eq 2 ] && ok || bad "demo history: $n distinct time stamps, expected 2"
    # the report comes before its picture: lines
    awk '/^=== 1/ {s=1} s && /^result:/ {r=NR} s && /^picture:/ {p=NR; exit} END {exit !(r && p > r)}' "$tmp/demo.log" && ok ||
        bad "demo: picture lines before the report"
fi
expect_error "check --timestamp format" 2 "--timestamp '2026-13-01': expected UTC date and time" \
    check --calibration "$tmp/mode.cal.json" --history "$tmp/h.jsonl" --timestamp 2026-13-01 "$demo/wrist_recheck.csv"

# tools/jin2023_to_tram.sh: a missing dataset fails clearly, writes nothing
sh "$here/../../tools/jin2023_to_tram.sh" "$tmp/no-such-dataset" "$tmp/jin-out" >"$tmp/out" 2>"$tmp/err"; rc=$?
[ $rc -eq 2 ] && [ ! -e "$tmp/jin-out" ] && grep -q "no-such-dataset: no such folder" "$tmp/err" && ! grep -q "ls:" "$tmp/err" && ok ||
    bad "jin2023_to_tram.sh on a missing dataset: rc $rc: $(cat "$tmp/err")"

# solve --points without a model: no nan, no failed closed forms
jin=$here/../../../shared/datasets/jin2023/eyeinhand_pattern
if have_dataset "$jin"; then
    sh "$here/../../tools/jin2023_to_tram.sh" "$jin" "$tmp/jinfh" 2>/dev/null
    "$TRAM" solve --points "$tmp/jinfh/points.csv" "$tmp/jinfh/records.csv" >"$tmp/out" 2>&1; rc=$?
    if [ $rc -eq 0 ] && ! grep -qi 'nan\|failed' "$tmp/out" && grep -q 'largest single point' "$tmp/out" &&
       grep -q '1-sigma: not estimated for T_base_target in this mode' "$tmp/out"; then ok
    else bad "solve --points without a model: rc $rc: $(grep -i 'nan\|failed' "$tmp/out" | head -3)"; fi
fi

# A robot in mm and deg with a camera in m and rad, the sensor directives
# missing: one run names both (sensor-units), not one per run.
"$TRAM" convert --to euler:zyx-intrinsic --angle-unit deg "$demo/wrist_camera.csv" >"$tmp/mx_e.csv" 2>/dev/null
"$TRAM" convert --to rotvec --angle-unit rad "$demo/wrist_camera.csv" >"$tmp/mx_r.csv" 2>/dev/null
{
    printf '# setup: eye-in-hand\n# length-unit: mm\n# angle-unit: deg\n# robot-euler: zyx-intrinsic\n'
    grep -v '^#' "$tmp/mx_e.csv" >"$tmp/mx_e.rows"; grep -v '^#' "$tmp/mx_r.csv" >"$tmp/mx_r.rows"
    paste -d'|' "$tmp/mx_e.rows" "$tmp/mx_r.rows" | awk -F'|' 'NR == 1 { split($1, a, ","); split($2, b, ",");
            printf "%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,%s\n", a[1], a[2], a[3], a[4], a[5], a[6], a[7], b[8], b[9], b[10], b[11], b[12], b[13]; next }
        { split($1, a, ","); split($2, b, ",");
          printf "%s,%s,%s,%s,%s,%s,%s,%.9g,%.9g,%.9g,%s,%s,%s\n", a[1], a[2], a[3], a[4], a[5], a[6], a[7], b[8] / 1000, b[9] / 1000, b[10] / 1000, b[11], b[12], b[13] }'
} >"$tmp/mixed_nodecl.csv"
"$TRAM" solve "$tmp/mixed_nodecl.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
[ $rc -eq 3 ] && grep -q "sensor-units: the sensor's units both differ from the file's: add '# sensor-length-unit: m' (lengths 1000 times off), and add '# sensor-angle-unit: rad'" "$tmp/out" && ok ||
    bad "mixed units without the sensor directives: rc $rc: $(grep WARNING "$tmp/out" | head -2)"
# with both directives it solves
sed 's/^# robot-euler: zyx-intrinsic$/# robot-euler: zyx-intrinsic\n# sensor-length-unit: m\n# sensor-angle-unit: rad/' "$tmp/mixed_nodecl.csv" >"$tmp/mixed_decl.csv"
"$TRAM" solve "$tmp/mixed_decl.csv" >"$tmp/out" 2>&1 && grep -q 'translation (mm) *39\.77' "$tmp/out" && ok ||
    bad "mixed units with the sensor directives: $(grep -i 'warning\|translation (mm)' "$tmp/out" | head -3)"
