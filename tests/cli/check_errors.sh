#!/usr/bin/env bash
# check_errors.sh - `layerwise check` on bad models, and usage errors.
#
#   bash check_errors.sh LAYERWISE_BINARY SOURCE_DIR      (exit 0 = pass)
#
# One bad model per error kind of model-format.md ("Errors the loader must
# report"): `check FILE` must exit 1 and print "layerwise: FILE:LINE:" with
# the line of the bad element (cli.md, exit status and message form).
# Usage errors exit 2; `-` reads standard input; --version and --help
# exit 0.
set -u
BIN=${1:?usage: check_errors.sh LAYERWISE_BINARY SOURCE_DIR}
SRC=${2:?usage: check_errors.sh LAYERWISE_BINARY SOURCE_DIR}
TMP=$(mktemp -d "${TMPDIR:-/tmp}/lw-check.XXXXXX")
trap 'rm -rf "$TMP"' EXIT
cd "$TMP" || exit 1

fails=0
passes=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
pass() { passes=$((passes + 1)); }

HEAD='<?xml version="1.0" encoding="UTF-8"?>
<safety-model format="1" id="m">'
# lines 1-2 are HEAD; each model's own lines start at 3

# bad NAME LINE [NEEDLE]: the model on stdin (after HEAD) must fail
# `check` with exit 1, and stderr must hold "layerwise: NAME.xml:LINE:"
# (and NEEDLE, when given, on that line).
bad() {
    local name=$1 line=$2 needle=${3:-}
    local f=$name.xml
    { printf '%s\n' "$HEAD"; cat; } >"$f"
    "$BIN" check "$f" >out.txt 2>err.txt
    local rc=$?
    if [ "$rc" -ne 1 ]; then
        fail "$name: check exited $rc, want 1; stderr: $(cat err.txt)"
        return
    fi
    if ! grep -q "^layerwise: $f:$line: " err.txt; then
        fail "$name: no 'layerwise: $f:$line:' on stderr; got: $(cat err.txt)"
        return
    fi
    if [ -n "$needle" ] && ! grep "^layerwise: $f:$line: " err.txt | grep -qi -- "$needle"; then
        fail "$name: line $line message lacks '$needle'; got: $(cat err.txt)"
        return
    fi
    if [ -s out.txt ]; then
        fail "$name: an invalid model printed to stdout: $(head -3 out.txt)"
        return
    fi
    pass
}

# --- malformed XML ---------------------------------------------------------
bad malformed 4 <<'EOF'
<error id="a" p="0.1"/>
<hazard id="h"><ref to="a"/></hazrd>
</safety-model>
EOF
bad unquoted 3 <<'EOF'
<error id=a p="0.1"/>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
# --- unknown element / attribute, missing attribute -------------------------
bad unknown-element 4 bogus <<'EOF'
<error id="a" p="0.1"/>
<bogus/>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
bad unknown-attribute 3 colour <<'EOF'
<error id="a" p="0.1"
       colour="red"/>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
bad missing-attribute 4 "'k'" <<'EOF'
<error id="a" p="0.1"/><error id="b" p="0.1"/>
<hazard id="h"><vote>
<ref to="a"/><ref to="b"/></vote></hazard>
</safety-model>
EOF
# --- numbers ----------------------------------------------------------------
n=0
for v in nan inf 1e999 0.1x "" 0x10; do
    n=$((n + 1))
    bad "not-a-number-$n" 4 <<EOF
