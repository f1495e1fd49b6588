"""Tests of repel.build_many (streaming builds on worker threads) and of repel.check's smiles= and fix=, run by ctest
(label python) with PYTHONPATH at the build's python/ and REPEL_EXE at the built command line.
"""
import os
import subprocess
import threading
from pathlib import Path

import numpy as np
import pytest

import repel

SOURCE_DIR = Path(__file__).resolve().parents[2]
REPEL_EXE = os.environ.get("REPEL_EXE", str(SOURCE_DIR / "build" / "bin" / "repel"))


def lab_records():
    """(SMILES, name) of the (invented) Kettleburn Halide Laboratory's stock list, samples/halide-lab.smi."""
    out = []
    for line in (SOURCE_DIR / "samples" / "halide-lab.smi").read_text().splitlines():
        if line.strip() and not line.startswith("#"):
            text, _, name = line.partition(" ")
            out.append((text, name.strip() or None))
    return out


def test_results_in_input_order_with_failures_in_place():
    records = ["O", "CC(C", ("N", "ammonia"), 42, "", ("[Ce]", "cerium"), ("C", None), b"O"]
    out = list(repel.build_many(records, threads=2))
    assert len(out) == len(records)  # no record lost
    assert isinstance(out[0], repel.Structure) and out[0].elements == ["O", "H", "H"]
    bad = out[1]
    assert isinstance(bad, repel.Failure) and not bad
    assert (bad.index, bad.text, bad.name, bad.error) == (1, "CC(C", None, "InputError")
    assert isinstance(bad.column, int) and 1 <= bad.column <= 5 and bad.message
    assert out[2].name == "ammonia" and out[2].elements[0] == "N"
    assert (out[3].index, out[3].error, out[3].text) == (3, "TypeError", "42")
    assert "str or a (text, name) tuple" in out[3].message
    assert (out[4].index, out[4].error) == (4, "InputError")
    assert (out[5].error, out[5].name) == ("UnsupportedError", "cerium")
    assert out[6].name is None and len(out[6]) == 5
    assert (out[7].error, out[7].text) == ("TypeError", "b'O'")
    assert "repel.Failure 1" in repr(bad)
    assert all(bool(s) for s in out if isinstance(s, repel.Structure))  # a Structure is always True


def test_same_as_build_for_every_record():
    records = lab_records()
    assert len(records) > 10
    for record, got in zip(records, repel.build_many(records, threads=2)):
        text, name = record
        try:
            want = repel.build(text, name=name).to_text("sdf")
        except (repel.InputError, repel.UnsupportedError) as e:
            assert isinstance(got, repel.Failure) and got.message in str(e)
            continue
        assert got.to_text("sdf") == want


@pytest.mark.parametrize("threads", [1, 2, 3, 8])
def test_identical_results_for_any_thread_count(threads):
    # More records than one chunk (64 at least), from a generator, so that chunks and threads both vary.
    records = [("CC(=O)Oc1ccccc1C(=O)O", "kb-101"), "F[Cl](F)F", "NO2", "C1CCCCC1", "c1ccc2ccccc2c1", "X"] * 25
    one = [s.to_text("xyz") if s else (s.index, s.error, s.message) for s in repel.build_many(iter(records), threads=1)]
    got = [s.to_text("xyz") if s else (s.index, s.error, s.message)
           for s in repel.build_many((r for r in records), threads=threads)]
    assert got == one and len(got) == 150


def test_keyword_arguments_apply_to_every_record():
    [a, b] = repel.build_many(["O=O", "O=O"], refine=False, multiplicity=1)
    assert a.multiplicity == 1 and a.to_text("sdf") == repel.build("O=O", refine=False, multiplicity=1).to_text("sdf")
    assert b.to_text("sdf") == a.to_text("sdf")
    [f] = repel.build_many(["XeF4"], notation="smiles")
    assert f.error == "InputError"
    [x] = repel.build_many(["XeF4"], notation="formula")
    assert x.elements[0] == "Xe"
    assert list(repel.build_many([])) == []


def test_bad_arguments():
    with pytest.raises(ValueError, match="threads must be from 1 to 1024"):
        repel.build_many(["O"], threads=0)
    with pytest.raises(ValueError):
        repel.build_many(["O"], threads=100_000)
    with pytest.raises(TypeError):
        repel.build_many(5)
    with pytest.raises(TypeError):
        repel.build_many(["O"], threads="two")

    def broken():
        yield "O"
        raise KeyError("the iterable's own error")

    # The iterable's own error ends the stream, after every record it gave before it.
    stream = repel.build_many(broken())
    assert next(stream).elements == ["O", "H", "H"]
    with pytest.raises(KeyError, match="the iterable's own error"):
        next(stream)
    with pytest.raises(StopIteration):
        next(stream)
    [u] = repel.build_many(["C\ud800"])  # a lone surrogate: no UTF-8 for it
    assert (u.error, u.index) == ("UnicodeEncodeError", 0)


