"""Shared helpers for the metal-complex checks (check_metal_complexes.py, check_xtb_metals.py).

Written here with numpy only, independent of repel's own code:
- the continuous shape measure (CShM) of Zabrodsky, Peleg and Avnir, J. Am. Chem. Soc. 114 (1992) 7843, in the form
  of Pinsky and Avnir, Inorg. Chem. 37 (1998) 5575: the structure Q (the metal and its N ligand sites) against a
  reference polyhedron P (its centre and N vertices),
      S(Q, P) = 100 min sum_k |q_k - s R p_pi(k) - t|^2 / sum_k |q_k - q_0|^2
  minimised over the assignment pi (centre to centre, ligands to vertices), rotations R, scale s and translation t
  (q_0: the centroid of Q). For one assignment the best rotation is Kabsch's (Acta Cryst. A32 (1976) 922) and the
  best scale follows in closed form, so that with both point sets centred,
      S = 100 (1 - (sigma_1 + sigma_2 + d sigma_3)^2 / (|Q|^2 |P|^2)),
  sigma the singular values of H = sum_k q_k p_pi(k)^T and d the sign of det H (proper rotations; the reference
  polyhedra are achiral, so mirror images are reached through the assignments). Exact: every assignment is tried,
  N! of them (362,880 for N = 9, vectorised, about a second);
- ideal reference polyhedra for 2 to 9 sites, named by the IUPAC polyhedral symbols (IUPAC, Nomenclature of
  Inorganic Chemistry, 2005, IR-9.3.2) and the vacant/capped forms of the shape maps of Alvarez et al., Coord.
  Chem. Rev. 249 (2005) 1693, every vertex at unit distance from the centre;
- reading repel's JSON and SD output, finding the metal centres and their ligand sites from the file's bonds (a
  hapto ligand, donor atoms bonded to each other, is one site at its centroid).
"""

import itertools
import json
import math

import numpy as np
from ase.data import atomic_numbers, covalent_radii

# d-block elements (groups 3-12): the centres the metal checks look at. Lanthanides and actinides (f block) are
# outside the issue and must be refused by repel.
D_BLOCK = set('Sc Ti V Cr Mn Fe Co Ni Cu Zn Y Zr Nb Mo Tc Ru Rh Pd Ag Cd La Hf Ta W Re Os Ir Pt Au Hg'.split())
F_BLOCK = set('Ce Pr Nd Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu Th Pa U Np Pu Am Cm Bk Cf Es Fm Md No Lr Ac'.split())
PERIOD = {}
for _sym in D_BLOCK:
    _z = atomic_numbers[_sym]
    PERIOD[_sym] = 4 if _z <= 30 else 5 if _z <= 48 else 6

PERCEPTION_SCALE = 1.25  # common practice (as common.py): bonded below 1.25 x the sum of Cordero's radii


# ---- reference polyhedra -----------------------------------------------------------------------------------------

def _unit(v):
    v = np.asarray(v, dtype=float)
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def _ring(n, z=0.0, phase=0.0):
    """n points at equal azimuths around z, at height z on the unit sphere."""
    r = math.sqrt(max(0.0, 1.0 - z * z))
    return [(r * math.cos(phase + 2 * math.pi * k / n), r * math.sin(phase + 2 * math.pi * k / n), z)
            for k in range(n)]


def _polar(theta_deg, phis_deg):
    t = math.radians(theta_deg)
    return [(math.sin(t) * math.cos(math.radians(p)), math.sin(t) * math.sin(math.radians(p)), math.cos(t))
            for p in phis_deg]


_TET = [(1, 1, 1), (1, -1, -1), (-1, 1, -1), (-1, -1, 1)]
_OCT = [(1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1)]
# trigonal prism with all edges equal (D3h): triangle circumradius a/sqrt(3), half-height a/2, so the polar angle of
# its vertices is atan(2/sqrt(3)) = 49.1 deg
_TPR_THETA = math.degrees(math.atan(2 / math.sqrt(3)))
_TPR = _polar(_TPR_THETA, (0, 120, 240)) + _polar(180 - _TPR_THETA, (0, 120, 240))
# square antiprism with all edges equal (D4d): squares of in-plane radius rho at +-h, h = rho 2^(1/4) / 2
_SAPR_RHO = 1 / math.sqrt(1 + math.sqrt(2) / 4)
_SAPR_H = _SAPR_RHO * 2 ** 0.25 / 2
_SAPR = ([(_SAPR_RHO * math.cos(math.pi / 2 * k), _SAPR_RHO * math.sin(math.pi / 2 * k), _SAPR_H) for k in range(4)] +
         [(_SAPR_RHO * math.cos(math.pi / 2 * k + math.pi / 4), _SAPR_RHO * math.sin(math.pi / 2 * k + math.pi / 4),
           -_SAPR_H) for k in range(4)])
