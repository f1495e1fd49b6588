#!/usr/bin/env python3
"""ASE reads the files that repel writes.

Source of the check: ASE (Debian's python3-ase), used only as a file reader: ase.io.read with its extended-XYZ
reader ('extxyz'), its PDB reader ('proteindatabank') and its SDF and molfile readers ('sdf', 'mol'). A file that
ASE reads with the same elements and coordinates as the structure that was written is readable by a real program,
not just by our own tests.

Usage (ctest): check_ase_reads_writers.py PATH/TO/repel [PATH/TO/test_writers]

Part 1, the writers: runs the gtest WriterSamples.WriteSampleFiles of test_writers (found beside the repel
executable unless given as the second argument or in $REPEL_WRITERS_HELPER) with REPEL_WRITER_SAMPLES set to a
temporary folder. That test writes hand-made structures in every format plus manifest.json, which describes each
structure straight from its data (not through a writer). Every XYZ, PDB, SDF and MOL file is read with ASE and
compared with the manifest. Where ASE does not read a part of a format, the script reads it itself, by the fixed
columns of the format's specification (CTfile bond block, M  CHG / RAD / ISO lines, V3000 connection tables,
data items; PDB CONECT records and the charge columns 79-80), and says so:
  - ASE 3.22 has no V3000 reader (its 'sdf' and 'mol' readers take the atom count from the counts line, which a
    V3000 file leaves at 0), so V3000 records are checked by this script's parser only;
  - ASE's 'sdf' reader splits the V2000 counts line on whitespace, which cannot separate two three-digit counts
    ("150149"); such files are right by the fixed-width specification and are read with ASE's 'mol' reader, which
    reads the fixed columns;
  - ASE's 'sdf' reader reads only the first record of a multi-record SD file.

Part 2, the real executable: once `repel build C -o probe.xyz` succeeds, a few molecules are built with
`repel build SMILES -o FILE` in every format and read back with ASE: element counts as the formula says, the first
atom being the first atom of the SMILES, charge in the XYZ comment, the same coordinates in every format, the SDF
bond count. While the executable cannot build molecules yet, that part is skipped with a message.
"""

import json
import math
import os
import subprocess
import sys
import tempfile
import warnings
from collections import Counter
from io import StringIO

import ase.io

TOL = {'xyz': 1.01e-6, 'json': 1.01e-6, 'sdf': 1.01e-4, 'mol': 1.01e-4, 'pdb': 1.01e-3}  # half a last digit, doubled

passed = 0
failed = 0


def check(condition, what):
    global passed, failed
    if condition:
        passed += 1
    else:
        failed += 1
        print(f'FAIL: {what}')
    return condition


def max_deviation(a, b):
    if len(a) != len(b):
        return math.inf
    return max((abs(float(x) - float(y)) for p, q in zip(a, b) for x, y in zip(p, q)), default=0.0)


# ---- our own readers for what ASE does not expose ------------------------------------------------------------

def split_sd_records(text):
    """The records of an SD file: lists of lines, each record closed by a '$$$$' line."""
    records, current = [], []
    for line in text.split('\n'):
        if line == '$$$$':
            records.append(current)
            current = []
        else:
            current.append(line)
    if any(line.strip() for line in current):
        records.append(current)  # an unterminated record: reported by the caller
        records[-1].append('<no $$$$>')
    return records


