// Kekulization: one double bond for every aromatic atom that needs one, found as a perfect matching on the aromatic
// bonds (Edmonds' augmenting paths with blossoms), so any ring system kekulizes in near-linear time.
#pragma once

#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// Gives every aromatic bond order 1 or 2 (aromatic stays true) so that each atom with needs_double[atom] != 0 gets
// exactly one double bond among its aromatic bonds and no other atom gets one. An aromatic bond that lies in no
// ring of aromatic bonds (the bond between the rings of "c1ccccc1c1ccccc1") cannot carry a ring's double bond: it
// becomes a plain single bond (aromatic = false). Deterministic: the same molecule always gets the same bonds.
// Returns -1 on success; otherwise an atom that is left without a double bond by a maximum matching (the first
// such atom in atom order); the aromatic bonds are then left with order 1.
int kekulize(Molecule& molecule, const std::vector<unsigned char>& needs_double);

}  // namespace repel