# triangular dodecahedron (D2d) with the angles of the hard-sphere model of Hoard and Silverton, Inorg. Chem. 2
# (1963) 235: theta_A = 36.9, theta_B = 69.5 deg from the S4 axis (from memory)
_DD_A, _DD_B = math.radians(36.9), math.radians(69.5)
_DD = [(math.sin(_DD_A), 0, math.cos(_DD_A)), (-math.sin(_DD_A), 0, math.cos(_DD_A)),
       (0, math.sin(_DD_A), -math.cos(_DD_A)), (0, -math.sin(_DD_A), -math.cos(_DD_A)),
       (0, math.sin(_DD_B), math.cos(_DD_B)), (0, -math.sin(_DD_B), math.cos(_DD_B)),
       (math.sin(_DD_B), 0, -math.cos(_DD_B)), (-math.sin(_DD_B), 0, -math.cos(_DD_B))]
_OCT_FACE = math.degrees(math.acos(1 / math.sqrt(3)))  # octahedron seen down a three-fold axis

# Our own constructions where a polyhedron is not a regular solid (not Alvarez's published coordinates): SPY-5 puts
# the metal at the centroid of the five vertices (apical-basal angle acos(-1/4) = 104.5 deg, the angle of
# ligand-repulsion square pyramids); the capped forms add a vertex over the centre of a face of the uncapped one.
REFERENCE = {
    2: {'L-2': [(0, 0, 1), (0, 0, -1)],
        'vT-2': _TET[:2],
        'vOC-2': [(1, 0, 0), (0, 1, 0)]},
    3: {'TP-3': _ring(3),
        'vT-3': _TET[:3],
        'fac-vOC-3': [(1, 0, 0), (0, 1, 0), (0, 0, 1)],
        'mer-vOC-3': [(1, 0, 0), (-1, 0, 0), (0, 1, 0)]},
    4: {'T-4': _TET,
        'SP-4': _ring(4),
        'SS-4': [(0, 0, 1), (0, 0, -1)] + _ring(3)[:2],          # seesaw: equatorially vacant trigonal bipyramid
        'vTBPY-4': [(0, 0, 1)] + _ring(3)},                        # axially vacant trigonal bipyramid
    5: {'TBPY-5': [(0, 0, 1), (0, 0, -1)] + _ring(3),
        'SPY-5': [(0, 0, 1)] + _ring(4, z=-0.25),
        'vOC-5': [(0, 0, 1)] + _ring(4),
        'PP-5': _ring(5)},
    6: {'OC-6': _OCT,
        'TPR-6': _TPR,
        'PPY-6': [(0, 0, 1)] + _ring(5),
        'HP-6': _ring(6)},
    7: {'PBPY-7': [(0, 0, 1), (0, 0, -1)] + _ring(5),
        'COC-7': _polar(_OCT_FACE, (0, 120, 240)) + _polar(180 - _OCT_FACE, (60, 180, 300)) + [(0, 0, 1)],
        'CTPR-7': _TPR + [(math.cos(math.radians(60)), math.sin(math.radians(60)), 0)]},
    8: {'SAPR-8': _SAPR,
        'DD-8': _DD,
        'CU-8': [(x, y, z) for x in (1, -1) for y in (1, -1) for z in (1, -1)],
        'HBPY-8': [(0, 0, 1), (0, 0, -1)] + _ring(6)},
    9: {'TCTPR-9': _TPR + _polar(90, (60, 180, 300)),
        'CSAPR-9': _SAPR + [(0, 0, 1)]},
}
REFERENCE = {n: {name: _unit(v) for name, v in shapes.items()} for n, shapes in REFERENCE.items()}
for _n, _shapes in REFERENCE.items():
    for _name, _v in _shapes.items():
        assert _v.shape == (_n, 3), (_name, _v.shape)
