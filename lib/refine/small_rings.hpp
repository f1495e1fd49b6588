// The smallest ring through two bonds a-centre-b, found by a breadth-first search of bounded depth (cost independent
// of the molecule's size), so that ring angles can be given the values a small or flat ring forces.
#pragma once

#include <vector>

#include "graph/molecule.hpp"

namespace repel::refine {

class SmallRingSearch {
public:
    explicit SmallRingSearch(const Molecule& molecule);

    // The atoms of the smallest ring holding the bonds a-centre and centre-b, with at most max_size atoms, in ring
    // order starting centre, a, ..., b; empty when there is none. Atoms with one neighbour are never searched.
    std::vector<int> ring_through(int a, int centre, int b, int max_size);

private:
    const Molecule& m_;
    std::vector<int> stamp_;   // search number that last reached each atom
    std::vector<int> parent_;  // the atom it was reached from
    std::vector<int> queue_;
    int search_ = 0;
};

}  // namespace repel::refine
