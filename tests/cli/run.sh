#!/bin/sh
# tests/cli/run.sh - command-line tests of tram: exit statuses, messages
# naming file:line[:column], and empty stdout on every error.
# Usage: TRAM=/path/to/tram sh tests/cli/run.sh
set -u
here=$(cd "$(dirname "$0")" && pwd)
: "${TRAM:?set TRAM to the tram binary}"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
pass=0
fail=0
skipped=0

ok() { pass=$((pass + 1)); }
bad() { fail=$((fail + 1)); echo "FAIL: $*"; }

# have_dataset PATH: true when the shared dataset folder PATH exists.  When
# it does not, a user's clone counts the tests that need it as skipped; CI
# (CI=true) has ../shared and counts its absence as a failure.
have_dataset() {
    [ -d "$1" ] && return 0
    if [ "${CI:-}" = true ]; then bad "dataset missing (CI=true): $1"
    else skipped=$((skipped + 1)); echo "skipped: dataset not present ($1)"; fi
    return 1
}

# expect_error NAME STATUS LOCATION-REGEX FILE [ARGS...]: run tram with ARGS,
# expect exit STATUS, stderr matching LOCATION-REGEX, and nothing on stdout.
expect_error() {
    name=$1; want=$2; loc=$3; shift 3
    "$TRAM" "$@" >"$tmp/out" 2>"$tmp/err"
    rc=$?
    if [ "$rc" -ne "$want" ]; then bad "$name: exit $rc, expected $want"; cat "$tmp/err"; return; fi
    if [ -s "$tmp/out" ]; then bad "$name: stdout not empty"; return; fi
    if ! grep -Eq -- "$loc" "$tmp/err"; then bad "$name: stderr lacks /$loc/:"; cat "$tmp/err"; return; fi
    ok
}

# numclose A B: two record files with the same rows agree to 1e-9 in every number.
numclose() {
    awk -F, 'NR==FNR { if ($0 !~ /^#/) a[++n]=$0; next }
             $0 !~ /^#/ { m++; if (m == 1) next; split(a[m], x, ",");
                          for (i = 2; i <= NF; i++) { d = x[i] - $i; if (d < 0) d = -d; if (d > 1e-9) exit 1 } }
             END { if (m != n) exit 1 }' "$1" "$2"
}

# mk NAME: write stdin to $tmp/NAME and print the path.
mk() { cat >"$tmp/$1"; echo "$tmp/$1"; }

H='station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz'
ROW='1,0,0,0,1,0,0,0,1,2,3,1,0,0,0'