ALL_SHAPES = {name for shapes in REFERENCE.values() for name in shapes}

_PERMUTATIONS = {}


def _permutations(n):
    if n not in _PERMUTATIONS:
        _PERMUTATIONS[n] = np.array(list(itertools.permutations(range(n))), dtype=np.int8)
    return _PERMUTATIONS[n]


def cshm(centre, ligands, reference):
    """Continuous shape measure (0 = the ideal shape, 100 = the most remote) of a centre and its N ligand points
    against a reference polyhedron's N unit vertex vectors (its centre at the origin), exact over every assignment."""
    ligands = np.asarray(ligands, dtype=float)
    reference = np.asarray(reference, dtype=float)
    n = len(ligands)
    if reference.shape != (n, 3):
        raise ValueError(f'{n} ligand points against a {len(reference)}-vertex reference')
    q = np.vstack([np.asarray(centre, dtype=float)[None, :], ligands])
    p = np.vstack([np.zeros((1, 3)), reference])
    q = q - q.mean(axis=0)
    p = p - p.mean(axis=0)
    qq, pp = float((q * q).sum()), float((p * p).sum())
    if qq <= 0:
        raise ValueError('all points coincide')
    h0 = np.outer(q[0], p[0])
    ql, pl = q[1:], p[1:]
    perms = _permutations(n)
    best = 0.0
    # chunks keep memory flat for N = 9 (362,880 assignments)
    step = 40320
    for start in range(0, len(perms), step):
        chunk = perms[start:start + step]
        h = h0 + np.einsum('ki,mkj->mij', ql, pl[chunk])
        sv = np.linalg.svd(h, compute_uv=False)
        d = np.sign(np.linalg.det(h))
        trace = sv[:, 0] + sv[:, 1] + np.where(d < 0, -1.0, 1.0) * sv[:, 2]
        best = max(best, float(trace.max()))
    return max(0.0, 100.0 * (1.0 - best * best / (qq * pp)))


def shape_measures(centre, ligands):
    """{polyhedron symbol: CShM} for every reference with as many vertices as there are ligand points."""
    n = len(ligands)
    if n not in REFERENCE:
        return {}
    return {name: cshm(centre, ligands, ref) for name, ref in REFERENCE[n].items()}


def best_shape(centre, ligands):
    """(symbol, CShM) of the closest reference polyhedron, or (None, None) for a count without references."""
    measures = shape_measures(centre, ligands)
    if not measures:
        return None, None
    name = min(measures, key=measures.get)
    return name, measures[name]


# ---- reading repel's output --------------------------------------------------------------------------------------

def read_json(text):
    """(symbols, coordinates (n,3), bonds [(i, j, order)] 0-based, charge, multiplicity, warnings) of repel's JSON
    for one molecule."""
    data = json.loads(text)
    if isinstance(data, list):
        if len(data) != 1:
            raise ValueError(f'expected one molecule in the JSON, found {len(data)}')
        data = data[0]
    symbols = [a['element'] for a in data['atoms']]
    coords = np.array([[a['x'], a['y'], a['z']] for a in data['atoms']], dtype=float).reshape(-1, 3)
    bonds = [(b['atoms'][0] - 1, b['atoms'][1] - 1, b.get('order', 1)) for b in data['bonds']]
    return symbols, coords, bonds, data.get('charge'), data.get('multiplicity'), data.get('warnings', [])


def write_sdf(symbols, coords, bonds, title='synthetic'):
    """A minimal V2000 record (CTfile fixed columns), used to feed synthetic structures through the same reader as
    repel's files in the self-checks."""
    lines = [title, '  metal_geometry', '', f'{len(symbols):3d}{len(bonds):3d}  0  0  0  0  0  0  0  0999 V2000']
    for s, (x, y, z) in zip(symbols, coords):
        lines.append(f'{x:10.4f}{y:10.4f}{z:10.4f} {s:<3s} 0  0  0  0  0  0  0  0  0  0  0  0')
    for i, j, order in bonds:
        lines.append(f'{i + 1:3d}{j + 1:3d}{order:3d}  0  0  0  0')
    lines += ['M  END', '$$$$']
    return '\n'.join(lines) + '\n'


