#!/bin/sh
# demo.sh LAYERWISE TREES OUT - run the main job on the bundled demo models.
set -eu
lw="$1"; trees="$2"; out="$3"
mkdir -p "$out"
for m in transfusion ed-specimen infusion; do
  "$lw" analyze "$trees/$m.xml" -o "$out/$m.txt"
  "$lw" analyze "$trees/$m.xml" --format json -o "$out/$m.json"
done
cat "$out/transfusion.txt"
echo
echo "Demo outputs written to $out"
