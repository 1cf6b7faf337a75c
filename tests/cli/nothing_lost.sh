#!/usr/bin/env bash
# nothing_lost.sh - no command loses a user's work (docs/robustness.md).
#
#   bash nothing_lost.sh LAYERWISE_BINARY SOURCE_DIR      (exit 0 = pass)
#
# For every command that writes a file with -o (cli.md: "Output files are
# written atomically (temporary file + rename); input files are never
# modified"):
#   1. a new file is written whole, and no temporary file is left;
#   2. an existing file is replaced by rename (a new inode), never
#      rewritten in place;
#   3. a write that fails half way (the file-size limit, ulimit -f) exits 1,
#      says so, and leaves the old file as it was;
#   4. an invalid model exits 1 and leaves the old file as it was;
#   5. a folder that does not exist: exit 1, a message naming the path and
#      saying why, and no folder is created;
#   6. a read-only folder: exit 1, "Permission denied", the old file as it
#      was (as root the command runs as 'nobody' through setpriv; without
#      it the case is skipped with a notice);
#   7. -o naming a folder: exit 1, nothing changed;
#   8. -o naming the input: refused (exit 2), the input unchanged;
# and after all of that the model and the log have the checksums they had
# before (inputs are opened for reading only).  Writing to a full standard
# output (/dev/full) exits 1 too: a report that could not be written is
# never reported as done.
set -u
BIN=${1:?usage: nothing_lost.sh LAYERWISE_BINARY SOURCE_DIR}
SRC=${2:?usage: nothing_lost.sh LAYERWISE_BINARY SOURCE_DIR}
TMP=$(mktemp -d "${TMPDIR:-/tmp}/lw-lost.XXXXXX")
trap 'chmod -R u+w "$TMP" 2>/dev/null; rm -rf "$TMP"' EXIT
chmod 755 "$TMP"
export ASAN_OPTIONS="${ASAN_OPTIONS:-}${ASAN_OPTIONS:+:}exitcode=86"

fails=0
passes=0
skips=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
pass() { passes=$((passes + 1)); }
sum() { sha256sum "$1" | cut -d' ' -f1; }
# dot-files in a folder: left-over temporaries (lw_out_open makes .NAME.XXXXXX)
temps() { ls -A "$1" 2>/dev/null | grep '^\.' || true; }

IN=$TMP/in
mkdir "$IN"
cp "$SRC/trees/transfusion.xml" "$IN/model.xml"
cp "$SRC/trees/transfusion-log.csv" "$IN/log.csv"
chmod 644 "$IN/model.xml" "$IN/log.csv"
MODEL_SUM=$(sum "$IN/model.xml")
LOG_SUM=$(sum "$IN/log.csv")
printf '<safety-model format="1" id="bad">\n<bogus/>\n</safety-model>\n' \
    >"$IN/bad.xml"

# The commands that write with -o, each with the extension it writes and
# options that keep it quick (but its output over the 1 KiB of case 3):
# "NAME|EXT|ARGS" (ARGS before the model).
COMMANDS=(
    "analyze|txt|"
    "analyze-json|json|--format json"
    "target|txt|"
    "uncertainty|txt|--samples 200 --seed 3"
    "compare|txt|--variant two-sample-rule --samples 200 --seed 3"
    "sweep|csv|--event nurse-1 --from 0.01 --to 0.5 --steps 200 --format csv"
    "incident|txt|--failed wbit"
    "report|html|--samples 0"
    "diagram|dot|"
    "learn|xml|--log $IN/log.csv"
)

# Is there a way to run as a user that permissions apply to?
RUNNER=()
if [ "$(id -u)" -eq 0 ]; then
    if command -v setpriv >/dev/null 2>&1 &&
       setpriv --reuid=65534 --regid=65534 --clear-groups "$BIN" --version \
           >/dev/null 2>&1; then
        RUNNER=(setpriv --reuid=65534 --regid=65534 --clear-groups)
    else
        RUNNER=(skip)
    fi
