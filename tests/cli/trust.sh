# tests/cli/trust.sh - nonsense files must not pass (issue 13, section 1):
# each case is built from the demo files (an invented scenario of our own)
# by a plain text edit, and must exit 3 naming its cause; the honest demo
# files must keep exit 0.  Sourced by run.sh.
demo="$here/../../datasets/demo"

# expect_rc NAME STATUS REGEX ARGS...: exit STATUS and REGEX in stdout or stderr.
expect_rc() {
    name=$1; want=$2; re=$3; shift 3
    "$TRAM" "$@" >"$tmp/out" 2>"$tmp/err"
    rc=$?
    if [ "$rc" -ne "$want" ]; then bad "$name: exit $rc, expected $want"; head -c 2000 "$tmp/err"; return; fi
    if ! cat "$tmp/out" "$tmp/err" | grep -Eq -- "$re"; then bad "$name: output lacks /$re/"; head -c 2000 "$tmp/err"; return; fi
    ok
}

# rows KEEP K FILE: robot columns (2..KEEP) of row i taken from row i+K (cyclic).
shift_rows() {
    awk -F, -v OFS=, -v k="$1" -v last="$2" '/^#/ {print; next} !h {print; h=1; next}
        {n++; id[n]=$1; rb=$2; for (i=3;i<=last;i++) rb=rb","$i; r[n]=rb; s=$(last+1); for (i=last+2;i<=NF;i++) s=s","$i; sn[n]=s}
        END {for (i=1;i<=n;i++) {j=(i+k-1)%n+1; print id[i],r[j],sn[i]}}' "$3"
}

expect_rc "honest wrist demo" 0 "pairing test: .* passed" solve "$demo/wrist_camera.csv"
expect_rc "honest overhead demo" 0 "plausibility gate: .*passed" solve "$demo/overhead_camera.csv"

# robot rows shifted 5 stations against the sensor rows
shift_rows 5 7 "$demo/wrist_camera.csv" >"$tmp/shift5.csv"
expect_rc "shifted rows" 3 "the data cannot tell the mount" solve "$tmp/shift5.csv"
# sensor poses that are pure noise (seeded)
awk -F, -v OFS=, 'BEGIN {srand(7)} /^#/ {print; next} !h {print; h=1; next}
    {for (i=8;i<=10;i++) $i=sprintf("%.3f",(rand()-0.5)*1000); a=rand()-0.5; b=rand()-0.5; c=rand()-0.5; d=rand()-0.5;
     m=sqrt(a*a+b*b+c*c+d*d); $11=a/m; $12=b/m; $13=c/m; $14=d/m; print}' "$demo/wrist_camera.csv" >"$tmp/noise.csv"
expect_rc "sensor noise" 3 "residuals .* are beyond what a working sensor and robot produce" solve "$tmp/noise.csv"
# both quaternion blocks written x,y,z,w under columns named _qw,_qx,_qy,_qz
"$TRAM" convert --to quat "$demo/wrist_camera.csv" >"$tmp/q.csv"
awk -F, -v OFS=, '/^#/ {print; next} !h {print; h=1; next}
    {w=$5; $5=$6; $6=$7; $7=$8; $8=w; w=$12; $12=$13; $13=$14; $14=$15; $15=w; print}' "$tmp/q.csv" >"$tmp/xyzw.csv"
expect_rc "both quaternions x,y,z,w" 3 "several convention mistakes at once: the robot quaternion .*; the sensor quaternion" solve "$tmp/xyzw.csv"
# robot poses inverted and sensor quaternions scalar-last at once
awk -F, -v OFS=, '/^# robot-pose/ {print "# robot-pose: base-in-flange"; next} /^#/ {print; next} !h {print; h=1; next}
    {w=$11; $11=$12; $12=$13; $13=$14; $14=w; print}' "$demo/wrist_camera.csv" >"$tmp/invxyzw.csv"
expect_rc "robot inverted + sensor scalar-last" 3 "several convention mistakes at once: add '# robot-pose: flange-in-base'; the sensor quaternion" solve "$tmp/invxyzw.csv"
# both poses inverted: clean residuals, the "wrist camera" where the board is
sed -e 's/^# robot-pose:.*/# robot-pose: base-in-flange/' -e 's/^# sensor-pose:.*/# sensor-pose: sensor-in-target/' \
    "$demo/wrist_camera.csv" >"$tmp/bothinv.csv"
expect_rc "both poses inverted" 3 "wrist sensor sits .* from the flange .*The data fit as well if both poses logged the other way round" solve "$tmp/bothinv.csv"
# the gate's options
expect_rc "gate option" 3 "at most 0.05 deg and 0.1 mm" solve --max-residual 0.1mm+0%,0.05deg "$demo/wrist_camera.csv"
expect_rc "pairing test seed" 0 "best of 5 random pairings \(seed 9\)" solve --pairing-test 5 --seed 9 "$demo/wrist_camera.csv"
expect_error "bad --max-residual" 2 "--max-residual '5,1deg': expected" solve --max-residual 5,1deg "$demo/wrist_camera.csv"
expect_error "bad --max-offset" 2 "--max-offset '0.5m': expected" solve --max-offset 0.5m "$demo/wrist_camera.csv"

