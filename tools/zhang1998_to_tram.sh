#!/bin/sh
# tools/zhang1998_to_tram.sh - convert the example data of Zhang's planar
# calibration report (Zhang 1998, MSR-TR-98-71; Zhang 2000, IEEE PAMI
# 22(11)) from its published layout (see the dataset's README) to tram's
# files:
#
#   zhang1998_to_tram.sh DATASET_DIR OUT_DIR
#
# writes OUT_DIR/model.csv   point,x,y,z: the model plane in inches, z = 0
#        OUT_DIR/obs.csv     station,point,u,v (format tram-pixels-1,
#                            640x480), stations view1 .. view5
#
# Layout: model.txt and data1.txt .. data5.txt hold one line per square of
# the model, four corners of (x, y) each; corner k of line j is point
# 4 j + k in every file.  The numbers are copied as they are.  The report
# does not say where the centre of the first pixel lies; the published
# principal point is in the data's own convention, which is declared here
# as tram's top-left-pixel-centre (the only one tram reads).
set -eu
src=$1
out=$2
mkdir -p "$out"
awk 'BEGIN { print "# Converted by tools/zhang1998_to_tram.sh from Zhang (1998), model.txt"
             print "# length-unit: in"; print "point,x,y,z" }
     { gsub("\r", ""); for (k = 0; k < 4; k++) printf "%d,%s,%s,0\n", (NR - 1) * 4 + k, $(2 * k + 1), $(2 * k + 2) }' \
    "$src/model.txt" >"$out/model.csv.tmp"
mv "$out/model.csv.tmp" "$out/model.csv"
{
    echo "# Converted by tools/zhang1998_to_tram.sh from Zhang (1998), data1.txt .. data5.txt"
    echo "# format: tram-pixels-1"
    echo "# pixel-origin: top-left-pixel-centre"
    echo "# image-size: 640x480"
    echo "station,point,u,v"
    for i in 1 2 3 4 5; do
        awk -v s="$i" '{ gsub("\r", ""); for (k = 0; k < 4; k++) printf "view%d,%d,%s,%s\n", s, (NR - 1) * 4 + k, $(2 * k + 1), $(2 * k + 2) }' \
            "$src/data$i.txt"
    done
} >"$out/obs.csv.tmp"
mv "$out/obs.csv.tmp" "$out/obs.csv"
