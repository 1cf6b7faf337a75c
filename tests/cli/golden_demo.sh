#!/usr/bin/env bash
# golden_demo.sh - the demo models through `layerwise analyze`, checked
# against an independent exact evaluator (tests/golden/exact.py).
#
#   bash golden_demo.sh LAYERWISE_BINARY SOURCE_DIR      (exit 0 = pass)
#
# For every case in tests/golden/demo-probabilities.txt (each demo model,
# baseline and variants):
#   * `analyze --format json` is valid JSON with the keys cli.md promises,
#     a caution containing "supports but does not replace", and a
#     `probability` equal to exact.py's within 1e-9 relative, computed now
#     (a differential test, not a frozen number);
#   * when the model file is unchanged since recording (same sha256),
#     exact.py must still give the recorded value.
# For the baseline and the first variant of each model, text output ends
# with the caution and `--format csv` parses as CSV with a header row.
set -u
BIN=${1:?usage: golden_demo.sh LAYERWISE_BINARY SOURCE_DIR}
SRC=${2:?usage: golden_demo.sh LAYERWISE_BINARY SOURCE_DIR}
GOLD=$SRC/tests/golden/demo-probabilities.txt
EXACT=$SRC/tests/golden/exact.py
TMP=$(mktemp -d "${TMPDIR:-/tmp}/lw-golden.XXXXXX")
trap 'rm -rf "$TMP"' EXIT

fails=0
passes=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
pass() { passes=$((passes + 1)); }

PY=""
if command -v python3 >/dev/null 2>&1; then
    # the interpreter itself, not a version-manager shim (much faster)
    PY=$(python3 -c 'import sys; print(sys.executable)' 2>/dev/null)
    [ -x "$PY" ] || PY=python3
else
    echo "NOTICE: python3 not found: JSON/CSV parsing and the exact"
    echo "        comparison are skipped; only exit codes are checked"
fi

if [ -n "$PY" ]; then
    if "$PY" "$EXACT" --selftest; then pass; else fail "exact.py --selftest"; fi
fi

CAUTION_WORDS="supports but does not replace"

# the checks on one JSON document: keys, caution, probability
check_json() {  # file expected_probability('' = skip) recorded('' = skip) label
    "$PY" - "$@" <<'EOF'
import json, math, sys
path, exact, recorded, label = sys.argv[1:5]
try:
    with open(path) as fh:
        d = json.load(fh)
except Exception as e:
    print("FAIL: %s: analyze --format json is not valid JSON: %s" % (label, e))
    sys.exit(1)
bad = 0
keys = ["hazard", "variant", "probability", "approximations", "per_year",
        "one_in", "tolerable", "meets_tolerable", "cut_sets", "importance",
        "warnings", "caution"]
missing = [k for k in keys if k not in d]
if missing:
    print("FAIL: %s: JSON lacks keys %s" % (label, missing))
    bad = 1
if "supports but does not replace" not in str(d.get("caution", "")):
    print("FAIL: %s: JSON caution lacks the required words" % label)
    bad = 1
p = d.get("probability")
if not isinstance(p, (int, float)) or not (0.0 <= p <= 1.0):
    print("FAIL: %s: probability %r is not a probability" % (label, p))
    sys.exit(1)
if not isinstance(d.get("hazard"), dict) or "id" not in d["hazard"]:
    print("FAIL: %s: hazard is not an object with an id" % label)
    bad = 1
if not isinstance(d.get("cut_sets"), list) or not d["cut_sets"]:
    print("FAIL: %s: cut_sets is not a non-empty list" % label)
    bad = 1
if exact:
    e = float(exact)
    if abs(p - e) > 1e-9 * max(abs(p), abs(e)):
        print("FAIL: %s: layerwise probability %.17g, exact.py %.17g "
              "(rel diff %.3g)" % (label, p, e,
                                   abs(p - e) / max(abs(p), abs(e))))
        bad = 1
if recorded and exact:
    r, e = float(recorded), float(exact)
    if abs(r - e) > 1e-12 * max(abs(r), abs(e)):
        print("FAIL: %s: model file unchanged but exact.py now gives %.17g, "
              "recorded %.17g" % (label, e, r))
        bad = 1
sys.exit(bad)
EOF
}

