# tests/cli/check_messages.sh - tram check's messages do not contradict
# themselves: a tolerance tighter than the stations' noise is named as such
# (with a tolerance the data supports), and an ok verdict names no cause.
# Sourced by run.sh.

demo=$here/../../datasets/demo
"$TRAM" solve --force -o "$tmp/cm.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 && ok || bad "check messages: solve -o"
# unmoved mount, ok: no "explains the stations", no alternative
"$TRAM" check --calibration "$tmp/cm.cal.json" "$demo/wrist_recheck.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && grep -q '^VERDICT: ok' "$tmp/out" && grep -q '^no significant change' "$tmp/out" &&
   ! grep -q 'explains\|^alternative' "$tmp/out"; then ok; else bad "ok verdict names a cause: rc $rc: $(cat "$tmp/out")"; fi
# a tolerance tighter than one station's noise (0.58 mm at r03 against 0.5 mm)
"$TRAM" check --calibration "$tmp/cm.cal.json" --tolerance 0.5mm,0.1deg "$demo/wrist_recheck.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
if [ $rc -eq 3 ] && grep -q "tolerance-below-noise: the tolerance 0.5 mm, 0.1 deg is tighter than these stations can check: station 'r03'" "$tmp/out" &&
   grep -q 'A tolerance the data supports is at least 0.77 mm, 0.25 deg' "$tmp/out" &&
   grep -q 'ok needs every station within 0.5 mm and 0.1 deg; [0-9] of 8 are' "$tmp/out" &&
   ! grep -q 'more varied\|explains the stations' "$tmp/out"; then ok
else bad "tolerance below the noise: rc $rc: $(cat "$tmp/out")"; fi
# a tolerance the data supports gives ok
"$TRAM" check --calibration "$tmp/cm.cal.json" --tolerance 0.8mm,0.25deg "$demo/wrist_recheck.csv" >"$tmp/out" 2>&1 && ok || bad "the supported tolerance is not ok: $(cat "$tmp/out")"
# a moved bracket still names its cause, with the alternative
"$TRAM" check --calibration "$tmp/cm.cal.json" "$demo/wrist_bumped.csv" >"$tmp/out" 2>&1; rc=$?
[ $rc -eq 1 ] && grep -q '^estimated change: sensor-moved' "$tmp/out" && grep -q '^alternative: target-moved' "$tmp/out" && ok ||
    bad "bumped bracket: rc $rc: $(cat "$tmp/out")"
# help prints a single percent sign
"$TRAM" help check | grep -q '%%' && bad "tram help check prints %%" || ok
