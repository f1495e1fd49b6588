"""repel.build_conformers (python/module.cpp): the ensemble of `repel build TEXT --conformers N`, byte for byte, with
each Structure's .conformer; run by ctest (label python) like test_module.py."""
import os
import subprocess
from pathlib import Path

import pytest

import repel

SOURCE_DIR = Path(__file__).resolve().parents[2]
REPEL_EXE = os.environ.get("REPEL_EXE", str(SOURCE_DIR / "build" / "bin" / "repel"))

# An invented compound of the (invented) Kettleburn Halide Laboratory's stock list: a flexible amino ester.
KB214 = "CCOC(=O)[C@@H](Cc1ccc(Cl)cc1)NC(=O)CCC"


def test_same_records_as_the_command_line():
    ensemble = repel.build_conformers(KB214, count=6, name="KB-214")
    assert 2 <= len(ensemble) <= 6
    cli = subprocess.run([REPEL_EXE, "build", KB214, "--name", "KB-214", "--conformers", "6", "--format", "sdf"],
                         check=True, capture_output=True).stdout.decode()
    assert "".join(s.to_text("sdf") for s in ensemble) == cli


def test_conformer_fields():
    ensemble = repel.build_conformers("CCCC")
    assert [s.conformer["rank"] for s in ensemble] == [1, 2]
    assert all(s.conformer["count"] == 2 for s in ensemble)
    assert ensemble[0].conformer["relative_energy"] == 0.0
    assert ensemble[1].conformer["rmsd_to_first"] > 0.5
    assert repel.build("CCCC").conformer is None


def test_options_and_errors():
    assert len(repel.build_conformers("CCCCCC", count=1)) == 1
    a = repel.build_conformers("CCCCCCO", count=5, seed=3)
    b = repel.build_conformers("CCCCCCO", count=5, seed=3)
    assert [s.positions.tolist() for s in a] == [s.positions.tolist() for s in b]
    with pytest.raises(repel.InputError):
        repel.build_conformers("CCCC", count=0)
    with pytest.raises(repel.InputError):
        repel.build_conformers("C(C", count=3)
    with pytest.raises(TypeError):
        repel.build_conformers(42)
