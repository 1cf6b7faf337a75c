#!/usr/bin/env bash
# output_files.sh - `analyze -o FILE`: atomic output, clear failures, the
# input model untouched (cli.md: "Output files are written atomically
# (temporary file + rename); input files are never modified").
#
#   bash output_files.sh LAYERWISE_BINARY SOURCE_DIR      (exit 0 = pass)
set -u
BIN=${1:?usage: output_files.sh LAYERWISE_BINARY SOURCE_DIR}
SRC=${2:?usage: output_files.sh LAYERWISE_BINARY SOURCE_DIR}
TMP=$(mktemp -d "${TMPDIR:-/tmp}/lw-out.XXXXXX")
trap 'chmod -R u+w "$TMP" 2>/dev/null; rm -rf "$TMP"' EXIT

fails=0
passes=0
skips=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
pass() { passes=$((passes + 1)); }
known() { echo "KNOWN ISSUE (not counted as a failure): $*"; skips=$((skips + 1)); }

sum() { sha256sum "$1" | cut -d' ' -f1; }
# files in a folder other than the ones named (left-over temporaries)
others() {  # dir name...
    local dir=$1
    shift
    local f base keep
    for f in "$dir"/* "$dir"/.[!.]*; do
        [ -e "$f" ] || continue
        base=$(basename "$f")
        keep=""
        for n in "$@"; do [ "$base" = "$n" ] && keep=1; done
        [ -n "$keep" ] || echo "$base"
    done
}

MODEL=$TMP/model.xml
cp "$SRC/trees/infusion.xml" "$MODEL"
chmod 644 "$MODEL"
BEFORE=$(sum "$MODEL")
OUT=$TMP/out

# 1. text report into a new file: complete, nothing on stdout, no temporaries
mkdir -p "$OUT"
"$BIN" analyze -o "$OUT/report.txt" "$MODEL" >"$TMP/stdout" 2>"$TMP/stderr"
rc=$?
if [ $rc -ne 0 ]; then
    fail "analyze -o: exit $rc: $(cat "$TMP/stderr")"
elif [ ! -s "$OUT/report.txt" ]; then
    fail "analyze -o: no report written"
elif [ -s "$TMP/stdout" ]; then
    fail "analyze -o: the report also went to stdout"
elif ! tail -5 "$OUT/report.txt" | grep -q "supports but does not replace"; then
    fail "analyze -o: report incomplete (no caution at its end)"
elif [ -n "$(others "$OUT" report.txt)" ]; then
    fail "analyze -o: left files behind: $(others "$OUT" report.txt)"
else
    pass
fi
# the same bytes as on stdout
"$BIN" analyze "$MODEL" >"$TMP/stdout.txt" 2>/dev/null
if cmp -s "$TMP/stdout.txt" "$OUT/report.txt"; then pass
else fail "analyze -o FILE differs from analyze > FILE"; fi

# 2. JSON into a file that exists: replaced by rename (a new inode), whole
printf 'OLD CONTENT\n' >"$OUT/report.json"
ino_before=$(stat -c %i "$OUT/report.json")
"$BIN" analyze --format json -o "$OUT/report.json" "$MODEL" >/dev/null 2>"$TMP/stderr"
rc=$?
ino_after=$(stat -c %i "$OUT/report.json")
if [ $rc -ne 0 ]; then
    fail "analyze --format json -o: exit $rc: $(cat "$TMP/stderr")"
elif grep -q "OLD CONTENT" "$OUT/report.json"; then
    fail "analyze -o: old content survived"
elif [ "$ino_before" = "$ino_after" ]; then
    fail "analyze -o: the file was rewritten in place, not replaced by rename"
elif command -v python3 >/dev/null 2>&1 &&
     ! python3 -m json.tool "$OUT/report.json" >/dev/null 2>&1; then
    fail "analyze -o: the JSON file is not valid JSON"
elif [ -n "$(others "$OUT" report.txt report.json)" ]; then
    fail "analyze -o: left files behind: $(others "$OUT" report.txt report.json)"
else
    pass
fi

# 3. a failed run leaves an existing output untouched and no temporaries
printf 'KEEP ME\n' >"$OUT/keep.txt"
"$BIN" analyze --hazard no-such-hazard -o "$OUT/keep.txt" "$MODEL" >/dev/null 2>&1
rc=$?
if [ $rc -eq 0 ]; then
    fail "analyze --hazard no-such-hazard succeeded"
elif [ "$(cat "$OUT/keep.txt")" != "KEEP ME" ]; then
    fail "a failed analyze changed the existing output file"
elif [ -n "$(others "$OUT" report.txt report.json keep.txt)" ]; then
    fail "a failed analyze left files behind: $(others "$OUT" report.txt report.json keep.txt)"
else
    pass
fi
printf '<safety-model format="1" id="x">\n<bogus/>\n</safety-model>\n' >"$TMP/bad.xml"
"$BIN" analyze -o "$OUT/keep.txt" "$TMP/bad.xml" >/dev/null 2>&1
rc=$?
if [ $rc -ne 1 ]; then
    fail "analyze of an invalid model -o: exit $rc, want 1"
elif [ "$(cat "$OUT/keep.txt")" != "KEEP ME" ]; then
    fail "analyze of an invalid model changed the existing output file"
else
    pass
fi

# 4. a folder that does not exist: exit 1, a message naming the path
"$BIN" analyze -o "$TMP/no-such-folder/report.txt" "$MODEL" >"$TMP/stdout" 2>"$TMP/stderr"
rc=$?
if [ $rc -ne 1 ]; then
    fail "missing folder: exit $rc, want 1"
elif ! grep -q "^layerwise: $TMP/no-such-folder/report.txt" "$TMP/stderr"; then
    fail "missing folder: message does not name the file: $(cat "$TMP/stderr")"
elif ! grep -qi "exist\|no such" "$TMP/stderr"; then
    fail "missing folder: message does not say why: $(cat "$TMP/stderr")"
elif [ -e "$TMP/no-such-folder" ]; then
    fail "missing folder: the folder was created"
else
    pass
fi

# 5. a read-only folder: exit 1, a clear message, nothing written.  root
# ignores permissions, so as root the command runs as 'nobody' (setpriv);
# when that is impossible the case is skipped with a notice.
RO=$TMP/readonly
mkdir "$RO"
chmod 555 "$RO"
chmod 755 "$TMP"
runner=()
if [ "$(id -u)" -eq 0 ]; then
    if command -v setpriv >/dev/null 2>&1 &&
       setpriv --reuid=65534 --regid=65534 --clear-groups "$BIN" --version >/dev/null 2>&1; then
        runner=(setpriv --reuid=65534 --regid=65534 --clear-groups)
    else
        runner=(skip)
    fi
fi
if [ "${runner[0]:-}" = skip ]; then
    echo "NOTICE: running as root without a usable setpriv: read-only folder case skipped"
    skips=$((skips + 1))
else
    "${runner[@]}" "$BIN" analyze -o "$RO/report.txt" "$MODEL" >"$TMP/stdout" 2>"$TMP/stderr"
    rc=$?
    if [ $rc -ne 1 ]; then
        fail "read-only folder: exit $rc, want 1; stderr: $(cat "$TMP/stderr")"
    elif ! grep -q "^layerwise: $RO/report.txt: .*\(ermission\|ead-only\)" "$TMP/stderr"; then
        fail "read-only folder: unclear message: $(cat "$TMP/stderr")"
    elif [ -n "$(others "$RO")" ]; then
        fail "read-only folder: files appeared: $(others "$RO")"
    else
        pass
    fi
fi

# 6. the input model is never modified
if [ "$(sum "$MODEL")" = "$BEFORE" ]; then pass
else fail "the input model changed during the runs above"; fi
# ... not even when -o names the model itself
cp "$MODEL" "$TMP/self.xml"
self_before=$(sum "$TMP/self.xml")
"$BIN" analyze -o "$TMP/self.xml" "$TMP/self.xml" >/dev/null 2>"$TMP/stderr"
rc=$?
if [ "$(sum "$TMP/self.xml")" = "$self_before" ]; then
    if [ $rc -ne 0 ]; then pass
    else fail "analyze -o MODEL MODEL: exit 0 but nothing written"; fi
else
    fail "analyze -o MODEL MODEL overwrote the input model (exit $rc);" \
         "cli.md says input files are never modified"
fi

# 7. standard output that cannot be written (a full disk): every command
#    says so and exits 1
if [ -w /dev/full ]; then
    LOG=$SRC/trees/transfusion-log.csv
    while IFS= read -r args; do
        # shellcheck disable=SC2086
        "$BIN" $args >/dev/full 2>"$TMP/stderr"
        rc=$?
        if [ $rc -ne 1 ]; then
            fail "$args >/dev/full: exit $rc, want 1"
        elif ! grep -Eq "^layerwise: (writing the output failed|could not write)" "$TMP/stderr"; then
            fail "$args >/dev/full: no message: $(head -c 300 "$TMP/stderr")"
        else
            pass
        fi
    done <<EOF_CMDS
check $MODEL
check --format json $MODEL
analyze $MODEL
analyze --format json $MODEL
analyze --format csv $MODEL
target $MODEL
uncertainty --samples 200 $MODEL
compare --variant two-sample-rule $SRC/trees/transfusion.xml
sweep --event programming-error --from 0.01 --to 0.1 $MODEL
report --samples 0 -o - $MODEL
diagram $MODEL
incident --failed programming-error $MODEL
learn --log $LOG $SRC/trees/transfusion.xml
EOF_CMDS
else
    known "/dev/full is not writable here: standard-output failures not tested"
fi

echo "output_files: $passes passed, $fails failed, $skips skipped"
[ "$fails" -eq 0 ]
