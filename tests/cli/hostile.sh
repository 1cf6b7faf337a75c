#!/usr/bin/env bash
# hostile.sh - the hostile-input corpus: every case of tests/hostile/cases.txt
# ends with its documented exit status and message (docs/robustness.md).
#
#   bash hostile.sh LAYERWISE_BINARY SOURCE_DIR      (exit 0 = pass)
#
# Besides each case's own expectations, every run must:
#   - finish within LW_HOSTILE_TIMEOUT seconds (default 120; a hang fails);
#   - print no sanitizer report (AddressSanitizer, UBSan, LeakSanitizer);
#   - keep standard error in the "layerwise: ..." form, under 64 KiB;
#   - never show a line of /etc/passwd on standard output, standard error
#     or in a file it writes;
#   - leave no temporary file behind.
# The cases too big to commit (gen-*) are written here, at test time.
set -u
set -f   # the command words are split, never globbed
BIN=${1:?usage: hostile.sh LAYERWISE_BINARY SOURCE_DIR}
SRC=${2:?usage: hostile.sh LAYERWISE_BINARY SOURCE_DIR}
DIR=$SRC/tests/hostile
LIMIT=${LW_HOSTILE_TIMEOUT:-120}
TMP=$(mktemp -d "${TMPDIR:-/tmp}/lw-hostile.XXXXXX")
trap 'rm -rf "$TMP"' EXIT
GEN=$TMP/gen
OUT=$TMP/out
mkdir -p "$GEN" "$OUT"
# a sanitizer finding must not look like exit 1 (ASan's default)
export ASAN_OPTIONS="${ASAN_OPTIONS:-}${ASAN_OPTIONS:+:}exitcode=86"
export UBSAN_OPTIONS="${UBSAN_OPTIONS:-}${UBSAN_OPTIONS:+:}exitcode=87"

fails=0
passes=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

# ---- the generated cases ------------------------------------------------
gen_py() { python3 - "$@"; }
if ! command -v python3 >/dev/null 2>&1; then
    echo "hostile: python3 is needed to write the generated cases"
    exit 1
fi
gen_py "$GEN" <<'EOF'
import os, sys
out = sys.argv[1]
def w(name, text):
    with open(os.path.join(out, name), 'w', encoding='utf-8') as f:
        f.write(text)
head = '<?xml version="1.0" encoding="UTF-8"?>\n'
# 200,000 nested gates
n = 200000
w('gen-deep-nesting.xml', head + '<safety-model format="1" id="deep">\n'
  '<hazard id="h">' + '<all>' * n + '<error id="e" p="0.1"/>' +
  '</all>' * n + '</hazard>\n</safety-model>\n')
# 1,000 nested gates: over the default limit, under a raised one
n = 1000
w('gen-nesting-1000.xml', head + '<safety-model format="1" id="n1000">\n'
  '<hazard id="h">' + '<any>' * n + '<error id="e" p="0.1"/>' +
  '</any>' * n + '</hazard>\n</safety-model>\n')
# a 2 MiB label, a 2 MiB description
big = 'x' * (2 << 20)
w('gen-long-label.xml', head + '<safety-model format="1" id="label">\n'
  '<hazard id="h" label="' + big + '"><error id="e" p="0.1"/></hazard>\n'
  '</safety-model>\n')
w('gen-long-description.xml', head + '<safety-model format="1" id="desc">\n'
  '<description>' + big + '</description>\n'
  '<hazard id="h"><error id="e" p="0.1"/></hazard>\n</safety-model>\n')
# quadratic blowup: one 64 KiB entity used 10,000 times (640 MB expanded)
ent = 'a' * 65536
w('gen-quadratic-blowup.xml', head + '<!DOCTYPE safety-model [\n'
  '<!ENTITY a "' + ent + '">\n]>\n<safety-model format="1" id="q">\n'
  '<hazard id="h" label="' + '&a;' * 10000 + '"><error id="e" p="0.1"/>'
  '</hazard>\n</safety-model>\n')
# a BDD that explodes: OR over i of (x_i AND y_i), with every x ordered
# before every y (a vote over the x's comes first), so the diagram holds
# every subset of the x's: 2^40 nodes
k = 40
lines = [head.rstrip(), '<safety-model format="1" id="explode">',
         '<hazard id="h"><all><vote k="1">']
lines += ['<error id="x%d" p="0.01"/>' % i for i in range(k)]
lines += ['</vote><any>']
lines += ['<all><ref to="x%d"/><safeguard id="y%d" p="0.1"/></all>' % (i, i)
          for i in range(k)]
