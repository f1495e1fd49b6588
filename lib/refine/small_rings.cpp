#include "refine/small_rings.hpp"

#include <algorithm>

namespace repel::refine {

SmallRingSearch::SmallRingSearch(const Molecule& molecule)
    : m_(molecule),
      stamp_(static_cast<size_t>(molecule.atom_count()), -1),
      parent_(static_cast<size_t>(molecule.atom_count()), -1) {}

std::vector<int> SmallRingSearch::ring_through(int a, int centre, int b, int max_size) {
    if (a == b || m_.degree(a) < 2 || m_.degree(b) < 2 || max_size < 3) return {};
    ++search_;
    // Shortest path from a to b that avoids the centre: the ring is centre + that path.
    const int max_depth = max_size - 2;  // bonds on the path from a to b
    stamp_[static_cast<size_t>(centre)] = search_;
    stamp_[static_cast<size_t>(a)] = search_;
    parent_[static_cast<size_t>(a)] = -1;
    queue_.assign(1, a);
    size_t level_end = 1;
    int depth = 0;
    bool found = false;
    for (size_t k = 0; k < queue_.size() && !found; ++k) {
        if (k == level_end) {
            ++depth;
            level_end = queue_.size();
        }
        if (depth >= max_depth) break;
        const int at = queue_[k];
        for (const Neighbor& nb : m_.neighbors(at)) {
            const int next = nb.atom;
            if (stamp_[static_cast<size_t>(next)] == search_ || m_.degree(next) < 2) continue;
            stamp_[static_cast<size_t>(next)] = search_;
            parent_[static_cast<size_t>(next)] = at;
            if (next == b) {
                found = true;
                break;
            }
            queue_.push_back(next);
        }
    }
    if (!found) return {};
    std::vector<int> ring{centre};
    std::vector<int> path;
    for (int at = b; at >= 0; at = parent_[static_cast<size_t>(at)]) path.push_back(at);
    ring.insert(ring.end(), path.rbegin(), path.rend());
    return ring;
}

}  // namespace repel::refine
