"""The type stubs (python/repel.pyi, copied beside the module in build/python) against the compiled module: every
public name of the module has a stub, every public stub names something real, functions and methods with the same
parameters (pybind11 writes each signature as the first line of its docstring; inspect reads the rest).
"""
import ast
import inspect
import re
from pathlib import Path

import repel

STUB = Path(repel.__file__).with_name("repel.pyi")


def public(names):
    return {n for n in names if not n.startswith("_")}


def stub_tree():
    return ast.parse(STUB.read_text())


def stub_names(body):
    out = {}
    for node in body:
        if isinstance(node, (ast.FunctionDef, ast.ClassDef)):
            out[node.name] = node
        elif isinstance(node, ast.AnnAssign) and isinstance(node.target, ast.Name):
            out[node.target.id] = node
    return out


def stub_parameters(fn):
    a = fn.args
    return [p.arg for p in a.posonlyargs + a.args + a.kwonlyargs if p.arg != "self"]


def module_parameters(obj):
    """Parameter names from pybind11's signature line, 'name(a: int, *, b: str = None) -> T'."""
    doc = inspect.getdoc(obj) or ""
    m = re.match(r"\w+\((.*?)\) ->", doc)
    assert m, f"no signature line in {obj!r}'s docstring"
    names = []
    for part in m.group(1).split(","):
        part = part.strip()
        if part and part != "*":
            names.append(part.split(":")[0].strip())
    return [n for n in names if n != "self"]


def test_the_stub_file_is_beside_the_module():
    assert STUB.is_file(), f"{STUB} missing: python/CMakeLists.txt copies python/repel.pyi there"


def test_every_public_name_has_a_stub_and_every_stub_is_real():
    stubs = stub_names(stub_tree().body)
    assert public(dir(repel)) == public(stubs)
    assert "__version__" in stubs and isinstance(repel.__version__, str)


def test_functions_have_the_same_parameters():
    for name, node in stub_names(stub_tree().body).items():
        if isinstance(node, ast.FunctionDef) and not name.startswith("_"):
            assert stub_parameters(node) == module_parameters(getattr(repel, name)), name


def test_classes_have_the_same_members():
    for name, node in stub_names(stub_tree().body).items():
        if not isinstance(node, ast.ClassDef) or name.startswith("_"):
            continue
        cls = getattr(repel, name)
        assert inspect.isclass(cls), name
        members = stub_names(node.body)
        if issubclass(cls, BaseException):
            # An exception's attributes are set when it is raised: look at one raised.
            if cls is repel.InputError:
                try:
                    repel.build("CC(C")
                except repel.InputError as e:
                    assert all(hasattr(e, m) for m in members) and public(vars(e)) == public(members)
            continue
        assert public(members) == public(vars(cls)), name
        for member, fn in members.items():
            assert hasattr(cls, member), f"{name}.{member}"
            if isinstance(fn, ast.FunctionDef) and not member.startswith("_") and \
                    not any(isinstance(d, ast.Name) and d.id == "property" for d in fn.decorator_list):
                assert stub_parameters(fn) == module_parameters(getattr(cls, member)), f"{name}.{member}"
