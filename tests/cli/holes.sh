# tests/cli/holes.sh - the input holes of issue 16 stay closed (sourced by
# run.sh): duplicate JSON keys and numbers beyond double range in every
# JSON reader, outputs checked before any work, history appends, and the
# messages' file:line:column.  Each case names what it keeps fixed.
demo="$here/../../datasets/demo"
h="$tmp/holes"
mkdir -p "$h"
"$TRAM" solve --force -o "$h/cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 || bad "holes: solve for a calibration"
rec='{"format":"tram-records","version":1,"length_unit":"mm","stations":[{"station":"a","robot":{"x":1,"y":2,"z":3,"qw":1,"qx":0,"qy":0,"qz":0}}]}'

# duplicate keys: records, calibration, chain, history
printf '%s' "$rec" | sed 's/"length_unit":"mm"/"length_unit":"m","length_unit":"mm"/' >"$h/dup.json"
expect_error "duplicate key in a JSON record file" 2 'dup\.json:1:56: .*key "length_unit" given twice' convert --to quat "$h/dup.json"
printf '%s' "$rec" | sed 's/"length_unit":"mm"/"length_unit":"mm","\\u006cength_unit":"m"/' >"$h/dup_escaped.json"
expect_error "duplicate key spelt with an escape" 2 'dup_escaped\.json:1:[0-9]+: .*given twice' convert --to quat "$h/dup_escaped.json"
sed '0,/"length_unit"/s/"length_unit"\(:[[:space:]]*"[a-z]*"\),/"length_unit"\1, "length_unit"\1,/' "$h/cal.json" >"$h/cal_dup.json"
expect_error "duplicate key in a calibration file" 2 'cal_dup\.json:[0-9]+:[0-9]+: .*key "length_unit" given twice' check --calibration "$h/cal_dup.json" "$demo/wrist_recheck.csv"
sed '0,/"length_unit"/s/"length_unit"\(: *"[a-z]*"\),/"length_unit"\1, "length_unit"\1,/' "$demo/arm_dh.json" >"$h/chain_dup.json"
expect_error "duplicate key in a chain file" 2 'chain_dup\.json:[0-9]+:[0-9]+: .*key "length_unit" given twice' fk --chain "$h/chain_dup.json" "$demo/wrist_camera_joints.csv"
"$TRAM" check --calibration "$h/cal.json" --history "$h/hist.jsonl" "$demo/wrist_recheck.csv" >/dev/null 2>&1
sed 's/"verdict":"\([a-z-]*\)"/"verdict":"\1","verdict":"\1"/' "$h/hist.jsonl" >"$h/hist_dup.jsonl"
expect_error "duplicate key in a history file" 2 'hist_dup\.jsonl:1:[0-9]+: .*key "verdict" given twice' plot history "$h/hist_dup.jsonl" -o "$h/hist.png"

# numbers beyond double range: records and chain (cJSON reads them as inf)
printf '%s' "$rec" | sed 's/"x":1,/"x":1e400,/' >"$h/big.json"
expect_error "1e400 in a JSON record file" 2 'big\.json:1:[0-9]+: .*"x": number 1e400 is beyond double range' convert --to quat "$h/big.json"
sed 's/"a": 150,/"a": 1e400,/' "$demo/arm_dh.json" >"$h/chain_big.json"
expect_error "1e400 in a chain file" 2 'chain_big\.json:[0-9]+:[0-9]+: .*1e400 is beyond double range' fk --chain "$h/chain_big.json" "$demo/wrist_camera_joints.csv"
printf '%s' "$rec" | sed 's/"x":1,/"x":-1e999,/' >"$h/neg.json"
expect_error "-1e999 in a solve input names the file" 2 'neg\.json:1:[0-9]+: .*beyond double range' solve --setup eye-in-hand "$h/neg.json"
printf '%s' "$rec" | sed 's/"qz":0}}/"qz":0}/' >"$h/cut.json"
expect_error "truncated JSON names line and column" 2 'cut\.json:1:[0-9]+: error: record file: malformed JSON' convert --to quat "$h/cut.json"

# outputs checked before any work: --plot on a regular file, -o on the input, --history on the input
: >"$h/afile"
expect_error "solve --plot on a regular file" 2 "--plot .*afile.*not a directory" solve --plot "$h/afile" -o "$h/out.cal.json" "$demo/wrist_camera.csv"
[ ! -e "$h/out.cal.json" ] && ok || bad "solve --plot on a regular file left -o written"
cp "$demo/wrist_camera.csv" "$h/rec.csv"
expect_error "solve --force -o on its input" 2 "-o .*is the input file" solve --force -o "$h/rec.csv" "$h/rec.csv"
cmp -s "$demo/wrist_camera.csv" "$h/rec.csv" && ok || bad "solve -o on its input changed the input"
cp "$demo/wrist_recheck.csv" "$h/chk.csv"
expect_error "check --history on its input" 2 "--history .*is the input file" check --calibration "$h/cal.json" --history "$h/chk.csv" "$h/chk.csv"
cmp -s "$demo/wrist_recheck.csv" "$h/chk.csv" && ok || bad "check --history on its input changed the input"

