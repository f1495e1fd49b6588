// Equilibrium bond lengths from covalent radii by bond order, with a polar-bond correction.
#pragma once

namespace repel {

// Bond length in Angstrom between elements za and zb for a bond of the given order (1, 2, 3; 4 is treated as 3).
// aromatic=true gives the length of a bond of order 1.5 (between the single and double lengths).
// Sources and the correction used are documented in bond_length.cpp.
double bond_length(int za, int zb, int order, bool aromatic = false);

// Bond length for a fractional bond order (1.0 .. 3.0), interpolating between the tabulated orders; used for
// conjugated and delocalised bonds.
double bond_length_fractional(int za, int zb, double order);

// The Lewis structure at the two ends of a bond, beyond their elements: what the lengths of bonds between
// lone-pair-bearing atoms, of bonds from sp carbons, of C-H bonds and of charge-separated multiple bonds depend on.
struct BondEnds {
    int lone_pairs_a = 0, lone_pairs_b = 0;  // lone pairs of atom a and of atom b
    int steric_a = 0, steric_b = 0;          // steric numbers (0: not known)
    int charge_a = 0, charge_b = 0;          // formal charges
    // Electron pairs of the Lewis structure around each atom (bond orders + hydrogens + lone pairs; above 4 an
    // expanded octet) and its neighbours (sigma bonds, hydrogens included); 0: not known.
    int pairs_a = 0, pairs_b = 0;
    int neighbours_a = 0, neighbours_b = 0;
    int electronegative_a = 0, electronegative_b = 0;  // neighbours that are O or F
    // At a five- or six-domain centre: whether this bond lies trans to another bond of the atom (1: axial in a
    // trigonal bipyramid, basal in a square pyramid) or not (2: equatorial, apical); 0 elsewhere or not known. And
    // how many single bonds of the atom are of each kind.
    int trans_a = 0, trans_b = 0;
    int trans_singles_a = 0, trans_singles_b = 0;
    int open_singles_a = 0, open_singles_b = 0;
};

// Bond length for a (possibly fractional, 1.0 .. 3.0) bond order between elements za and zb with the given ends.
// The same as bond_length_fractional() except for the cases documented in bond_length.cpp.
double bond_length_between(int za, int zb, double order, const BondEnds& ends);

}  // namespace repel
