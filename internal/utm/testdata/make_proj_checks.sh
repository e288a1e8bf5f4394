#!/bin/sh
# Regenerates proj_checks.txt: transverse Mercator check values for each
# supported EPSG family, computed by PROJ (Debian package proj-bin; the
# values committed were made with PROJ 9.1.1).
#
# For each EPSG code the projection definition comes from PROJ's own
# database (projinfo -o PROJ), so the zone, hemisphere, ellipsoid, scale and
# false origin are EPSG's, not ours. Easting and northing come from
# `proj -f %.6f`, the convergence (degrees, positive when grid north is
# east of true north) and the point scale factor k from `proj -V`.
#
# Usage: sh make_proj_checks.sh > proj_checks.txt
set -eu
echo "# epsg lat lon easting northing convergence scale"
echo "# made by internal/utm/testdata/make_proj_checks.sh with $(proj 2>&1 | head -1)"
while read -r code lat lon; do
	def=$(projinfo "EPSG:$code" -o PROJ -q | sed 's/ *+type=crs//')
	en=$(echo "$lon $lat" | proj -f %.6f $def)
	v=$(echo "$lon $lat" | proj -V $def)
	conv=$(echo "$v" | sed -n 's/^Convergence.*\[ *\([-0-9.]*\) *\].*/\1/p')
	k=$(echo "$v" | sed -n 's/^Parallel scale (k) : *\([0-9.]*\).*/\1/p')
	echo "$code $lat $lon $en $conv $k # $def"
done <<'POINTS'
32631 50.0 6.0
32756 -33.9 151.2
32606 64.84 -147.72
26911 36.1 -115.2
26917 45.4 -79.9
3373 52.8 179.2
25832 48.1 11.6
25829 53.35 -6.26
25838 40.2 44.5
28350 -31.95 115.86
28355 -37.81 144.96
28353 -23.7 133.9
7850 -31.95 115.86
7856 -27.47 153.03
7859 -43.6 172.6
31983 -23.55 -46.63
31977 -4.6 -81.3
31976 2.8 -52.4
6210 1.9 -44.9
5396 -20.5 -29.3
POINTS