def parse_sd_record(lines):
    """CTfile record -> dict(elements, positions, bonds, charges, radicals, isotopes, data, version)."""
    counts = lines[3]
    out = {'title': lines[0], 'program_line': lines[1], 'elements': [], 'positions': [], 'bonds': [],
           'charges': {}, 'radicals': {}, 'isotopes': {}, 'data': {}, 'version': counts[33:39].strip()}
    end = lines.index('M  END')
    if out['version'] == 'V2000':
        natoms, nbonds = int(counts[0:3]), int(counts[3:6])
        for line in lines[4:4 + natoms]:
            out['positions'].append([float(line[0:10]), float(line[10:20]), float(line[20:30])])
            out['elements'].append(line[31:34].strip())
            code = int(line[36:39])
            if code:
                out['charges'][len(out['elements'])] = {1: 3, 2: 2, 3: 1, 5: -1, 6: -2, 7: -3}[code]
        for line in lines[4 + natoms:4 + natoms + nbonds]:
            out['bonds'].append([int(line[0:3]), int(line[3:6]), int(line[6:9])])
        atom_block_charges = dict(out['charges'])
        chg_seen = False
        for line in lines[4 + natoms + nbonds:end]:
            tag = line[3:6]
            n = int(line[6:9])
            entries = [(int(line[10 + 8 * k:13 + 8 * k]), int(line[14 + 8 * k:17 + 8 * k])) for k in range(n)]
            if tag == 'CHG':
                if not chg_seen:
                    out['charges'] = {}  # M  CHG supersedes the atom block (CTfile)
                    chg_seen = True
                out['charges'].update(entries)
            elif tag == 'RAD':
                out['radicals'].update(entries)
            elif tag == 'ISO':
                out['isotopes'].update(entries)
        out['atom_block_charges'] = atom_block_charges
    elif out['version'] == 'V3000':
        v30, pending = [], ''
        for line in lines[4:end]:
            assert line.startswith('M  V30 '), line
            assert len(line) <= 80, f'V3000 line longer than 80 columns: {line!r}'
            body = line[7:]
            if body.endswith('-'):
                pending += body[:-1]
                continue
            v30.append(pending + body)
            pending = ''
        section = None
        for body in v30:
            if body.startswith('BEGIN ') or body.startswith('END '):
                section = body[6:] if body.startswith('BEGIN ') else None
                continue
            fields = body.split()
            if fields[0] == 'COUNTS':
                out['counts'] = [int(f) for f in fields[1:3]]
            elif section == 'ATOM':
                index = int(fields[0])
                out['elements'].append(fields[1])
                out['positions'].append([float(f) for f in fields[2:5]])
                for field in fields[6:]:
                    key, value = field.split('=')
                    target = {'CHG': 'charges', 'RAD': 'radicals', 'MASS': 'isotopes'}.get(key)
                    if target:
                        out[target][index] = int(value)
            elif section == 'BOND':
                out['bonds'].append([int(fields[2]), int(fields[3]), int(fields[1])])
    # Data items: '> <name>' then value lines up to a blank line.
    k = end + 1
    while k < len(lines):
        line = lines[k]
        if line.startswith('>') and '<' in line:
            name = line[line.index('<') + 1:line.index('>', line.index('<'))]
            value = []
            k += 1
            while k < len(lines) and lines[k] != '':
                value.append(lines[k])
                k += 1
            out['data'][name] = value
        k += 1
    return out


def parse_pdb_extras(text):
    """Columns that ASE does not expose: charges (79-80) and CONECT bonds, by serial field (7-11)."""
    serial_to_index, charges, bonds = {}, {}, set()
    for line in text.split('\n'):
        if line.startswith('HETATM') or line.startswith('ATOM  '):
            index = len(serial_to_index) + 1
            serial_to_index[line[6:11]] = index
            field = line[78:80]
            if field.strip():
                charges[index] = int(field[0]) * (1 if field[1] == '+' else -1)
        elif line.startswith('CONECT'):
            a = line[6:11]
            for k in range(11, 31, 5):
                b = line[k:k + 5]
                if b.strip():
                    bonds.add((serial_to_index[a], serial_to_index[b]))
    return charges, bonds


def expected_bond_set(sample):
    return {(a, b) for a, b, _ in sample['bonds']} | {(b, a) for a, b, _ in sample['bonds']}


# ---- part 1: the writers' sample files -------------------------------------------------------------------------

def check_xyz(sample, path, name):
    atoms = ase.io.read(path, format='extxyz')  # the reader ASE uses for .xyz
    check(atoms.get_chemical_symbols() == sample['elements'], f'{name}: ASE elements')
    dev = max_deviation(atoms.get_positions(), sample['positions'])
    check(dev <= TOL['xyz'], f'{name}: ASE positions differ by {dev}')
    info = atoms.info
    check(info.get('charge') == sample['charge'], f'{name}: charge {info.get("charge")!r}')
    check(info.get('multiplicity') == sample['multiplicity'], f'{name}: multiplicity {info.get("multiplicity")!r}')
    check(str(info.get('name')) == sample['title'], f'{name}: name {info.get("name")!r} != {sample["title"]!r}')
    if sample['warnings']:
        check(info.get('warnings') == '; '.join(sample['warnings']), f'{name}: warnings {info.get("warnings")!r}')
    else:
        check('warnings' not in info, f'{name}: warnings written though there are none')


