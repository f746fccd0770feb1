# tests/cli/check.sh - command-line tests of tram check (sourced by run.sh).
demo="$here/../../datasets/demo"
"$TRAM" solve --force -o "$tmp/wrist.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 || bad "solve for check"

"$TRAM" check --calibration "$tmp/wrist.cal.json" --history "$tmp/hist.jsonl" "$demo/wrist_recheck.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
[ $rc -eq 0 ] && grep -q '^VERDICT: ok' "$tmp/out" && grep -q '^SAFETY' "$tmp/out" && ok || { bad "check ok (rc $rc)"; cat "$tmp/err"; }
"$TRAM" check --calibration "$tmp/wrist.cal.json" --history "$tmp/hist.jsonl" "$demo/wrist_bumped.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
[ $rc -eq 1 ] && grep -q '^VERDICT: sensor-moved' "$tmp/out" && grep -q 'in the flange frame' "$tmp/out" && ok || { bad "check bumped (rc $rc)"; cat "$tmp/err"; }
# two history lines, each valid JSON with the verdict
if [ "$(wc -l <"$tmp/hist.jsonl")" -eq 2 ] && /usr/bin/python3 - "$tmp/hist.jsonl" <<'PY'
import json, sys
lines = [json.loads(l) for l in open(sys.argv[1])]
assert [l["verdict"] for l in lines] == ["ok", "sensor-moved"]
assert all("timestamp_utc" in l and "change" in l and l["stations"] == 8 for l in lines)
PY
then ok; else bad "check history"; fi
"$TRAM" check --json --calibration "$tmp/wrist.cal.json" "$demo/wrist_bumped.csv" >"$tmp/c.json" 2>"$tmp/err"; rc=$?
if [ $rc -eq 1 ] && /usr/bin/python3 - "$tmp/c.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
assert d["verdict"] == "sensor-moved"
c = d["change"]
assert c["frame"] == "flange" and len(c["translation"]) == 3 and len(c["rotation_deg"]) == 3
assert c["rotation_angle_deg"] > 0.5 and "translation_norm" in c
assert len(d["stations"]) == 8 and isinstance(d["diagnostics"], list)
PY
then ok; else bad "check --json"; cat "$tmp/err"; fi
# one station: inconclusive (exit 3), never a cause
grep -v '^b0[2-8],' "$demo/wrist_bumped.csv" >"$tmp/one.csv"
"$TRAM" check --calibration "$tmp/wrist.cal.json" "$tmp/one.csv" >"$tmp/out" 2>"$tmp/err"; rc=$?
[ $rc -eq 3 ] && grep -q '^VERDICT: inconclusive' "$tmp/out" && ok || { bad "check one station (rc $rc)"; cat "$tmp/out"; }
# tolerance form
"$TRAM" check --calibration "$tmp/wrist.cal.json" --tolerance 10mm,2deg "$demo/wrist_bumped.csv" >"$tmp/out" 2>&1; rc=$?
[ $rc -eq 0 ] && ok || bad "check --tolerance (rc $rc)"
# refusals
sed 's/"version":\t1/"version":\t7/' "$tmp/wrist.cal.json" >"$tmp/newer.json"
expect_error "newer calibration" 2 "newer.json:[0-9]+:[0-9]+: error: calibration format version 7 is newer" check --calibration "$tmp/newer.json" "$demo/wrist_recheck.csv"
head -c 300 "$tmp/wrist.cal.json" >"$tmp/cut.json"
expect_error "damaged calibration" 2 "cut.json:[0-9]+:[0-9]+: error: damaged calibration file" check --calibration "$tmp/cut.json" "$demo/wrist_recheck.csv"
expect_error "other setup" 2 "declare setup eye-to-hand but the calibration" check --calibration "$tmp/wrist.cal.json" "$demo/overhead_camera.csv"
expect_error "records file as calibration" 2 "error: damaged calibration file: malformed JSON" check --calibration "$demo/wrist_recheck.csv" "$demo/wrist_recheck.csv"
expect_error "no calibration" 2 "--calibration FILE is required" check "$demo/wrist_recheck.csv"
