// Ring perception, the one place of it: ring bonds, ring systems (rings that share atoms: fused, bridged and spiro
// together) and a smallest set of smallest rings for each system (perceive_rings); and the bounded searches for small
// rings through one atom, one angle or one bond (SmallRingSearch), whose cost does not grow with the molecule.
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

// Small rings through one angle, one atom or one bond, by breadth-first searches of bounded depth. The buffers are
// made once per molecule, so that a caller asking about every atom pays for the rings it finds, not for the molecule.
// Atoms with one neighbour are never searched (no ring passes through them).
class SmallRingSearch {
public:
    explicit SmallRingSearch(const Molecule& molecule);

    // The atoms of the smallest ring holding the bonds a-centre and centre-b, with at most max_size atoms, in ring
    // order starting centre, a, ..., b; empty when there is none.
    std::vector<int> ring_through(int a, int centre, int b, int max_size);

    // Whether the angle a-centre-b lies in a ring of at most max_size atoms (a path from a to b of at most
    // max_size - 2 bonds that avoids the centre).
    bool angle_in_ring(int a, int centre, int b, int max_size) { return !ring_through(a, centre, b, max_size).empty(); }

    // Whether some angle at `centre` lies in a ring of at most max_size atoms.
    bool atom_in_ring(int centre, int max_size);

    // Whether the bond lies in a ring of at most max_size atoms (a path between its ends of at most max_size - 1
    // bonds that does not use the bond itself).
    bool bond_in_ring(int bond, int max_size);

private:
    const Molecule& m_;
    std::vector<int> stamp_;   // search number that last reached each atom
    std::vector<int> parent_;  // the atom it was reached from
    std::vector<int> queue_;
    int search_ = 0;
};

}  // namespace repel
