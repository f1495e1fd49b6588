#!/usr/bin/env python3
"""Fails when a function in lib/ is longer than LIMIT lines without a reason written beside it.

A function may run longer when the comment block right above its definition holds a line starting
`// Long function:` followed by why (a table, one flat sequence of steps that reads best in one place). The scan is
source_scan.py's, shared with check_recursion.py (DEVELOPERS.md, Code rules)."""
import sys

from source_scan import definitions, repo_root

LIMIT = 120  # lines from the opening brace to the closing one (issue "The house": about 120)

root = repo_root(sys.argv, __file__)
found = []
longest = []
for d in definitions(root, outermost=True):
    lines = d.lines()
    longest.append((lines, f"{d.where}:{d.line} {d.name}"))
    if lines > LIMIT and not any(line.strip().startswith("// Long function:") for line in d.comment_above()):
        found.append(f"{d.where}:{d.line}: {d.name} has {lines} lines (limit {LIMIT}) and no "
                     "'// Long function:' reason above it")
for f in found:
    print(f)
print("longest:", ", ".join(f"{what} ({n})" for n, what in sorted(longest, reverse=True)[:5]))
print(f"function size scan: {len(found)} function(s) over {LIMIT} lines without a reason")
sys.exit(1 if found else 0)
