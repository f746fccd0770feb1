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
        grep -q 'found 39.777 / -12.074 / 79.665 mm: error 0.41 mm' "$tmp/demo.log" &&
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