def check_pdb(sample, path, name):
    atoms = ase.io.read(path, format='proteindatabank')
    check(atoms.get_chemical_symbols() == sample['elements'], f'{name}: ASE elements')
    dev = max_deviation(atoms.get_positions(), sample['positions'])
    check(dev <= TOL['pdb'], f'{name}: ASE positions differ by {dev}')
    names = list(atoms.arrays.get('atomtypes', []))
    check(len(names) == len(set(names)) == len(sample['elements']), f'{name}: atom names not unique')
    check(set(atoms.arrays.get('residuenames', [])) <= {'LIG ', 'LIG'}, f'{name}: residue names (LIG, a wwPDB code kept for new ligands)')
    with open(path) as f:
        text = f.read()
    check(all(len(line) == 80 for line in text.split('\n') if line), f'{name}: a line is not 80 columns')
    charges, bonds = parse_pdb_extras(text)
    want = {i + 1: q for i, q in enumerate(sample['atom_charges']) if q}
    check(charges == want, f'{name}: charges (columns 79-80) {charges} != {want}')
    check(bonds == expected_bond_set(sample), f'{name}: CONECT bonds differ')


def check_sd_contents(sample, record, name):
    check(record['elements'] == sample['elements'], f'{name}: elements (CTfile atom block)')
    dev = max_deviation(record['positions'], sample['positions'])
    check(dev <= TOL['sdf'], f'{name}: positions (CTfile atom block) differ by {dev}')
    check(sorted(map(tuple, record['bonds'])) == sorted(map(tuple, sample['bonds'])),
          f'{name}: bond block differs')
    want_q = {i + 1: q for i, q in enumerate(sample['atom_charges']) if q}
    check(record['charges'] == want_q, f'{name}: charges {record["charges"]} != {want_q}')
    want_rad = {i + 1: {1: 2, 2: 3}[r] for i, r in enumerate(sample['radical_electrons']) if r in (1, 2)}
    check(record['radicals'] == want_rad, f'{name}: radicals {record["radicals"]} != {want_rad}')
    want_iso = {i + 1: m for i, m in enumerate(sample['isotopes']) if m}
    check(record['isotopes'] == want_iso, f'{name}: isotopes {record["isotopes"]} != {want_iso}')
    data = record['data']
    check(data.get('charge') == [str(sample['charge'])], f'{name}: > <charge> {data.get("charge")}')
    check(data.get('multiplicity') == [str(sample['multiplicity'])], f'{name}: > <multiplicity>')
    check(data.get('warnings', []) == sample['warnings'], f'{name}: > <warnings> {data.get("warnings")}')
    check(record['title'] == sample['title'][:80], f'{name}: header name line {record["title"]!r}')
    expect_version = 'V2000' if len(sample['elements']) <= 999 and len(sample['bonds']) <= 999 else 'V3000'
    check(record['version'] == expect_version, f'{name}: {record["version"]}, expected {expect_version}')


def check_sdf(sample, path, name, ext):
    with open(path) as f:
        text = f.read()
    records = split_sd_records(text)
    if not check(len(records) == 1 and records[0][-1] != '<no $$$$>', f'{name}: one record closed by $$$$'):
        return
    record = parse_sd_record(records[0])
    check_sd_contents(sample, record, name)
    if record['version'] != 'V2000':
        print(f'note: {name}: V3000, checked by this script\'s CTfile parser (ASE 3.22 has no V3000 reader)')
        return
    counts = records[0][3]
    fmt = ext
    if ext == 'sdf' and counts[3] != ' ':
        print(f'note: {name}: both counts have three digits ({counts[:6]!r}); ASE\'s sdf reader splits that line on '
              'whitespace, so ASE\'s fixed-column molfile reader is used')
        fmt = 'mol'
    atoms = ase.io.read(path, format=fmt)
    check(atoms.get_chemical_symbols() == sample['elements'], f'{name}: ASE ({fmt}) elements')
    dev = max_deviation(atoms.get_positions(), sample['positions'])
    check(dev <= TOL['sdf'], f'{name}: ASE ({fmt}) positions differ by {dev}')


def check_json(sample, path, name):
    with open(path) as f:
        doc = json.load(f)
    check(isinstance(doc, dict), f'{name}: one record is one object')
    check(doc.get('name') == sample['title'] and doc.get('charge') == sample['charge']
          and doc.get('multiplicity') == sample['multiplicity'], f'{name}: name/charge/multiplicity')
    atoms = doc.get('atoms', [])
    check([a['element'] for a in atoms] == sample['elements'], f'{name}: elements')
    check([a['index'] for a in atoms] == list(range(1, len(sample['elements']) + 1)), f'{name}: indices')
    check([a['charge'] for a in atoms] == sample['atom_charges'], f'{name}: charges')
    dev = max_deviation([[a['x'], a['y'], a['z']] for a in atoms], sample['positions'])
    check(dev <= TOL['json'], f'{name}: positions differ by {dev}')
    check(sorted((b['atoms'][0], b['atoms'][1], b['order']) for b in doc.get('bonds', []))
          == sorted(map(tuple, sample['bonds'])), f'{name}: bonds')
    check(doc.get('warnings') == sample['warnings'], f'{name}: warnings')