# history: a last line without its newline is not glued onto
head -n 1 "$h/hist.jsonl" | tr -d '\n' >"$h/hist_nonl.jsonl"
"$TRAM" check --calibration "$h/cal.json" --history "$h/hist_nonl.jsonl" "$demo/wrist_recheck.csv" >/dev/null 2>&1
[ "$(wc -l <"$h/hist_nonl.jsonl")" -eq 2 ] && "$TRAM" plot history "$h/hist_nonl.jsonl" -o "$h/hist2.png" >/dev/null 2>&1 && ok || bad "history append after a line without newline"
printf '\n\n' >"$h/hist_empty.jsonl"
expect_error "an empty history names its last line, not line 0" 2 'hist_empty\.jsonl:2: .*holds no check' plot history "$h/hist_empty.jsonl" -o "$h/hist3.png"

# CSV: hexadecimal numbers and directives after the header
printf '# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\na,0x1p3,2,3,1,0,0,0\n' >"$h/hex.csv"
expect_error "hexadecimal float in CSV" 2 'hex\.csv:3:3: .*hexadecimal' convert --to quat "$h/hex.csv"
printf '# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\na,1,2,3,1,0,0,0\n# robot-pose: base-in-flange\n' >"$h/late.csv"
expect_error "directive after the data rows" 2 'late\.csv:4:3: .*after the header' convert --to quat "$h/late.csv"

# messages that name what was given: an empty name, a directory
expect_error "solve ''" 2 'empty file name' solve ''
mkdir -p "$h/adir"
expect_error "a directory as input" 2 'adir: error: is a directory' solve "$h/adir"

# the covariance of a calibration file is a covariance (issue 16: -I gave
# the verdict ok with every sigma 0): positive variances, symmetric, PSD
# (eigenvalues through LAPACKE), 144 numbers; and a check refuses a
# calibration without one rather than dropping its uncertainty silently
# cov_put NAME AWK-EXPR: cal.json with covariance[i] (i = 0..143, row-major) set to EXPR
cov_put() {
    awk -v e="$2" 'BEGIN { FS = "\t" }
        /^\t"covariance":/ { n = split($0, a, /[][]/); split(a[2], v, ", ");
            s = "\t\"covariance\":\t[";
            for (i = 0; i < 144; i++) { r = int(i / 12); c = i % 12; x = v[i + 1];
                if (e == "negI") x = (r == c) ? -1 : 0;
                else if (e == "asym" && i == 1) x = x + 1;
                else if (e == "notpsd") x = (r == c) ? 1 : ((i == 1 || i == 12) ? 2 : 0);
                else if (e == "nan" && i == 5) x = "null";
                s = s (i ? ", " : "") x }
            if (e == "short") s = "\t\"covariance\":\t[1, 2, 3";
            print s "]"; next }
        { print }' "$h/cal.json" >"$h/$1"
}
cov_put cov_negI.json negI
expect_error "covariance -I" 2 'cov_negI\.json:[0-9]+:[0-9]+: error: damaged calibration file: covariance\[0\] .* is -1: expected a variance > 0' check --calibration "$h/cov_negI.json" "$demo/wrist_recheck.csv"
cov_put cov_asym.json asym
expect_error "asymmetric covariance" 2 'cov_asym\.json:[0-9]+:[0-9]+: error: damaged calibration file: the covariance is not symmetric: covariance\[12\]' check --calibration "$h/cov_asym.json" "$demo/wrist_recheck.csv"
cov_put cov_notpsd.json notpsd
expect_error "covariance not PSD" 2 'cov_notpsd\.json:[0-9]+:[0-9]+: error: .*not positive semi-definite' check --calibration "$h/cov_notpsd.json" "$demo/wrist_recheck.csv"
expect_error "covariance not PSD in plot" 2 'cov_notpsd\.json:[0-9]+:[0-9]+: error: .*not positive semi-definite' plot residuals --calibration "$h/cov_notpsd.json" -o "$h/res.png"
cov_put cov_nan.json nan
expect_error "covariance with a null" 2 'cov_nan\.json:[0-9]+:[0-9]+: error: damaged calibration file: covariance\[5\] is null, but both of its parameters' check --calibration "$h/cov_nan.json" "$demo/wrist_recheck.csv"
cov_put cov_short.json short
expect_error "covariance of the wrong size" 2 'cov_short\.json:[0-9]+:[0-9]+: error: .*"covariance" must hold 144 numbers' check --calibration "$h/cov_short.json" "$demo/wrist_recheck.csv"
awk '/^\t"covariance":/ { sub(/,$/, "", prev); skip = 1 } NR > 1 && !held { print prev } { held = skip; skip = 0; if (!held) prev = $0 } END { print prev }' "$h/cal.json" >"$h/cov_none.json"
expect_error "calibration without covariance" 2 'cov_none\.json:1:1: error: the calibration holds no "covariance"' check --calibration "$h/cov_none.json" "$demo/wrist_recheck.csv"
"$TRAM" check --calibration "$h/cal.json" "$demo/wrist_recheck.csv" >/dev/null 2>&1 && ok || bad "the covariance check refused the solve's own calibration"

