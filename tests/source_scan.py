"""The scan of lib/ that check_function_size.py and check_recursion.py share: function definitions found by a regular
expression, bodies by brace matching. Rough on purpose (no C++ parser): it reads this project's style, where a
definition starts a line and its body opens on the same line; lambdas and local classes are part of the function
that holds them."""
import pathlib
import re

# A name, its parameter list, optional const/noexcept and trailing return type, then the opening brace.
DEFINITION = re.compile(r"\n[ \t]*(?:[\w:<>,&*\s]+?)\b(\w+)\s*\(([^;{}]*)\)\s*(?:const\s*)?(?:noexcept\s*)?"
                        r"(?:->\s*[\w:<>,&*\s]+)?\{")
KEYWORDS = {"if", "for", "while", "switch", "catch", "return", "sizeof"}


class Definition:
    """One function definition: its file, name, where the match starts, and its body's braces (offsets in src)."""

    def __init__(self, root, path, src, name, start, open_brace, close_brace):
        self.path, self.src, self.name = path, src, name
        self.start, self.open, self.close = start, open_brace, close_brace
        self.where = str(path.relative_to(root))
        self.line = src.count("\n", 0, start + 1) + 1  # 1-based line of the definition

    def body(self):
        return self.src[self.open + 1:self.close]

    def lines(self):
        """Lines from the opening brace to the closing one."""
        return self.src.count("\n", self.open, self.close) + 1

    def comment_above(self):
        """The `//` lines right above the definition, nearest first."""
        block = []
        for line in reversed(self.src[:self.start + 1].split("\n")[:-1]):
            if not line.strip().startswith("//"):
                break
            block.append(line)
        return block


def repo_root(argv, script):
    """The checkout to scan: the first argument, else the one holding the script's tests/ folder."""
    return pathlib.Path(argv[1] if len(argv) > 1 else pathlib.Path(script).resolve().parents[1])


def closing_brace(src, i):
    """The offset of the brace that closes the one at src[i] (len(src) when none does)."""
    depth = 0
    for j in range(i, len(src)):
        if src[j] == "{":
            depth += 1
        elif src[j] == "}":
            depth -= 1
            if depth == 0:
                return j
    return len(src)


def definitions(root, outermost=False):
    """Every function definition in lib/ (.cpp and .hpp, sorted by path); with outermost, not those inside one
    already found (a local class's members count as part of the function that holds them)."""
    for path in sorted(list(root.glob("lib/**/*.cpp")) + list(root.glob("lib/**/*.hpp"))):
        src = path.read_text()
        end_of_last = 0
        for m in DEFINITION.finditer(src):
            if m.group(1) in KEYWORDS or (outermost and m.start() < end_of_last):
                continue
            close = closing_brace(src, m.end() - 1)
            end_of_last = close
            yield Definition(root, path, src, m.group(1), m.start(), m.end() - 1, close)
