#!/usr/bin/env python3
"""Conformer ensembles in a batch (`repel build -i FILE --conformers N`): the same bytes whatever the parallelism, each
molecule's conformers consecutive and distinct, read back by ASE (a real file reader).

Input: the first 40 molecules of benchmarks/drug_like.smi and five metal complexes of tests/data/metal_complexes.tsv.
Checks (each could fail):
  1. --threads 1, 2 and 4: identical SD files; MPI (second argument, repel-mpi under $REPEL_MPIEXEC) with 2 ranks
     identical too; the summary counts every molecule built;
  2. each molecule's records are consecutive, numbered 1..k (k <= N, the > <conformers> item equal to k), energies
     rising with rank, the first one's RMSD to itself 0, and the batch's records of a molecule byte-identical to
     `repel build SMILES --conformers N` run alone;
  3. ASE (python3-ase, ase.io.read, index ':') reads every record of the SD file and of the multi-frame XYZ file; the
     heavy atoms of any two conformers of one molecule are at least the RMSD threshold apart, measured here on ASE's
     coordinates independently of repel: the least RMSD over every mapping of the heavy atoms that keeps elements,
     hydrogen counts and bonds (graph_isomorphisms of common.py; mirror images not compared, so this is the
     weaker of the two measures where repel also compares the mirror image of an achiral molecule);
  4. JSON: one array whose length is the number of records;
  5. a --resume with other conformer options than the interrupted run's is refused.
Usage: check_batch_conformers.py PATH/TO/repel [PATH/TO/repel-mpi]
"""

import os
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from common import Tally, graph_isomorphisms, kabsch_rmsd, neighbours, perceive_bonds  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
SOURCE = os.environ.get("REPEL_SOURCE_DIR", os.path.join(HERE, "..", ".."))
COUNT = 5
THRESHOLD = 0.5  # repel's default --conformer-rmsd


def molecules():
    out = []
    with open(os.path.join(SOURCE, "benchmarks", "drug_like.smi")) as f:
        for line in f:
            if line.strip() and not line.startswith("#"):
                smiles, name = line.split(None, 1)
                out.append((smiles, name.strip()))
    out = out[:40]
    with open(os.path.join(SOURCE, "tests", "data", "metal_complexes.tsv")) as f:
        rows = [l.rstrip("\n").split("\t") for l in f if l.strip() and not l.startswith("#") and not l.startswith("name\t")]
    for fields in rows[:5]:
        out.append((fields[1], fields[0].replace(" ", "_")))
    return out


def sd_records(text):
    return [r + "$$$$\n" for r in text.split("$$$$\n") if r.strip()]


def data_item(record, key):
    lines = record.splitlines()
    for i, line in enumerate(lines):
        if line == f"> <{key}>":
            return lines[i + 1]
    return None


def least_rmsd(a, b, mappings):
    return min(kabsch_rmsd(a, b[m]) for m in mappings)


