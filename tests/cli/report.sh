#!/usr/bin/env bash
# report.sh - `layerwise report` and `layerwise diagram` from the command
# line: every model of the format gives a self-contained, well-formed
# report; diagrams as SVG (valid XML) and DOT; clear errors; and the report
# renders in a real browser (headless Chromium) to a picture that is not
# blank.
#
#   bash report.sh LAYERWISE_BINARY SOURCE_DIR      (exit 0 = pass)
set -u
BIN=${1:?usage: report.sh LAYERWISE_BINARY SOURCE_DIR}
SRC=${2:?usage: report.sh LAYERWISE_BINARY SOURCE_DIR}
TMP=$(mktemp -d "${TMPDIR:-/tmp}/lw-report.XXXXXX")
trap 'rm -rf "$TMP"' EXIT

fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

if ! command -v python3 >/dev/null 2>&1; then
    echo "skipped: python3 not installed"
    exit 0
fi

# Files for the Python checks at the end, one per line:
#   html FILE MODEL | svg FILE | variants FILE | png FILE
CHECKS=$TMP/checks.txt
: >"$CHECKS"

MODELS="$SRC/trees/transfusion.xml $SRC/trees/ed-specimen.xml $SRC/trees/infusion.xml $SRC/tests/load/skeleton.xml"
HAVE_DOT=
command -v dot >/dev/null 2>&1 && HAVE_DOT=1

for model in $MODELS; do
    name=$(basename "$model" .xml)
    out=$TMP/$name.html
    if ! "$BIN" report "$model" -o "$out" --samples 300 --seed 3 \
        >"$TMP/out.txt" 2>"$TMP/err.txt"; then
        fail "report $name exits non-zero: $(cat "$TMP/err.txt")"
        continue
    fi
    [ -s "$out" ] || { fail "report $name: no file"; continue; }
    [ -s "$TMP/out.txt" ] && fail "report $name printed to stdout"
    echo "html $out $model" >>"$CHECKS"

    "$BIN" diagram "$model" -o "$TMP/$name.dot" 2>"$TMP/err.txt" ||
        fail "diagram $name .dot: $(cat "$TMP/err.txt")"
    head -c 7 "$TMP/$name.dot" | grep -q '^digraph' ||
        fail "diagram $name .dot does not start with digraph"
    if [ -n "$HAVE_DOT" ]; then
        if "$BIN" diagram "$model" -o "$TMP/$name.svg" 2>"$TMP/err.txt"; then
            echo "svg $TMP/$name.svg" >>"$CHECKS"
        else
            fail "diagram $name .svg: $(cat "$TMP/err.txt")"
        fi
    fi
done
[ -n "$HAVE_DOT" ] || echo "skipped: Graphviz dot not installed (SVG diagrams)"

# a report without the uncertainty, comparing two chosen variants
if "$BIN" report "$SRC/trees/transfusion.xml" -o "$TMP/point.html" \
    --samples 0 --variant two-sample-rule --variant electronic-pid \
    2>"$TMP/err.txt"; then
    echo "variants $TMP/point.html" >>"$CHECKS"
    echo "html $TMP/point.html $SRC/trees/transfusion.xml" >>"$CHECKS"
else
    fail "report --samples 0 --variant: $(cat "$TMP/err.txt")"
fi

# usage errors: exit 2, nothing written
"$BIN" report "$SRC/trees/transfusion.xml" >/dev/null 2>&1
[ $? -eq 2 ] || fail "report without -o should exit 2"
"$BIN" report "$SRC/trees/transfusion.xml" -o "$TMP/u.html" --variant nope \
    >/dev/null 2>&1
[ $? -eq 2 ] || fail "report --variant nope should exit 2"
"$BIN" report "$SRC/trees/transfusion.xml" -o "$TMP/u.html" --hazard nope \
    >/dev/null 2>&1