def test_build_notation():
    assert repel.build("XeF4", notation="formula").elements[0] == "Xe"
    with pytest.raises(repel.InputError):
        repel.build("XeF4", notation="smiles")
    with pytest.raises(repel.InputError) as info:
        repel.build("O", notation="inchi")
    assert "notation" in str(info.value)


def stretched_clf3(tmp_path):
    """ClF3 with F atom 3 pulled 0.3 A away from Cl, as an XYZ file."""
    s = repel.build("F[Cl](F)F", name="chlorine-trifluoride-line-sample")
    p = s.positions
    p[3] += 0.3 * (p[3] - p[1]) / np.linalg.norm(p[3] - p[1])
    path = tmp_path / "clf3.xyz"
    lines = [str(len(s)), "chlorine-trifluoride-line-sample"]
    lines += [f"{e} {x:.6f} {y:.6f} {z:.6f}" for e, (x, y, z) in zip(s.elements, p)]
    path.write_text("\n".join(lines) + "\n")
    return path


def test_check_fix_gives_the_cleaned_structure_as_the_command_line(tmp_path):
    path = stretched_clf3(tmp_path)
    [r] = repel.check(path, fix=True)
    assert any(f["kind"] == "bond length" for f in r["findings"])
    fixed = r["fixed"]
    assert isinstance(fixed, repel.Structure) and fixed.elements == ["F", "Cl", "F", "F"]
    assert r["fix_summary"]
    stretched = next(f["measured"] for f in r["findings"] if f["kind"] == "bond length")
    assert np.linalg.norm(fixed.positions[3] - fixed.positions[1]) < stretched - 0.1  # pulled back in
    # The cleaned structure is what `repel check --fix -o FILE` writes, byte for byte.
    out = tmp_path / "fixed.xyz"
    # (exit status 1: the file had findings, docs/interface.md)
    assert subprocess.run([REPEL_EXE, "check", str(path), "--fix", "-o", str(out)], capture_output=True).returncode == 1
    assert fixed.to_text("xyz").encode() == out.read_bytes()
    [again] = repel.check(fixed, charge=0, multiplicity=1)
    assert not any(f["kind"] == "bond length" for f in again["findings"])
    [plain] = repel.check(path)
    assert plain["fixed"] is None and plain["fix_summary"] is None


def test_check_smiles_names_the_molecule_meant(tmp_path):
    path = stretched_clf3(tmp_path)
    [same] = repel.check(path, smiles="F[Cl](F)F")
    assert same["error"] is None
    [other] = repel.check(path, smiles="FCl")  # not the molecule in the file: a finding or an error says so
    assert other["error"] is not None or len(other["findings"]) > len(same["findings"])


def test_a_library_written_is_the_command_lines_file(tmp_path):
    # The README's example: the stock list through build_many, written as one SD file, is byte for byte what
    # `repel build -i samples/halide-lab.smi -o FILE` writes (an SD file is its records one after another).
    out = tmp_path / "cli.sdf"
    subprocess.run([REPEL_EXE, "build", "-i", str(SOURCE_DIR / "samples" / "halide-lab.smi"), "-o", str(out)],
                   check=True, capture_output=True)
    results = list(repel.build_many(lab_records(), threads=2))
    assert all(results)
    assert "".join(s.to_text("sdf") for s in results).encode() == out.read_bytes()
    checked = repel.check(out)
    assert len(checked) == len(results) and all(r["error"] is None for r in checked)


def test_the_iterator_refuses_to_be_advanced_while_it_fills_a_chunk():
    # As a running generator refuses next(): an iterable that advances the stream it feeds gets a ValueError, which
    # ends the stream after the records before it, and no record is handed out unbuilt.
    stream = None

    def feeding():
        yield "O"
        next(stream)
        yield "N"

    stream = repel.build_many(feeding())
    assert next(stream).elements == ["O", "H", "H"]
    with pytest.raises(ValueError, match="already executing"):
        next(stream)


def test_two_python_threads_share_one_stream():
    # A thread that calls next() while the other fills a chunk gets ValueError and tries again; every record is
    # handed out once, built.
    stream = repel.build_many(["CC(=O)Oc1ccccc1C(=O)O"] * 300, threads=1)
    got = []

    def consume():
        while True:
            try:
                s = next(stream)
            except StopIteration:
                return
            except ValueError:
                continue  # the other thread is filling a chunk
            got.append(s)

    workers = [threading.Thread(target=consume) for _ in range(2)]
    for w in workers:
        w.start()
    for w in workers:
        w.join()
    assert len(got) == 300 and all(isinstance(s, repel.Structure) for s in got)
    assert len({s.to_text("xyz") for s in got}) == 1
