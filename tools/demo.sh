#!/bin/sh
# demo.sh LAYERWISE TREES OUT - run the main job on the bundled demo models:
# the analysis as text and JSON, the committee report and the tree diagram.
set -eu
lw="$1"; trees="$2"; out="$3"
mkdir -p "$out"
for m in transfusion ed-specimen infusion; do
  "$lw" analyze "$trees/$m.xml" -o "$out/$m.txt"
  "$lw" analyze "$trees/$m.xml" --format json -o "$out/$m.json"
  "$lw" report "$trees/$m.xml" --samples 20000 --seed 1 -o "$out/$m-report.html"
  if command -v dot >/dev/null 2>&1; then
    "$lw" diagram "$trees/$m.xml" -o "$out/$m-tree.svg"
  else
    "$lw" diagram "$trees/$m.xml" -o "$out/$m-tree.dot"
  fi
done
cat "$out/transfusion.txt"
echo
echo "Demo outputs written to $out:"
ls "$out"
echo "Open $out/transfusion-report.html in a browser for the committee report."
