#!/usr/bin/env python3
"""xtb as the client of repel's hypervalent species and radicals (issue "Main-group chemistry done right").

Usage (ctest): /usr/bin/python3 check_xtb_maingroup.py PATH/TO/repel [--jobs N]

Client: xtb, Debian package `xtb` (/usr/bin/xtb), GFN2-xTB, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15
(2019) 1652. A starting geometry is good when xtb's optimisation from it, with the charge and multiplicity repel
wrote, keeps the connectivity and the centre's shape.

For each species of SPECIES (hypervalent halogen, sulfur, phosphorus and xenon centres, oxo anions, hypervalent
organic reagents, radicals and triplets, boron-nitrogen compounds; all small, so GFN2 optimises each in seconds):
  1. `repel build SMILES -o start.xyz` and `-o start.sdf` (the SD file gives repel's bond graph);
  2. `xtb start.xyz --opt normal --gfn 2 --chrg C --uhf U`, C and U = multiplicity - 1 from the XYZ comment;
  3. checks: the charge and multiplicity written are the ones expected (EXPECTED, the species' ground state: from
     memory where named, common practice otherwise); the optimisation converged; connectivity kept (the SD bonds
     against the bonds perceived with 1.25 x the sum of the covalent radii of Cordero et al., Dalton Trans. (2008)
     2832, common practice); `repel check` on the optimum, with the same charge and multiplicity, has no findings:
     xtb keeps the shapes and lengths repel built, and check raises no false alarm on a real optimum;
  4. reports the heavy-atom RMSD start-to-optimum (Kabsch, Acta Cryst. A32 (1976) 922) and xtb's cycles: median and
     worst (not asserted: figures for the README).
Closes with `N passed, M failed`; exits 1 on any failure.
"""

import concurrent.futures
import json
import os
import subprocess
import sys

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import check_xtb_client  # noqa: E402
from check_xtb_client import (begin_check, components, connectivity_problems, prepare, print_xtb_summary,  # noqa: E402
                              run_xtb)
from common import kabsch_rmsd, parse_xyz  # noqa: E402

check_xtb_client.XTB_TIMEOUT = 300  # a hang guard only: each species takes seconds alone on one core

# name, SMILES, expected charge, expected multiplicity (the ground state; the spin of the radicals and triplets is
# what the issue asks repel to get right).
SPECIES = [
    ('sulfur tetrafluoride', 'F[S](F)(F)F', 0, 1),
    ('chlorine trifluoride', 'F[Cl](F)F', 0, 1),
    ('chlorine trifluoride (organic subset)', 'FCl(F)F', 0, 1),
    ('xenon difluoride', 'F[Xe]F', 0, 1),
    ('xenon tetrafluoride', 'F[Xe](F)(F)F', 0, 1),
    ('xenon trioxide', 'O=[Xe](=O)=O', 0, 1),
    ('xenon oxytetrafluoride', 'O=[Xe](F)(F)(F)F', 0, 1),
    ('iodine pentafluoride', 'F[I](F)(F)(F)F', 0, 1),
    ('iodine heptafluoride', 'F[I](F)(F)(F)(F)(F)F', 0, 1),
    ('bromine pentafluoride', 'F[Br](F)(F)(F)F', 0, 1),
    ('triiodide', 'I[I-]I', -1, 1),
    ('sulfur hexafluoride', 'FS(F)(F)(F)(F)F', 0, 1),
    ('phosphorus pentafluoride', 'FP(F)(F)(F)F', 0, 1),
    ('phosphorus pentachloride', 'ClP(Cl)(Cl)(Cl)Cl', 0, 1),
    ('sulfuryl fluoride', 'O=S(=O)(F)F', 0, 1),
    ('phosphoryl fluoride', 'O=P(F)(F)F', 0, 1),
    ('thionyl chloride', 'O=S(Cl)Cl', 0, 1),
    ('dimethyl sulfone', 'CS(C)(=O)=O', 0, 1),
    ('dimethyl sulfoxide', 'CS(C)=O', 0, 1),
    ('methylidene sulfur tetrafluoride', 'C=S(F)(F)(F)F', 0, 1),
    ('perchlorate', '[O-]Cl(=O)(=O)=O', -1, 1),
    ('periodate', 'O=I(=O)(=O)[O-]', -1, 1),
    ('sulfate', '[O-]S(=O)(=O)[O-]', -2, 1),
    ('hexafluorosilicate', 'F[Si-2](F)(F)(F)(F)F', -2, 1),
    ('tetrafluoroborate', 'F[B-](F)(F)F', -1, 1),
    ('iodobenzene diacetate', 'CC(=O)OI(OC(C)=O)c1ccccc1', 0, 1),
    ('pentafluorosulfanylbenzene', 'FS(F)(F)(F)(F)c1ccccc1', 0, 1),
    ('triphenylphosphine oxide', 'O=P(c1ccccc1)(c1ccccc1)c1ccccc1', 0, 1),
    ('nitrogen dioxide', '[O]N=O', 0, 2),          # doublet radical
    ('methyl radical', '[CH3]', 0, 2),             # planar doublet
    ('nitric oxide', '[N]=O', 0, 2),
    ('chlorine dioxide', 'O=[Cl]=O', 0, 2),
    ('allyl radical', '[CH2]C=C', 0, 2),
    ('TEMPO', 'CC1(C)CCCC(C)(C)N1[O]', 0, 2),
    ('imidogen', '[NH]', 0, 3),                    # triplet ground state (3Sigma-), from memory
    ('phenylnitrene', 'c1ccccc1[N]', 0, 3),        # triplet ground state, from memory
    # Methylene's ground state is the triplet (3B1, from memory), but a carbene's depends on its substituents (CF2 and
    # the N-heterocyclic carbenes are singlets): repel writes the Lewis structure's singlet with a warning that says
    # so, and `--multiplicity 3` builds the triplet.
    ('methylene (singlet as written)', '[CH2]', 0, 1),
    ('borazine (single bonds written)', 'B1NBNBN1', 0, 1),
    ('dimethylaminodimethylborane', 'CN(C)B(C)C', 0, 1),
]


