// Stereo bookkeeping shared by the SMILES reader and writer: the ends of an allene-type centre, the neighbour order
// an allene mark refers to, and the parity of a reordering of a neighbour list.
#pragma once

#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// The two end atoms of the cumulated chain whose middle atom is centre (C=[C@]=C, or C=C=[C@]=C=C), each with the
// chain atom next to it. first is the end with the lower atom index (written first).
struct AlleneEnds {
    int first = -1, first_inner = -1;
    int second = -1, second_inner = -1;
};

// True when centre has exactly two bonds, both non-aromatic double bonds, and no hydrogens: an allene-type centre.
bool is_allene_centre(const Molecule& molecule, int centre);

// Walks the cumulated double bonds from centre to both ends. Returns false (ends untouched) when centre is not an
// allene-type centre, when the chain closes on itself, or when centre is not its middle atom (the two walks differ
// in length).
bool find_allene_ends(const Molecule& molecule, int centre, AlleneEnds& ends);

// Appends to out the substituents of one allene end in the order an allene mark refers to them: the end's own
// neighbour order (written_order, without hydrogens), its hydrogens (hydrogens copies of kImplicitHydrogen) placed
// after the preceding atom when it has one (preceded) or first otherwise, and without the chain atom inner.
void append_allene_end_order(std::vector<int>& out, const std::vector<int>& written_order, bool preceded,
                             int hydrogens, int inner);

// Parity of the permutation that takes list from to list to: 0 even, 1 odd, -1 when the lists are not the same
// multiset. Equal entries (two kImplicitHydrogen) are matched in order.
int permutation_parity(const std::vector<int>& from, const std::vector<int>& to);

// A tetrahedral centre with three neighbours has a lone pair in the fourth place: where an implicit hydrogen would
// stand, that is first when the centre has no preceding atom (its first neighbour comes later in the text) and
// second otherwise. Returns the list with kLonePairMark inserted there; four-neighbour lists are returned as they are.
constexpr int kLonePairMark = -3;
std::vector<int> with_lone_pair(const std::vector<int>& order, int centre);

}  // namespace repel