<error id="a" p="0.1"/>
<safeguard id="s" p="$v"/>
<hazard id="h"><all><ref to="a"/><ref to="s"/></all></hazard>
</safety-model>
EOF
done
bad p-too-large 3 <<'EOF'
<error id="a" p="1.5"/>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
bad beta-too-large 6 beta <<'EOF'
<error id="a" p="0.1"/>
<safeguard id="s" p="0.1"/>
<safeguard id="t" p="0.1"/>
<common-cause id="g" beta="2" members="s t"/>
<hazard id="h"><all><ref to="a"/><ref to="s"/><ref to="t"/></all></hazard>
</safety-model>
EOF
bad tolerable-zero 4 tolerable <<'EOF'
<error id="a" p="0.1"/>
<hazard id="h" tolerable="0"><ref to="a"/></hazard>
</safety-model>
EOF
bad per-year-zero 3 per-year <<'EOF'
<exposure unit="episode" per-year="0"/>
<error id="a" p="0.1"/>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
bad error-factor 4 error-factor <<'EOF'
<error id="a" p="0.1">
  <lognormal error-factor="0.5"/>
</error>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
bad uniform-reversed 4 uniform <<'EOF'
<error id="a" p="0.1">
  <uniform low="0.2" high="0.1"/>
</error>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
# --- ids and references -------------------------------------------------------
bad duplicate-id 5 "already used" <<'EOF'
<error id="a" p="0.1"/>
<hazard id="h"><ref to="a"/></hazard>
<safeguard id="a" p="0.2"/>
</safety-model>
EOF
bad unknown-ref 6 nowhere <<'EOF'
<error id="a" p="0.1"/>
<hazard id="h"><all>
  <ref to="a"/>
  <ref to="nowhere"/>
</all></hazard>
</safety-model>
EOF
bad ref-to-hazard 5 hazard <<'EOF'
<error id="a" p="0.1"/>
<hazard id="h"><ref to="a"/></hazard>
<hazard id="h2"><ref to="h"/></hazard>
</safety-model>
EOF
# a cycle: block A uses B, B uses A; either block's line names it
{ printf '%s\n' "$HEAD"; cat <<'EOF'; } >cycle.xml
<error id="a" p="0.1"/>
<block id="A"><ref to="B"/></block>
<block id="B"><ref to="A"/></block>
<hazard id="h"><all><ref to="a"/><ref to="A"/></all></hazard>
</safety-model>
EOF
"$BIN" check cycle.xml >/dev/null 2>err.txt
rc=$?
if [ $rc -eq 1 ] && grep -Eq '^layerwise: cycle.xml:(4|5): .*cycle' err.txt; then
    pass
else
    fail "cycle: exit $rc, stderr: $(cat err.txt)"
fi
# --- gates ------------------------------------------------------------------
bad vote-k-zero 4 "k=" <<'EOF'
<error id="a" p="0.1"/><error id="b" p="0.1"/>
<hazard id="h"><vote k="0"><ref to="a"/><ref to="b"/></vote></hazard>
</safety-model>
EOF
bad vote-k-above-n 5 "k=" <<'EOF'
<error id="a" p="0.1"/><error id="b" p="0.1"/>
<hazard id="h">
  <vote k="3"><ref to="a"/><ref to="b"/></vote>
</hazard>
</safety-model>
EOF
bad hazard-no-child 4 <<'EOF'
<error id="a" p="0.1"/>
<hazard id="h">
</hazard>
</safety-model>
EOF
bad block-two-children 6 <<'EOF'
<error id="a" p="0.1"/>
<block id="b">
  <ref to="a"/>
  <ref to="a"/>
</block>
<hazard id="h"><ref to="b"/></hazard>
</safety-model>
EOF
bad empty-gate 7 <<'EOF'
<error id="a" p="0.1"/>
<hazard id="h">
  <any>
    <ref to="a"/>
    <all/>
  </any>
</hazard>
</safety-model>
EOF
# --- observed counts ----------------------------------------------------------
bad count-above-of 5 count <<'EOF'
<error id="a" p="0.1"/>
<safeguard id="s">
  <observed count="12" of="10"/>
