#!/usr/bin/env python3
"""Batch records: bad records cost only themselves, pipelines, interruption and --resume, .sdf input, and ASE reading
every record of the multi-record files written.

Sources of the checks: the command-line contract (shared/docs/interface.md: the --errors format
`line<TAB>name<TAB>reason`, the summary `read N, built B, failed F`, exit statuses); ASE (Debian's python3-ase) as a
real file reader (ase.io.read with 'extxyz' for every frame of the XYZ, 'sdf' for each SD record).

  1. A .smi file with bad records mixed in (malformed SMILES, impossible valences, a 2 MiB line, binary garbage, a
     line of 5,000 random characters) and blank, blank-but-spaces and comment lines: exactly the good records are
     built, in order (the SD titles are their names), every bad one is in --errors with its line number, blank and
     comment lines are not records, the counts add up, exit status 1.
  2. Standard input and standard output: `cat file | repel build -i - --format sdf` writes the same bytes as `-o`.
  3. A run killed with SIGKILL part-way, then run again with --resume: the same bytes as a run straight through,
     with no half record; SIGINT: exit status 2, a message, every record written whole, and --resume completes it.
  4. ASE reads every frame of the XYZ and every record of the SD file of the same batch: same element counts.
  5. .sdf input: the SD file written in 4, with its coordinates scaled by 1.4 (a distorted start) and a broken record
     put in the middle, is built again: the broken record is reported with its line, the others are rebuilt with
     the same atoms and bonds, bond lengths back to those of the first build, and every tetrahedral stereocentre
     (signed volume) and double bond (torsion side) of the first build kept.

Usage: check_batch_records.py PATH/TO/repel
"""

import io
import math
import os
import re
import signal
import subprocess
import sys
import tempfile
import time
import warnings
from collections import Counter

HERE = os.path.dirname(os.path.abspath(__file__))
SOURCE = os.environ.get("REPEL_SOURCE_DIR", os.path.join(HERE, "..", ".."))
failures = []


def check(cond, message):
    if not cond:
        failures.append(message)
        print("FAIL:", message)
    return cond


def drugs():
    out = []
    with open(os.path.join(SOURCE, "benchmarks", "drug_like.smi")) as f:
        for line in f:
            if line.strip() and not line.startswith("#"):
                smiles, name = line.split(None, 1)
                out.append((smiles, name.strip()))
    return out


def summary(stderr):
    found = re.findall(r"read (\d+), built (\d+), failed (\d+)", stderr)
    return tuple(int(x) for x in found[-1]) if found else None


def read(path):
    with open(path, "rb") as f:
        return f.read()


def sd_records(data):
    parts = data.split(b"$$$$\n")
    return [p + b"$$$$\n" for p in parts[:-1]]


def bad_records(repel, tmp):
    good = drugs()[:12] + [("F[S](F)(F)F", "lab-SF4"), ("[O-][Cl+3]([O-])([O-])[O-]", "lab-perchlorate")]
    bad = [
        (b"C1CC(", b"unclosed-ring"),
        (b"C(C)(C)(C)(C)C", b"pentavalent-carbon"),
        (b"c1cccc1", b"odd-aromatic-ring"),
        (b"CC[Xx]C", b"no-such-element"),
        (b"C" * (2 << 20), b"two-mebibyte-line"),
        (bytes([0, 255, 254, 7, 128, 200, 31]) * 40, b"binary"),
        (bytes((i * 37 + 11) % 90 + 33 for i in range(5000)), b"random-characters"),
    ]
    lines, expected_bad_lines, expected_good = [], [], []
    gi = bi = 0
    pattern = "ggbg#gbgb_gsgbgg_bgggbggg"  # g good, b bad, # comment, _ blank, s spaces only
    for c in pattern:
        if c == "g" and gi < len(good):
            smiles, name = good[gi]
            gi += 1
            lines.append(f"{smiles}\t{name}".encode())
            expected_good.append(name)
        elif c == "b" and bi < len(bad):
            text, name = bad[bi]
            bi += 1
            lines.append(text + b" " + name)
            expected_bad_lines.append(len(lines))
        elif c == "#":
            lines.append(b"# a comment line of the lab's library")
        elif c == "_":
            lines.append(b"")
        elif c == "s":
            lines.append(b"   \t ")
    while gi < len(good):
        smiles, name = good[gi]
        gi += 1
        lines.append(f"{smiles} {name}".encode())
        expected_good.append(name)
    while bi < len(bad):
        text, name = bad[bi]
        bi += 1
        lines.append(text + b" " + name)
        expected_bad_lines.append(len(lines))
    path = os.path.join(tmp, "mixed.smi")
    with open(path, "wb") as f:
        f.write(b"\n".join(lines) + b"\n")
    out, err = os.path.join(tmp, "mixed.sdf"), os.path.join(tmp, "mixed.tsv")
    p = subprocess.run([repel, "build", "-i", path, "-o", out, "--errors", err], capture_output=True, timeout=600)
    stderr = p.stderr.decode(errors="replace")
    check(p.returncode == 1, f"mixed file: exit status {p.returncode}, expected 1")
    s = summary(stderr)
    n_good, n_bad = len(expected_good), len(expected_bad_lines)
    check(s == (n_good + n_bad, n_good, n_bad), f"mixed file: summary {s}, expected read {n_good + n_bad}, "
                                                f"built {n_good}, failed {n_bad}")
    titles = [r.split(b"\n", 1)[0].decode() for r in sd_records(read(out))]
    check(titles == expected_good, f"mixed file: built {titles}, expected {expected_good}")
    with open(err, "rb") as f:
        rows = [line.rstrip(b"\n").split(b"\t") for line in f]
    check(all(len(r) == 3 and r[2] for r in rows), "mixed file: an --errors line is not line<TAB>name<TAB>reason")
    got_lines = [int(r[0]) for r in rows]
    check(got_lines == expected_bad_lines, f"mixed file: --errors lines {got_lines}, expected {expected_bad_lines}")
    long_row = [r for r in rows if int(r[0]) == expected_bad_lines[4]]
    check(long_row and b"too long" in long_row[0][2], "mixed file: the 2 MiB line is not reported as too long")
    print(f"mixed file: {n_good} built, {n_bad} failed at lines {got_lines}")
    return path


