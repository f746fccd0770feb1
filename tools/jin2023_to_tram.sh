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
src=$1
out=$2
euler=${3:-xyz-extrinsic}
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
for f in $(ls "$src/pointUndistort" | sort -n); do
    n=${f%%_undistort.txt}
    awk -v n="$n" 'NR == n { printf "%s,%s,%s,%s,%s,%s,%s\n", n, $1, $2, $3, $4, $5, $6 }' \
        "$src/robot/tcp.txt" >>"$rec"
    # odd lines are the 3D corners
    awk -v n="$n" 'NR % 2 == 1 && NF >= 4 { printf "%s,%s,%s,%s,%s\n", n, $1, $2, $3, $4 }' \
        "$src/pointUndistort/$f" >>"$pts"
done
