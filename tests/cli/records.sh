# tests/cli/records.sh - reading record files as a new user writes them:
# rounded quaternions (--rounded-quat), byte-order marks, misspelt
# directives, several missing declarations reported at once.  Sourced by
# run.sh (uses its helpers: expect_error, mk, ok, bad).

# A quaternion printed to 2-4 decimals: refused by default with a message
# that names --rounded-quat, accepted and normalised with it.
f=$(printf '# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n1,0,0,0,0.99,0.01,-0.12,0.05\n' | mk rounded.csv)
expect_error "rounded quaternion names --rounded-quat" 2 \
    "rounded.csv:3:9: error: station '1': robot quaternion norm is 0.998548947, expected 1 within 1e-06 .*pass --rounded-quat" \
    convert --to quat "$f"
if "$TRAM" convert --to quat --rounded-quat "$f" >"$tmp/out" 2>"$tmp/err"; then
    # normalised: 0.99 / 0.998548947 = 0.99143862977704...
    grep -q '^1,0,0,0,0.991438629777' "$tmp/out" && ok || bad "--rounded-quat: not normalised: $(cat "$tmp/out")"
else bad "--rounded-quat refused a rounded quaternion: $(cat "$tmp/err")"; fi
# beyond 0.01 the option does not help and the message does not offer it
f=$(printf '# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n1,0,0,0,0.95,0,0,0\n' | mk farquat.csv)
expect_error "far quaternion refused even with --rounded-quat" 2 \
    "farquat.csv:3:9: error: station '1': robot quaternion norm is 0.95, expected 1 within 0.01" \
    convert --to quat --rounded-quat "$f"
if grep -q -- '--rounded-quat' "$tmp/err"; then bad "far quaternion: message offers --rounded-quat"; else ok; fi

# A UTF-8 byte-order mark (a spreadsheet's export) is skipped: the file reads
# as without it, and columns count from the first character after it.
f=$(printf '\357\273\277# length-unit: mm\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n1,0,0,0,1,0,0,0\n' | mk bom.csv)
if "$TRAM" convert --to quat "$f" >"$tmp/out" 2>"$tmp/err" && grep -q '^1,0,0,0,1,0,0,0$' "$tmp/out"; then ok
else bad "UTF-8 byte-order mark not accepted: $(cat "$tmp/err")"; fi
f=$(printf '\357\273\277# length-unit: furlong\n' | mk bomcol.csv)
expect_error "column after a byte-order mark" 2 "bomcol.csv:1:3: error: length-unit 'furlong'" convert --to quat "$f"

# A comment that looks like a misspelt directive is a warning naming the
# directive meant; an unknown lower-case directive near a known one is an
# error that suggests it.
f=$(printf '# length-unit: mm\n# Robot_Pose: flange-in-base\n# Note: logged on the cell PC\nstation,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n1,0,0,0,1,0,0,0\n' | mk lookalike.csv)
"$TRAM" convert --to quat "$f" >"$tmp/out" 2>"$tmp/err"; rc=$?
if [ $rc -eq 0 ] && grep -q "lookalike.csv:2:3: warning: comment '# Robot_Pose:' looks like the directive 'robot-pose'" "$tmp/err" &&
   ! grep -q "Note" "$tmp/err"; then ok; else bad "directive look-alike: rc $rc: $(cat "$tmp/err")"; fi
f=$(printf '# lenght-unit: mm\n' | mk typo.csv)
expect_error "misspelt directive" 2 "typo.csv:1:3: error: unknown directive 'lenght-unit': did you mean 'length-unit'\\?" convert --to quat "$f"
# the look-alike is named in the error it causes
f=$(printf '# length-unit: mm\n# angle-unit: deg\n# robot_euler: zyx-intrinsic\nrobot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3\n0,0,0,1,2,3\n' | mk lookerr.csv)
expect_error "look-alike named in the error" 2 "lookerr.csv:4: error: the robot block holds Euler angles .*note: line 3 has '# robot_euler:', which is not a directive; did you mean '# robot-euler:'" convert --to quat "$f"

# Several missing declarations are reported in one run.
f=$(printf 'station,robot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3,sensor_x,sensor_y,sensor_z,sensor_rx,sensor_ry,sensor_rz\n1,0,0,0,1,2,3,0,0,0,0,0,0\n' | mk allmissing.csv)
expect_error "every missing declaration at once" 2 \
    "allmissing.csv:1: error: no length unit: .*; also the robot block holds angles .*; also the robot block holds Euler angles but its convention is not declared.*; also the sensor block holds angles" \
    convert --to quat "$f"
# point files (the CSV table under points and pixels) skip a byte-order mark too
f=$(printf '\357\273\277# length-unit: mm\nfrom_x,from_y,from_z,to_x,to_y,to_z\n0,0,0,1,0,0\n1,0,0,2,0,0\n0,1,0,1,1,0\n0,0,1,1,0,1\n' | mk bompairs.csv)
"$TRAM" register "$f" >"$tmp/out" 2>"$tmp/err" && ok || bad "point file with a byte-order mark: $(cat "$tmp/err")"