lines += ['</any></all></hazard>', '</safety-model>']
w('gen-bdd-explosion.xml', '\n'.join(lines) + '\n')
# a wide vote: 500 of 1000 safeguards
k = 1000
lines = [head.rstrip(), '<safety-model format="1" id="wide">',
         '<hazard id="h"><vote k="%d">' % (k // 2)]
lines += ['<safeguard id="s%d" p="0.01"/>' % i for i in range(k)]
lines += ['</vote></hazard>', '</safety-model>']
w('gen-wide-vote.xml', '\n'.join(lines) + '\n')
# 100 of 200: every cut set equally likely (9.05e58 of them), the case
# where a best-first search must not widen over equal candidates
k = 200
lines = [head.rstrip(), '<safety-model format="1" id="wide200">',
         '<hazard id="h"><vote k="%d">' % (k // 2)]
lines += ['<safeguard id="s%d" p="0.01"/>' % i for i in range(k)]
lines += ['</vote></hazard>', '</safety-model>']
w('gen-vote-100-of-200.xml', '\n'.join(lines) + '\n')
# logs: a 64 KiB note (fine) and a 64 KiB id (echoed, shortened)
H = 'date,error,missed,caught_by,note\n'
w('gen-long-log-note.csv', H + '2026-03-02,wrong-tube,lab-history,nurse-1,"'
  + 'n' * (64 << 10) + '"\n')
w('gen-long-log-id.csv', H + '2026-03-02,wrong-tube,lab-history,'
  + 'i' * (64 << 10) + ',x\n')
EOF

# ---- the lines of /etc/passwd that must never show --------------------
SECRETS=$TMP/secrets
: >"$SECRETS"
if [ -r /etc/passwd ]; then
    awk 'length($0) >= 12' /etc/passwd >"$SECRETS"
fi
leaks() {   # file...: does any of them hold a line of /etc/passwd?
    [ -s "$SECRETS" ] || return 1
    grep -a -F -q -f "$SECRETS" "$@" 2>/dev/null
}

# ---- run the cases ------------------------------------------------------
n=0
while IFS= read -r line || [ -n "$line" ]; do
    case "$line" in ''|'#'*) continue ;; esac
    IFS=$'\t' read -r file cmd want errfrag outfrag <<<"$line"
    n=$((n + 1))
    if [ -z "${file:-}" ] || [ -z "${cmd:-}" ] || [ -z "${want:-}" ] ||
       [ -z "${errfrag:-}" ]; then
        fail "cases.txt case $n: malformed line: $line"
        continue
    fi
    case "$file" in
        gen-*) path=$GEN/$file ;;
        *) path=$DIR/$file ;;
    esac
    if [ ! -e "$path" ]; then
        fail "$file: no such case file"
        continue
    fi
    args=()
    for word in $cmd; do
        word=${word//\{file\}/$path}
        word=${word//\{dir\}/$DIR}
        word=${word//\{tmp\}/$OUT}
        args+=("$word")
    done
    label="$file: layerwise $cmd"
    before=$(ls -A "$OUT" "$DIR" | sort | md5sum)
    timeout "$LIMIT" "$BIN" "${args[@]}" <"$path" >"$TMP/stdout" \
        2>"$TMP/stderr"
    rc=$?
    ok=1
    if [ $rc -eq 124 ]; then
        fail "$label: did not finish within $LIMIT s"
        continue
    fi
    if grep -a -q -E "Sanitizer|runtime error:|LeakSanitizer" "$TMP/stderr"; then
        fail "$label: sanitizer report:"
        head -20 "$TMP/stderr"
        continue
    fi
    if [ "$rc" != "$want" ]; then
        fail "$label: exit $rc, want $want; stderr: $(head -c 600 "$TMP/stderr")"
        ok=0
    fi
    if [ "$errfrag" = "-" ]; then
        if [ -s "$TMP/stderr" ]; then
            fail "$label: unexpected stderr: $(head -c 600 "$TMP/stderr")"
            ok=0
        fi
    elif ! grep -a -q -F -- "$errfrag" "$TMP/stderr"; then
        fail "$label: stderr lacks \"$errfrag\": $(head -c 600 "$TMP/stderr")"
        ok=0
    fi
    if [ -n "${outfrag:-}" ] && [ "${outfrag#!}" != "$outfrag" ]; then
        if grep -a -q -F -- "${outfrag#!}" "$TMP/stdout"; then
            fail "$label: stdout holds \"${outfrag#!}\""
            ok=0
        fi
    elif [ -n "${outfrag:-}" ] && ! grep -a -q -F -- "$outfrag" "$TMP/stdout"; then
        fail "$label: stdout lacks \"$outfrag\": $(head -c 300 "$TMP/stdout")"
        ok=0
    fi
    size=$(wc -c <"$TMP/stderr")
    if [ "$size" -gt 65536 ]; then
        fail "$label: $size bytes on stderr"
        ok=0
    fi
    if grep -a -v -q -E '^(layerwise: |\(try --help\)$)' "$TMP/stderr"; then
        fail "$label: a stderr line not in the \"layerwise: \" form: $(grep -a -v -E '^(layerwise: |\(try --help\)$)' "$TMP/stderr" | head -3)"
        ok=0
    fi
    if leaks "$TMP/stdout" "$TMP/stderr" "$OUT"/*; then
        fail "$label: a line of /etc/passwd appeared in the output"
        ok=0
    fi
    # outputs that the case wrote are checked above; a failed run writes
    # nothing, and no run leaves a temporary file
    if [ $rc -ne 0 ] && [ "$before" != "$(ls -A "$OUT" "$DIR" | sort | md5sum)" ]; then
        fail "$label: a failed run left files: $(ls -A "$OUT")"
        ok=0
    fi
    if ls -A "$OUT" | grep -q '^\.'; then
        fail "$label: a temporary file was left: $(ls -A "$OUT" | grep '^\.')"
        ok=0
    fi
    rm -f "$OUT"/*
    [ $ok -eq 1 ] && passes=$((passes + 1))
done <"$DIR/cases.txt"

if [ $n -lt 50 ]; then
    fail "only $n cases read from $DIR/cases.txt"
fi
echo "hostile: $n cases, $passes passed, $fails failed"
[ "$fails" -eq 0 ]