def pipes(repel, tmp, smi):
    ref = os.path.join(tmp, "pipe-ref.sdf")
    subprocess.run([repel, "build", "-i", smi, "-o", ref], capture_output=True, timeout=600)
    with open(smi, "rb") as f:
        p = subprocess.run([repel, "build", "-i", "-", "--format", "sdf", "--threads", "2"], stdin=f,
                           capture_output=True, timeout=600)
    check(p.stdout == read(ref), "standard input to standard output differs from -i FILE -o FILE")
    check(summary(p.stderr.decode()) is not None, "no summary line on standard error in a pipe")
    check(b"\r" not in p.stderr, "a progress line was drawn although standard error is not a terminal")


def progress_on_terminal(repel, tmp):
    """Standard error on a pseudo-terminal: the progress line is drawn (and cleared at the end); in a pipe, none."""
    import pty
    smi = library(tmp, 300)
    master, slave = pty.openpty()
    proc = subprocess.Popen([repel, "build", "-i", smi, "-o", os.path.join(tmp, "tty.sdf")], stdout=subprocess.DEVNULL,
                            stderr=slave)
    os.close(slave)
    seen = b""
    while True:
        try:
            data = os.read(master, 65536)
        except OSError:
            break
        if not data:
            break
        seen += data
    proc.wait(timeout=600)
    os.close(master)
    text = seen.decode(errors="replace")
    check(re.search(r"\r\x1b\[K\d+ done, \d+/s, \d+%.*, 0 failed", text) is not None,
          f"no progress line on a terminal: {text[:300]!r}")
    check(text.rstrip().endswith("read 300, built 300, failed 0"), f"terminal: the summary is not the last line: {text[-200:]!r}")
    print("progress line drawn on a terminal, none in a pipe")


def library(tmp, count):
    d = drugs()
    path = os.path.join(tmp, f"library{count}.smi")
    with open(path, "w") as f:
        for i in range(count):
            f.write(f"{d[i % len(d)][0]} compound-{i + 1}\n")
    return path


def wait_for_progress(checkpoint, minimum, proc, limit=300):
    t0 = time.time()
    while time.time() - t0 < limit and proc.poll() is None:
        try:
            with open(checkpoint) as f:
                m = re.search(r"consumed (\d+)", f.read())
            if m and int(m.group(1)) >= minimum:
                return True
        except OSError:
            pass
        time.sleep(0.05)
    return False


