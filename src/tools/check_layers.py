#!/usr/bin/env python3
"""check_layers.py - every module of libarrank calls and includes only down.

Usage: check_layers.py [--root DIR] [--objects DIR]

The table of layers is the one in DEVELOPERS.md, between the lines
`<!-- layers -->` and `<!-- /layers -->`: a row per layer, lowest first, with
the layer's number and its modules (the stems of src/lib/NAME.c).  A module
written `NAME*` is a family: NAME.c and every NAME_PART.c are one module, so
its files may call each other.  A module
may include the headers of, and call functions defined in, modules of a lower
layer only: never its own layer's other modules, never a higher one.

Read from the code, not from comments:
  - includes: every `#include "..."` in src/lib/*.c, src/lib/*.h and
    include/arrank/*.h.  A header belongs to the module of its stem
    (arrank/fit.h and fit.h to fit; NAME_internal.h and NAME_testing.h to
    NAME); headers named in the table's `headers:` line belong to no module
    and any layer may include them (types and constants only).
  - calls: `nm -u` on each object src/lib/NAME.o under --objects, against the
    global symbols that every other object defines (`nm --defined-only -g`).
  - the program: src/cli/*.c include only arrank/*.h and call only what the
    library exports through those headers.
  - sizes: no source file in src/lib over MAX_FILE_LINES lines, and no
    function over MAX_FUNCTION_LINES (from the `{` that opens its body at the
    start of a line to the `}` that closes it, as the house style writes
    them): the limits of the restructure, so that no module knots again.
Prints one line per breach and exits 1 if there is any; 0 otherwise.
"""
import argparse
import os
import re
import subprocess
import sys

INC = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.M)
MAX_FILE_LINES = 1200
MAX_FUNCTION_LINES = 120


def size_breaches(rel, text):
    """The file's length and each function's, against the limits."""
    out = []
    lines = text.split("\n")
    if len(lines) - (lines[-1] == "") > MAX_FILE_LINES:
        out.append("%s: %d lines (at most %d)" % (rel, len(lines) - (lines[-1] == ""),
                                                  MAX_FILE_LINES))
    start = None
    for i, line in enumerate(lines):
        if line == "{":
            start = i
        elif line == "}" and start is not None:
            if i - start + 1 > MAX_FUNCTION_LINES:
                j = start - 1
                while j > 0 and "(" not in lines[j]:
                    j -= 1
                name = re.search(r"(\w+)\s*\(", lines[j])
                out.append("%s:%d: function %s is %d lines (at most %d)"
                           % (rel, start + 1, name.group(1) if name else "?", i - start + 1,
                              MAX_FUNCTION_LINES))
            start = None
    return out


def read_table(path):
    text = open(path, encoding="utf-8").read()
    m = re.search(r"<!-- layers -->(.*?)<!-- /layers -->", text, re.S)
    if not m:
        sys.exit("check_layers: no <!-- layers --> table in %s" % path)
    layer_of, free = {}, set()
    for line in m.group(1).splitlines():
        line = line.strip()
        h = re.match(r"headers:\s*(.*)", line)
        if h:
            free.update(x.strip("` ") for x in h.group(1).split(",") if x.strip("` "))
            continue
        cells = [c.strip() for c in line.strip("|").split("|")]
        if len(cells) < 2 or not re.fullmatch(r"\d+", cells[0]):
            continue
        for mod in re.findall(r"`([a-z0-9_]+\*?)`", cells[1]):
            if mod in layer_of:
                sys.exit("check_layers: module %s is in two rows" % mod)
            layer_of[mod] = int(cells[0])
    return layer_of, free


def module_of(stem, layer_of):
    """The table's module for a file stem: itself, or the family NAME* it is in."""
    if stem in layer_of:
        return stem
    best = None
    for mod in layer_of:
        if mod.endswith("*"):
            name = mod[:-1]
            if (stem == name or stem.startswith(name + "_")) and (not best or len(mod) > len(best)):
                best = mod
    return best or stem