# messages with a line: JSON record top-level errors, chain files, a
# robot-only record file (issue 16 "messages without a line", issue 17)
printf '{"format":"tram-records","version":1,"length_unit":"mm",\n"stations":[]}' >"$h/st_empty.json"
expect_error "JSON records with stations: []" 2 'st_empty\.json:2:12: error: "stations": expected a non-empty array' convert --to quat "$h/st_empty.json"
printf '{"format":"tram-records","version":1,"length_unit":"mm",\n"stations":{"a":{}}}' >"$h/st_obj.json"
expect_error "JSON records with stations as an object" 2 'st_obj\.json:2:12: error: "stations": expected a non-empty array' solve --setup eye-in-hand "$h/st_obj.json"
printf '{"format":"tram-records","version":1,"length_unit":"mm"}' >"$h/st_none.json"
expect_error "JSON records without stations" 2 'st_none\.json:1:1: error: "stations": expected' convert --to quat "$h/st_none.json"
printf '{"format":"tram-records",\n "version":2}' >"$h/v2.json"
expect_error "JSON records of a newer version" 2 'v2\.json:2:12: error: record format version 2 is newer' convert --to quat "$h/v2.json"
printf '{"format":"tram-records","version":1,\n "setup":3}' >"$h/setup3.json"
expect_error "JSON records directive not a string" 2 'setup3\.json:2:10: error: "setup": expected a string' convert --to quat "$h/setup3.json"
printf '{"format":"tram-records","version":1,\n "length_unit":"mmm"}' >"$h/mmm.json"
expect_error "JSON records bad unit" 2 "mmm\\.json:2:16: error: length-unit 'mmm'" convert --to quat "$h/mmm.json"
printf '{"format":"tram-records","version":1,\n "colour":"red"}' >"$h/colour.json"
expect_error "JSON records unknown top-level key" 2 'colour\.json:2:2: error: unknown key "colour"' convert --to quat "$h/colour.json"
printf '%s' "$rec" | sed 's/}}\]}$/}},\n7]}/' >"$h/st7.json"
expect_error "JSON records with a number as a station" 2 'st7\.json:2:1: error: stations\[1\]: expected an object' convert --to quat "$h/st7.json"
printf '%s' "$rec" | sed 's/"qw":1,/"qw":"1",/' >"$h/qws.json"
expect_error "JSON records text for a number" 2 'qws\.json:1:[0-9]+: error: stations\[0\]\.robot\.qw: expected a finite number' convert --to quat "$h/qws.json"
sed 's/"a": 600,/"a": "x",/' "$demo/arm_dh.json" >"$h/chain_a.json"
expect_error "chain file: text for a number" 2 'chain_a\.json:8:5: error: joints\[1\]: a: expected a number' fk --chain "$h/chain_a.json" "$demo/wrist_camera_joints.csv"
printf '[1]' >"$h/chain_arr.json"
expect_error "chain file: not an object" 2 'chain_arr\.json:1:1: error: top level: expected an object' fk --chain "$h/chain_arr.json" "$demo/wrist_camera_joints.csv"
sed 's/"convention": "dh"/"convention": "dhh"/' "$demo/arm_dh.json" >"$h/chain_conv.json"
expect_error "chain file: unknown convention" 2 'chain_conv\.json:3:17: error: convention: expected' fk --chain "$h/chain_conv.json" "$demo/wrist_camera_joints.csv"
printf '# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\na,1,2,3,1,0,0,0\nb,1,2,3,1,0,0,0\nc,1,2,3,1,0,0,0\n' >"$h/robonly.csv"
expect_error "robot-only CSV in solve" 2 'robonly\.csv:3: error: solving needs both a robot_ and a sensor_ pose block' solve --setup eye-in-hand "$h/robonly.csv"
expect_error "robot-only CSV without setup" 2 'robonly\.csv:2: error: no setup' solve "$h/robonly.csv"
expect_error "robot-only CSV in check" 2 'robonly\.csv:3: error: a check needs both' check --calibration "$h/cal.json" "$h/robonly.csv"
expect_error "robot-only CSV in fk" 2 'robonly\.csv:3: error: --chain needs joint columns' fk --chain "$demo/arm_dh.json" "$h/robonly.csv"