f=$(printf '# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,robot_speed\n' | mk unknown.csv)
expect_error "unknown column" 2 "unknown.csv:2:69: error: unknown column 'robot_speed'" convert --to quat "$f"
f=$(printf '# length-unit: mm\nstation,robot_x,robot_y,robot_qw,robot_qx,robot_qy,robot_qz\n1,0,0,1,0,0,0\n' | mk missing.csv)
expect_error "missing column" 2 "missing.csv:2: error: missing column 'robot_z'" convert --to quat "$f"
f=$(printf '# length-unit: mm\nrobot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,robot_rx,robot_ry,robot_rz\n' | mk two.csv)
expect_error "two rotation sets" 2 "two.csv:2:[0-9]+: error: the robot block has two rotation sets" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n1,0,0,0,1,0,0,0,1,2,3,1,0,0\n' "$H" | mk short.csv)
expect_error "short row" 2 "short.csv:3: error: short row: 14 fields, expected 15" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n%s,9\n' "$H" "$ROW" | mk long.csv)
expect_error "long row" 2 "long.csv:3: error: long row: 16 fields" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n1,0,zero,0,1,0,0,0,1,2,3,1,0,0,0\n' "$H" | mk text.csv)
expect_error "text for a number" 2 "text.csv:3:5: error: column 'robot_y': expected a number, found 'zero'" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n1,0,0,0,1,0,0,0,NaN,2,3,1,0,0,0\n' "$H" | mk nan.csv)
expect_error "NaN" 2 "nan.csv:3:17: error: .*NaN and Inf are not allowed" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n1,0,0,0,1,0,0,0,1,-inf,3,1,0,0,0\n' "$H" | mk inf.csv)
expect_error "Inf" 2 "inf.csv:3:19: error: .*NaN and Inf" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n%s\n%s\n' "$H" "$ROW" "$ROW" | mk dup.csv)
expect_error "duplicate station" 2 "dup.csv:4: error: duplicate station id '1' \\(first at line 3\\)" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n1,0,0,0,1,0,0,0,1,2,3,0.9,0,0,0\n' "$H" | mk qnorm.csv)
expect_error "quaternion norm" 2 "qnorm.csv:3:23: error: station '1': sensor quaternion norm is 0.9" convert --to quat "$f"
M='station,robot_x,robot_y,robot_z,robot_r11,robot_r12,robot_r13,robot_r21,robot_r22,robot_r23,robot_r31,robot_r32,robot_r33'
f=$(printf '# length-unit: mm\n%s\n1,0,0,0,1.001,0,0,0,1,0,0,0,1\n' "$M" | mk mat.csv)
expect_error "matrix not a rotation" 2 "mat.csv:3:9: error: .*not a rotation.*--reorthonormalize" convert --to quat "$f"
if "$TRAM" convert --to quat --reorthonormalize "$f" >"$tmp/out" 2>"$tmp/err"; then ok; else bad "--reorthonormalize rejected a rounded matrix"; fi
f=$(printf '%s\n%s\n' "$H" "$ROW" | mk nounit.csv)
expect_error "missing length unit" 2 "nounit.csv:1: error: no length unit" convert --to quat "$f"
f=$(printf '# length-unit: mm\n# angle-unit: deg\nrobot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3\n0,0,0,1,2,3\n' | mk euler.csv)
expect_error "Euler without convention" 2 "euler.csv:3: error: the robot block holds Euler angles but its convention is not declared" convert --to quat "$f"
f=$(printf '# length-unit: mm\nrobot_x,robot_y,robot_z,robot_rx,robot_ry,robot_rz\n0,0,0,1,2,3\n' | mk noangle.csv)
expect_error "missing angle unit" 2 "noangle.csv:2: error: .*no angle unit" convert --to quat "$f"
f=$(printf '# length-unit: mm\n%s\n%s\n' "$H" "$ROW" | mk good.csv)
expect_error "unit conflict" 2 "good.csv:1: error: the file declares length-unit mm but --length-unit m" convert --to quat --from-length-unit m "$f"
f=$(printf '# length-unit: mm\n# length-unit: m\n' | mk dir2.csv)
expect_error "directive conflict" 2 "dir2.csv:2:3: error: directive 'length-unit' given again" convert --to quat "$f"
f=$(printf '# length-unit: furlong\n' | mk lu.csv)
expect_error "bad unit" 2 "lu.csv:1:3: error: length-unit 'furlong': expected one of mm, cm, m, in" convert --to quat "$f"
f=$(printf '{"format": "tram-records",\n "version": 1,\n "stations": [,]}\n' | mk bad.json)
expect_error "malformed JSON" 2 "bad.json:3:[0-9]+: error: record file: malformed JSON" convert --to quat "$f"
# a second document (or anything) after the first is refused, not ignored
f=$(printf '{"format": "tram-records", "version": 1, "length_unit": "mm",\n "stations": [{"robot": {"x": 1, "y": 2, "z": 3, "qw": 1, "qx": 0, "qy": 0, "qz": 0}}]}\n{"x": 1}\n' | mk two.json)
expect_error "text after the JSON document" 2 "two.json:3:1: error: record file: text after the JSON document" convert --to quat "$f"
expect_error "no such file" 2 "nosuch.csv: error: cannot open" convert --to quat "$tmp/nosuch.csv"
expect_error "bad --to" 2 "expected quat, quat-xyzw, rotvec, matrix or euler:SEQ" convert --to euler:abc "$tmp/good.csv"
expect_error "unknown subcommand" 2 "unknown subcommand" frobnicate
expect_error "unknown option" 2 "unknown option '--bogus'" convert --bogus

