#!/bin/sh
# tools/jin2023_to_tram.sh - convert the eye-in-hand grid-pattern set of
# Jin, Yu, Chen & Li (2023) from its published layout (see its README) to
# tram's files:
#
#   jin2023_to_tram.sh DATASET_DIR OUT_DIR [EULER]
#
# writes OUT_DIR/records.csv   station, robot pose (x, y, z in mm; roll, pitch,
#                              yaw in rad as robot_e1..e3 under the Euler
#                              convention EULER, default xyz-extrinsic)
#        OUT_DIR/points.csv    station, point, x, y, z (mm, camera frame)
#
# Layout: robot/tcp.txt has one pose per line, "x y z roll pitch yaw";
# pointUndistort/N_undistort.txt has, per corner id, a line "id X Y Z" (3D,
# mm, camera frame) followed by a line "id u v 0" (pixels, not used).
# Station N uses line N of tcp.txt (1-based); the dataset does not say so -
# docs/points.md shows how tram confirms it (the other mapping fits far
# worse).  The Euler convention is not stated either: the default is a
# declaration to be tested, and tram solve's convention check names the one
# that fits.
set -eu
fail() { echo "jin2023_to_tram.sh: error: $*" >&2; exit 2; }
[ $# -ge 2 ] && [ $# -le 3 ] || fail "usage: jin2023_to_tram.sh DATASET_DIR OUT_DIR [EULER]"
src=$1
out=$2
euler=${3:-xyz-extrinsic}
# Fail before writing anything: a missing or partial dataset must not leave
# empty record files behind that look like a conversion.
[ -d "$src" ] || fail "$src: no such folder (expected the dataset's eyeinhand_pattern folder, e.g. ../shared/datasets/jin2023/eyeinhand_pattern)"
[ -f "$src/robot/tcp.txt" ] || fail "$src/robot/tcp.txt: missing (expected one robot pose per line, x y z roll pitch yaw)"
[ -d "$src/pointUndistort" ] || fail "$src/pointUndistort: missing (expected N_undistort.txt files of 3D corners)"
ls "$src/pointUndistort" | grep -q '_undistort\.txt$' || fail "$src/pointUndistort: no N_undistort.txt files"
mkdir -p "$out"
rec="$out/records.csv"
pts="$out/points.csv"
{
    echo "# Converted by tools/jin2023_to_tram.sh from the dataset of Jin, Yu, Chen & Li (2023)"
    echo "# setup: eye-in-hand"
    echo "# length-unit: mm"
    echo "# angle-unit: rad"
    echo "# robot-euler: $euler"
    echo "station,robot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3"
} >"$rec"
{
    echo "# Converted by tools/jin2023_to_tram.sh: 3D corners in the camera frame"
    echo "# length-unit: mm"
    echo "station,point,x,y,z"
} >"$pts"
for f in $(ls "$src/pointUndistort" | grep '_undistort\.txt$' | sort -n); do
    n=${f%%_undistort.txt}
    awk -v n="$n" 'NR == n { printf "%s,%s,%s,%s,%s,%s,%s\n", n, $1, $2, $3, $4, $5, $6 }' \
        "$src/robot/tcp.txt" >>"$rec"
    # odd lines are the 3D corners
    awk -v n="$n" 'NR % 2 == 1 && NF >= 4 { printf "%s,%s,%s,%s,%s\n", n, $1, $2, $3, $4 }' \
        "$src/pointUndistort/$f" >>"$pts"
done
# every station needs its robot pose line
want=$(ls "$src/pointUndistort" | grep -c '_undistort\.txt$')
got=$(grep -c '^[0-9]' "$rec" || true)
if [ "$got" -ne "$want" ]; then
    rm -f "$rec" "$pts"
    fail "$src/robot/tcp.txt: $got robot poses for $want stations (station N needs line N); nothing written"
fi
echo "jin2023_to_tram.sh: $want stations: $rec, $pts" >&2
