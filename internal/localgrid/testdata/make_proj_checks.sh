#!/bin/sh
# Regenerates proj_checks.txt: local -> projected grid coordinates by PROJ's
# two-dimensional Helmert (Debian package proj-bin; values committed were
# made with PROJ 9.1.1). In 2-D use PROJ's helmert takes +theta in
# arc-seconds (positive clockwise, as EPSG method 9621) and +s as the scale
# factor itself.
#
# Usage: sh make_proj_checks.sh > proj_checks.txt
set -eu
echo "# e0 n0 scale theta_deg local_x local_y easting northing"
echo "# made by internal/localgrid/testdata/make_proj_checks.sh with $(proj 2>&1 | head -1)"
while read -r e0 n0 m th x y; do
	arcsec=$(echo "$th * 3600" | bc -l)
	out=$(echo "$x $y 0 0" | cct -d 6 +proj=helmert +x="$e0" +y="$n0" +s="$m" +theta="$arcsec")
	set -- $out
	echo "$e0 $n0 $m $th $x $y $1 $2 # cct -d 6 +proj=helmert +x=$e0 +y=$n0 +s=$m +theta=$arcsec"
done <<'CASES'
391000 6464000 1 0 1250 -340
391000 6464000 1.0003 12.5 1250 -340
391000 6464000 1.0003 12.5 -2500.75 4010.2
405123.45 6470321.9 0.99975 -37.25 5120 10240
405123.45 6470321.9 0.99975 -37.25 0 0
712000 5540000 1.00012 181.75 300 -1200
CASES