def main():
    repel = sys.argv[1]
    repel_mpi = sys.argv[2] if len(sys.argv) > 2 else None
    t = Tally()
    tmp = tempfile.mkdtemp(prefix="repel-conformers-")
    mols = molecules()
    smi = os.path.join(tmp, "in.smi")
    with open(smi, "w") as f:
        for smiles, name in mols:
            f.write(f"{smiles} {name}\n")

    outputs = {}
    for threads in (1, 2, 4):
        out = os.path.join(tmp, f"t{threads}.sdf")
        p = subprocess.run([repel, "build", "-i", smi, "-o", out, "--conformers", str(COUNT), "--threads",
                            str(threads)], capture_output=True, text=True, timeout=1200)
        t.check(p.returncode == 0 and f"read {len(mols)}, built {len(mols)}, failed 0" in p.stderr,
                f"--threads {threads}: exit {p.returncode}, {p.stderr[-500:]}")
        outputs[threads] = open(out).read() if os.path.exists(out) else ""
    t.check(outputs[1] == outputs[2] == outputs[4], "--threads 1, 2, 4 give different files")
    if repel_mpi:
        mpiexec = os.environ.get("REPEL_MPIEXEC") or "mpirun"
        out = os.path.join(tmp, "mpi2.sdf")
        # The environment of check_batch_identity.py: root allowed in containers, the TCP and shared-memory transports,
        # no cross-memory copy, leaks inside Open MPI not reported (its own allocations; see that script).
        env = dict(os.environ, OMPI_ALLOW_RUN_AS_ROOT="1", OMPI_ALLOW_RUN_AS_ROOT_CONFIRM="1",
                   OMPI_MCA_btl="self,tcp,vader", OMPI_MCA_rmaps_base_oversubscribe="1",
                   OMPI_MCA_btl_vader_single_copy_mechanism="none")
        env["ASAN_OPTIONS"] = (env.get("ASAN_OPTIONS", "") + ":detect_leaks=0").lstrip(":")
        p = subprocess.run([mpiexec, "--oversubscribe", "-np", "2", repel_mpi, "build", "-i", smi, "-o", out,
                            "--conformers", str(COUNT)], capture_output=True, text=True, timeout=1200, env=env)
        t.check(p.returncode == 0 and os.path.exists(out) and open(out).read() == outputs[1],
                f"mpirun -np 2 differs from --threads 1 (exit {p.returncode})")
    else:
        print("SKIPPED: the MPI identity (no repel-mpi given: Open MPI is not installed; scripts/setup.sh installs it)")

    records = sd_records(outputs[1])
    by_name = {}
    order = []
    for r in records:
        name = r.splitlines()[0]
        if name not in by_name:
            order.append(name)
        by_name.setdefault(name, []).append(r)
    t.check(order == [n for _, n in mols], "molecules not in input order, or a molecule's conformers not consecutive")
    total_conformers = 0
    for (smiles, name) in mols:
        rs = by_name.get(name, [])
        total_conformers += len(rs)
        ranks = [int(data_item(r, "conformer")) for r in rs]
        counts = {int(data_item(r, "conformers")) for r in rs}
        energies = [float(data_item(r, "energy")) for r in rs]
        ok = ranks == list(range(1, len(rs) + 1)) and counts == {len(rs)} and 1 <= len(rs) <= COUNT
        ok = ok and all(energies[k] <= energies[k + 1] + 1e-9 for k in range(len(rs) - 1))
        ok = ok and float(data_item(rs[0], "rmsd_to_first")) == 0.0
        t.check(ok, f"{name}: ranks {ranks}, counts {counts}, energies {energies}")
    print(f"{len(mols)} molecules, {total_conformers} conformers "
          f"({total_conformers / len(mols):.1f} a molecule, at most {COUNT})")
    # A few molecules alone give the batch's records.
    for smiles, name in mols[:3] + mols[-2:]:
        p = subprocess.run([repel, "build", smiles, "--name", name, "--conformers", str(COUNT), "--format", "sdf"],
                           capture_output=True, text=True, timeout=120)
        t.check(p.returncode == 0 and p.stdout == "".join(by_name.get(name, [])),
                f"{name}: alone differs from its batch records")

    # ASE reads the SD and XYZ files; distinctness measured on ASE's coordinates.
    xyz = os.path.join(tmp, "t1.xyz")
    subprocess.run([repel, "build", "-i", smi, "-o", xyz, "--conformers", str(COUNT)], capture_output=True,
                   timeout=1200)
    try:
        import ase.io
        # ASE's SD reader takes the first record of a file only: each record is read from a file of its own.
        frames_sdf = []
        for k, r in enumerate(records):
            path = os.path.join(tmp, f"record{k}.sdf")
            with open(path, "w") as f:
                f.write(r)
            frames_sdf.append(ase.io.read(path, format="sdf"))
        frames_xyz = ase.io.read(xyz, index=":", format="extxyz")
        t.check(len(frames_sdf) == total_conformers, f"ASE read {len(frames_sdf)} SD records of {total_conformers}")
        t.check(len(frames_xyz) == total_conformers, f"ASE read {len(frames_xyz)} XYZ frames of {total_conformers}")
        t.check(all(f.info.get("conformer") is not None for f in frames_xyz), "an XYZ frame without conformer=")
        k = 0
        closest = 1e9
        for smiles, name in mols:
            n = len(by_name.get(name, []))
            frames = frames_sdf[k:k + n]
            k += n
            if n < 2:
                continue
            symbols = frames[0].get_chemical_symbols()
            all_bonds = perceive_bonds(symbols, frames[0].positions)
            hydrogens = [0] * len(symbols)
            for a, b in all_bonds:
                if symbols[a] == "H":
                    hydrogens[b] += 1
                if symbols[b] == "H":
                    hydrogens[a] += 1
            heavy = [i for i, s in enumerate(symbols) if s != "H"]
            sym = [f"{symbols[i]}H{hydrogens[i]}" for i in heavy]  # a carboxylic acid's OH is not its =O
            coords0 = frames[0].positions[heavy]
            bonds = perceive_bonds([symbols[i] for i in heavy], coords0)
            adj = neighbours(len(sym), bonds)
            mappings = [np.array(m) for _, m in zip(range(200), graph_isomorphisms(sym, adj, sym, adj))]
            for i in range(n):
                for j in range(i):
                    d = least_rmsd(frames[i].positions[heavy], frames[j].positions[heavy], mappings)
                    closest = min(closest, d)
                    t.check(d >= THRESHOLD - 0.01, f"{name}: conformers {j + 1} and {i + 1} only {d:.3f} A apart")
        print(f"closest pair of conformers of one molecule (ASE's coordinates, symmetry allowed): "
              f"{closest:.3f} A (threshold {THRESHOLD})")
    except ImportError:
        print("SKIPPED: ASE (python3-ase) is not installed; scripts/setup.sh installs it")

    js = os.path.join(tmp, "t1.json")
    subprocess.run([repel, "build", "-i", smi, "-o", js, "--conformers", str(COUNT)], capture_output=True, timeout=1200)
    import json
    doc = json.load(open(js))
    t.check(isinstance(doc, list) and len(doc) == total_conformers, "JSON is not one array of every conformer")

    # An interrupted run resumes to the same file; a --resume with other conformer options is refused (the checkpoint
    # names the options of the run it belongs to).
    import signal
    import time
    big = os.path.join(tmp, "big.smi")
    with open(big, "w") as f:
        for k in range(20):
            for smiles, name in mols:
                f.write(f"{smiles} {name}-{k}\n")
    full = os.path.join(tmp, "full.sdf")
    subprocess.run([repel, "build", "-i", big, "-o", full, "--conformers", "3", "--threads", "1"],
                   capture_output=True, timeout=1200)
    part = os.path.join(tmp, "part.sdf")
    p = subprocess.Popen([repel, "build", "-i", big, "-o", part, "--conformers", "3", "--threads", "1"],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    time.sleep(0.3)
    p.send_signal(signal.SIGINT)
    p.communicate(timeout=600)
    interrupted = p.returncode == 2
    if interrupted:
        q = subprocess.run([repel, "build", "-i", big, "-o", part, "--conformers", "4", "--resume"],
                           capture_output=True, text=True, timeout=1200)
        t.check(q.returncode == 2 and "another run" in q.stderr,
                f"a --resume with other --conformers was not refused: exit {q.returncode} {q.stderr[-300:]}")
        q = subprocess.run([repel, "build", "-i", big, "-o", part, "--conformers", "3", "--resume"],
                           capture_output=True, text=True, timeout=1200)
        t.check(q.returncode == 0 and open(part).read() == open(full).read(),
                f"the resumed run differs from the whole run (exit {q.returncode})")
    else:
        print("the run ended before the interruption: resume not checked this time")
    t.finish(tmp)


if __name__ == "__main__":
    main()
