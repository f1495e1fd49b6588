#!/usr/bin/env python3
"""Fails when a function in lib/ calls itself, unless it is listed below with the bound on its depth.

The scan is source_scan.py's, shared with check_function_size.py: it catches direct self-calls, the usual way a depth
that follows the input slips in (a depth-first walk over atoms). Recursion through several functions is not caught,
nor a qualified call (`::open`, `Class::f`: another scope); keep graph walks on explicit stacks (DEVELOPERS.md,
Hardening). Overloads share a name, so one overload calling another reads as recursion: give them distinct names."""
import re
import sys

from source_scan import definitions, repo_root

# function -> why its depth does not follow the input
ALLOWED = {
    "within_bonds": "lib/assemble/build.cpp: depth is the bond count asked for (2 or 3)",
    "perfect": "lib/check/perceive.cpp: depth bounded by the search's node budget (a few thousand)",
    "now": "lib/core/limits.cpp: not a self-call (std::chrono::steady_clock::now)",
    "dot": "lib/refine/lbfgs.cpp: not a self-call (the vector overload calls the pointer overload)",
}

found = []
for d in definitions(repo_root(sys.argv, __file__)):
    if d.name not in ALLOWED and re.search(r"(?<![\w.>:])" + re.escape(d.name) + r"\s*\(", d.body()):
        found.append(f"{d.where}: {d.name} calls itself")
for f in found:
    print(f)
print(f"recursion scan: {len(found)} self-calling function(s) not on the allowed list")
sys.exit(1 if found else 0)
