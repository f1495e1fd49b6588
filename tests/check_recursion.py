#!/usr/bin/env python3
"""Fails when a function in lib/ calls itself, unless it is listed below with the bound on its depth.

A rough scan (function definitions found by a regular expression, bodies by brace matching): it catches direct
self-calls, the usual way a depth that follows the input slips in (a depth-first walk over atoms). Recursion through
several functions is not caught, nor a qualified call (`::open`, `Class::f`: another scope); keep graph walks on explicit stacks (DEVELOPERS.md, Hardening)."""
import pathlib
import re
import sys

# function -> why its depth does not follow the input
ALLOWED = {
    "within_bonds": "lib/assemble/build.cpp: depth is the bond count asked for (2 or 3)",
    "perfect": "lib/check/perceive.cpp: depth bounded by the search's node budget (a few thousand)",
    "now": "lib/core/limits.cpp: not a self-call (std::chrono::steady_clock::now)",
    "dot": "lib/refine/lbfgs.cpp: not a self-call (the vector overload calls the pointer overload)",
}

root = pathlib.Path(sys.argv[1] if len(sys.argv) > 1 else pathlib.Path(__file__).resolve().parents[1])
definition = re.compile(r"\n[ \t]*(?:[\w:<>,&*\s]+?)\b(\w+)\s*\(([^;{}]*)\)\s*(?:const\s*)?(?:noexcept\s*)?\{")
keywords = {"if", "for", "while", "switch", "catch", "return", "sizeof"}
found = []
for path in sorted(list(root.glob("lib/**/*.cpp")) + list(root.glob("lib/**/*.hpp"))):
    src = path.read_text()
    for m in definition.finditer(src):
        name = m.group(1)
        if name in keywords:
            continue
        i = m.end() - 1
        depth = 0
        j = i
        while j < len(src):
            if src[j] == "{":
                depth += 1
            elif src[j] == "}":
                depth -= 1
                if depth == 0:
                    break
            j += 1
        if re.search(r"(?<![\w.>:])" + re.escape(name) + r"\s*\(", src[i + 1:j]) and name not in ALLOWED:
            found.append(f"{path.relative_to(root)}: {name} calls itself")
for f in found:
    print(f)
print(f"recursion scan: {len(found)} self-calling function(s) not on the allowed list")
sys.exit(1 if found else 0)
