"""Tests of the Python module `repel` (python/module.cpp), run by ctest (label python) with PYTHONPATH set to the
build's python/ directory and REPEL_EXE to the built command line, whose output the module must match byte for byte.
"""
import json
import os
import subprocess
import threading
from pathlib import Path

import numpy as np
import pytest

import repel  # the module under test (python/module.cpp)

SOURCE_DIR = Path(__file__).resolve().parents[2]
REPEL_EXE = os.environ.get("REPEL_EXE", str(SOURCE_DIR / "build" / "bin" / "repel"))

# An invented compound from the stock list of the (invented) Kettleburn Halide Laboratory, samples/halide-lab.smi.
KB101 = "CC(=O)Oc1ccccc1C(=O)O"


def cli(*args):
    return subprocess.run([REPEL_EXE, *args], check=True, capture_output=True).stdout


def test_version_is_the_project_version():
    cmake = (SOURCE_DIR / "CMakeLists.txt").read_text()
    assert f"project(repel VERSION {repel.__version__} " in cmake
    assert cli("--version").decode().strip() == f"repel {repel.__version__}"


def test_water_arrays():
    s = repel.build("O")
    assert s.elements == ["O", "H", "H"]
    assert len(s) == 3
    assert s.numbers.dtype == np.int64 and s.numbers.shape == (3,)
    assert s.numbers.tolist() == [8, 1, 1]
    assert s.positions.dtype == np.float64 and s.positions.shape == (3, 3)
    assert s.bonds.dtype == np.int64 and s.bonds.shape == (2, 3)
    assert sorted(map(tuple, s.bonds.tolist())) == [(0, 1, 1), (0, 2, 1)]
    assert s.charge == 0 and s.multiplicity == 1 and s.name is None
    oh = [np.linalg.norm(s.positions[i] - s.positions[0]) for i in (1, 2)]
    # Water's O-H bond 0.9572 A and H-O-H angle 104.52 degrees (gas phase, experimental; from memory); the model is
    # not fitted to water alone, so the bounds are loose, but a wrong atom order or unit would break them.
    assert all(abs(d - 0.9572) < 0.03 for d in oh)
    u, v = s.positions[1] - s.positions[0], s.positions[2] - s.positions[0]
    angle = np.degrees(np.arccos(u @ v / (np.linalg.norm(u) * np.linalg.norm(v))))
    assert abs(angle - 104.52) < 3


def test_arrays_are_copies():
    s = repel.build("O")
    p = s.positions
    p[:] = 0
    assert np.abs(s.positions).max() > 0.1


def test_lab_compound_bonds_are_zero_based():
    s = repel.build(KB101, name="kettleburn-analgesic-KB-101")
    assert s.name == "kettleburn-analgesic-KB-101"
    # C9H8O4: 13 heavy atoms written, 8 hydrogens added after them.
    assert len(s) == 21
    assert s.elements[:13] == list("CCOOCCCCCCCOO")
    assert s.elements[13:] == ["H"] * 8
    b = s.bonds
    assert b.shape == (21, 3)  # 13 heavy atoms in one ring: 13 bonds, plus 8 to hydrogens
    assert b[:, :2].min() == 0 and b[:, :2].max() == 20
    # The first bond written is the methyl C (atom 0) to the carbonyl C (atom 1); the ring is kekulized.
    assert b[0].tolist() == [0, 1, 1]
    assert sorted(b[:, 2].tolist()).count(2) == 5  # two C=O and three ring C=C
    for i, j, _ in b:
        assert 0.9 < np.linalg.norm(s.positions[i] - s.positions[j]) < 1.6


def test_radical_and_ion():
    no2 = repel.build("NO2")  # 23 electrons: one unpaired, a doublet
    assert no2.multiplicity == 2 and no2.charge == 0
    nh4 = repel.build("[NH4+]")
    assert nh4.charge == 1 and nh4.multiplicity == 1
    sulfate = repel.build("[O-]S(=O)(=O)[O-]", charge=-2)
    assert sulfate.charge == -2
    # O2: a ground-state triplet (Herzberg, Spectra of Diatomic Molecules, 1950: X 3Sigma-g-).
    assert repel.build("O=O").multiplicity == 3
    assert repel.build("O=O", multiplicity=1).multiplicity == 1


@pytest.mark.parametrize("fmt", ["xyz", "sdf", "pdb", "json"])
@pytest.mark.parametrize("text,name", [("O", None), (KB101, "kettleburn-analgesic-KB-101"), ("NO2", None),
                                       ("F[Xe](F)(F)F", "xenon-tetrafluoride-standard"),
                                       ("[NH4+]", "Kettleburn café ammonium")])
