#!/bin/bash
# target.sh LAYERWISE SOURCE_DIR - the target command's contract.
BIN="$1"; SRC="$2"
passes=0; fails=0
pass() { passes=$((passes + 1)); }
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
TMP=$(mktemp -d); trap 'rm -rf "$TMP"' EXIT

# JSON keys of docs/cli.md; required values recomputed with a variant-free
# check: P is linear in each layer, so required solves a + B*x = goal
"$BIN" target "$SRC/trees/infusion.xml" --goal 0.001 --format json > "$TMP/t.json" 2>"$TMP/err"
if [ $? -ne 0 ]; then fail "target --goal exited non-zero: $(cat "$TMP/err")"; else pass; fi
if command -v python3 >/dev/null; then
  if python3 - "$TMP/t.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
assert d["goal"] == 0.001, d["goal"]
assert "caution" in d and "supports but does not replace" in d["caution"]
assert d["targets"], "no targets"
for t in d["targets"]:
    for k in ("id", "current", "required", "reachable"):
        assert k in t, k
    if t["required"] is not None:
        # closed form: hazard_if_perfect + birnbaum * required == goal
        got = t["hazard_if_perfect"] + t["birnbaum"] * t["required"]
        assert abs(got - d["goal"]) <= 1e-9 * d["goal"] or t["required"] == 1, (t, got)
    if not t["reachable"]:
        assert t["required"] is None
        assert t["hazard_if_perfect"] >= d["goal"]
PY
  then pass; else fail "target JSON does not follow the contract"; fi
fi
# the demo's tolerable level is the default goal
"$BIN" target "$SRC/trees/transfusion.xml" > "$TMP/t.txt" 2>&1 && grep -q "supports but does not replace" "$TMP/t.txt" && pass || fail "target text"
# no tolerable level and no --goal: usage error
cat > "$TMP/m.xml" <<'XML'
<safety-model format="1" id="m"><hazard id="h"><all>
<error id="e" p="0.1"/><safeguard id="s" p="0.2"/></all></hazard></safety-model>
XML
"$BIN" target "$TMP/m.xml" >/dev/null 2>"$TMP/err"; rc=$?
[ $rc -eq 2 ] && grep -q -- "--goal" "$TMP/err" && pass || fail "no goal: exit $rc"
"$BIN" target "$TMP/m.xml" --goal 0.01 --format csv > "$TMP/t.csv" && head -1 "$TMP/t.csv" | grep -q "^hazard,variant,goal,id" && pass || fail "target csv"
echo "target: $passes passed, $fails failed"
[ "$fails" -eq 0 ]