[ $? -eq 2 ] || fail "report --hazard nope should exit 2"
"$BIN" report "$SRC/trees/transfusion.xml" -o "$TMP/u.html" --format json \
    >/dev/null 2>&1
[ $? -eq 2 ] || fail "report --format should exit 2"
[ -e "$TMP/u.html" ] && fail "a failed report left a file"
"$BIN" diagram "$SRC/trees/transfusion.xml" -o "$TMP/x.png" >/dev/null 2>&1
[ $? -eq 2 ] || fail "diagram -o x.png should exit 2"
"$BIN" diagram "$SRC/trees/transfusion.xml" | head -c 7 | grep -q '^digraph' ||
    fail "diagram without -o should print DOT"

# no Graphviz on PATH: exit 1, a message that points at .dot, no file
PATH=/nonexistent "$BIN" diagram "$SRC/trees/transfusion.xml" \
    -o "$TMP/nodot.svg" >/dev/null 2>"$TMP/err.txt"
rc=$?
[ $rc -eq 1 ] || fail "diagram .svg without dot should exit 1 (got $rc)"
grep -q '\.dot' "$TMP/err.txt" ||
    fail "no hint to ask for .dot: $(cat "$TMP/err.txt")"
ls "$TMP" | grep -q 'nodot' && fail "diagram without dot left a file"

# the browser: the report renders to a picture that is not blank
CHROME=$(command -v chromium || command -v chromium-browser || true)
if [ -z "$CHROME" ]; then
    echo "skipped: chromium not installed"
elif [ -s "$TMP/transfusion.html" ]; then
    PROFILE=$(mktemp -d "$TMP/profile.XXXXXX")
    timeout 60 "$CHROME" --headless --no-sandbox --disable-gpu \
        --disable-background-networking --disable-component-update \
        --disable-sync --no-first-run --user-data-dir="$PROFILE" \
        --hide-scrollbars --screenshot="$TMP/shot.png" \
        --window-size=1200,2000 "file://$TMP/transfusion.html" \
        >/dev/null 2>"$TMP/chrome.txt"
    if [ -s "$TMP/shot.png" ]; then
        echo "png $TMP/shot.png" >>"$CHECKS"
    else
        fail "chromium made no screenshot: $(tail -3 "$TMP/chrome.txt")"
    fi
fi

# every file check in one Python run (its start-up is the slow part)
python3 - "$CHECKS" <<'EOF' || fails=$((fails + 1))
import struct, sys, zlib
import xml.dom.minidom, xml.etree.ElementTree as ET

bad = 0
def fail(msg):
    global bad
    bad += 1
    print('FAIL: ' + msg)

def text(n):
    if n.nodeType == n.TEXT_NODE:
        return n.data
    return ''.join(text(c) for c in n.childNodes)

def check_html(path, model):
    # well-formed XML, inline SVG, the caution (also in the footer), every
    # hazard label, nothing active or remote, a print style sheet
    raw = open(path, encoding='utf-8').read()
    try:
        dom = xml.dom.minidom.parseString(raw.encode('utf-8'))
    except Exception as e:
        return fail('%s is not well-formed: %s' % (path, e))
    if not raw.startswith('<!DOCTYPE html>'):
        fail('%s: no HTML5 doctype' % path)
    if len(dom.getElementsByTagName('svg')) < 3:
        fail('%s: fewer than 3 inline svg' % path)
    for tag in ('script', 'img', 'iframe', 'object', 'embed', 'link', 'image'):
        if dom.getElementsByTagName(tag):
            fail('%s: element <%s>' % (path, tag))
    if '<script' in raw.lower():
        fail('%s: "<script" in the text' % path)
    def walk(n):
        if n.nodeType == n.ELEMENT_NODE:
            for k, v in n.attributes.items():
                if k.lower().startswith('on'):
                    fail('%s: attribute %s' % (path, k))
                if k in ('src', 'href', 'xlink:href', 'action') and not v.startswith('#'):
                    fail('%s: %s="%s"' % (path, k, v))
                if 'http://' in v or 'https://' in v:
                    fail('%s: URL in %s' % (path, k))
        for c in n.childNodes:
            walk(c)
    walk(dom.documentElement)
    body = text(dom.documentElement)
    if 'supports but does not replace' not in body:
        fail('%s: no caution' % path)
    footer = dom.getElementsByTagName('footer')
    if not footer or 'supports but does not replace' not in text(footer[0]):
        fail('%s: no caution in the footer' % path)
    if '@media print' not in raw:
        fail('%s: no print style sheet' % path)
    for h in ET.parse(model).getroot().iter('hazard'):
        label = h.get('label') or h.get('id')
        if label not in body:
            fail('%s: hazard label missing: %s' % (path, label))

