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
