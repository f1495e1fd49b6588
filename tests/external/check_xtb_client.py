#!/usr/bin/env python3
"""xtb as the real client of repel's structures (issue 3).

Usage (ctest): /usr/bin/python3 check_xtb_client.py PATH/TO/repel [--jobs N]

Client: xtb, Debian package `xtb` (/usr/bin/xtb), GFN2-xTB, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15
(2019) 1652 (reference-data.md). A starting geometry is good when xtb's optimisation from it keeps the connectivity
and the stereochemistry, needs few cycles and moves atoms little.

For every molecule of tests/data/xtb_molecules.smi (drugs, natural products with several stereocentres, cages,
macrocycles, salts, hypervalent sulfur and phosphorus, one radical):
  1. `repel build SMILES -o m.xyz` and `-o m.sdf` (same coordinates; the SD file gives the program's bond graph);
  2. `xtb m.xyz --opt normal --gfn 2 --chrg C --uhf U` with OMP_NUM_THREADS=1 in a temporary folder, C and U taken
     from the charge= and multiplicity= of the XYZ comment; at most two xtb processes at a time, a timeout each;
  3. checks, on the start (repel's structure) and on the optimum (xtbopt.xyz):
     - connectivity: bonds perceived with 1.25 x the sum of the covalent radii of Cordero et al., Dalton Trans.
       (2008) 2832 (common practice) equal the bonds of the SD file; contacts of an alkali or alkaline-earth cation
       with its counter-ion are ionic, not bonds, and are left out (common practice);
     - stereocentres marked @ or @@: the handedness of the start is the one the OpenSMILES specification defines for
       the mark (looking from the first neighbour, the others anticlockwise for @), and the signed volume keeps its
       sign through the optimisation;
     - double bonds marked with / and \\: cis or trans as written (OpenSMILES), in the start and the optimum
       (dihedral of the marked neighbours below or above 90 deg);
     - the optimisation converged;
  4. records the heavy-atom RMSD start-to-optimum (Kabsch, Acta Cryst. A32 (1976) 922) and the cycle count, and
     prints their medians (not asserted: figures for the README).
One SD file is also optimised by xtb (`xtb m.sdf`), to show xtb reads repel's SDF: it must converge to the same
energy as from the XYZ file and keep the connectivity.
Closes with `N passed, M failed`; exits 1 on any failure.
"""

import concurrent.futures
import os
import re
import statistics
import subprocess
import sys
import tempfile
import time

import numpy as np

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from common import (IONIC_METALS, SmilesStereo, Tally, dihedral_deg, expected_chiral_sign,  # noqa: E402
                    kabsch_rmsd, neighbours, parse_sdf_bonds, parse_xyz, perceive_bonds, resolve_neighbour_order,
                    run_repel, signed_volume)

HERE = os.path.dirname(os.path.abspath(__file__))
MOLECULES = os.path.join(HERE, '..', 'data', 'xtb_molecules.smi')
XTB = '/usr/bin/xtb'
XTB_TIMEOUT = 600          # seconds per molecule: a guard against a hung run only (the slowest molecule takes about
                           # 30-60 s alone; on a loaded 2-core machine the cyclic peptide of the macrocycle check took
                           # over 150 s)
SDF_MOLECULE = 'aspirin'   # the one molecule also optimised from its SD file
SAME_ENERGY = 1e-3         # Eh: the XYZ and SDF starts reach the same minimum (0.6 kcal/mol; common practice)


def read_smi(path):
    out = []
    with open(path) as f:
        for number, line in enumerate(f, 1):
            text = line.strip()
            if not text or text.startswith('#'):
                continue
            parts = text.split(None, 1)
            out.append((number, parts[0], parts[1].strip() if len(parts) > 1 else f'line{number}'))
    return out


def components(n, bonds):
    label = [-1] * n
    adj = neighbours(n, bonds)
    for s in range(n):
        if label[s] >= 0:
            continue
        stack = [s]
        label[s] = s
        while stack:
            i = stack.pop()
            for j in adj[i]:
                if label[j] < 0:
                    label[j] = s
                    stack.append(j)
    return label


def connectivity_problems(symbols, coords, graph, comp):
    """Differences between the bonds perceived in coords and the graph: (missing, extra) as 1-based labels."""
    seen = perceive_bonds(symbols, coords)
    missing = [b for b in graph if b not in seen]
    extra = []
    for b in seen - graph:
        i, j = sorted(b)
        if comp[i] != comp[j] and (symbols[i] in IONIC_METALS or symbols[j] in IONIC_METALS):
            continue  # an ionic contact between a cation and its counter-ion
        extra.append(b)

    def label(b):
        i, j = sorted(b)
        return f'{symbols[i]}{i + 1}-{symbols[j]}{j + 1}'
    return [label(b) for b in missing], [label(b) for b in extra]


