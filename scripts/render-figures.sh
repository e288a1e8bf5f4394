#!/usr/bin/env bash
# Renders the example nets and rose diagram to SVG with corvane and then to PNG
# with rsvg-convert (Debian package librsvg2-bin); the PNGs go to testdata/figures/.
# Input: the demo programme's converted measurements, testdata/tallowmere/*.csv
# with dip/dip_direction columns; when there is none yet, a generated demo set
# from internal/cli's test helper (a fictional prospect, Tallowmere).
set -euo pipefail
cd "$(dirname "$0")/.."

if ! command -v rsvg-convert >/dev/null; then
  apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq librsvg2-bin >/dev/null
fi

out=testdata/figures
mkdir -p "$out"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

in=""
for f in testdata/tallowmere/*.csv; do
  [ -e "$f" ] || continue
  if head -n1 "$f" | tr 'A-Z' 'a-z' | grep -q 'dip_direction'; then in=$f; break; fi
done
if [ -z "$in" ]; then
  in=$work/tallowmere-orientations.csv
  CORVANE_DEMO_ORIENTATIONS=$in go test ./internal/cli -run '^TestWriteDemoOrientations$' -count=1 >/dev/null
fi
echo "input: $in"

go build -o "$work/corvane" ./cmd/corvane
c=$work/corvane

$c net --in "$in" -o "$work/net-density.svg" --show poles,density --title "Tallowmere: poles and density" || [ $? -eq 1 ]
$c net --in "$in" -o "$work/net-equal-angle-sets.svg" --projection equal-angle \
  --show planes,poles,sets --sets auto:3 --type joint --title "Tallowmere: joints, equal-angle, 3 sets" || [ $? -eq 1 ]
$c rose --in "$in" -o "$work/rose-dip-directions.svg" --title "Tallowmere: dip directions" || [ $? -eq 1 ]

for s in "$work"/*.svg; do
  png=$out/$(basename "${s%.svg}").png
  rsvg-convert --background-color=white -w 1290 -o "$png" "$s"
  echo "wrote $png"
done