def _radius(symbol):
    return covalent_radii[atomic_numbers[symbol]]


def metal_centres(symbols):
    return [i for i, s in enumerate(symbols) if s in D_BLOCK]


def metal_sites(symbols, coords, bonds, metal):
    """The ligand sites of one metal atom: a list of dicts with 'atoms' (indices), 'point' (the donor atom, or the
    centroid of a hapto ligand), 'kind' ('atom', 'hapto' or 'metal') and 'orders' (bond order per atom).

    Donors are the metal's bonded neighbours in the file. When the file gives the metal no bond at all (a salt
    written with the ions apart), they are perceived by distance (1.25 x the sum of Cordero's radii, common
    practice). Donors bonded to each other (not through the metal) form one hapto site; another metal is its own
    site."""
    order_of = {}
    adjacency = {}
    for i, j, order in bonds:
        adjacency.setdefault(i, set()).add(j)
        adjacency.setdefault(j, set()).add(i)
        order_of[frozenset((i, j))] = order
    donors = sorted(adjacency.get(metal, ()))
    if not donors:
        d = np.linalg.norm(coords - coords[metal], axis=1)
        donors = [j for j in range(len(symbols)) if j != metal and
                  d[j] < PERCEPTION_SCALE * (_radius(symbols[j]) + _radius(symbols[metal]))]
        for j in donors:
            order_of.setdefault(frozenset((metal, j)), 1)
    donor_set = set(donors)
    sites, seen = [], set()
    for start in donors:
        if start in seen:
            continue
        if symbols[start] in D_BLOCK:
            seen.add(start)
            sites.append({'atoms': [start], 'kind': 'metal'})
            continue
        group, stack = [], [start]
        seen.add(start)
        while stack:
            a = stack.pop()
            group.append(a)
            for b in adjacency.get(a, ()):
                if b in donor_set and b not in seen and symbols[b] not in D_BLOCK:
                    seen.add(b)
                    stack.append(b)
        sites.append({'atoms': sorted(group), 'kind': 'hapto' if len(group) > 1 else 'atom'})
    for site in sites:
        site['point'] = coords[site['atoms']].mean(axis=0)
        site['orders'] = [order_of.get(frozenset((metal, a)), 1) for a in site['atoms']]
    return sites


def centre_shape(symbols, coords, bonds, metal):
    """(sites, best symbol, its CShM, all measures) of one metal centre."""
    sites = metal_sites(symbols, coords, bonds, metal)
    points = [s['point'] for s in sites]
    measures = shape_measures(coords[metal], points) if points else {}
    if not measures:
        return sites, None, None, measures
    name = min(measures, key=measures.get)
    return sites, name, measures[name], measures


def parse_distance_spec(text):
    """'Cl=2.31,eta:C=2.13' -> [('', 'Cl', 2.31), ('eta', 'C', 2.13)]; '-' -> []."""
    text = text.strip()
    if text in ('', '-'):
        return []
    out = []
    for item in text.split(','):
        key, value = item.split('=')
        qualifier, element = key.split(':') if ':' in key else ('', key)
        if qualifier not in ('', 'eta', 'multiple', 'single'):
            raise ValueError(f'unknown qualifier {qualifier!r} in {text!r}')
        out.append((qualifier, element, float(value)))
    return out


def site_distances(symbols, coords, metal, sites, qualifier, element):
    """Metal-atom distances of the donors a distance key selects (see tests/data/metal_complexes.tsv)."""
    out = []
    for site in sites:
        for atom, order in zip(site['atoms'], site['orders']):
            if symbols[atom] != element:
                continue
            hapto = site['kind'] == 'hapto'
            if (qualifier == 'eta') != hapto:
                continue
            if qualifier == 'multiple' and order < 2:
                continue
            if qualifier == 'single' and order != 1:
                continue
            out.append(float(np.linalg.norm(coords[atom] - coords[metal])))
    return out


def site_angle(coords, metal, a, b):
    u, v = a - coords[metal], b - coords[metal]
    c = float(np.dot(u, v) / (np.linalg.norm(u) * np.linalg.norm(v)))
    return math.degrees(math.acos(max(-1.0, min(1.0, c))))
