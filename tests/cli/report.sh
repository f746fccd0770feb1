# tests/cli/report.sh - command-line tests of tram report (sourced by run.sh):
# the PDF's pages (pdfinfo, pdftoppm of poppler-utils), its safety text and
# key numbers (pdftotext), the options, and the refusals with file:line:column.
# The numbers against the calibration file and SciPy: tests/ref/check_report_scipy.py.
demo="$here/../../datasets/demo"
"$TRAM" solve --force -o "$tmp/rep.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 || bad "solve for report"
"$TRAM" check --calibration "$tmp/rep.cal.json" --history "$tmp/rep.hist.jsonl" "$demo/wrist_recheck.csv" >/dev/null 2>&1
"$TRAM" check --calibration "$tmp/rep.cal.json" --history "$tmp/rep.hist.jsonl" "$demo/wrist_bumped.csv" >/dev/null 2>&1

SOURCE_DATE_EPOCH=1796212800 "$TRAM" report "$tmp/rep.cal.json" -o "$tmp/rep.pdf" --euler zyx-intrinsic \
    --history "$tmp/rep.hist.jsonl" --computed-by "A. Integrator" >"$tmp/out" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && grep -q '^report: 5 pages (a4, Euler angles zyx-intrinsic)' "$tmp/out"; then ok
else bad "report (rc $rc)"; cat "$tmp/out" "$tmp/err"; fi
pdfinfo "$tmp/rep.pdf" >"$tmp/info" 2>&1
grep -q '^Pages: *5$' "$tmp/info" && grep -q 'Page size: *595.276 x 841.89 pts (A4)' "$tmp/info" && ok || { bad "report pdfinfo"; cat "$tmp/info"; }
mkdir -p "$tmp/pages"
pdftoppm -r 30 -png "$tmp/rep.pdf" "$tmp/pages/p" && [ "$(ls "$tmp/pages" | wc -l)" -eq 5 ] && ok || bad "report pdftoppm renders 5 pages"
pdftotext "$tmp/rep.pdf" - | tr '\n' ' ' | tr -s ' ' >"$tmp/rep.txt" # lines joined: wrapped text matches
for want in "consistent with the data; NOT verified on the cell" "verify it on the cell at reduced speed" \
    "keep clear of the working envelope" "applicable robot-safety standards and local codes" \
    "Verified on the cell by (name, date):" "Computed by: A. Integrator, 2026-12-02" \
    "T_flange_sensor" "T_base_target" "Mount-check history" "2 checks" "2026-12-02T12:00:00Z" \
    "the same bytes as solved" "OUTLIER (excluded)" "[note] outliers"; do
    grep -qF -- "$want" "$tmp/rep.txt" && ok || bad "report text lacks '$want'"
done
# the safety block on the first page and the status in every footer
pdftotext -f 1 -l 1 "$tmp/rep.pdf" - | grep -q "nothing in this record makes it safe" && ok || bad "safety block on page 1"
[ "$(grep -o 'NOT verified on the cell' "$tmp/rep.txt" | wc -l)" -ge 7 ] && ok || bad "NOT verified in every footer"
# never says or implies the result is verified or safe
if grep -Eiq 'is verified|verified: yes|is safe|safe to move|validated' "$tmp/rep.txt"; then bad "report implies verification"; else ok; fi
# Letter pages, no history
"$TRAM" report "$tmp/rep.cal.json" -o "$tmp/rep-letter.pdf" --euler xyz-extrinsic --page letter >"$tmp/out" 2>&1
n=$(pdfinfo "$tmp/rep-letter.pdf" 2>/dev/null | sed -n 's/^Pages: *//p')
pdfinfo "$tmp/rep-letter.pdf" 2>/dev/null | grep -q 'Page size: *612 x 792 pts (letter)' && grep -q "^report: $n pages (letter" "$tmp/out" && ok || { bad "report --page letter"; cat "$tmp/out"; }
# a records file changed since the calibration is marked
sed 's/"source":\t"[^"]*\.csv"/"source":\t"'"$(printf '%s' "$tmp/changed.csv" | sed 's/[\/&]/\\&/g')"'"/' "$tmp/rep.cal.json" >"$tmp/rep2.cal.json"
sed 's/^p01,862.794/p01,862.795/' "$demo/wrist_camera.csv" >"$tmp/changed.csv"
"$TRAM" report "$tmp/rep2.cal.json" -o "$tmp/rep2.pdf" --euler zyx-intrinsic >/dev/null 2>&1 &&
    pdftotext "$tmp/rep2.pdf" - | tr '\n' ' ' | grep -q "CHANGED since the calibration" && ok || bad "report marks a changed records file"
# refusals
expect_error "report missing file" 2 "nothere.json: error: cannot open" report "$tmp/nothere.json" -o "$tmp/x.pdf" --euler zyx-intrinsic
expect_error "report bad convention" 2 "--euler 'zyx': expected an axis sequence and a kind, e.g. zyx-intrinsic" report "$tmp/rep.cal.json" -o "$tmp/x.pdf" --euler zyx
expect_error "report no convention" 2 "--euler SEQ is required.*none is assumed" report "$tmp/rep.cal.json" -o "$tmp/x.pdf"
expect_error "report bad page" 2 "--page '300x300': expected a4 or letter" report "$tmp/rep.cal.json" -o "$tmp/x.pdf" --euler zyx-intrinsic --page 300x300
expect_error "report no output" 2 "-o REPORT.pdf is required" report "$tmp/rep.cal.json" --euler zyx-intrinsic
expect_error "report exists" 2 "rep.pdf: error: already exists; not overwritten" report "$tmp/rep.cal.json" -o "$tmp/rep.pdf" --euler zyx-intrinsic
expect_error "report records as calibration" 2 "wrist_camera.csv:1:1: error: damaged calibration file: malformed JSON" report "$demo/wrist_camera.csv" -o "$tmp/x.pdf" --euler zyx-intrinsic
sed 's/"severity":\t"info"/"severity":\t"loud"/' "$tmp/rep.cal.json" >"$tmp/sev.json"
expect_error "report damaged diagnostic" 2 "sev.json:[0-9]+:[0-9]+: error: damaged calibration file: diagnostics\[0\].severity: expected info, warning or error" report "$tmp/sev.json" -o "$tmp/x.pdf" --euler zyx-intrinsic
printf '{"timestamp_utc": "later"}\n' >"$tmp/badhist.jsonl"
expect_error "report damaged history" 2 "badhist.jsonl:1(:[0-9]+)?: error:" report "$tmp/rep.cal.json" -o "$tmp/x.pdf" --euler zyx-intrinsic --history "$tmp/badhist.jsonl"
SOURCE_DATE_EPOCH=soon "$TRAM" report "$tmp/rep.cal.json" -o "$tmp/x.pdf" --euler zyx-intrinsic >"$tmp/out" 2>"$tmp/err"
[ $? -eq 2 ] && [ ! -s "$tmp/out" ] && grep -q "SOURCE_DATE_EPOCH 'soon': expected whole seconds" "$tmp/err" && ok || bad "report bad SOURCE_DATE_EPOCH"
[ ! -e "$tmp/x.pdf" ] && ok || bad "report wrote a file on error"
"$TRAM" help report | grep -q 'usage: tram report CALIB.json' && ok || bad "help report"
# The examples of docs/report.md and docs/records.md run in tests/cli/docs.sh.
