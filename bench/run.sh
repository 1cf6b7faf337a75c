#!/usr/bin/env bash
# Benchmark layerwise against the BuDDy peer on generated layered-safeguard
# networks.
#
#   bench/run.sh BUILD_DIR [SIZES...]
#
# SIZES default to 2000 20000 100000 events.  Environment:
#   REPEATS  runs per tool and size (default 3); the median time is reported
#   SEED     generator seed (default 1)
#   TIMEOUT  seconds allowed per run when `timeout` exists (default 900)
#   KEEP     if set, keep the generated models and outputs (path is printed)
#
# Exit status: 0 ok, 3 probabilities disagree, 4 a run failed, 1/2 setup errors.
#
# Both tools run on the same machine in the same invocation, one after the
# other, so the ratios compare like with like.  Absolute times depend on the
# machine; ratios are the number to track.
set -u -o pipefail

usage() {
    echo "usage: $0 BUILD_DIR [SIZES...]" >&2
    exit 2
}

[ $# -ge 1 ] || usage
BUILD_DIR=$1
shift
[ -d "$BUILD_DIR" ] || { echo "$0: no such build directory: $BUILD_DIR" >&2; exit 2; }
if [ $# -gt 0 ]; then SIZES=("$@"); else SIZES=(2000 20000 100000); fi
REPEATS=${REPEATS:-3}
SEED=${SEED:-1}
TIMEOUT=${TIMEOUT:-900}

find_exe() { # name, candidate dirs...
    local name=$1 d
    shift
    for d in "$@"; do
        if [ -x "$d/$name" ] && [ -f "$d/$name" ]; then
            echo "$d/$name"
            return 0
        fi
    done
    return 1
}

B=$BUILD_DIR
GEN=$(find_exe lw-gen "$B/bench" "$B" "$B/bin") || { echo "$0: lw-gen not built in $B" >&2; exit 1; }
PEER=$(find_exe lw-buddy-peer "$B/bench" "$B" "$B/bin") || PEER=
LW=$(find_exe layerwise "$B" "$B/bin" "$B/src" "$B/src/cli") || LW=

[ -n "$PEER" ] || echo "lw-buddy-peer not built (BuDDy missing?): skipping the peer"
[ -n "$LW" ] || echo "layerwise not built"
[ -n "$PEER" ] || [ -n "$LW" ] || { echo "nothing to benchmark"; exit 0; }

HAVE_TIME=0
[ -x /usr/bin/time ] && /usr/bin/time -f "%e %M" true >/dev/null 2>&1 && HAVE_TIME=1
HAVE_JQ=0
command -v jq >/dev/null 2>&1 && HAVE_JQ=1
TIMEOUT_CMD=()
command -v timeout >/dev/null 2>&1 && TIMEOUT_CMD=(timeout "$TIMEOUT")

WORK=$(mktemp -d "${TMPDIR:-/tmp}/lw-bench.XXXXXX") || exit 1
if [ -n "${KEEP:-}" ]; then
    echo "keeping work files in $WORK"
else
    trap 'rm -rf "$WORK"' EXIT
fi

# ---- helpers ------------------------------------------------------------------
now_ns() { date +%s%N; }

# json_num FILE KEY: top-level numeric KEY (jq), else first occurrence (grep).
json_num() {
    local f=$1 k=$2 v=
    if [ "$HAVE_JQ" = 1 ]; then
        v=$(jq -r --arg k "$k" \
            'if type == "object" and has($k) then .[$k]
             else ([.. | objects | select(has($k)) | .[$k]] | first) end // empty' \
            "$f" 2>/dev/null | head -n 1)
    fi
    if [ -z "$v" ] || [ "$v" = null ]; then
        v=$(grep -o "\"$k\"[[:space:]]*:[[:space:]]*[-+0-9.eE]*" "$f" 2>/dev/null |
            head -n 1 | sed 's/.*:[[:space:]]*//')
    fi
    echo "$v"
}

median() { # numbers as arguments
    printf '%s\n' "$@" | sort -g | awk '{a[NR]=$1} END {
        if (NR == 0) { print "n/a"; exit }
        if (NR % 2) print a[(NR+1)/2]; else printf "%.6g\n", (a[NR/2] + a[NR/2+1]) / 2 }'
}

max_of() { printf '%s\n' "$@" | sort -g | tail -n 1; }

# run_one OUT CMD...: sets RUN_SEC, RUN_KB, RUN_RC
run_one() {
    local out=$1
    shift
    local tf="$WORK/time.$$" t0 t1
    RUN_KB=
    t0=$(now_ns)
    if [ "$HAVE_TIME" = 1 ]; then
        "${TIMEOUT_CMD[@]}" /usr/bin/time -f "%e %M" -o "$tf" "$@" >"$out" 2>"$out.err"
        RUN_RC=$?
        t1=$(now_ns)
        RUN_KB=$(tail -n 1 "$tf" 2>/dev/null | awk 'NF==2 {print $2}')
    else
        "${TIMEOUT_CMD[@]}" "$@" >"$out" 2>"$out.err"
        RUN_RC=$?
        t1=$(now_ns)
        RUN_KB=$(json_num "$out" peak_rss_kb) # only the peer reports it
    fi
    RUN_SEC=$(awk -v a="$t0" -v b="$t1" 'BEGIN {printf "%.3f", (b - a) / 1e9}')
}

# bench_tool TOOL NET CMD...: runs REPEATS times; sets T_SEC T_MIB T_NODES T_PROB T_OK
bench_tool() {
    local tool=$1 net=$2
    shift 2
    local secs=() kbs=() i out
    T_OK=1
    for ((i = 1; i <= REPEATS; i++)); do
        out="$WORK/$tool.$(basename "$net" .xml).$i.json"
        run_one "$out" "$@"
        if [ "$RUN_RC" != 0 ]; then
            echo "  $tool failed on $(basename "$net") (exit $RUN_RC):" >&2
            head -n 5 "$out.err" | sed 's/^/    /' >&2
            T_OK=0
            FAILED=1
            break
        fi
        secs+=("$RUN_SEC")
        [ -n "$RUN_KB" ] && kbs+=("$RUN_KB")
    done
    if [ "$T_OK" = 1 ]; then
        T_SEC=$(median "${secs[@]}")
        if [ ${#kbs[@]} -gt 0 ]; then
            T_MIB=$(awk -v k="$(max_of "${kbs[@]}")" 'BEGIN {printf "%.1f", k / 1024}')
        else
            T_MIB=n/a
        fi
        T_NODES=$(json_num "$out" bdd_nodes)
        T_PROB=$(json_num "$out" probability)
        [ -n "$T_NODES" ] || T_NODES=n/a
        [ -n "$T_PROB" ] || T_PROB=n/a
    else
        T_SEC=failed T_MIB=- T_NODES=- T_PROB=-
    fi
}

AWK_ISNUM='function isnum(x) { return x ~ /^[-+]?([0-9]+[.]?[0-9]*|[.][0-9]+)([eE][-+]?[0-9]+)?$/ } '

ratio() { # a b -> a/b or "-"
    awk -v a="$1" -v b="$2" "$AWK_ISNUM"'BEGIN {
        if (!isnum(a) || !isnum(b) || b + 0 == 0) { print "-"; exit }
        printf "%.2f\n", a / b }'
}

agree() { # p q -> yes/NO/-
    awk -v a="$1" -v b="$2" "$AWK_ISNUM"'BEGIN {
        if (!isnum(a) || !isnum(b)) { print "-"; exit }
        d = a - b; if (d < 0) d = -d
        m = (a < 0 ? -a : a); mb = (b < 0 ? -b : b); if (mb > m) m = mb
        print (d <= 1e-9 * m ? "yes" : "NO") }'
}

# ---- run ------------------------------------------------------------------------
echo "layerwise benchmark: $(date -u '+%Y-%m-%d %H:%M UTC'), $(nproc 2>/dev/null || echo '?') cores," \
    "$(awk -F: '/model name/ {sub(/^ /, "", $2); print $2; exit}' /proc/cpuinfo 2>/dev/null)"
echo "repeats $REPEATS (median time, max peak memory), seed $SEED," \
    "memory from $([ "$HAVE_TIME" = 1 ] && echo '/usr/bin/time' || echo 'self-report (n/a if none)')"
echo

ROWS=()
DISAGREE=0
FAILED=0
for n in "${SIZES[@]}"; do
    net="$WORK/net$n.xml"
    if ! "$GEN" --events "$n" --seed "$SEED" -o "$net"; then
        echo "lw-gen failed for $n events" >&2
        exit 1
    fi
    echo "size $n: model $(du -k "$net" | cut -f1) KiB"
    bs=- bm=- bp=-
    if [ -n "$PEER" ]; then
        bench_tool buddy "$net" "$PEER" "$net"
        bs=$T_SEC bm=$T_MIB bp=$T_PROB
        ROWS+=("$n|BuDDy peer|$T_SEC|$T_MIB|$T_NODES|$T_PROB|-|-|-")
    fi
    if [ -n "$LW" ]; then
        bench_tool layerwise "$net" "$LW" analyze "$net" --format json --top 10
        ag=$(agree "$T_PROB" "$bp")
        [ "$ag" = NO ] && DISAGREE=1
        ROWS+=("$n|layerwise|$T_SEC|$T_MIB|$T_NODES|$T_PROB|$(ratio "$T_SEC" "$bs")|$(ratio "$T_MIB" "$bm")|$ag")
    fi
done

echo
{
    echo "events|tool|median s|peak MiB|BDD nodes|probability|time ratio|mem ratio|agree 1e-9"
    printf '%s\n' "${ROWS[@]}"
} | awk -F'|' '
    { for (i = 1; i <= NF; i++) { c[NR, i] = $i; if (length($i) > w[i]) w[i] = length($i) } n = NR; nf = NF }
    END {
        for (r = 1; r <= n; r++) {
            line = ""
            for (i = 1; i <= nf; i++) line = line sprintf(i < 3 ? "%-*s  " : "%*s  ", w[i], c[r, i])
            sub(/ +$/, "", line); print line
            if (r == 1) { s = ""; for (i = 1; i <= nf; i++) s = s sprintf("%s  ", substr("--------------------------------------", 1, w[i])); sub(/ +$/, "", s); print s }
        }
    }'
echo
echo "ratios are layerwise / BuDDy peer (below 1: layerwise is faster or smaller)"
[ "$DISAGREE" = 0 ] || { echo "WARNING: probabilities disagree beyond 1e-9 relative"; exit 3; }
[ "$FAILED" = 0 ] || { echo "WARNING: some runs failed (see messages above)"; exit 4; }
exit 0
