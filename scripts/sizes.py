#!/usr/bin/env python3
"""Sizes of the Rust sources: files over a line limit and functions over a length limit.

framecost keeps every file in src/ under 450 lines and every function under 120 lines
(DEVELOPERS.md, "How to test"). A function's length is counted from the line of its `fn`
to the line of its closing brace, found by matching braces with comments, strings and
character literals blanked out.

    scripts/sizes.py                 # what is over the limits in src/ (exit 1 if anything)
    scripts/sizes.py --list src/fit  # every function under src/fit, longest first
"""
import os
import re
import sys

FILE_LIMIT = 450
FN_LIMIT = 120

def strip(src):
    # Replace comments, strings, chars by spaces, keeping newlines.
    out = []; i = 0; n = len(src)
    while i < n:
        c = src[i]
        if src.startswith('//', i):
            j = src.find('\n', i); j = n if j < 0 else j
            out.append(' ' * (j - i)); i = j; continue
        if src.startswith('/*', i):
            depth = 1; j = i + 2
            while j < n and depth:
                if src.startswith('/*', j): depth += 1; j += 2
                elif src.startswith('*/', j): depth -= 1; j += 2
                else: j += 1
            out.append(re.sub(r'[^\n]', ' ', src[i:j])); i = j; continue
        m = re.match(r'b?r(#*)"', src[i:i+10])
        if m and (i == 0 or not (src[i-1].isalnum() or src[i-1] == '_')):
            hashes = m.group(1); end = '"' + hashes
            j = src.find(end, i + m.end()); j = n if j < 0 else j + len(end)
            out.append(re.sub(r'[^\n]', ' ', src[i:j])); i = j; continue
        if c == '"':
            j = i + 1
            while j < n and src[j] != '"':
                j += 2 if src[j] == '\\' else 1
            j += 1
            out.append(re.sub(r'[^\n]', ' ', src[i:j])); i = j; continue
        if c == "'":
            m = re.match(r"'(\\.[^']*|[^\\'])'", src[i:i+12])
            if m:
                out.append(' ' * m.end()); i += m.end(); continue
        out.append(c); i += 1
    return ''.join(out)

def functions(path):
    src = open(path).read(); s = strip(src)
    res = []
    for m in re.finditer(r'\bfn\s+([A-Za-z_][A-Za-z0-9_]*)', s):
        # find the body's opening brace: first '{' or ';' at paren/angle depth 0
        j = m.end(); depth = 0
        while j < len(s):
            ch = s[j]
            if ch in '([': depth += 1
            elif ch in ')]': depth -= 1
            elif depth == 0 and ch == ';': j = -1; break
            elif depth == 0 and ch == '{': break
            j += 1
        if j < 0 or j >= len(s): continue
        k = j; d = 0
        while k < len(s):
            if s[k] == '{': d += 1
            elif s[k] == '}':
                d -= 1
                if d == 0: break
            k += 1
        start = s.count('\n', 0, m.start()) + 1
        end = s.count('\n', 0, k) + 1
        res.append((end - start + 1, path, start, m.group(1)))
    return res

def rust_files(paths):
    for p in paths:
        if os.path.isfile(p):
            yield p
            continue
        for root, _, files in os.walk(p):
            for f in sorted(files):
                if f.endswith('.rs'):
                    yield os.path.join(root, f)


def main(args):
    listing = '--list' in args
    paths = [a for a in args if a != '--list'] or ['src']
    files = sorted(rust_files(paths))
    fns = sorted((f for p in files for f in functions(p)), reverse=True)
    if listing:
        for length, path, line, name in fns:
            print(f"{length:5d} {path}:{line} {name}")
        return 0
    over = 0
    for p in files:
        n = sum(1 for _ in open(p))
        if n > FILE_LIMIT:
            print(f"file over {FILE_LIMIT} lines: {p} ({n})")
            over += 1
    for length, path, line, name in fns:
        if length > FN_LIMIT:
            print(f"function over {FN_LIMIT} lines: {path}:{line} {name} ({length})")
            over += 1
    return 1 if over else 0


if __name__ == '__main__':
    sys.exit(main(sys.argv[1:]))