# Successful conversions read back to the same poses.
for rep in quat rotvec matrix euler:zyx-intrinsic euler:xyx-extrinsic; do
    if "$TRAM" convert --to "$rep" --angle-unit rad "$here/data/mixed.csv" >"$tmp/a.csv" 2>"$tmp/err" &&
       "$TRAM" convert --to quat "$tmp/a.csv" >"$tmp/b.csv" 2>>"$tmp/err" &&
       "$TRAM" convert --to quat "$here/data/mixed.csv" >"$tmp/c.csv" 2>>"$tmp/err" &&
       "$TRAM" convert --to quat --format json "$tmp/a.csv" >"$tmp/d.json" 2>>"$tmp/err" &&
       "$TRAM" convert --to quat "$tmp/d.json" >"$tmp/e.csv" 2>>"$tmp/err"; then
        # The quaternion forms of the original and of the round trips (CSV and
        # JSON) agree to rounding.
        if numclose "$tmp/c.csv" "$tmp/b.csv" && numclose "$tmp/c.csv" "$tmp/e.csv"; then ok; else bad "round trip through $rep"; fi
    else
        bad "convert --to $rep failed"; cat "$tmp/err"
    fi
done
out=$("$TRAM" convert --pose quat:1,2,3,0.7071067811865476,0,0,0.7071067811865476 --to euler:zyx-intrinsic --angle-unit deg 2>&1)
case "$out" in *"1,2,3,90.0000000000000"*) ok ;; *) bad "one-pose form: $out" ;; esac
"$TRAM" --version | grep -q '^tram [0-9]' && ok || bad "--version"
"$TRAM" convert --to quat - <"$here/data/mixed.csv" >"$tmp/stdin.csv" 2>"$tmp/err" && numclose "$tmp/c.csv" "$tmp/stdin.csv" && ok || bad "convert from stdin"
printf '# length-unit: mm\nrobot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n1,2,3,2,0,0,0\n' | "$TRAM" convert --to quat - >"$tmp/out" 2>"$tmp/err"
[ $? -eq 2 ] && [ ! -s "$tmp/out" ] && grep -q '^<stdin>:3:' "$tmp/err" && ok || bad "stdin error location"
"$TRAM" help convert | grep -q 'usage: tram convert' && ok || bad "help convert"

# The other scripts are independent of one another: each defines what it uses
# and writes every file it reads.  Each runs in a subshell with a folder of its
# own as $tmp, in one of CLI_JOBS lanes (default 2, the CI machine's cores);
# their output and counts are shown in order afterwards.
run_script() { # run_script FILE NAME
    (
        tmp="$tmp/$2.d"
        mkdir -p "$tmp"
        pass=0 fail=0 skipped=0
        . "$1"
        echo "$pass $fail $skipped" >"$tmp/../$2.count"
    ) >"$tmp/$2.log" 2>&1
}
# CLI_ONLY="trust plot" runs only those scripts (while working on them).
selected() { [ -z "${CLI_ONLY:-}" ] && return 0; case " $CLI_ONLY " in *" $1 "*) return 0 ;; esac; return 1; }
lanes=${CLI_JOBS:-2}
lane=0
while [ "$lane" -lt "$lanes" ]; do
    (
        i=0
        for f in "$here"/*.sh; do
            [ "$f" = "$here/run.sh" ] && continue
            selected "$(basename "$f" .sh)" || continue
            [ $((i % lanes)) -eq "$lane" ] && run_script "$f" "$(basename "$f" .sh)"
            i=$((i + 1))
        done
    ) &
    lane=$((lane + 1))
done
wait
for f in "$here"/*.sh; do
    [ "$f" = "$here/run.sh" ] && continue
    n=$(basename "$f" .sh)
    selected "$n" || continue
    echo "== tests/cli/$n.sh"
    cat "$tmp/$n.log"
    if [ -s "$tmp/$n.count" ]; then
        read -r p q k <"$tmp/$n.count"
        pass=$((pass + p)) fail=$((fail + q)) skipped=$((skipped + k))
    else
        bad "tests/cli/$n.sh stopped before its end"
    fi
done

echo "cli: $pass passed, $fail failed, $skipped skipped"
[ "$fail" -eq 0 ]