def run_xtb(workdir, filename, charge, uhf):
    env = dict(os.environ, OMP_NUM_THREADS='1', OMP_STACKSIZE='500M')
    # --cycles 600: xtb's default cap scales with the atom count (219 for penicillin G), which floppy molecules
    # can exceed from any start; the cycles used are recorded and reported, so slow convergence stays visible.
    cmd = [XTB, filename, '--opt', 'normal', '--gfn', '2', '--chrg', str(charge), '--uhf', str(uhf), '--cycles', '600']
    start = time.time()
    try:
        r = subprocess.run(cmd, cwd=workdir, capture_output=True, text=True, timeout=XTB_TIMEOUT, env=env)
    except subprocess.TimeoutExpired:
        return {'error': f'xtb timed out after {XTB_TIMEOUT} s', 'seconds': time.time() - start}
    out = {'returncode': r.returncode, 'seconds': time.time() - start, 'stdout': r.stdout, 'stderr': r.stderr}
    m = re.search(r'GEOMETRY OPTIMIZATION CONVERGED AFTER\s+(\d+)\s+ITERATIONS', r.stdout)
    out['cycles'] = int(m.group(1)) if m else None
    energies = re.findall(r'TOTAL ENERGY\s+(-?\d+\.\d+)\s+Eh', r.stdout)
    out['energy'] = float(energies[-1]) if energies else None
    return out


def prepare(exe, tmp, number, smiles, name):
    """Builds the XYZ and SDF with repel; returns a job description or an error string."""
    work = os.path.join(tmp, f'{number:03d}_{re.sub(r"[^A-Za-z0-9_-]", "_", name)}')
    os.makedirs(work)
    xyz, sdf = os.path.join(work, 'start.xyz'), os.path.join(work, 'start.sdf')
    for path in (xyz, sdf):
        r = run_repel(exe, ['build', smiles, '-o', path])
        if r.returncode != 0 or not os.path.exists(path):
            return f'repel build {smiles} -o {os.path.basename(path)} failed ({r.returncode}: {r.stderr.strip()})'
    try:
        with open(xyz) as f:
            symbols, coords, fields, _ = parse_xyz(f.read())
        with open(sdf) as f:
            s_sym, s_coords, s_bonds = parse_sdf_bonds(f.read())
    except (ValueError, IndexError) as e:
        return f'cannot read what repel wrote for {smiles}: {e}'
    return {'work': work, 'symbols': symbols, 'coords': coords, 'fields': fields, 'sdf_symbols': s_sym,
            'sdf_coords': s_coords, 'graph': {frozenset((i, j)) for i, j, _ in s_bonds}}


def read_optimum(t, name, job, symbols, graph, comp):
    """xtb's optimised coordinates of a job, checked for the same atoms in the same order and for the connectivity
    repel wrote (None when the atoms differ); shared by check_xtb_client.py and check_xtb_macrocycles.py."""
    with open(os.path.join(job['work'], 'xtbopt.xyz')) as f:
        o_sym, opt, _, _ = parse_xyz(f.read())
    if not t.check(o_sym == symbols, f'{name}: xtbopt.xyz has the same atoms in the same order'):
        return None
    missing, extra = connectivity_problems(symbols, opt, graph, comp)
    t.check(not missing and not extra, f'{name}: connectivity kept by xtb; missing {missing}, extra {extra}')
    return opt


def stereo_of(smiles, n, graph, symbols):
    """The stereo marks of a SMILES, the built graph's neighbour lists, and for each written heavy atom the hydrogens
    repel added to it (the contract's atom order), which resolve the marks' neighbour order."""
    stereo = SmilesStereo(smiles)
    adj = neighbours(n, graph)
    hydrogens_of = {a: sorted(j for j in adj[a] if symbols[j] == 'H' and j >= stereo.n_heavy_written)
                    for a in range(stereo.n_heavy_written)}
    return stereo, adj, hydrogens_of


def begin_check(script, prefix):
    """The command line of an xtb check (PATH/TO/repel [--jobs N]), its tally (failing at once without xtb), the start
    time and a scratch folder: shared by check_xtb_client.py and check_xtb_macrocycles.py."""
    args = sys.argv[1:]
    if not args:
        print(f'usage: {script} PATH/TO/repel [--jobs N]')
        sys.exit(2)
    jobs = int(args[args.index('--jobs') + 1]) if '--jobs' in args else 2
    t = Tally()
    if not os.path.exists(XTB):
        t.check(False, f'{XTB} exists (Debian package xtb)')
        t.finish()
    return args[0], jobs, t, time.time(), tempfile.mkdtemp(prefix=prefix)