check_csv() {   # file label
    "$PY" - "$@" <<'EOF'
import csv, sys
path, label = sys.argv[1:3]
with open(path, newline="") as fh:
    rows = list(csv.reader(fh, strict=True))
if len(rows) < 2:
    print("FAIL: %s: CSV has %d rows, want a header and data" % (label, len(rows)))
    sys.exit(1)
head = rows[0]
if "probability" not in head or any(not h for h in head):
    print("FAIL: %s: CSV header %r lacks 'probability' or has empty names"
          % (label, head))
    sys.exit(1)
for i, r in enumerate(rows[1:], 2):
    if len(r) != len(head):
        print("FAIL: %s: CSV row %d has %d fields, header %d"
              % (label, i, len(r), len(head)))
        sys.exit(1)
    try:
        float(r[head.index("probability")])
    except ValueError:
        print("FAIL: %s: CSV row %d probability %r is not a number"
              % (label, i, r[head.index("probability")]))
        sys.exit(1)
EOF
}

declare -A baseline_seen=() variant_seen=()
while read -r model variant recorded digest; do
    case "$model" in ''|'#'*) continue ;; esac
    path=$SRC/$model
    label="$model${variant:+ variant $variant}"
    vargs=()
    if [ "$variant" != "-" ]; then vargs=(--variant "$variant"); fi
    if [ ! -f "$path" ]; then
        fail "$label: model file missing"
        continue
    fi
    out=$TMP/out.json
    if ! "$BIN" analyze --format json "${vargs[@]}" "$path" >"$out" 2>"$TMP/err"; then
        fail "$label: analyze --format json exited non-zero: $(cat "$TMP/err")"
        continue
    fi
    if [ -z "$PY" ]; then pass; continue; fi
    exact=$("$PY" "$EXACT" "$path" "${vargs[@]}") || {
        fail "$label: exact.py failed"; continue; }
    now=$(sha256sum "$path" | cut -d' ' -f1)
    rec=""
    if [ "$now" = "$digest" ]; then
        rec=$recorded
    else
        echo "NOTICE: $model changed since tests/golden/demo-probabilities.txt" \
             "was recorded; the recorded value is not compared (re-record" \
             "with exact.py --record)"
    fi
    if check_json "$out" "$exact" "$rec" "$label"; then pass; else fails=$((fails + 1)); fi

    # text and csv: baseline and the first variant of each model
    if [ "$variant" = "-" ]; then
        baseline_seen[$model]=1
    elif [ -z "${variant_seen[$model]:-}" ]; then
        variant_seen[$model]=1
    else
        continue
    fi
    if ! "$BIN" analyze "${vargs[@]}" "$path" >"$TMP/out.txt" 2>"$TMP/err"; then
        fail "$label: analyze (text) exited non-zero: $(cat "$TMP/err")"
    elif ! "$PY" - "$TMP/out.txt" "$out" <<'EOF'
import json, sys
text = open(sys.argv[1]).read()
caution = json.load(open(sys.argv[2]))["caution"]
norm = lambda s: " ".join(s.split())
if "supports but does not replace" not in text:
    sys.exit(1)
if not norm(text).endswith(norm(caution)):
    sys.exit(1)
EOF
    then
        fail "$label: text output does not end with the caution; last lines:"
        tail -3 "$TMP/out.txt"
    else
        pass
    fi
    if ! "$BIN" analyze --format csv "${vargs[@]}" "$path" >"$TMP/out.csv" 2>"$TMP/err"; then
        fail "$label: analyze --format csv exited non-zero: $(cat "$TMP/err")"
    elif check_csv "$TMP/out.csv" "$label"; then
        pass
    else
        fails=$((fails + 1))
    fi
done <"$GOLD"

# the three demo models must be covered; a new one should be added
for rel in trees/transfusion.xml trees/ed-specimen.xml trees/infusion.xml; do
    if [ -z "${baseline_seen[$rel]:-}" ] || [ -z "${variant_seen[$rel]:-}" ]; then
        fail "$rel lacks a baseline or a variant case in demo-probabilities.txt"
    fi
done
for f in "$SRC"/trees/*.xml; do
    rel=trees/$(basename "$f")
    if [ -z "${baseline_seen[$rel]:-}" ]; then
        echo "NOTICE: $rel is not in tests/golden/demo-probabilities.txt;" \
             "add it with exact.py --record"
    fi
done

echo "golden_demo: $passes passed, $fails failed"
[ "$fails" -eq 0 ]
