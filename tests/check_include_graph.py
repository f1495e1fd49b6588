#!/usr/bin/env python3
"""Fails when a folder of lib/ includes a header of a later stage (DEVELOPERS.md, "Stages and includes").

Every `#include "folder/file.hpp"` in lib/ is read; a file may include its own folder and any earlier stage, never a
later one. The order follows the data: reading never depends on building or checking, the domain analysis never on
the assembly, the assembly calls the refinement, the check reuses everything before it. A header that is not of the
form folder/file.hpp, or a folder missing from STAGES, is a failure too, so that a new folder is placed on purpose."""
import pathlib
import re
import sys

# Earliest first. core: elements, lengths, errors, limits, plain geometry; graph: molecules, rings, stereo marks and
# targets, valences; input: readers; sphere: the repulsion solver; domains: the domain analysis; refine: the energy
# and its minimiser; assemble: the build pipeline; output: writers and pictures; check: perception, audit, report;
# batch: the batch machinery (no chemistry, so that nothing below it depends on batches); api: the front door, which
# calls every stage; include: the installed public headers (lib/include/repel/), which forward to core and graph.
STAGES = ["core", "graph", "input", "sphere", "domains", "refine", "assemble", "output", "check", "batch", "api",
          "include"]

root = pathlib.Path(sys.argv[1] if len(sys.argv) > 1 else pathlib.Path(__file__).resolve().parents[1])
rank = {name: i for i, name in enumerate(STAGES)}
include = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.M)
problems = []
files = sorted(list(root.glob("lib/**/*.cpp")) + list(root.glob("lib/**/*.hpp")))
for path in files:
    own = path.relative_to(root / "lib").parts[0]
    if own not in rank:
        problems.append(f"{path.relative_to(root)}: folder lib/{own} is not in STAGES")
        continue
    for target in include.findall(path.read_text()):
        if target.startswith("../"):  # a forwarding public header: the path from lib/
            target = (path.parent / target).resolve().relative_to((root / "lib").resolve()).as_posix()
        parts = target.split("/")
        if len(parts) != 2 or parts[0] not in rank:
            problems.append(f'{path.relative_to(root)}: #include "{target}" is not a lib/<stage>/ header')
        elif rank[parts[0]] > rank[own]:
            problems.append(f'{path.relative_to(root)}: #include "{target}": {own} comes before {parts[0]}')
if not files:
    problems.append(f"no sources found under {root / 'lib'}")
for p in problems:
    print(p)
print(f"{len(files)} files, stage order {' < '.join(STAGES)}: {len(problems)} problem(s)")
sys.exit(1 if problems else 0)