def test_same_bytes_as_the_command_line(fmt, text, name):
    args = ["build", text, "--format", fmt] + (["--name", name] if name else [])
    assert repel.build(text, name=name).to_text(fmt).encode() == cli(*args)


def test_same_bytes_without_refinement_and_with_multiplicity():
    assert repel.build("O=O", refine=False, multiplicity=1).to_text("sdf").encode() == \
        cli("build", "O=O", "--no-refine", "--multiplicity", "1", "--format", "sdf")


def test_write_takes_the_format_from_the_extension(tmp_path):
    s = repel.build("O", name="lab-water")
    for ext, fmt in [("xyz", "xyz"), ("SDF", "sdf"), ("mol", "sdf"), ("pdb", "pdb"), ("json", "json")]:
        path = tmp_path / f"water.{ext}"
        s.write(path)
        assert path.read_bytes() == s.to_text(fmt).encode()
    s.write(str(tmp_path / "again.xyz"))
    assert (tmp_path / "again.xyz").read_bytes() == s.to_text("xyz").encode()
    with pytest.raises(repel.InputError):
        s.write(tmp_path / "water.txt")
    assert not (tmp_path / "water.txt").exists()
    with pytest.raises(OSError):
        s.write(tmp_path / "no-such-dir" / "water.xyz")
    with pytest.raises(repel.InputError):
        s.to_text("cif")


def test_to_ase_round_trip(tmp_path):
    ase_io = pytest.importorskip("ase.io")
    s = repel.build(KB101, name="kettleburn-analgesic-KB-101")
    atoms = s.to_ase()
    assert atoms.get_chemical_symbols() == s.elements
    assert np.array_equal(atoms.get_positions(), s.positions)
    assert atoms.info["charge"] == 0 and atoms.info["multiplicity"] == 1
    assert atoms.get_initial_magnetic_moments().sum() == 0
    path = tmp_path / "kb101.xyz"
    ase_io.write(path, atoms)
    back = ase_io.read(path)
    assert back.get_chemical_symbols() == s.elements
    assert np.allclose(back.get_positions(), s.positions, atol=1e-6)


@pytest.mark.parametrize("text,unpaired", [("NO2", 1), ("O=O", 2), ("[CH3]", 1), ("O", 0)])
def test_to_ase_magnetic_moments(text, unpaired):
    pytest.importorskip("ase")
    s = repel.build(text)
    assert s.multiplicity - 1 == unpaired
    m = s.to_ase().get_initial_magnetic_moments()
    assert m.sum() == pytest.approx(unpaired)
    assert all(m[i] == 0 for i, e in enumerate(s.elements) if e == "H")


def test_shape_matches_the_command_line_with_zero_based_atoms():
    got = repel.shape("F[Xe](F)(F)F")
    want = json.loads(cli("shape", "F[Xe](F)(F)F", "--json"))
    for c in want["centres"]:
        c["atom"] -= 1
        for a in c["angles"]:
            a["atoms"] = [i - 1 for i in a["atoms"]]
    assert got == want
    xe = got["centres"][0]
    assert xe["atom"] == 1 and xe["element"] == "Xe"
    assert xe["axe"] == "AX4E2" and xe["shape"] == "square planar"
    water = repel.shape("O", name="lab-water")
    assert water["name"] == "lab-water"
    assert water["centres"][0]["angles"][0]["atoms"] == [1, 0, 2]


def test_bad_smiles_gives_input_error_with_column():
    with pytest.raises(repel.InputError) as info:
        repel.build("CC(C")
    e = info.value
    assert isinstance(e, ValueError)
    assert isinstance(e.column, int) and 1 <= e.column <= 5
    assert e.text == "CC(C"
    assert e.message in str(e)
    with pytest.raises(repel.InputError) as info:
        repel.build("C[Qq]C")
    assert info.value.column == 3  # the bracket atom that is no element starts at column 3
    with pytest.raises(repel.InputError):
        repel.shape("C1CC")


def test_empty_and_impossible_inputs():
    for text in ["", "   "]:
        with pytest.raises(repel.InputError):
            repel.build(text)
    with pytest.raises(repel.InputError):
        repel.build("O", charge=1)  # the written formal charges add up to 0
    with pytest.raises(repel.InputError):
        repel.build("O", multiplicity=2)  # 10 electrons: odd multiplicities only
    with pytest.raises(repel.InputError):
        repel.build("O", multiplicity=0)