# Where repel check on the optimum names a real miss of repel's own model, asserted as it is so that a change is seen:
# name -> (the atom the finding is at, why).
KNOWN_FINDINGS = {
    'methylidene sulfur tetrafluoride': ('S2', "the model puts the equatorial F-S-F at 126 degrees where GFN2 gives 103 "
                                              "(measured about 98, from memory): the C=S is too weak a domain there"),
}


def main():
    exe, jobs, t, clock, tmp = begin_check('check_xtb_maingroup.py', 'repel_xtb_maingroup_')
    prepared = []
    for number, (name, smiles, charge, multiplicity) in enumerate(SPECIES, 1):
        job = prepare(exe, tmp, number, smiles, name)
        if not t.check(isinstance(job, dict), f'{name}: {job}' if isinstance(job, str) else ''):
            continue
        try:
            written = (int(job['fields']['charge']), int(job['fields']['multiplicity']))
        except (KeyError, ValueError):
            t.check(False, f'{name}: charge= and multiplicity= in the XYZ comment')
            continue
        if not t.check(written == (charge, multiplicity),
                       f'{name}: charge and multiplicity written {written}, expected {(charge, multiplicity)}'):
            continue
        job['charge'], job['uhf'] = charge, multiplicity - 1
        prepared.append((name, job))

    with concurrent.futures.ThreadPoolExecutor(max_workers=jobs) as pool:
        futures = [pool.submit(run_xtb, job['work'], 'start.xyz', job['charge'], job['uhf']) for _, job in prepared]
        results = [f.result() for f in futures]

    rmsds, cycles, table = [], [], []
    for (name, job), res in zip(prepared, results):
        if not t.check('error' not in res and res.get('returncode') == 0,
                       f'{name}: xtb ran ({res.get("error") or (res.get("stderr") or "")[-300:]})'):
            continue
        if not t.check(res['cycles'] is not None, f'{name}: xtb optimisation converged'):
            continue
        symbols, start, graph = job['symbols'], job['coords'], job['graph']
        with open(os.path.join(job['work'], 'xtbopt.xyz')) as f:
            o_sym, opt, _, _ = parse_xyz(f.read())
        if not t.check(o_sym == symbols, f'{name}: xtbopt.xyz has the same atoms in the same order'):
            continue
        comp = components(len(symbols), graph)
        missing, extra = connectivity_problems(symbols, opt, graph, comp)
        t.check(not missing and not extra, f'{name}: connectivity kept by xtb; missing {missing}, extra {extra}')
        audit = subprocess.run([exe, 'check', os.path.join(job['work'], 'xtbopt.xyz'), '--charge', str(job['charge']),
                                '--multiplicity', str(job['uhf'] + 1), '--json'],
                               capture_output=True, text=True, timeout=120)
        try:
            doc = json.loads(audit.stdout)
            entries = doc if isinstance(doc, list) else doc.get('structures', [doc])
            findings = [f for e in entries for f in e.get('findings', [])]
        except (ValueError, AttributeError):
            findings = [{'kind': 'geometry', 'message': 'unreadable check output: ' + audit.stderr[-200:]}]
        messages = [f.get('message', '') if isinstance(f, dict) else str(f) for f in findings]
        known = KNOWN_FINDINGS.get(name)
        if known:
            t.check(len(findings) == 1 and messages[0].startswith(known[0]),
                    f'{name}: the known finding at {known[0]} and no other ({known[1]}; found {messages[:2]})')
        else:
            t.check(not findings, f'{name}: repel check on the xtb optimum has no findings ({messages[:2]})')
        heavy = [i for i, s in enumerate(symbols) if s != 'H']
        rmsd = kabsch_rmsd(start[heavy], opt[heavy]) if len(heavy) >= 2 else 0.0
        rmsds.append(rmsd)
        cycles.append(res['cycles'])
        table.append((name, len(symbols), rmsd, res['cycles'], res['seconds'], len(findings)))

    print_xtb_summary('species', len(SPECIES), table, rmsds, cycles, 'findings', clock, jobs)
    t.finish(tmp)


if __name__ == '__main__':
    main()