# solve --points with a record file that also has sensor columns: the
# solve says which data it used and names the ignored columns
awk -F, 'BEGIN { print "# length-unit: mm"; print "station,point,x,y,z" }
    /^#/ || /^station/ { next }
    { w = $11; a = $12; b = $13; c = $14   # target points (0,0,0), (80,0,0), (0,50,0)
      printf "%s,o,%s,%s,%s\n", $1, $8, $9, $10
      printf "%s,u,%.4f,%.4f,%.4f\n", $1, $8 + 80 * (1 - 2 * (b * b + c * c)), $9 + 80 * 2 * (a * b + c * w), $10 + 80 * 2 * (a * c - b * w)
      printf "%s,v,%.4f,%.4f,%.4f\n", $1, $8 + 50 * 2 * (a * b - c * w), $9 + 50 * (1 - 2 * (a * a + c * c)), $10 + 50 * 2 * (b * c + a * w) }' \
    "$demo/wrist_camera.csv" >"$h/pts.csv"
"$TRAM" solve --points "$h/pts.csv" "$demo/wrist_camera.csv" >"$h/out" 2>"$h/err"
grep -q "sensor-columns-ignored: the record file .*wrist_camera.csv also has sensor pose columns (sensor_x, sensor_y, sensor_z, sensor_qw, sensor_qx, sensor_qy, sensor_qz): they are ignored; this solve uses the observed points of .*pts.csv only" "$h/out" &&
    ok || { bad "solve --points with sensor columns: no note (rc $?)"; head -5 "$h/err"; }
"$TRAM" solve --json --points "$h/pts.csv" "$demo/wrist_camera.csv" 2>/dev/null | grep -q '"code":[[:space:]]*"sensor-columns-ignored"' && ok || bad "solve --points --json: no sensor-columns-ignored diagnostic"

# every missing declaration in one run (issue 17): length unit, Euler
# convention, setup (when solve has no --setup) and a tool that does not
# fit the robot poses, listed in one message; exit 2 as before
grep -v '^# \(setup\|length-unit\|robot-euler\):' "$demo/wrist_camera.csv" >"$h/miss3.csv"
expect_error "three missing declarations in one run" 2 "miss3\\.csv:[0-9]+: error: no length unit: .*; also the robot block holds Euler angles but its convention is not declared: .*; also no setup: add '# setup: eye-in-hand' .* \\(every missing declaration is listed\\)" solve "$h/miss3.csv"
"$TRAM" solve --setup eye-in-hand "$h/miss3.csv" >/dev/null 2>"$h/err"; grep -q "no setup" "$h/err" && bad "solve --setup still lists the setup as missing" || ok
"$TRAM" convert --to quat "$h/miss3.csv" >/dev/null 2>"$h/err"; grep -q "no setup" "$h/err" && bad "convert lists a setup it does not need" || ok
printf '# tool-in-flange: 0,0,100mm quat:1,0,0,0\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\na,1,2,3,1,0,0,0\n' >"$h/toolmiss.csv"
expect_error "missing unit and a tool without tool poses in one run" 2 "toolmiss\\.csv:2: error: no length unit: .*; also tool-in-flange is declared, but the robot poses are not declared as tool poses" convert --to quat "$h/toolmiss.csv"
printf '# length-unit: mm\n# tool-in-flange: 0,0,100mm quat:1,0,0,0\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\na,1,2,3,1,0,0,0\n' >"$h/toolonly.csv"
expect_error "a tool without tool poses alone names its directive" 2 "toolonly\\.csv:2: error: tool-in-flange is declared" convert --to quat "$h/toolonly.csv"

# a NUL byte in a CSV file names its line (and column, in the table reader)
printf '# length-unit: mm\nstation,ro\000bot_x\n' >"$h/nul.csv"
expect_error "NUL byte in a record file" 2 'nul\.csv:2: error: NUL byte in line' convert --to quat "$h/nul.csv"
printf '# length-unit: mm\nfrom_x,fr\000om_y\n' >"$h/nulp.csv"
expect_error "NUL byte in a point-pair file" 2 'nulp\.csv:2:10: error: NUL byte in the file: expected text' register "$h/nulp.csv"
