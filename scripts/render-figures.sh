#!/usr/bin/env bash
# Renders the example nets and rose diagram to SVG with corvane and then to PNG
# with rsvg-convert (Debian package librsvg2-bin); the PNGs go to testdata/figures/.
# Input: the demo programme testdata/zelvorra/ (a fictional prospect), converted
# with corvane convert; without it, a generated demo set from internal/cli's test
# helper.
set -euo pipefail
cd "$(dirname "$0")/.."

if ! command -v rsvg-convert >/dev/null; then
  apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq librsvg2-bin >/dev/null
fi

out=testdata/figures
mkdir -p "$out"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

go build -o "$work/corvane" ./cmd/corvane
c=$work/corvane

in=$work/zelvorra-orientations.csv
d=testdata/zelvorra
if [ -f $d/collars.csv ] && [ -f $d/surveys.csv ] && [ -f $d/structures.csv ]; then
  # the demo programme, converted from core angles by corvane itself
  $c convert --collars $d/collars.csv --surveys $d/surveys.csv --structures $d/structures.csv -o "$in" || [ $? -eq 1 ]
else
  CORVANE_DEMO_ORIENTATIONS=$in go test ./internal/cli -run '^TestWriteDemoOrientations$' -count=1 >/dev/null
fi
echo "input: $in"

$c net --in "$in" -o "$work/net-density.svg" --show poles,density --title "Zelvorra Reach: poles and density" || [ $? -eq 1 ]
$c net --in "$in" -o "$work/net-equal-angle-sets.svg" --projection equal-angle \
  --show planes,poles,sets --sets auto:4 --title "Zelvorra Reach: planes, equal-angle, 4 sets" || [ $? -eq 1 ]
$c rose --in "$in" -o "$work/rose-dip-directions.svg" --title "Zelvorra Reach: dip directions" || [ $? -eq 1 ]

for s in "$work"/*.svg; do
  png=$out/$(basename "${s%.svg}").png
  rsvg-convert --background-color=white -w 1290 -o "$png" "$s"
  echo "wrote $png"
done
