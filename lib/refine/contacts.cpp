#include "refine/contacts.hpp"

#include <algorithm>
#include <cmath>

#include "core/element.hpp"
#include "refine/constants.hpp"

namespace repel::refine {

BondNeighbourhood::BondNeighbourhood(const Molecule& molecule) {
    const int n = molecule.atom_count();
    offsets_.assign(static_cast<size_t>(n) + 1, 0);
    std::vector<int> stamp(static_cast<size_t>(n), -1);  // last atom whose walk reached this one
    std::vector<int> frontier, next;
    std::vector<std::pair<int, std::uint8_t>> found;
    for (int i = 0; i < n; ++i) {
        found.clear();
        frontier.assign(1, i);
        stamp[static_cast<size_t>(i)] = i;
        for (int depth = 1; depth <= 3 && !frontier.empty(); ++depth) {
            next.clear();
            for (int a : frontier)
                for (const Neighbor& nb : molecule.neighbors(a)) {
                    if (stamp[static_cast<size_t>(nb.atom)] == i) continue;
                    stamp[static_cast<size_t>(nb.atom)] = i;
                    found.emplace_back(nb.atom, static_cast<std::uint8_t>(depth));
                    next.push_back(nb.atom);
                }
            frontier.swap(next);
        }
        std::sort(found.begin(), found.end());
        entries_.insert(entries_.end(), found.begin(), found.end());
        offsets_[static_cast<size_t>(i) + 1] = static_cast<int>(entries_.size());
    }
}

int BondNeighbourhood::bonds_apart(int i, int j) const {
    const auto first = entries_.begin() + offsets_[static_cast<size_t>(i)];
    const auto last = entries_.begin() + offsets_[static_cast<size_t>(i) + 1];
    const auto it = std::lower_bound(first, last, std::pair<int, std::uint8_t>{j, 0});
    return (it != last && it->first == j) ? it->second : 0;
}

ContactModel::ContactModel(const Molecule& molecule) : neighbourhood_(molecule) {
    radius_.reserve(static_cast<size_t>(molecule.atom_count()));
    double largest = 0;
    for (const Atom& atom : molecule.atoms) {
        double r = kDefaultVdwRadius;
        if (atom.z >= 1 && atom.z <= kMaxElement && element(atom.z).r_vdw > 0) r = element(atom.z).r_vdw;
        radius_.push_back(r);
        largest = std::max(largest, r);
    }
    max_distance_ = kContactFraction * 2.0 * largest;
    const int n = molecule.atom_count();
    use_all_pairs_ = n <= kAllPairsAtoms;
    if (use_all_pairs_) {
        all_pairs_.reserve(static_cast<size_t>(n) * static_cast<size_t>(std::max(0, n - 1)) / 2);
        for (int i = 0; i < n; ++i) {
            // The neighbourhood of i is sorted by atom: walk it beside j instead of searching it for every j.
            const auto near = neighbourhood_.of(i);
            auto it = std::lower_bound(near.begin(), near.end(), std::pair<int, std::uint8_t>{i + 1, 0});
            for (int j = i + 1; j < n; ++j) {
                int apart = 0;
                if (it != near.end() && it->first == j) apart = (it++)->second;
                if (apart != 1 && apart != 2) all_pairs_.push_back(pair_for(i, j, apart));
            }
        }
    }
}

ContactPair ContactModel::pair_for(int i, int j, int apart) const {
    const double vdw = radius_[static_cast<size_t>(i)] + radius_[static_cast<size_t>(j)];
    if (apart == 3) return {i, j, kOneFourFraction * vdw, kOneFourScale * kContact};
    return {i, j, kContactFraction * vdw, kContact};
}

void ContactModel::update(std::span<const double> x) {
    if (reference_.size() != x.size()) {
        rebuild(x);
        return;
    }
    const double limit = 0.25 * kContactSkin * kContactSkin;  // (skin / 2)^2
    for (size_t i = 0; i < x.size(); i += 3) {
        const double dx = x[i] - reference_[i], dy = x[i + 1] - reference_[i + 1], dz = x[i + 2] - reference_[i + 2];
        if (!(dx * dx + dy * dy + dz * dz <= limit)) {  // also catches a non-finite coordinate
            rebuild(x);
            return;
        }
    }
}

void ContactModel::rebuild(std::span<const double> x) {
    ++rebuilds_;
    reference_.assign(x.begin(), x.end());
    pairs_.clear();
    // Keep a pair if it can come within its contact distance before the next rebuild.
    auto keep_if_near = [&](const ContactPair& p) {
        const double* a = &x[3 * static_cast<size_t>(p.i)];
        const double* b = &x[3 * static_cast<size_t>(p.j)];
        const double dx = a[0] - b[0], dy = a[1] - b[1], dz = a[2] - b[2];
        const double reach = p.distance + kContactSkin;
        if (dx * dx + dy * dy + dz * dz < reach * reach) pairs_.push_back(p);
    };
    if (use_all_pairs_) {
        for (const ContactPair& p : all_pairs_) keep_if_near(p);
        return;
    }
    grid_.close_pairs(x, max_distance_ + kContactSkin, candidates_);
    for (const auto& [i, j] : candidates_) {
        const int apart = neighbourhood_.bonds_apart(i, j);
        if (apart == 1 || apart == 2) continue;
        keep_if_near(pair_for(i, j, apart));
    }
}

}  // namespace repel::refine