fi

for entry in "${COMMANDS[@]}"; do
    IFS='|' read -r name ext args <<<"$entry"
    cmd=${name%%-*}
    read -r -a extra <<<"$args"
    run() { "$BIN" "$cmd" "${extra[@]}" "$@"; }
    D=$TMP/$name
    mkdir "$D"
    chmod 755 "$D"
    out=$D/out.$ext

    # 1. a new file, whole, no temporaries, nothing on stdout
    run -o "$out" "$IN/model.xml" >"$TMP/stdout" 2>"$TMP/stderr"
    rc=$?
    if [ $rc -ne 0 ]; then
        fail "$name -o: exit $rc: $(head -c 400 "$TMP/stderr")"
        continue
    fi
    if [ ! -s "$out" ]; then
        fail "$name -o: nothing written"
    elif [ -n "$(temps "$D")" ]; then
        fail "$name -o: left $(temps "$D")"
    else
        pass
    fi
    case $ext in
        html) grep -q '</html>' "$out" && pass ||
                  fail "$name -o: the report is not whole" ;;
        json) python3 -m json.tool "$out" >/dev/null 2>&1 && pass ||
                  fail "$name -o: the JSON is not whole" ;;
        xml) "$BIN" check "$out" >/dev/null 2>&1 && pass ||
                 fail "$name -o: the written model does not load" ;;
        dot) tail -c 3 "$out" | grep -q '}' && pass ||
                 fail "$name -o: the DOT is not whole" ;;
    esac

    # 2. an existing file is replaced by rename
    printf 'OLD WORK\n' >"$out"
    ino=$(stat -c %i "$out")
    run -o "$out" "$IN/model.xml" >/dev/null 2>"$TMP/stderr"
    rc=$?
    if [ $rc -ne 0 ]; then
        fail "$name -o over a file: exit $rc: $(head -c 400 "$TMP/stderr")"
    elif grep -q 'OLD WORK' "$out"; then
        fail "$name -o over a file: the old content is still there"
    elif [ "$(stat -c %i "$out")" = "$ino" ]; then
        fail "$name -o over a file: rewritten in place, not renamed over"
    else
        pass
    fi

    # 3. the write fails half way: the old file stays
    printf 'OLD WORK\n' >"$out"
    before=$(sum "$out")
    (trap '' XFSZ; ulimit -f 1; run -o "$out" "$IN/model.xml") \
        >/dev/null 2>"$TMP/stderr"
    rc=$?
    if [ $rc -ne 1 ]; then
        fail "$name, write fails: exit $rc, want 1: $(head -c 400 "$TMP/stderr")"
    elif [ "$(sum "$out")" != "$before" ]; then
        fail "$name, write fails: the old file changed"
    elif [ -n "$(temps "$D")" ]; then
        fail "$name, write fails: left $(temps "$D")"
    elif ! grep -qi 'writ' "$TMP/stderr"; then
        fail "$name, write fails: no message: $(head -c 400 "$TMP/stderr")"
    else
        pass
    fi

    # 4. an invalid model: the old file stays
    run -o "$out" "$IN/bad.xml" >/dev/null 2>"$TMP/stderr"
    rc=$?
    if [ $rc -ne 1 ]; then
        fail "$name, invalid model: exit $rc, want 1"
    elif [ "$(sum "$out")" != "$before" ]; then
        fail "$name, invalid model: the old file changed"
    elif [ -n "$(temps "$D")" ]; then
        fail "$name, invalid model: left $(temps "$D")"
    else
        pass
    fi

    # 5. a folder that does not exist
    run -o "$D/missing/out.$ext" "$IN/model.xml" >/dev/null 2>"$TMP/stderr"
    rc=$?
    if [ $rc -ne 1 ]; then
        fail "$name, missing folder: exit $rc, want 1"
    elif ! grep -q "$D/missing/out.$ext" "$TMP/stderr" ||
         ! grep -qi 'not exist\|no such' "$TMP/stderr"; then
        fail "$name, missing folder: unclear message: $(head -c 400 "$TMP/stderr")"
    elif [ -e "$D/missing" ]; then
        fail "$name, missing folder: the folder was created"
    else
        pass
    fi

    # 6. a read-only folder
    if [ "${RUNNER[0]:-}" = skip ]; then
        skips=$((skips + 1))
    else
        R=$D/readonly
        mkdir "$R"
        printf 'OLD WORK\n' >"$R/out.$ext"
        chmod 644 "$R/out.$ext"
        chmod 555 "$R"
        "${RUNNER[@]}" "$BIN" "$cmd" "${extra[@]}" -o "$R/out.$ext" \
            "$IN/model.xml" >/dev/null 2>"$TMP/stderr"
        rc=$?
        if [ $rc -ne 1 ]; then
            fail "$name, read-only folder: exit $rc, want 1: $(head -c 400 "$TMP/stderr")"
        elif ! grep -q "ermission denied\|ead-only" "$TMP/stderr"; then
            fail "$name, read-only folder: unclear message: $(head -c 400 "$TMP/stderr")"
        elif [ "$(cat "$R/out.$ext")" != "OLD WORK" ]; then
            fail "$name, read-only folder: the old file changed"
        elif [ -n "$(temps "$R")" ]; then
            fail "$name, read-only folder: left $(temps "$R")"
        else
            pass
        fi
    fi

    # 7. -o naming a folder
    mkdir "$D/folder.$ext"
    run -o "$D/folder.$ext" "$IN/model.xml" >/dev/null 2>"$TMP/stderr"
    rc=$?
    if [ $rc -ne 1 ]; then
        fail "$name, -o a folder: exit $rc, want 1"
    elif [ -n "$(ls -A "$D/folder.$ext")" ] || [ -n "$(temps "$D")" ]; then
        fail "$name, -o a folder: files appeared"
    else
        pass
    fi

    # 8. -o naming the input model (diagram takes only .svg or .dot names,
    # so its "model" is a copy named .dot)
    self=$D/self.$ext
    [ "$cmd" = diagram ] || self=$D/self.xml
    cp "$IN/model.xml" "$self"
    run -o "$self" "$self" >/dev/null 2>"$TMP/stderr"
    rc=$?
    if [ "$(sum "$self")" != "$MODEL_SUM" ]; then
        fail "$name -o INPUT INPUT: the input was overwritten (exit $rc)"
    elif [ $rc -eq 0 ]; then
        fail "$name -o INPUT INPUT: exit 0 but nothing written"
    else
        pass
    fi
done

# the inputs were only ever read
if [ "$(sum "$IN/model.xml")" = "$MODEL_SUM" ] &&
   [ "$(sum "$IN/log.csv")" = "$LOG_SUM" ]; then
    pass
else
    fail "an input file changed during the runs above"
fi
if [ -n "$(temps "$IN")" ]; then
    fail "temporary files beside the inputs: $(temps "$IN")"
fi

# standard output that cannot be written: exit 1, never "done"
if [ -w /dev/full ]; then
    for c in "check" "analyze" "analyze --format json" "target --format csv" \
             "uncertainty --samples 200" "learn --log $IN/log.csv --format json"; do
        read -r -a words <<<"$c"
        "$BIN" "${words[@]}" "$IN/model.xml" >/dev/full 2>/dev/null
        rc=$?
        if [ $rc -eq 1 ]; then pass
        else fail "$c > /dev/full: exit $rc, want 1"; fi
    done
fi

[ $skips -gt 0 ] && echo "NOTICE: $skips read-only cases skipped (root without setpriv)"
echo "nothing_lost: $passes passed, $fails failed, $skips skipped"
[ "$fails" -eq 0 ]