def header_module(name, layer_of):
    stem = os.path.basename(name)
    if stem.endswith((".c", ".h")):
        stem = stem[:-2]
    for suffix in ("_internal", "_testing"):
        if stem.endswith(suffix) and module_of(stem, layer_of) not in layer_of:
            stem = stem[: -len(suffix)]
    return module_of(stem, layer_of)


def nm(args, obj):
    out = subprocess.run(["nm"] + args + [obj], capture_output=True, text=True, check=True)
    return [l.split()[-1] for l in out.stdout.splitlines() if l.strip()]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--root", default=".")
    ap.add_argument("--objects", default="build")
    o = ap.parse_args()
    root = o.root
    layer_of, free = read_table(os.path.join(root, "DEVELOPERS.md"))
    breaches = []
    lib = os.path.join(root, "src", "lib")
    inc = os.path.join(root, "include", "arrank")
    sources = sorted(f for f in os.listdir(lib) if f.endswith(".c"))
    stems = [f[:-2] for f in sources]
    for m in stems:
        if module_of(m, layer_of) not in layer_of:
            breaches.append("src/lib/%s.c: module '%s' is in no layer of the table" % (m, m))

    def check_include(where, owner, target):
        if target in free:
            return
        tm = header_module(target, layer_of)
        if tm not in layer_of:
            breaches.append("%s: includes %s, which belongs to no module in the table" % (where, target))
        elif owner in layer_of and tm != owner and layer_of[tm] >= layer_of[owner]:
            breaches.append("%s: includes %s (%s, layer %d) from %s (layer %d): not down"
                            % (where, target, tm, layer_of[tm], owner, layer_of[owner]))

    files = [(os.path.join("src/lib", f), os.path.join(lib, f)) for f in sorted(os.listdir(lib))
             if f.endswith((".c", ".h"))]
    files += [(os.path.join("include/arrank", f), os.path.join(inc, f))
              for f in sorted(os.listdir(inc)) if f.endswith(".h")]
    for rel, path in files:
        if rel.endswith(".c"):
            breaches += size_breaches(rel, open(path, encoding="utf-8").read())
        base = os.path.basename(rel)
        if base in free:
            continue
        owner = header_module(base, layer_of)
        for target in INC.findall(open(path, encoding="utf-8").read()):
            check_include(rel, owner, os.path.basename(target))

    # calls, from the objects
    defined = {}
    objs = {}
    for stem in stems:
        obj = os.path.join(o.objects, "src", "lib", stem + ".o")
        if not os.path.exists(obj):
            breaches.append("%s: not built (make BUILD=%s)" % (obj, o.objects))
            continue
        objs[stem] = obj
        for sym in nm(["--defined-only", "-g"], obj):
            defined.setdefault(sym, module_of(stem, layer_of))
    for stem, obj in objs.items():
        m = module_of(stem, layer_of)
        for sym in sorted(set(nm(["-u"], obj))):
            d = defined.get(sym)
            if d is None or d == m or m not in layer_of or d not in layer_of:
                continue
            if layer_of[d] >= layer_of[m]:
                breaches.append("src/lib/%s.c: calls %s in %s (layer %d) from layer %d: not down"
                                % (stem, sym, d, layer_of[d], layer_of[m]))

    # the program sees only the public headers
    cli = os.path.join(root, "src", "cli")
    for f in sorted(os.listdir(cli)):
        if not f.endswith((".c", ".h")):
            continue
        for target in INC.findall(open(os.path.join(cli, f), encoding="utf-8").read()):
            local = "/" not in target and os.path.exists(os.path.join(cli, target))
            if not (target.startswith("arrank/") or local):
                breaches.append("src/cli/%s: includes %s, which is not a public header" % (f, target))

    for b in breaches:
        print(b)
    if breaches:
        print("check-layers: %d breach%s of the table in DEVELOPERS.md"
              % (len(breaches), "" if len(breaches) == 1 else "es"))
        return 1
    print("check-layers: %d files in %d layers, every include and call goes down; no file "
          "over %d lines, no function over %d"
          % (len(objs), len(set(layer_of.values())), MAX_FILE_LINES, MAX_FUNCTION_LINES))
    return 0


if __name__ == "__main__":
    sys.exit(main())
