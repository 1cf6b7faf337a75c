#!/usr/bin/env python3
"""make_corpus.py - (re)build the fuzzers' seed corpus from the source tree.

    python3 fuzz/make_corpus.py [SOURCE_DIR]

fuzz/corpus/model/ receives trees/*.xml, tests/**/*.xml, tests/hostile/*.xml
and every model written as a C string or a shell here-document/printf in
tests/; fuzz/corpus/log/ receives trees/*.csv, tests/hostile/*.csv and the
logs written in tests/.  Each seed is named after a hash of its bytes, so
running the script again adds only what is new.  Seeds need not be valid:
a broken model is as useful a starting point as a good one.
"""
import glob
import hashlib
import os
import re
import sys

SRC = os.path.abspath(sys.argv[1] if len(sys.argv) > 1 else
                      os.path.join(os.path.dirname(__file__), ".."))
OUT = os.path.join(SRC, "fuzz", "corpus")

# the tests' shared prefixes and suffixes (macros in C, variables in sh)
HEAD = ('<?xml version="1.0" encoding="UTF-8"?>\n'
        '<safety-model format="1" id="m">\n')
END = '</safety-model>\n'
LOGHEAD = 'date,error,missed,caught_by,note\n'

C_STRING = re.compile(r'"((?:[^"\\\n]|\\.)*)"')
ESCAPES = {'n': '\n', 't': '\t', 'r': '\r', '"': '"', '\\': '\\', "'": "'",
           '0': '\0'}


def c_unescape(s):
    out, i = [], 0
    while i < len(s):
        c = s[i]
        if c == '\\' and i + 1 < len(s):
            n = s[i + 1]
            if n == 'x':
                m = re.match(r'[0-9a-fA-F]{1,2}', s[i + 2:])
                if m:
                    out.append(chr(int(m.group(0), 16)))
                    i += 2 + len(m.group(0))
                    continue
            out.append(ESCAPES.get(n, n))
            i += 2
            continue
        out.append(c)
        i += 1
    return ''.join(out)


def c_groups(text):
    """Adjacent C string literals (with HEAD/END/H macros between them)
    joined into one string each."""
    groups, cur, last_end = [], [], None
    pos = 0
    for m in C_STRING.finditer(text):
        between = text[last_end:m.start()] if last_end is not None else None
        if between is not None:
            # drop comments, then see what glues the literals together
            glue = re.sub(r'/\*.*?\*/', '', between, flags=re.S)
            glue = re.sub(r'//[^\n]*', '', glue)
            tokens = glue.split()
            if all(t in ('HEAD', 'END', 'H', '\\') for t in tokens):
                for t in tokens:
                    cur.append({'HEAD': HEAD, 'END': END,
                                'H': LOGHEAD}.get(t, ''))
            else:
                if cur:
                    groups.append(''.join(cur))
                cur = []
                # a macro right before the first literal of a group
                if tokens and tokens[-1] in ('HEAD', 'H'):
                    cur.append(HEAD if tokens[-1] == 'HEAD' else LOGHEAD)
        cur.append(c_unescape(m.group(1)))
        last_end = m.end()
        pos = m.end()
    if cur:
        groups.append(''.join(cur))
    return groups


def sh_pieces(text):
    """Here-documents and single-quoted strings of the shell tests."""
    pieces = []
    for m in re.finditer(r"<<-?\s*'?(\w+)'?\n(.*?)\n\1\n", text, re.S):
        pieces.append(m.group(2) + '\n')
    for m in re.finditer(r"'([^']*<[^']*)'", text, re.S):
        pieces.append(m.group(1))
    for m in re.finditer(r"printf '([^']*)'", text):
        pieces.append(c_unescape(m.group(1)))
    return pieces


def is_model(s):
    return '<' in s and any(k in s for k in ('<safety-model', '<hazard',
                                             '<error', '<safeguard'))


def is_log(s):
    return ('caught_by' in s or 'missed' in s) and ',' in s and '<' not in s


def save(kind, data):
    if isinstance(data, str):
        data = data.encode('utf-8', 'surrogateescape')
    if not data.strip():
        return 0
    d = os.path.join(OUT, kind)
    os.makedirs(d, exist_ok=True)
    name = hashlib.sha1(data).hexdigest()[:16]
    path = os.path.join(d, name)
    if os.path.exists(path):
        return 0
    with open(path, 'wb') as f:
        f.write(data)
    return 1


def main():
    added = {'model': 0, 'log': 0}
    for f in sorted(glob.glob(os.path.join(SRC, 'trees', '*.xml')) +
                    glob.glob(os.path.join(SRC, 'tests', '**', '*.xml'),
                              recursive=True)):
        added['model'] += save('model', open(f, 'rb').read())
    for f in sorted(glob.glob(os.path.join(SRC, 'trees', '*.csv')) +
                    glob.glob(os.path.join(SRC, 'tests', '**', '*.csv'),
                              recursive=True)):
        added['log'] += save('log', open(f, 'rb').read())
    for f in sorted(glob.glob(os.path.join(SRC, 'tests', '**', '*.c'),
                              recursive=True)):
        text = open(f, encoding='utf-8', errors='surrogateescape').read()
        for g in c_groups(text):
            if is_model(g):
                if '<safety-model' not in g:
                    g = HEAD + g + END
                added['model'] += save('model', g)
            elif is_log(g) and '\n' in g:
                added['log'] += save('log', g)
    for f in sorted(glob.glob(os.path.join(SRC, 'tests', '**', '*.sh'),
                              recursive=True)):
        text = open(f, encoding='utf-8', errors='surrogateescape').read()
        for p in sh_pieces(text):
            if is_model(p):
                if '<safety-model' not in p:
                    p = HEAD + p + END
                added['model'] += save('model', p)
            elif is_log(p) and '\n' in p:
                added['log'] += save('log', p)
    print('added %d model seeds, %d log seeds under %s' %
          (added['model'], added['log'], OUT))


if __name__ == '__main__':
    main()