</safeguard>
<hazard id="h"><all><ref to="a"/><ref to="s"/></all></hazard>
</safety-model>
EOF
# --- common cause and dependence ---------------------------------------------
bad member-not-event 6 member <<'EOF'
<error id="a" p="0.1"/>
<safeguard id="s" p="0.1"/>
<hazard id="h"><all id="g1"><ref to="a"/><ref to="s"/></all></hazard>
<common-cause id="cc" beta="0.1" members="s g1"/>
</safety-model>
EOF
bad member-in-two-groups 9 <<'EOF'
<error id="a" p="0.1"/>
<safeguard id="s" p="0.1"/>
<safeguard id="t" p="0.1"/>
<safeguard id="u" p="0.1"/>
<hazard id="h"><all><ref to="a"/><ref to="s"/><ref to="t"/><ref to="u"/></all></hazard>
<common-cause id="g1" beta="0.1" members="s t"/>
<common-cause id="g2" beta="0.1" members="t u"/>
</safety-model>
EOF
{ printf '%s\n' "$HEAD"; cat <<'EOF'; } >dep-loop.xml
<error id="a" p="0.1"/>
<safeguard id="s" p="0.1"/>
<safeguard id="t" p="0.1"/>
<hazard id="h"><all><ref to="a"/><ref to="s"/><ref to="t"/></all></hazard>
<dependence id="d1" first="s" second="t" level="high"/>
<dependence id="d2" first="t" second="s" level="low"/>
</safety-model>
EOF
"$BIN" check dep-loop.xml >/dev/null 2>err.txt
rc=$?
if [ $rc -eq 1 ] && grep -Eq '^layerwise: dep-loop.xml:(7|8): .*loop' err.txt; then
    pass
else
    fail "dependence loop: exit $rc, stderr: $(cat err.txt)"
fi
# --- variants -------------------------------------------------------------------
bad set-missing-attribute 7 condition <<'EOF'
<error id="a" p="0.1"/>
<condition id="c" state="true"/>
<hazard id="h"><all><ref to="a"/><ref to="c"/></all></hazard>
<variant id="v">
  <set ref="c" p="0.5"/>
</variant>
</safety-model>
EOF
# --- whole-model rules ------------------------------------------------------------
bad no-hazard 2 hazard <<'EOF'
<error id="a" p="0.1"/>
</safety-model>
EOF
bad title-twice 4 title <<'EOF'
<title>One</title>
<title>Two</title>
<error id="a" p="0.1"/>
<hazard id="h"><ref to="a"/></hazard>
</safety-model>
EOF
# a DOCTYPE declaring an external entity: rejected, nothing read
printf '%s\n' '<?xml version="1.0"?>' '<!DOCTYPE safety-model [' \
    '<!ENTITY x SYSTEM "/etc/passwd">' ']>' \
    '<safety-model format="1" id="m"><title>&x;</title>' \
    '<error id="a" p="0.1"/>' '<hazard id="h"><ref to="a"/></hazard>' \
    '</safety-model>' >entity.xml
"$BIN" check entity.xml >out.txt 2>err.txt
rc=$?
first_passwd_line=$(head -1 /etc/passwd 2>/dev/null)
if [ $rc -ne 1 ] || ! grep -q '^layerwise: entity.xml:3: .*DOCTYPE' err.txt; then
    fail "external entity: exit $rc, stderr: $(cat err.txt)"
elif [ -n "$first_passwd_line" ] && grep -qF -- "$first_passwd_line" out.txt err.txt; then
    fail "external entity: /etc/passwd content appeared in the output"
else
    pass
fi
# a file that does not exist
"$BIN" check "$TMP/no-such-model.xml" >/dev/null 2>err.txt
rc=$?
if [ $rc -eq 1 ] && grep -q "^layerwise: $TMP/no-such-model.xml" err.txt; then
    pass
else
    fail "missing file: exit $rc, stderr: $(cat err.txt)"
