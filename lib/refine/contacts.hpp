// Soft contacts between atoms that are not bonded to each other: which pairs count (not 1-2, not 1-3; 1-4 scaled), at
// what distance they start to repel, and a pair list kept complete through the cell grid as the atoms move.
#pragma once

#include <cstdint>
#include <span>
#include <utility>
#include <vector>

#include "graph/molecule.hpp"
#include "refine/grid.hpp"
#include "refine/terms.hpp"

namespace repel::refine {

// For each atom, the atoms within three bonds and their distance in bonds (1, 2 or 3), found by a breadth-first walk
// of depth three from every atom: linear in the atom count for bounded valence.
class BondNeighbourhood {
public:
    explicit BondNeighbourhood(const Molecule& molecule);
    // 1, 2 or 3 for atoms that many bonds apart (the shortest path), 0 when further.
    int bonds_apart(int i, int j) const;
    // The atoms within three bonds of i with their distance in bonds, sorted by atom.
    std::span<const std::pair<int, std::uint8_t>> of(int i) const {
        return {entries_.data() + offsets_[static_cast<size_t>(i)],
                static_cast<size_t>(offsets_[static_cast<size_t>(i) + 1] - offsets_[static_cast<size_t>(i)])};
    }

private:
    std::vector<int> offsets_;
    std::vector<std::pair<int, std::uint8_t>> entries_;  // (atom, bonds apart), sorted by atom within each atom
};

class ContactModel {
public:
    explicit ContactModel(const Molecule& molecule);

    // Makes the pair list complete for coordinates x: rebuilt through the cell grid when some atom has moved more
    // than half the skin since the last build, else kept.
    void update(std::span<const double> x);
    // The contact energy at x (call update(x) first); adds the gradient into g when g is not null.
    double energy(const double* x, double* g) const { return contact_energy(pairs_, x, g); }

    const std::vector<ContactPair>& pairs() const { return pairs_; }
    int rebuilds() const { return rebuilds_; }

private:
    void rebuild(std::span<const double> x);
    ContactPair pair_for(int i, int j, int apart) const;

    // Every pair that can be a contact, with its contact distance, for molecules of up to kAllPairsAtoms atoms: a
    // rebuild then filters this list by distance (no grid and no look-up of the bond distance per candidate).
    std::vector<ContactPair> all_pairs_;
    bool use_all_pairs_ = false;
    BondNeighbourhood neighbourhood_;
    std::vector<double> radius_;     // van der Waals radius per atom
    double max_distance_ = 0;        // largest contact distance of any pair
    std::vector<double> reference_;  // coordinates at the last build
    std::vector<ContactPair> pairs_;
    std::vector<std::pair<int, int>> candidates_;
    CellGrid grid_;
    int rebuilds_ = 0;
};

}  // namespace repel::refine