# --points: a 3 x 2 grid of board points seen from the demo's sensor poses
mkpts() {
    awk -F, -v sc="$2" 'BEGIN {print "# length-unit: mm"; print "station,point,x,y,z"; np=0;
            for (a=0;a<3;a++) for (b=0;b<2;b++) {np++; mx[np]=60*a; my[np]=60*b+(a==1?15:0)}}
        /^#/ || /^station/ {next}
        {x=$8; y=$9; z=$10; w=$11; qx=$12; qy=$13; qz=$14;
         r11=1-2*(qy*qy+qz*qz); r12=2*(qx*qy-qz*w); r21=2*(qx*qy+qz*w); r22=1-2*(qx*qx+qz*qz); r31=2*(qx*qz-qy*w); r32=2*(qy*qz+qx*w);
         for (k=1;k<=np;k++) printf "%s,c%d,%.4f,%.4f,%.4f\n", $1, k, (r11*mx[k]+r12*my[k]+x)*sc, (r21*mx[k]+r22*my[k]+y)*sc, (r31*mx[k]+r32*my[k]+z)*sc}' "$1"
}
mkpts "$demo/wrist_camera.csv" 1 >"$tmp/pts.csv"
mkpts "$demo/wrist_camera.csv" 0.001 >"$tmp/pts_m.csv"
shift_rows 3 7 "$demo/wrist_camera.csv" >"$tmp/shift3.csv"
expect_rc "points honest" 0 "pairing test: .* passed" solve --points "$tmp/pts.csv" "$demo/wrist_camera.csv"
# a points calibration (Z's covariance rows null) reads back: check refuses it
# by name (it compares poses), the report takes it
expect_rc "points calibration written" 0 "" solve --points "$tmp/pts.csv" -o "$tmp/pts_cal.json" "$demo/wrist_camera.csv"
expect_error "check refuses a points calibration" 2 'pts_cal\.json:[0-9]+:[0-9]+: error: the calibration holds a point noise but no pose noise' check --calibration "$tmp/pts_cal.json" "$demo/wrist_recheck.csv"
expect_rc "report of a points calibration" 0 "" report --euler zyx-intrinsic -o "$tmp/pts_cal.pdf" "$tmp/pts_cal.json"
expect_rc "points rows shifted" 3 "3D point residuals .* are beyond" solve --points "$tmp/pts.csv" "$tmp/shift3.csv"
expect_rc "points in m declared mm" 3 "3D point residuals .* are beyond" solve --points "$tmp/pts_m.csv" "$demo/wrist_camera.csv"
# the gate names the tiny working distance as a unit misread, and gives no
# rotation limit where the residuals have no rotation
expect_rc "points in m declared mm: unit hint" 3 "at most 5.0.* mm: .*working distance of 0.45.* mm is itself implausible.*another unit than declared" solve --points "$tmp/pts_m.csv" "$demo/wrist_camera.csv"

# register: 12 tool-tip points and their camera coordinates (rotation 30 deg about z)
awk 'BEGIN {srand(3); print "# length-unit: mm"; print "point,from_x,from_y,from_z,to_x,to_y,to_z";
    c=cos(0.5236); s=sin(0.5236);
    for (i=1;i<=12;i++) {x=400+500*rand(); y=-300+600*rand(); z=400*rand();
        printf "p%d,%.4f,%.4f,%.4f,%.4f,%.4f,%.4f\n", i, x, y, z, c*x-s*y+100+0.2*(rand()-0.5), s*x+c*y-400+0.2*(rand()-0.5), z+900+0.2*(rand()-0.5)}}' >"$tmp/pairs.csv"
awk -F, -v OFS=, '/^#/ || /^point/ {print; next} {n++; a[n]=$1","$2","$3","$4; b[n]=$5","$6","$7}
    END {for (i=1;i<=n;i++) print a[i], b[(i+2)%n+1]}' "$tmp/pairs.csv" >"$tmp/pairs_shift.csv"
expect_rc "register honest" 0 "pairing test: .* passed" register "$tmp/pairs.csv"
expect_rc "register rows shifted" 3 "pairing-not-determined" register "$tmp/pairs_shift.csv"

# check: convention mistakes of the recheck file are named, not the robot
"$TRAM" solve --force -o "$tmp/trust.cal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1 || bad "solve for trust checks"
awk -F, -v OFS=, '/^#/ {print; next} !h {print; h=1; next}
    {$8=sprintf("%.7f",$8/1000); $9=sprintf("%.7f",$9/1000); $10=sprintf("%.7f",$10/1000); print}' "$demo/wrist_recheck.csv" >"$tmp/re_m.csv"
expect_rc "check: sensor lengths in m" 3 "add '# sensor-length-unit: m': read that way the stations agree with the calibration" check --calibration "$tmp/trust.cal.json" "$tmp/re_m.csv"
sed 's/^# robot-euler: zyx-intrinsic/# robot-euler: xyz-intrinsic/' "$demo/wrist_recheck.csv" >"$tmp/re_euler.csv"
expect_rc "check: wrong robot Euler" 3 "set '# robot-euler: zyx-intrinsic'" check --calibration "$tmp/trust.cal.json" "$tmp/re_euler.csv"
shift_rows 3 7 "$demo/wrist_recheck.csv" >"$tmp/re_shift.csv"
expect_rc "check: rows shifted" 3 "the data cannot tell a change" check --calibration "$tmp/trust.cal.json" "$tmp/re_shift.csv"
expect_rc "check: old verdict without the checks" 1 "VERDICT: inconsistent" check --no-plausibility --calibration "$tmp/trust.cal.json" "$tmp/re_m.csv"
# the docs' examples (docs/points.md, docs/solve.md)
expect_rc "docs register example" 0 "best of 50 random pairings \(seed 4\)" register --max-residual 2mm+0.5% --pairing-test 50 --seed 4 "$here/data/pairs.csv"
expect_rc "docs solve gate example" 0 "at most 0.5 deg" solve --max-residual 2mm+0.5%,0.5deg "$demo/wrist_camera.csv"
