# tests/cli/plot.sh - tram plot and solve --plot (sourced by run.sh).
demo="$here/../../datasets/demo"
ispng() { [ "$(head -c 8 "$1" | od -An -tx1 | tr -d ' \n')" = "89504e470d0a1a0a" ]; }
"$TRAM" solve --plot "$tmp/pics" "$demo/wrist_camera.csv" >/dev/null 2>"$tmp/err" && ispng "$tmp/pics/frames.png" && ispng "$tmp/pics/residuals.png" && ok || { bad "solve --plot"; cat "$tmp/err"; }
"$TRAM" solve --force -o "$tmp/pcal.json" "$demo/wrist_camera.csv" >/dev/null 2>&1
"$TRAM" plot frames "$demo/wrist_camera.csv" --calibration "$tmp/pcal.json" -o "$tmp/f.png" 2>/dev/null && ispng "$tmp/f.png" && ok || bad "plot frames"
"$TRAM" plot residuals --calibration "$tmp/pcal.json" -o "$tmp/r.png" 2>/dev/null && ispng "$tmp/r.png" && ok || bad "plot residuals"
"$TRAM" plot frames --chain "$demo/arm_dh.json" "$demo/wrist_camera_joints.csv" -o "$tmp/arm.png" 2>/dev/null && ispng "$tmp/arm.png" && ok || bad "plot frames --chain"
"$TRAM" check --calibration "$tmp/pcal.json" --history "$tmp/h.jsonl" "$demo/wrist_recheck.csv" >/dev/null 2>&1
"$TRAM" check --calibration "$tmp/pcal.json" --history "$tmp/h.jsonl" "$demo/wrist_bumped.csv" >/dev/null 2>&1
"$TRAM" plot history "$tmp/h.jsonl" --tolerance 0.5mm,0.1deg -o "$tmp/h.png" 2>/dev/null && ispng "$tmp/h.png" && ok || bad "plot history"
printf '# length-unit: mm\nfrom_x,from_y,from_z,to_x,to_y,to_z\n0,0,0,1,0,0\n100,0,0,101,0,0\n0,100,0,1,100,0\n0,0,100,1,0,100\n' >"$tmp/pp.csv"
"$TRAM" plot points "$tmp/pp.csv" -o "$tmp/p.png" 2>/dev/null && ispng "$tmp/p.png" && ok || bad "plot points"
expect_error "plot existing file" 2 "f.png: error: already exists" plot frames "$demo/wrist_camera.csv" -o "$tmp/f.png"
expect_error "plot bad history" 2 "bad.jsonl:1:1: error: check-history line: expected \"timestamp_utc\"" plot history "$(printf '{"x": 1}\n' | mk bad.jsonl)" -o "$tmp/x.png"
expect_error "plot history not JSON" 2 "notjson.jsonl:2:1: error: expected one JSON object per line" plot history "$(printf '\n\nverdict ok\n' | sed 1d | mk notjson.jsonl)" -o "$tmp/x.png"