@pytest.mark.parametrize("text", ["(" * 5000 + "C", "C\x00C", "[C+99999999999]", "C1" * 300, "\xff\xfe",
                                  "C" * 20000 + "(", "F[Xe](F)(F)(F)(F)(F)(F)(F)(F)F"])
def test_hostile_text_raises_and_never_crashes(text):
    # Inputs of the kinds in tests/test_hostile.cpp: each is refused with a Python exception, never a crash.
    with pytest.raises((repel.InputError, repel.UnsupportedError)):
        repel.build(text)
    with pytest.raises((repel.InputError, repel.UnsupportedError)):
        repel.shape(text)


def test_wrong_types_give_type_error():
    for call in [lambda: repel.build(5), lambda: repel.build(b"O"), lambda: repel.build(None),
                 lambda: repel.build("O", "water"), lambda: repel.build("O", charge="1"),
                 lambda: repel.build("O", multiplicity=2.0), lambda: repel.build("O", name=3),
                 lambda: repel.build("O", refine="no"), lambda: repel.shape(1.5),
                 lambda: repel.build("O").to_text(1), lambda: repel.build("O").write(3)]:
        with pytest.raises(TypeError):
            call()


def test_exception_classes():
    assert issubclass(repel.InputError, ValueError)
    assert issubclass(repel.UnsupportedError, RuntimeError)
    assert not issubclass(repel.UnsupportedError, ValueError)
    # An f-block centre is refused as unsupported (the metal model covers the d block), as `repel build` does.
    with pytest.raises(repel.UnsupportedError) as info:
        repel.build("[Ce]")
    assert "f-block" in str(info.value)
    with pytest.raises(repel.UnsupportedError):
        repel.shape("[Ce]")


def test_docstrings_say_zero_based():
    for obj in [repel, repel.build, repel.shape, repel.Structure, repel.Structure.bonds]:
        assert "0-based" in obj.__doc__
    for obj in [repel.Structure.positions, repel.Structure.to_text, repel.Structure.write, repel.Structure.to_ase,
                repel.Structure.elements, repel.Structure.numbers, repel.Structure.charge,
                repel.Structure.multiplicity, repel.Structure.warnings, repel.Structure.name,
                repel.InputError, repel.UnsupportedError]:
        assert obj.__doc__ and len(obj.__doc__) > 20


def test_threads_build_the_same_structure():
    results = [None] * 4

    def work(k):
        results[k] = repel.build(KB101).to_text("xyz")

    threads = [threading.Thread(target=work, args=(k,)) for k in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert len(set(results)) == 1 and results[0] == repel.build(KB101).to_text("xyz")


def test_check_a_clean_build_has_no_findings():
    s = repel.build(KB101, name="kettleburn-analgesic-KB-101")
    [result] = repel.check(s)
    assert result["error"] is None and result["findings"] == []
    assert result["charge"] == 0 and result["multiplicity"] == 1
    assert result["title"] == "kettleburn-analgesic-KB-101"


def test_check_finds_a_stretched_bond_with_zero_based_atoms(tmp_path):
    s = repel.build("F[Cl](F)F", name="chlorine-trifluoride-line-sample")
    atoms = s.to_ase()
    # Pull F atom 3 away from Cl (atom 1) along their bond by 0.3 A: past the audit's 0.24 A for a bond to a
    # period-3 atom (2 x 0.12 A, check/audit.hpp), short of where bond perception would drop the bond.
    p = atoms.get_positions()
    u = (p[3] - p[1]) / np.linalg.norm(p[3] - p[1])
    p[3] += 0.3 * u
    atoms.set_positions(p)
    [result] = repel.check(atoms)
    lengths = [f for f in result["findings"] if f["kind"] == "bond length"]
    assert lengths and sorted(lengths[0]["atoms"]) == [1, 3]
    assert lengths[0]["unit"] == "angstrom"
    assert lengths[0]["measured"] - lengths[0]["expected"] == pytest.approx(0.3, abs=0.02)
    # The same structure from a file, through the command line's reader, gives the same findings.
    path = tmp_path / "clf3.xyz"
    ase_io = pytest.importorskip("ase.io")
    ase_io.write(path, atoms, format="xyz")
    from_file = repel.check(path, charge=0, multiplicity=1)
    assert [f["atoms"] for f in from_file[0]["findings"]] == [f["atoms"] for f in result["findings"]]
    assert from_file[0]["line"] == 1


def test_check_errors():
    with pytest.raises(FileNotFoundError):
        repel.check("/nonexistent/structure.xyz")
    with pytest.raises(TypeError):
        repel.check(42)
