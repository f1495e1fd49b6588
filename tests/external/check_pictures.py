"""The pictures from the command line: `repel build/shape --picture` and `repel check --report`, end to end.

Every SVG is parsed by Python's own XML parser (xml.etree from Debian's python3: a well-formedness check independent
of the C++ test's checker); the pictures show what they must (atoms, lobes at the right centre, hydrogens left out on
request), a batch refuses --picture with a message, and the report page is written whole (no temporary file left) and
holds one table row per structure. Usage: python3 check_pictures.py REPEL_EXECUTABLE
"""

import os
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

SVG = '{http://www.w3.org/2000/svg}'

failures = 0


def check(ok, what):
    global failures
    print(('ok   ' if ok else 'FAIL ') + what, flush=True)
    if not ok:
        failures += 1


def run(*args):
    return subprocess.run([repel, *args], capture_output=True, text=True)


def classes(root, name):
    return [e for e in root.iter() if name in e.get('class', '').split()]


repel = sys.argv[1]
with tempfile.TemporaryDirectory() as tmp:
    path = lambda name: os.path.join(tmp, name)

    # build --picture: aspirin with and without hydrogens.
    r = run('build', 'CC(=O)Oc1ccccc1C(=O)O', '-o', path('a.xyz'), '--picture', path('a.svg'))
    check(r.returncode == 0, f'build --picture exits 0 ({r.stderr.strip()})')
    root = ET.parse(path('a.svg')).getroot()
    check(root.tag == SVG + 'svg', 'the picture is an SVG document')
    check(len(classes(root, 'atom')) == 21, f'aspirin: 21 atoms drawn ({len(classes(root, "atom"))})')
    check(len(classes(root, 'lobe')) == 0, 'build pictures carry no lobes')
    r = run('build', 'CC(=O)Oc1ccccc1C(=O)O', '--picture', path('a-noh.svg'), '--picture-without-hydrogens')
    root = ET.parse(path('a-noh.svg')).getroot()
    elements = {e.get('data-element') for e in classes(root, 'atom')}
    check(len(classes(root, 'atom')) == 13 and 'H' not in elements, f'without hydrogens: 13 heavy atoms ({elements})')

    # shape --picture: ClF3 (AX3E2, T-shaped): two lobes, both at Cl, and a caption naming the class.
    r = run('shape', 'ClF3', '--formula', '--picture', path('clf3.svg'))
    check(r.returncode == 0, 'shape --picture exits 0')
    root = ET.parse(path('clf3.svg')).getroot()
    lobes = classes(root, 'lone-pair')
    centres = {e.get('data-centre') for e in lobes}
    check(len(lobes) == 2 and centres == {'1'}, f'ClF3: two lone-pair lobes at Cl1 ({len(lobes)}, {centres})')
    captions = ' '.join(e.text or '' for e in classes(root, 'caption'))
    check('AX3E2' in captions and 'T-shaped' in captions, f'ClF3 caption: {captions}')

    # A batch refuses --picture with a message that says why.
    with open(path('in.smi'), 'w') as f:
        f.write('CCO ethanol\n')
    for command in ('build', 'shape'):
        r = run(command, '-i', path('in.smi'), '--picture', path('x.svg'))
        check(r.returncode == 2 and 'one molecule' in r.stderr and not os.path.exists(path('x.svg')),
              f'{command} -i --picture is refused: {r.stderr.strip()}')

    # check --report: two files, written whole, one row per structure.
    run('build', 'C1CCCCC1', '-o', path('c.xyz'))
    r = run('check', path('a.xyz'), path('c.xyz'), '--report', path('r.html'))
    check(r.returncode == 0, f'check of two clean files exits 0 ({r.returncode}, {r.stderr.strip()})')
    html = open(path('r.html'), encoding='utf-8').read()
    check(html.count('<tr data-k=') == 2, 'the report has one row per structure')
    check(not [n for n in os.listdir(tmp) if n.endswith('.partial')], 'no temporary file is left behind')
    r = run('check', path('a.xyz'), path('missing.xyz'), '--report', path('r2.html'))
    check(r.returncode == 2 and 'missing.xyz' in r.stderr and os.path.exists(path('r2.html')),
          'an unreadable file among several is named, the others reported, status 2')

print(f'{failures} failure(s)')
sys.exit(1 if failures else 0)
