// Ring perception: ring bonds, ring systems (rings that share atoms: fused, bridged and spiro together), and a
// smallest set of smallest rings for each system.
#pragma once

#include <vector>

#include "graph/molecule.hpp"

namespace repel {

struct RingInfo {
    std::vector<std::vector<int>> rings;         // each ring as its atoms in cyclic order
    std::vector<std::vector<int>> systems;       // each ring system's atoms, ascending
    std::vector<std::vector<int>> system_rings;  // indices into `rings`, per system
    std::vector<int> atom_system;                // per atom: its ring system, or -1
    std::vector<char> ring_bond;                 // per bond: 1 when the bond lies in a ring

    // Size of the smallest ring in `rings` holding both atoms of a bond (0 when none).
    int smallest_ring_with_bond(const Molecule& molecule, int bond) const;
};

// Rings of a molecule. The smallest set of smallest rings is chosen from Horton's candidate cycles (a shortest path
// from each atom to both ends of each bond) by Gaussian elimination over GF(2) in order of size (Horton, SIAM J.
// Comput. 16 (1987) 358); very large ring systems fall back to the shortest cycle through each bond together with the
// fundamental cycles of a spanning tree, which still form a cycle basis. Linear in the atoms outside ring systems.
RingInfo perceive_rings(const Molecule& molecule);

}  // namespace repel
