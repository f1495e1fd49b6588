#!/usr/bin/env python3
"""Fails when a function in lib/ is longer than LIMIT lines without a reason written beside it.

A function may run longer when the comment block right above its definition holds a line starting
`// Long function:` followed by why (a table, one flat sequence of steps that reads best in one place). A rough
scan, as check_recursion.py's: definitions found by a regular expression, bodies by brace matching; lambdas and
local classes count inside the function that holds them (DEVELOPERS.md, Code rules)."""
import pathlib
import re
import sys

LIMIT = 120  # lines from the opening brace to the closing one (issue "The house": about 120)

root = pathlib.Path(sys.argv[1] if len(sys.argv) > 1 else pathlib.Path(__file__).resolve().parents[1])
definition = re.compile(r"\n[ \t]*(?:[\w:<>,&*\s]+?)\b(\w+)\s*\(([^;{}]*)\)\s*(?:const\s*)?(?:noexcept\s*)?"
                        r"(?:->\s*[\w:<>,&*\s]+)?\{")
keywords = {"if", "for", "while", "switch", "catch", "return", "sizeof"}
found = []
longest = []
for path in sorted(list(root.glob("lib/**/*.cpp")) + list(root.glob("lib/**/*.hpp"))):
    src = path.read_text()
    end_of_last = 0
    for m in definition.finditer(src):
        name = m.group(1)
        if name in keywords or m.start() < end_of_last:
            continue  # a keyword, or a definition inside one already measured
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
        end_of_last = j
        lines = src.count("\n", i, j) + 1
        start_line = src.count("\n", 0, m.start() + 1) + 1
        longest.append((lines, f"{path.relative_to(root)}:{start_line} {name}"))
        if lines <= LIMIT:
            continue
        above = src[:m.start() + 1].split("\n")
        block = []
        for line in reversed(above[:-1]):
            if line.strip().startswith("//"):
                block.append(line)
            else:
                break
        if not any(line.strip().startswith("// Long function:") for line in block):
            found.append(f"{path.relative_to(root)}:{start_line}: {name} has {lines} lines (limit {LIMIT}) and no "
                         "'// Long function:' reason above it")
for f in found:
    print(f)
print("longest:", ", ".join(f"{what} ({n})" for n, what in sorted(longest, reverse=True)[:5]))
print(f"function size scan: {len(found)} function(s) over {LIMIT} lines without a reason")
sys.exit(1 if found else 0)