def resume(repel, tmp):
    # Long enough that a run cannot finish before its first checkpoint (written at most once a second): 8,000 drug
    # molecules take over 3 s on two threads even on a quiet machine (about 1,700-2,000 a second there, measured).
    count = 8000
    smi = library(tmp, count)
    ref, ref_err = os.path.join(tmp, "straight.xyz"), os.path.join(tmp, "straight.tsv")
    subprocess.run([repel, "build", "-i", smi, "-o", ref, "--errors", ref_err], capture_output=True, timeout=900)
    for sig in (signal.SIGKILL, signal.SIGINT):
        out, err = os.path.join(tmp, f"cut{sig}.xyz"), os.path.join(tmp, f"cut{sig}.tsv")
        proc = subprocess.Popen([repel, "build", "-i", smi, "-o", out, "--errors", err, "--threads", "2"],
                                stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
        reached = wait_for_progress(out + ".checkpoint", 300, proc)
        proc.send_signal(sig)
        _, stderr = proc.communicate(timeout=300)
        stderr = stderr.decode(errors="replace")
        if not check(reached, f"signal {sig}: the run ended before 300 records were checkpointed"):
            continue
        check(not os.path.exists(out), f"signal {sig}: the output file exists although the run did not finish")
        check(os.path.exists(out + ".partial") and os.path.exists(out + ".checkpoint"),
              f"signal {sig}: no partial output and checkpoint left for --resume")
        if sig == signal.SIGINT:
            check(proc.returncode == 2, f"SIGINT: exit status {proc.returncode}, expected 2")
            check("--resume" in stderr and "interrupted" in stderr, f"SIGINT: no message naming --resume: {stderr}")
            with open(out + ".checkpoint") as f:
                size = int(re.search(r"output_bytes (\d+)", f.read()).group(1))
            check(os.path.getsize(out + ".partial") == size, "SIGINT: the partial file holds more than its whole records")
        p = subprocess.run([repel, "build", "-i", smi, "-o", out, "--errors", err, "--threads", "2", "--resume"],
                           capture_output=True, text=True, timeout=900)
        check(p.returncode in (0, 1) and "resuming after input record" in p.stderr,
              f"signal {sig}: --resume exit {p.returncode}: {p.stderr[-500:]}")
        check(summary(p.stderr) == (count, count - len(read(ref_err).splitlines()), len(read(ref_err).splitlines())),
              f"signal {sig}: summary after --resume {summary(p.stderr)} does not count the whole input")
        check(os.path.exists(out) and read(out) == read(ref), f"signal {sig}: resumed output differs from a straight run")
        check(os.path.exists(err) and read(err) == read(ref_err), f"signal {sig}: resumed --errors differs")
        check(not os.path.exists(out + ".checkpoint"), f"signal {sig}: the checkpoint is left after completion")
        print(f"signal {sig}: interrupted, resumed, identical to the straight run")


def parse_sd(record):
    """Elements, coordinates and bonds of a V2000 record, by the CTfile fixed columns."""
    lines = record.decode().split("\n")
    na, nb = int(lines[3][0:3]), int(lines[3][3:6])
    atoms = [(l[31:34].strip(), [float(l[0:10]), float(l[10:20]), float(l[20:30])]) for l in lines[4:4 + na]]
    bonds = [(int(l[0:3]) - 1, int(l[3:6]) - 1, int(l[6:9])) for l in lines[4 + na:4 + na + nb]]
    return atoms, bonds, lines


def ase_reads(repel, tmp):
    from ase.io import read as ase_read
    smi = library(tmp, 150)
    xyz, sdf = os.path.join(tmp, "lib.xyz"), os.path.join(tmp, "lib.sdf")
    for path in (xyz, sdf):
        subprocess.run([repel, "build", "-i", smi, "-o", path], capture_output=True, timeout=600)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        frames = ase_read(xyz, index=":", format="extxyz")
        records = sd_records(read(sdf))
        check(len(frames) == len(records) == 150, f"ASE read {len(frames)} XYZ frames, {len(records)} SD records")
        for i, rec in enumerate(records):
            mol = ase_read(io.StringIO(rec.decode()), format="sdf")
            if Counter(mol.get_chemical_symbols()) != Counter(frames[i].get_chemical_symbols()):
                check(False, f"record {i + 1}: ASE reads different atoms from the SD record and the XYZ frame")
                break
    print(f"ASE: {len(frames)} XYZ frames and {len(records)} SD records read")
    return sdf


def volume(p, c, a, b, d):
    u = [p[a][k] - p[c][k] for k in range(3)]
    v = [p[b][k] - p[c][k] for k in range(3)]
    w = [p[d][k] - p[c][k] for k in range(3)]
    return u[0] * (v[1] * w[2] - v[2] * w[1]) - u[1] * (v[0] * w[2] - v[2] * w[0]) + u[2] * (v[0] * w[1] - v[1] * w[0])


def dihedral(p, a, b, c, d):
    def sub(x, y): return [x[k] - y[k] for k in range(3)]
    def cross(x, y): return [x[1] * y[2] - x[2] * y[1], x[2] * y[0] - x[0] * y[2], x[0] * y[1] - x[1] * y[0]]
    def dot(x, y): return sum(x[k] * y[k] for k in range(3))
    b1, b2, b3 = sub(p[b], p[a]), sub(p[c], p[b]), sub(p[d], p[c])
    n1, n2 = cross(b1, b2), cross(b2, b3)
    return dot(n1, n2) / math.sqrt(dot(n1, n1) * dot(n2, n2) + 1e-30)


def sdf_input(repel, tmp, sdf):
    records = sd_records(read(sdf))
    distorted = []
    for rec in records:
        atoms, bonds, lines = parse_sd(rec)
        na = len(atoms)
        for i in range(4, 4 + na):
            l = lines[i]
            x, y, z = (float(l[0:10]) * 1.4, float(l[10:20]) * 1.4, float(l[20:30]) * 1.4)
            lines[i] = f"{x:10.4f}{y:10.4f}{z:10.4f}" + l[30:]
        distorted.append("\n".join(lines).encode())
    broken = b"broken-record\n  lab\n\n  3  2  0  0  0  0  0  0  0  0999 V2000\n    0.0 nonsense\nM  END\n$$$$\n"
    middle = len(distorted) // 2
    data = b"".join(distorted[:middle]) + broken + b"".join(distorted[middle:])
    broken_line = b"".join(distorted[:middle]).count(b"\n") + 1
    path, out, err = os.path.join(tmp, "in.sdf"), os.path.join(tmp, "rebuilt.sdf"), os.path.join(tmp, "in.tsv")
    with open(path, "wb") as f:
        f.write(data)
    p = subprocess.run([repel, "build", "-i", path, "-o", out, "--errors", err], capture_output=True, text=True,
                       timeout=600)
    check(p.returncode == 1 and summary(p.stderr) == (len(records) + 1, len(records), 1),
          f"sdf input: exit {p.returncode}, summary {summary(p.stderr)}: {p.stderr[-800:]}")
    rows = [l.split("\t") for l in read(err).decode().splitlines()]
    check(len(rows) == 1 and int(rows[0][0]) == broken_line and rows[0][1] == "broken-record",
          f"sdf input: --errors {rows}, expected the broken record at line {broken_line}")
    rebuilt = sd_records(read(out))
    check(len(rebuilt) == len(records), f"sdf input: {len(rebuilt)} records rebuilt of {len(records)}")
    kept_centres = kept_bonds = 0
    for i, (a, b) in enumerate(zip(records, rebuilt)):
        atoms0, bonds0, _ = parse_sd(a)
        atoms1, bonds1, _ = parse_sd(b)
        if [s for s, _ in atoms0] != [s for s, _ in atoms1] or sorted(bonds0) != sorted(bonds1):
            check(False, f"sdf input record {i + 1}: atoms or bonds changed")
            continue
        p0 = [c for _, c in atoms0]
        p1 = [c for _, c in atoms1]
        worst = max(abs(math.dist(p0[x], p0[y]) - math.dist(p1[x], p1[y])) for x, y, _ in bonds0)
        if not check(worst < 0.1, f"sdf input record {i + 1}: a bond length differs by {worst:.3f} A from the first build"):
            continue
        nbrs = {k: [] for k in range(len(atoms0))}
        for x, y, o in bonds0:
            nbrs[x].append(y)
            nbrs[y].append(x)
        for c, ns in nbrs.items():
            if len(ns) == 4 and sum(atoms0[n][0] == "H" for n in ns) < 2:
                v0, v1 = volume(p0, c, ns[1], ns[2], ns[3]), volume(p1, c, ns[1], ns[2], ns[3])
                if abs(v0) > 0.3:
                    kept_centres += 1
                    check(v0 * v1 > 0, f"sdf input record {i + 1}: atom {c + 1} changed handedness")
        for x, y, o in bonds0:
            if o == 2 and len(nbrs[x]) > 1 and len(nbrs[y]) > 1:
                rx = [n for n in nbrs[x] if n != y][0]
                ry = [n for n in nbrs[y] if n != x][0]
                d0, d1 = dihedral(p0, rx, x, y, ry), dihedral(p1, rx, x, y, ry)
                if abs(d0) > 0.5:
                    kept_bonds += 1
                    check(d0 * d1 > 0, f"sdf input record {i + 1}: double bond {x + 1}={y + 1} changed configuration")
    print(f"sdf input: {len(rebuilt)} records rebuilt from distorted coordinates; {kept_centres} tetrahedral centres "
          f"and {kept_bonds} double bonds compared; broken record reported at line {broken_line}")


def main():
    repel = sys.argv[1]
    with tempfile.TemporaryDirectory() as tmp:
        smi = bad_records(repel, tmp)
        pipes(repel, tmp, smi)
        progress_on_terminal(repel, tmp)
        resume(repel, tmp)
        sdf = ase_reads(repel, tmp)
        sdf_input(repel, tmp, sdf)
    if failures:
        print(f"{len(failures)} failures")
        sys.exit(1)
    print("PASS")


if __name__ == "__main__":
    main()
