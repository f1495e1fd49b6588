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

}  // namespace repel
