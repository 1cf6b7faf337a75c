#!/bin/bash
# uncertainty, compare and sweep from the command line:
# the same seed gives the same output whatever --threads is; JSON keys of
# docs/cli.md are present; usage errors exit 2.
# usage: uncertainty.sh LAYERWISE_BINARY SOURCE_DIR
set -u
LW=$1
SRC=$2
MODEL=$SRC/trees/infusion.xml
TMP=$(mktemp -d)
trap 'rm -rf "$TMP"' EXIT
fail() { echo "FAIL: $*"; exit 1; }

# --- determinism across thread counts (text and JSON) ---
"$LW" uncertainty --samples 20000 --seed 5 --threads 1 "$MODEL" > "$TMP/u1.txt" || fail "uncertainty --threads 1"
"$LW" uncertainty --samples 20000 --seed 5 --threads 2 "$MODEL" > "$TMP/u2.txt" || fail "uncertainty --threads 2"
cmp -s "$TMP/u1.txt" "$TMP/u2.txt" || fail "text differs between --threads 1 and 2"
"$LW" uncertainty --samples 20000 --seed 5 --threads 1 --format json "$MODEL" > "$TMP/u1.json" || fail "json 1"
"$LW" uncertainty --samples 20000 --seed 5 --threads 2 --format json "$MODEL" > "$TMP/u2.json" || fail "json 2"
cmp -s "$TMP/u1.json" "$TMP/u2.json" || fail "JSON differs between --threads 1 and 2"
"$LW" uncertainty --samples 20000 --seed 6 --threads 2 --format json "$MODEL" > "$TMP/u3.json" || fail "json seed 6"
cmp -s "$TMP/u1.json" "$TMP/u3.json" && fail "a different seed gave the same output"

# --- uncertainty JSON keys (docs/cli.md) and text contents ---
for k in samples seed mean p05 p50 p95 point sd per_year histogram observed caution; do
    grep -q "\"$k\":" "$TMP/u1.json" || fail "uncertainty JSON lacks \"$k\""
done
grep -q '"samples": 20000' "$TMP/u1.json" || fail "samples not 20000"
grep -q '"seed": 5' "$TMP/u1.json" || fail "seed not 5"
grep -q 'supports but does not replace' "$TMP/u1.json" || fail "JSON caution"
grep -q 'supports but does not replace' "$TMP/u1.txt" || fail "text caution"
grep -q 'somewhere between' "$TMP/u1.txt" || fail "no per-year range in text"
grep -q 'Clopper-Pearson' "$TMP/u1.txt" || fail "no estimate from counts in text"
grep -q '|#' "$TMP/u1.txt" || fail "no histogram in text"

# --- compare ---
"$LW" compare --variant independent-double-check --variant pump-interop \
    --samples 5000 --threads 1 --format json "$MODEL" > "$TMP/c1.json" || fail "compare json"
"$LW" compare --variant independent-double-check --variant pump-interop \
    --samples 5000 --threads 2 --format json "$MODEL" > "$TMP/c2.json" || fail "compare json 2"
cmp -s "$TMP/c1.json" "$TMP/c2.json" || fail "compare JSON differs between thread counts"
for k in baseline variants id probability per_year ratio prevented_per_year prob_better caution; do
    grep -q "\"$k\":" "$TMP/c1.json" || fail "compare JSON lacks \"$k\""
done
"$LW" compare --variant pump-interop --samples 2000 --format csv "$MODEL" > "$TMP/c.csv" || fail "compare csv"
head -1 "$TMP/c.csv" | grep -q '^hazard,variant,label,probability,per_year' || fail "compare CSV header"
[ "$(wc -l < "$TMP/c.csv")" -eq 3 ] || fail "compare CSV rows"
"$LW" compare --samples 100 "$MODEL" > /dev/null 2>&1
[ $? -eq 2 ] || fail "compare without --variant should exit 2"
"$LW" compare --variant no-such-variant "$MODEL" > /dev/null 2>&1
[ $? -eq 2 ] || fail "compare with an unknown variant should exit 2"

# --- sweep ---
"$LW" sweep --event scan-misses --from 0.001 --to 1 --log --steps 7 "$MODEL" > "$TMP/s.txt" || fail "sweep --log"
grep -q 'linear' "$TMP/s.txt" || fail "sweep text does not say it is linear"
"$LW" sweep --event scan-misses --from 0 --to 1 --steps 5 --format csv "$MODEL" > "$TMP/s.csv" || fail "sweep csv"
head -1 "$TMP/s.csv" | grep -q '^hazard,variant,event,x,probability' || fail "sweep CSV header"
[ "$(wc -l < "$TMP/s.csv")" -eq 6 ] || fail "sweep CSV rows"
"$LW" sweep --event scan-misses --from 0 --to 1 --format json "$MODEL" > "$TMP/s.json" || fail "sweep json"
for k in points x probability linear a b crosses caution; do
    grep -q "\"$k\":" "$TMP/s.json" || fail "sweep JSON lacks \"$k\""
done
"$LW" sweep --from 0 --to 1 "$MODEL" > /dev/null 2>&1
[ $? -eq 2 ] || fail "sweep without --event should exit 2"
"$LW" sweep --event nope --from 0 --to 1 "$MODEL" > /dev/null 2>&1
[ $? -eq 2 ] || fail "sweep of an unknown event should exit 2"

# --- limits ---
"$LW" uncertainty --samples 20000000 "$MODEL" > /dev/null 2> "$TMP/err"
[ $? -eq 1 ] || fail "samples above the limit should exit 1"
grep -q 'limit' "$TMP/err" || fail "no message naming the limit"
"$LW" uncertainty --samples 0 "$MODEL" > /dev/null 2>&1
[ $? -eq 2 ] || fail "--samples 0 should exit 2"
exit 0