def check_batches(folder, manifest, by_stem):
    members = [by_stem[s] for s in manifest['batch']]
    frames = ase.io.read(os.path.join(folder, 'batch.xyz'), index=':', format='extxyz')
    check([f.get_chemical_symbols() for f in frames] == [m['elements'] for m in members], 'batch.xyz: ASE frames')
    with warnings.catch_warnings():
        # ASE 3.22 does not clear its residue-number list at END, so it warns about array lengths on a second entry.
        warnings.simplefilter('ignore', UserWarning)
        images = ase.io.read(os.path.join(folder, 'batch.pdb'), index=':', format='proteindatabank')
    check([i.get_chemical_symbols() for i in images] == [m['elements'] for m in members],
          'batch.pdb: ASE reads one image per END-closed entry')
    for ext in ('sdf', 'mol'):
        path = os.path.join(folder, 'batch.' + ext)
        with open(path) as f:
            records = split_sd_records(f.read())
        check(len(records) == len(members), f'batch.{ext}: {len(records)} records')
        for record, member in zip(records, members):
            check_sd_contents(member, parse_sd_record(record), f'batch.{ext} {member["stem"]}')
        first = ase.io.read(path, format=ext)  # ASE reads the first record only
        check(first.get_chemical_symbols() == members[0]['elements'], f'batch.{ext}: ASE first record')
    with open(os.path.join(folder, 'batch.json')) as f:
        doc = json.load(f)
    check(isinstance(doc, list) and [d['name'] for d in doc] == [m['title'] for m in members], 'batch.json: array')


def writer_samples(helper, folder):
    env = dict(os.environ, REPEL_WRITER_SAMPLES=folder)
    run = subprocess.run([helper, '--gtest_filter=WriterSamples.*'], env=env, capture_output=True, text=True,
                         timeout=600)
    if not check(run.returncode == 0, f'{helper} --gtest_filter=WriterSamples.* exited {run.returncode}'):
        print(run.stdout[-2000:], run.stderr[-2000:])
        return
    with open(os.path.join(folder, 'manifest.json')) as f:
        manifest = json.load(f)
    by_stem = {}
    for sample in manifest['samples']:
        by_stem[sample['stem']] = sample
        base = os.path.join(folder, sample['stem'])
        check_xyz(sample, base + '.xyz', sample['stem'] + '.xyz')
        check_pdb(sample, base + '.pdb', sample['stem'] + '.pdb')
        check_sdf(sample, base + '.sdf', sample['stem'] + '.sdf', 'sdf')
        check_sdf(sample, base + '.mol', sample['stem'] + '.mol', 'mol')
        check_json(sample, base + '.json', sample['stem'] + '.json')
    check_batches(folder, manifest, by_stem)
    print(f'writer samples: {len(manifest["samples"])} structures in 5 file types and a batch of each')


# ---- part 2: the real executable -------------------------------------------------------------------------------

# SMILES, element counts with the hydrogens made explicit, total charge, bonds with explicit hydrogens (by hand).
MOLECULES = [
    ('C', {'C': 1, 'H': 4}, 0, 4),
    ('O', {'O': 1, 'H': 2}, 0, 2),
    ('CCO', {'C': 2, 'O': 1, 'H': 6}, 0, 8),
    ('c1ccccc1', {'C': 6, 'H': 6}, 0, 12),
    ('CC(=O)[O-]', {'C': 2, 'O': 2, 'H': 3}, -1, 6),
    ('[NH4+]', {'N': 1, 'H': 4}, 1, 4),
]


def first_symbol(smiles):
    s = smiles.lstrip('[')
    return s[:2].capitalize() if s[:2].capitalize() in ('Cl', 'Br') else s[0].upper()


def run_repel(repel, args, folder):
    return subprocess.run([repel] + args, cwd=folder, capture_output=True, text=True, timeout=300)


