"""Every error path of the Python module: wrong types, non-finite positions, empty strings, huge inputs. Each must
be a Python exception with a clear message (or, in build_many, a Failure), never a crash of the interpreter.
"""
import math

import numpy as np
import pytest

import repel


class FakeAtoms:
    """The two methods repel.check() reads of an ase.Atoms, with whatever they return."""

    def __init__(self, numbers, positions, info=None):
        self._numbers, self._positions = numbers, positions
        if info is not None:
            self.info = info

    def get_atomic_numbers(self):
        return self._numbers

    def get_positions(self):
        return self._positions


WATER = np.array([[0.0, 0.0, 0.0], [0.9572, 0.0, 0.0], [-0.24, 0.9266, 0.0]])


@pytest.mark.parametrize("call", [
    lambda: repel.build(["O"]), lambda: repel.build("O", notation=1), lambda: repel.build("O", charge=1.5),
    lambda: repel.build(), lambda: repel.build("O", colour="red"),
    lambda: repel.shape(None), lambda: repel.shape("O", name=1),
    lambda: repel.build_many(None), lambda: repel.build_many(["O"], refine="yes"),
    lambda: repel.build_many(["O"], charge="0"), lambda: repel.check(None), lambda: repel.check(3.5),
    lambda: repel.check("x.xyz", charge="0"), lambda: repel.check("x.xyz", smiles=5),
    lambda: repel.check("x.xyz", fix="yes"),
    lambda: repel.check(FakeAtoms(["O", "H", "H"], WATER)),
    lambda: repel.check(FakeAtoms([8, 1, 1], "positions")),
    lambda: repel.check(FakeAtoms([8, 1, 1], WATER, info={"charge": "neutral"})),
])
def test_wrong_types_raise_type_error(call):
    with pytest.raises(TypeError):
        call()


@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf, 1e8])
def test_non_finite_or_far_positions_raise_input_error(bad):
    p = WATER.copy()
    p[1, 2] = bad
    with pytest.raises(repel.InputError) as info:
        repel.check(FakeAtoms([8, 1, 1], p))
    assert "atom 1" in str(info.value) and "finite number within" in str(info.value)


def test_non_finite_positions_from_ase():
    ase = pytest.importorskip("ase")
    atoms = ase.Atoms("OH2", positions=WATER)
    atoms.positions[2, 0] = math.nan
    with pytest.raises(repel.InputError, match="atom 2: a coordinate is not a finite number"):
        repel.check(atoms)


@pytest.mark.parametrize("numbers,positions,match", [
    ([8, 1, 1], WATER[:2], "one row of x, y, z per atom"),
    ([8, 1, 1], np.zeros((3, 2)), "one row of x, y, z per atom"),
    ([8, 1, 1], np.zeros(9), "one row of x, y, z per atom"),
    ([8, 0, 1], WATER, "atomic number 0 is not an element"),
    ([8, 1, 118], WATER, "atomic number 118 is not an element"),
])
def test_bad_atoms_raise_value_error(numbers, positions, match):
    with pytest.raises(ValueError, match=match):
        repel.check(FakeAtoms(numbers, positions))


def test_no_atoms_is_a_result_not_a_crash():
    [r] = repel.check(FakeAtoms([], np.zeros((0, 3))))
    assert r["error"] is not None or r["findings"] == []


def test_empty_strings():
    with pytest.raises(repel.InputError, match="empty|nothing"):
        repel.build("")
    with pytest.raises(repel.InputError):
        repel.shape("")
    with pytest.raises(FileNotFoundError):
        repel.check("")
    with pytest.raises(repel.InputError, match="unknown output format"):
        repel.build("O").to_text("")
    [f] = repel.build_many([""])
    assert f.error == "InputError" and f.index == 0
    assert repel.build("O", name="").name is None  # an empty name is no name
    [r] = repel.check(FakeAtoms([8, 1, 1], WATER), smiles="")  # an empty smiles is none
    assert r["error"] is None


def test_a_bad_reference_smiles_is_an_input_error_of_the_call(tmp_path):
    with pytest.raises(repel.InputError, match="smiles: ") as info:
        repel.check(FakeAtoms([8, 1, 1], WATER), smiles="C(C")
    assert info.value.text == "C(C" and info.value.column is not None
    (tmp_path / "water.xyz").write_text("3\nwater\nO 0 0 0\nH 0.9572 0 0\nH -0.24 0.9266 0\n")
    with pytest.raises(repel.InputError, match="smiles: "):
        repel.check(tmp_path / "water.xyz", smiles="C(C")


def test_check_file_errors(tmp_path):
    with pytest.raises(IsADirectoryError):
        repel.check(tmp_path)
    (tmp_path / "notes.txt").write_text("O\n")
    with pytest.raises(repel.InputError, match="notes.txt"):
        repel.check(tmp_path / "notes.txt")
    (tmp_path / "broken.xyz").write_text("3\ncomment\nO 0 0 0\nH one 0 0\n")
    with pytest.raises(repel.InputError, match="line 4: the x coordinate 'one' is not a finite number"):
        repel.check(tmp_path / "broken.xyz")
    (tmp_path / "short.xyz").write_text("3\ncomment\nO 0 0 0\n")
    with pytest.raises(repel.InputError):
        repel.check(tmp_path / "short.xyz")


def test_check_file_with_nan_coordinates(tmp_path):
    (tmp_path / "nan.xyz").write_text("3\nwater\nO 0 0 0\nH nan 0 0\nH 0 0.95 0\n")
    with pytest.raises(repel.InputError, match="line 4: .*not a finite number"):
        repel.check(tmp_path / "nan.xyz")


def test_a_5_mb_string_is_refused_quickly():
    # 5,000,000 atoms written: past the reader's limit of 1,000,000 (core/limits.hpp), a LimitError, an InputError.
    with pytest.raises(repel.InputError, match="1000000 atoms|limit"):
        repel.build("C" * 5_000_000)
    with pytest.raises(repel.InputError):
        repel.shape("C" * 5_000_000)
    [f] = repel.build_many(["C" * 5_000_000])
    assert f.error == "LimitError"


def test_a_million_atoms_given_directly_is_refused():
    n = 1_000_001
    with pytest.raises(repel.InputError, match="more than 1000000 atoms"):
        repel.check(FakeAtoms(np.full(n, 6), np.zeros((n, 3))))


def test_a_100k_atom_chain_builds():
    # 100,000 carbons written: 300,002 atoms with hydrogens, within the limits (about 4 s on the development machine,
    # core/limits.hpp); the arrays come back whole, the GIL released meanwhile.
    s = repel.build("C" * 100_000, refine=False)
    assert len(s) == 300_002 and s.positions.shape == (300_002, 3)
    assert np.isfinite(s.positions).all()
    assert s.bonds.shape == (300_001, 3)
