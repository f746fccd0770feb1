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

# report_checks NAME CAL PDF [ARGS...]: the report of calibration CAL (made to PDF) holds
# the file's key numbers (translation, 1-sigma, 95% half-width, residual rms, as
# the report formats them; the Euler angles and their intervals are checked
# against SciPy in tests/ref/check_euler_cov_scipy.py), the safety text, and
# every page renders (pdftoppm) in the count the command reported (pdfinfo).
report_checks() {
    name=$1 cal=$2 pdf=$3
    shift 3
    SOURCE_DATE_EPOCH=1796212800 "$TRAM" report "$cal" -o "$pdf" --euler zyx-intrinsic --force "$@" >"$tmp/out" 2>"$tmp/err" ||
        { bad "report $name: $(cat "$tmp/err")"; return; }
    n=$(sed -n 's/^report: \([0-9]*\) pages.*/\1/p' "$tmp/out")
    pdfinfo "$pdf" | grep -q "^Pages: *$n\$" && ok || bad "report $name: pdfinfo pages (reported $n)"
    rm -rf "$tmp/pg" && mkdir -p "$tmp/pg"
    pdftoppm -r 30 -png "$pdf" "$tmp/pg/p" && [ "$(ls "$tmp/pg" | wc -l)" -eq "$n" ] && ok || bad "report $name: pdftoppm renders $n pages"
    pdftotext -layout "$pdf" - >"$tmp/$name.txt"
    tr '\n' ' ' <"$tmp/$name.txt" | tr -s ' ' >"$tmp/$name.flat"
    for want in "NOT verified on the cell" "verify it on the cell at reduced speed" \
        "keep clear of the working envelope" "applicable robot-safety standards and local codes" \
        "Verified on the cell by (name, date):" "Euler e1 (deg)"; do
        grep -qF -- "$want" "$tmp/$name.flat" && ok || bad "report $name lacks '$want'"
    done
    /usr/bin/python3 - "$cal" >"$tmp/$name.want" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
for name, tr in d["transforms"].items():
    for v in tr["translation"]:
        print(f"{v:.6f}")
    u = d["uncertainty"][name]
    for s, h in zip(u["translation_sigma"], u["translation_95"]):
        if s is not None:
            print(f"{s:.6f}")
            print(f"+-{h:.6f}")
print(f"{d['residuals']['translation']['rms']:.5f}")
PY
    miss=0
    while read -r w; do grep -qF -- "$w" "$tmp/$name.txt" || { miss=$((miss + 1)); echo "  report $name lacks $w"; }; done <"$tmp/$name.want"
    [ "$miss" -eq 0 ] && [ -s "$tmp/$name.want" ] && ok || bad "report $name: $miss key numbers missing"
}
# From pixels: the synthetic scene of tests/cli/data/pixels (see pixels.sh).
px="$here/data/pixels"
"$TRAM" solve --force -o "$tmp/pix.cal.json" --pixels "$px/pixels.csv" --camera "$px/camera.json" \
    --board "$px/board.json" "$px/robot.csv" >/dev/null 2>&1 || bad "solve --pixels for report"
report_checks pixels "$tmp/pix.cal.json" "$tmp/pix.pdf"
grep -q "pixel-refinement: refined on the reprojection error of 540 corner" "$tmp/pixels.flat" && ok || bad "report pixels: the pixel refinement note"
# From 3D points: the open dataset of Jin et al. (2023), read from ../shared.
jin="$here/../../../shared/datasets/jin2023/eyeinhand_pattern"
if have_dataset "$jin"; then
    sh "$here/../../tools/jin2023_to_tram.sh" "$jin" "$tmp/jinrep" xyz-extrinsic >/dev/null 2>&1
    "$TRAM" solve --force -o "$tmp/pts.cal.json" --points "$tmp/jinrep/points.csv" "$tmp/jinrep/records.csv" >/dev/null 2>&1 ||
        bad "solve --points for report"
    report_checks points "$tmp/pts.cal.json" "$tmp/pts.pdf"
    for want in "Solved from 3D points: point noise per coordinate" "Uncertainty: not determined for T_base_target"; do
        grep -qF -- "$want" "$tmp/points.flat" && ok || bad "report points lacks '$want'"
    done
    # a mount check refuses a points calibration, naming where its noise is
    expect_error "check a points calibration" 2 "pts.cal.json:[0-9]+:[0-9]+: error: the calibration holds a point noise but no pose noise" \
        check --calibration "$tmp/pts.cal.json" "$demo/wrist_recheck.csv"
fi
# With a check history (of the demo's recheck and bump): 5 pages, its picture and count.
report_checks history "$tmp/rep.cal.json" "$tmp/hist.pdf" --history "$tmp/rep.hist.jsonl"
grep -q '^report: 5 pages' "$tmp/out" && grep -qF "Mount-check history From $tmp/rep.hist.jsonl: 2 checks" "$tmp/history.flat" && ok ||
    bad "report history: 5 pages and the history's section"
# The examples of docs/report.md and docs/records.md run in tests/cli/docs.sh.