fi
# several problems: every one is reported with its line
{ printf '%s\n' "$HEAD"; cat <<'EOF'; } >several.xml
<error id="a" p="2"/>
<error id="b" p="0.1"/>
<error id="b" p="0.1"/>
<hazard id="h"><all><ref to="a"/><ref to="b"/>
<ref to="zz"/></all></hazard>
</safety-model>
EOF
"$BIN" check several.xml >/dev/null 2>err.txt
rc=$?
if [ $rc -eq 1 ] && grep -q '^layerwise: several.xml:3: ' err.txt &&
   grep -q '^layerwise: several.xml:5: ' err.txt &&
   grep -q '^layerwise: several.xml:7: ' err.txt; then
    pass
else
    fail "several problems: exit $rc, stderr: $(cat err.txt)"
fi

# --- a valid model, usage errors, stdin -------------------------------------------
{ printf '%s\n' "$HEAD"; cat <<'EOF'; } >good.xml
<error id="a" p="0.1"/>
<safeguard id="s" p="0.2"/>
<hazard id="h"><all><ref to="a"/><ref to="s"/></all></hazard>
<variant id="v"><set ref="s" p="0.3"/></variant>
</safety-model>
EOF
expect_rc() {   # want label command...
    local want=$1 label=$2
    shift 2
    "$@" >out.txt 2>err.txt </dev/null
    local rc=$?
    if [ "$rc" -ne "$want" ]; then
        fail "$label: exit $rc, want $want; stderr: $(head -3 err.txt)"
        return 1
    fi
    pass
    return 0
}
expect_rc 0 "check good model" "$BIN" check good.xml
expect_rc 2 "unknown option" "$BIN" check --bogus good.xml &&
    { grep -q '^layerwise: ' err.txt || fail "unknown option: no 'layerwise:' message"; }
expect_rc 2 "no model" "$BIN" check
expect_rc 2 "no command" "$BIN"
expect_rc 2 "unknown command" "$BIN" frobnicate good.xml &&
    { grep -q 'frobnicate' err.txt || fail "unknown command: message does not name it"; }
expect_rc 2 "two models" "$BIN" check good.xml good.xml
expect_rc 2 "unknown --hazard" "$BIN" analyze --hazard nope good.xml &&
    { grep -q 'nope' err.txt || fail "unknown --hazard: message does not name it"; }
expect_rc 2 "unknown --variant" "$BIN" analyze --variant nope good.xml &&
    { grep -q 'nope' err.txt || fail "unknown --variant: message does not name it"; }
expect_rc 2 "bad --format" "$BIN" check --format yaml good.xml
expect_rc 0 "--version" "$BIN" --version &&
    { grep -Eq '^layerwise [0-9]' out.txt || fail "--version output: $(cat out.txt)"; }
expect_rc 0 "--help" "$BIN" --help &&
    { grep -q 'check' out.txt || fail "--help does not list check"; }
expect_rc 0 "check --help" "$BIN" check --help &&
    { grep -q 'usage: layerwise check' out.txt || fail "check --help text"; }
expect_rc 0 "analyze --help" "$BIN" analyze --help

# '-' reads standard input
"$BIN" check - <good.xml >out.txt 2>err.txt
rc=$?
if [ $rc -eq 0 ] && grep -q '<stdin>' out.txt; then pass
else fail "check - <good.xml: exit $rc, out: $(head -2 out.txt) err: $(cat err.txt)"; fi
"$BIN" check - <several.xml >/dev/null 2>err.txt
rc=$?
if [ $rc -eq 1 ] && grep -q '^layerwise: <stdin>:3: ' err.txt; then pass
else fail "check - <several.xml: exit $rc, err: $(cat err.txt)"; fi
"$BIN" analyze --format json - <good.xml >out.txt 2>err.txt
rc=$?
if [ $rc -eq 0 ] && grep -q '"probability"' out.txt; then pass
else fail "analyze - <good.xml: exit $rc, err: $(cat err.txt)"; fi

echo "check_errors: $passes passed, $fails failed"
[ "$fails" -eq 0 ]