def print_xtb_summary(kind, total, table, rmsds, cycles, last_heading, clock, jobs):
    """The per-item table (name, atoms, RMSD, cycles, xtb seconds, one last column) and the median/worst line of the
    metal and main-group xtb checks."""
    print()
    print(f'{kind:40s} {"atoms":>5s} {"RMSD/A":>7s} {"cycles":>6s} {"xtb s":>6s}  {last_heading}')
    for name, n, rmsd, cyc, sec, last in table:
        print(f'{name[:40]:40s} {n:5d} {rmsd:7.3f} {cyc:6d} {sec:6.1f}  {last}')
    if rmsds:
        worst = max(range(len(rmsds)), key=rmsds.__getitem__)
        print(f'\n{kind} optimised: {len(rmsds)} of {total}; heavy-atom RMSD start-to-optimum median '
              f'{statistics.median(rmsds):.3f} A, worst {rmsds[worst]:.3f} A ({table[worst][0]}); cycles median '
              f'{statistics.median(cycles):.0f}, worst {max(cycles)}')
    else:
        print(f'\n{kind} optimised: 0 of {total}')
    print(f'wall time {time.time() - clock:.0f} s with {jobs} xtb processes at a time')


def main():
    exe, jobs, t, clock, tmp = begin_check('check_xtb_client.py', 'repel_xtb_')
    molecules = read_smi(MOLECULES)
    t.check(len(molecules) >= 40, f'at least 40 molecules in {os.path.basename(MOLECULES)} (issue 3), '
                                  f'found {len(molecules)}')

    prepared = []
    for number, smiles, name in molecules:
        job = prepare(exe, tmp, number, smiles, name)
        if not t.check(isinstance(job, dict), f'{name}: {job}' if isinstance(job, str) else ''):
            continue
        ok = t.check(job['symbols'] == job['sdf_symbols'] and
                     np.abs(job['coords'] - job['sdf_coords']).max() <= 1.01e-4,
                     f'{name}: the XYZ and the SDF hold the same atoms and coordinates')
        try:
            job['charge'] = int(job['fields']['charge'])
            job['uhf'] = int(job['fields']['multiplicity']) - 1
        except (KeyError, ValueError):
            t.check(False, f'{name}: charge= and multiplicity= in the XYZ comment')
            continue
        if ok:
            prepared.append((number, smiles, name, job))

    # xtb, at most `jobs` processes at a time (threads set to 1 each)
    def optimise(item):
        _, _, _, job = item
        return run_xtb(job['work'], 'start.xyz', job['charge'], job['uhf'])

    with concurrent.futures.ThreadPoolExecutor(max_workers=jobs) as pool:
        futures = [pool.submit(optimise, item) for item in prepared]
        sdf_item = next((item for item in prepared if item[2] == SDF_MOLECULE), None)
        sdf_future = None
        if sdf_item:
            sdf_work = sdf_item[3]['work'] + '_sdf'
            os.makedirs(sdf_work)
            with open(os.path.join(sdf_item[3]['work'], 'start.sdf')) as src, \
                    open(os.path.join(sdf_work, 'start.sdf'), 'w') as dst:
                dst.write(src.read())
            sdf_future = pool.submit(run_xtb, sdf_work, 'start.sdf', sdf_item[3]['charge'], sdf_item[3]['uhf'])
        results = [f.result() for f in futures]

    rmsds, cycles, table = [], [], []
    energy_from_xyz = None
    for (number, smiles, name, job), res in zip(prepared, results):
        symbols, start, graph = job['symbols'], job['coords'], job['graph']
        n = len(symbols)
        comp = components(n, graph)
        # the start: repel's own structure has the SMILES graph and the stereo as written
        missing, extra = connectivity_problems(symbols, start, graph, comp)
        t.check(not missing and not extra, f'{name}: start (repel) bonds perceived = SMILES graph; missing '
                                           f'{missing}, extra {extra}')
        if not t.check('error' not in res and res.get('returncode') == 0,
                       f'{name}: xtb ran ({res.get("error") or (res.get("stderr") or "")[-300:]})'):
            continue
        if not t.check(res['cycles'] is not None, f'{name}: xtb optimisation converged'):
            continue
        opt = read_optimum(t, name, job, symbols, graph, comp)
        if opt is None:
            continue

        stereo, adj, hydrogens_of = stereo_of(smiles, n, graph, symbols)
        for atom, (mark, order) in stereo.chiral.items():
            nb = resolve_neighbour_order(order, atom, hydrogens_of)
            if nb is None or len(nb) < 3 or any(j not in adj[atom] for j in nb):
                t.check(False, f'{name}: neighbours of stereocentre {atom + 1} resolved ({order})')
                continue
            v0 = signed_volume(start[atom], start[nb[-3]], start[nb[-2]], start[nb[-1]])
            v1 = signed_volume(opt[atom], opt[nb[-3]], opt[nb[-2]], opt[nb[-1]])
            if len(nb) == 4:
                want = expected_chiral_sign(mark)
                t.check(np.sign(v0) == want, f'{name}: stereocentre {symbols[atom]}{atom + 1} ({mark}) built with '
                                             f'the handedness written (OpenSMILES), signed volume {v0:+.3f}')
            t.check(np.sign(v0) == np.sign(v1) and abs(v1) > 0.1,
                    f'{name}: stereocentre {symbols[atom]}{atom + 1} kept by xtb (signed volume {v0:+.3f} -> '
                    f'{v1:+.3f})')
        for x, a, b, y, want in stereo.double_bonds:
            d0 = dihedral_deg(start[x], start[a], start[b], start[y])
            d1 = dihedral_deg(opt[x], opt[a], opt[b], opt[y])

            def kind(d):
                return 'cis' if abs(d) < 90.0 else 'trans'
            t.check(kind(d0) == want, f'{name}: double bond {a + 1}={b + 1} built {want} as written '
                                      f'(dihedral {d0:.1f})')
            t.check(kind(d1) == want, f'{name}: double bond {a + 1}={b + 1} kept {want} by xtb (dihedral {d1:.1f})')

        heavy = [i for i, s in enumerate(symbols) if s != 'H']
        rmsd = kabsch_rmsd(start[heavy], opt[heavy]) if len(heavy) >= 2 else 0.0
        rmsds.append(rmsd)
        cycles.append(res['cycles'])
        table.append((name, n, len(heavy), rmsd, res['cycles'], res['seconds']))
        if name == SDF_MOLECULE:
            energy_from_xyz = res['energy']

    # the SD file read by xtb
    if sdf_future is not None:
        res = sdf_future.result()
        job = sdf_item[3]
        ok = t.check('error' not in res and res.get('returncode') == 0 and res['cycles'] is not None,
                     f'{SDF_MOLECULE}: xtb reads start.sdf and its optimisation converges '
                     f'({res.get("error") or (res.get("stderr") or "")[-300:]})')
        opt_sdf = os.path.join(sdf_work, 'xtbopt.sdf')
        if ok and t.check(os.path.exists(opt_sdf), f'{SDF_MOLECULE}: xtb writes xtbopt.sdf from the SDF input'):
            with open(opt_sdf) as f:
                o_sym, o_coords, _ = parse_sdf_bonds(f.read())
            if t.check(o_sym == job['symbols'], f'{SDF_MOLECULE}: xtbopt.sdf has the same atoms in the same order'):
                comp = components(len(o_sym), job['graph'])
                missing, extra = connectivity_problems(o_sym, o_coords, job['graph'], comp)
                t.check(not missing and not extra, f'{SDF_MOLECULE}: connectivity kept from the SDF start; missing '
                                                   f'{missing}, extra {extra}')
            if energy_from_xyz is not None and res['energy'] is not None:
                t.check(abs(res['energy'] - energy_from_xyz) <= SAME_ENERGY,
                        f'{SDF_MOLECULE}: same minimum from the SDF and the XYZ start ({res["energy"]:.6f} vs '
                        f'{energy_from_xyz:.6f} Eh)')
                print(f'SDF start: {SDF_MOLECULE} converged in {res["cycles"]} cycles, E = {res["energy"]:.6f} Eh '
                      f'(from XYZ {energy_from_xyz:.6f} Eh)')

    print()
    print(f'{"molecule":36s} {"atoms":>5s} {"heavy":>5s} {"RMSD/A":>7s} {"cycles":>6s} {"xtb s":>6s}')
    for name, n, nh, rmsd, cyc, sec in table:
        print(f'{name:36s} {n:5d} {nh:5d} {rmsd:7.3f} {cyc:6d} {sec:6.1f}')
    if rmsds:
        print(f'\nmolecules optimised: {len(rmsds)}; median heavy-atom RMSD start-to-optimum '
              f'{statistics.median(rmsds):.3f} A (max {max(rmsds):.3f}); median cycles {statistics.median(cycles):.0f} '
              f'(max {max(cycles)})')
    print(f'wall time {time.time() - clock:.0f} s with {jobs} xtb processes at a time')
    t.finish(tmp)


if __name__ == '__main__':
    main()