def real_executable(repel, folder):
    probe = run_repel(repel, ['build', 'C', '-o', 'probe.xyz'], folder)
    if probe.returncode != 0 or not os.path.exists(os.path.join(folder, 'probe.xyz')):
        reason = (probe.stderr.strip().splitlines() or probe.stdout.strip().splitlines() or ['no message'])[0]
        print(f'SKIP (real executable): `repel build C -o probe.xyz` exited {probe.returncode} ({reason}); '
              'the executable cannot build molecules yet, so only the writer samples were read with ASE')
        return
    for smiles, formula, charge, nbonds in MOLECULES:
        name = f'repel build {smiles}'
        positions = {}
        for ext in ('xyz', 'pdb', 'sdf', 'json'):
            out = f'm.{ext}'
            run = run_repel(repel, ['build', smiles, '-o', out], folder)
            if not check(run.returncode == 0, f'{name} -o {out} exited {run.returncode}: {run.stderr.strip()}'):
                continue
            path = os.path.join(folder, out)
            if ext == 'json':
                with open(path) as f:
                    doc = json.load(f)
                # writer.hpp: one molecule is record() alone, one JSON object; a batch is an array.
                if not check(isinstance(doc, dict), f'{name} -o {out}: one molecule should be one JSON object, '
                             f'not a {type(doc).__name__} (writer.hpp: record() alone, without begin()/end())'):
                    if not (isinstance(doc, list) and len(doc) == 1):
                        continue
                    doc = doc[0]
                positions[ext] = [[a['x'], a['y'], a['z']] for a in doc['atoms']]
                check(doc['charge'] == charge, f'{name}: JSON charge {doc["charge"]}')
                continue
            atoms = ase.io.read(path, format={'xyz': 'extxyz', 'pdb': 'proteindatabank', 'sdf': 'sdf'}[ext])
            symbols = atoms.get_chemical_symbols()
            check(dict(Counter(symbols)) == formula, f'{name} ({ext}): ASE elements {dict(Counter(symbols))}')
            check(bool(symbols) and symbols[0] == first_symbol(smiles), f'{name} ({ext}): first atom {symbols[:1]}')
            positions[ext] = atoms.get_positions().tolist()
            check(all(math.isfinite(v) for p in positions[ext] for v in p), f'{name} ({ext}): finite coordinates')
            if ext == 'xyz':
                check(atoms.info.get('charge') == charge, f'{name}: XYZ charge {atoms.info.get("charge")!r}')
            if ext == 'sdf':
                with open(path) as f:
                    record = parse_sd_record(split_sd_records(f.read())[0])
                check(len(record['bonds']) == nbonds, f'{name}: {len(record["bonds"])} SDF bonds, want {nbonds}')
                # A sanity bound on the file, not a geometry test: bonds among H, C, N, O lie within 0.7-2.0 A
                # (common practice).
                for a, b, _ in record['bonds']:
                    d = math.dist(record['positions'][a - 1], record['positions'][b - 1])
                    check(0.7 <= d <= 2.0, f'{name}: SDF bond {a}-{b} is {d:.3f} A long')
        # The same structure in every format (repel's output is deterministic).
        if 'xyz' in positions:
            for ext in ('pdb', 'sdf', 'json'):
                if ext in positions:
                    dev = max_deviation(positions[ext], positions['xyz'])
                    check(dev <= TOL[ext], f'{name}: {ext} coordinates differ from XYZ by {dev}')
    # Standard output is XYZ (command-line contract).
    run = run_repel(repel, ['build', 'CCO'], folder)
    if check(run.returncode == 0, f'repel build CCO (to standard output) exited {run.returncode}'):
        atoms = ase.io.read(StringIO(run.stdout), format='extxyz')
        check(dict(Counter(atoms.get_chemical_symbols())) == {'C': 2, 'O': 1, 'H': 6}, 'stdout XYZ elements')
    print(f'real executable: {len(MOLECULES)} molecules built and read back in XYZ, PDB, SDF and JSON')


def main():
    if len(sys.argv) < 2:
        print(__doc__)
        return 2
    repel = os.path.abspath(sys.argv[1])
    helper = (sys.argv[2] if len(sys.argv) > 2 else os.environ.get('REPEL_WRITERS_HELPER')
              or os.path.join(os.path.dirname(repel), 'test_writers'))
    if not os.path.exists(helper):
        print(f'FAIL: the sample writer {helper} is missing: build the test_writers target (it sits beside repel)')
        return 1
    with tempfile.TemporaryDirectory(prefix='repel-ase-') as folder:
        os.makedirs(os.path.join(folder, 'samples'))
        writer_samples(os.path.abspath(helper), os.path.join(folder, 'samples'))
        if os.path.exists(repel):
            real_executable(repel, folder)
        else:
            print(f'SKIP (real executable): {repel} does not exist')
    print(f'{passed} passed, {failed} failed')
    return 1 if failed else 0


if __name__ == '__main__':
    sys.exit(main())