def check_svg(path):
    try:
        dom = xml.dom.minidom.parse(path)
    except Exception as e:
        return fail('%s is not XML: %s' % (path, e))
    if dom.documentElement.tagName != 'svg':
        fail('%s: root is not <svg>' % path)

def check_variants(path):
    dom = xml.dom.minidom.parse(path)
    t = [text(x) for x in dom.getElementsByTagName('table')
         if x.getAttribute('class') == 'variants']
    if len(t) != 1:
        return fail('%s: no variants table' % path)
    for v in ('two-sample-rule', 'electronic-pid'):
        if v not in t[0]:
            fail('%s: variant %s missing' % (path, v))
    if 'barcode-bedside' in t[0]:
        fail('%s: a variant not asked for is compared' % path)

def check_png(path, rows_read=700):
    # a tiny PNG reader (stdlib only); the top of the page must hold some
    # ink, but not be a page of ink
    data = open(path, 'rb').read()
    if data[:8] != b'\x89PNG\r\n\x1a\n':
        return fail('%s: not a PNG' % path)
    pos, idat = 8, b''
    while pos < len(data):
        n, t = struct.unpack('>I4s', data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + n]
        pos += 12 + n
        if t == b'IHDR':
            w, h, depth, ctype, _, _, lace = struct.unpack('>IIBBBBB', body)
        elif t == b'IDAT':
            idat += body
        elif t == b'IEND':
            break
    if depth != 8 or lace or ctype not in (0, 2, 4, 6):
        return fail('%s: unexpected PNG format' % path)
    bpp = {0: 1, 2: 3, 4: 2, 6: 4}[ctype]
    raw = zlib.decompress(idat)
    stride = w * bpp
    prev = bytearray(stride)
    dark = total = 0
    i = 0
    for y in range(min(h, rows_read)):
        f = raw[i]
        line = bytearray(raw[i + 1:i + 1 + stride])
        i += 1 + stride
        if f == 2:
            line = bytearray((p + q) & 255 for p, q in zip(line, prev))
        elif f != 0:
            for x in range(stride):
                a = line[x - bpp] if x >= bpp else 0
                b = prev[x]
                c = prev[x - bpp] if x >= bpp else 0
                if f == 1:
                    line[x] = (line[x] + a) & 255
                elif f == 3:
                    line[x] = (line[x] + ((a + b) >> 1)) & 255
                else:
                    p = a + b - c
                    pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                    line[x] = (line[x] + (a if pa <= pb and pa <= pc
                                          else b if pb <= pc else c)) & 255
        if y % 3 == 0:
            for x in range(0, w, 3):
                total += 1
                if line[x * bpp] < 128:
                    dark += 1
        prev = line
    share = dark / max(total, 1)
    if not 0.003 < share < 0.6:
        fail('%s: blank or solid picture (%.4f of the pixels dark)' % (path, share))

for line in open(sys.argv[1]):
    kind, *args = line.split()
    {'html': check_html, 'svg': check_svg, 'variants': check_variants,
     'png': check_png}[kind](*args)
sys.exit(1 if bad else 0)
EOF

if [ "$fails" -ne 0 ]; then
    echo "$fails check(s) failed"
    exit 1
fi
echo "report.sh: all checks passed"
exit 0
