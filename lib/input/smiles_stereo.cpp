#include "input/smiles_stereo.hpp"

namespace repel {

namespace {
bool is_cumulated_double(const Bond& b) { return b.order == 2 && !b.aromatic; }
}  // namespace

bool is_allene_centre(const Molecule& m, int centre) {
    if (m.degree(centre) != 2 || m.atoms[static_cast<size_t>(centre)].hydrogens != 0) return false;
    for (const Neighbor& nb : m.neighbors(centre))
        if (!is_cumulated_double(m.bonds[static_cast<size_t>(nb.bond)])) return false;
    return true;
}

bool find_allene_ends(const Molecule& m, int centre, AlleneEnds& ends) {
    if (!is_allene_centre(m, centre)) return false;
    int end[2], inner[2], steps[2];
    for (int side = 0; side < 2; ++side) {
        int previous = centre;
        int current = m.neighbors(centre)[static_cast<size_t>(side)].atom;
        steps[side] = 1;
        while (is_allene_centre(m, current)) {
            const auto& nbs = m.neighbors(current);
            const int next = nbs[0].atom == previous ? nbs[1].atom : nbs[0].atom;
            previous = current;
            current = next;
            ++steps[side];
            if (current == centre || steps[side] > m.atom_count()) return false;  // a ring of cumulated bonds
        }
        end[side] = current;
        inner[side] = previous;
    }
    if (steps[0] != steps[1] || end[0] == end[1]) return false;
    const int f = end[0] < end[1] ? 0 : 1;
    ends.first = end[f];
    ends.first_inner = inner[f];
    ends.second = end[1 - f];
    ends.second_inner = inner[1 - f];
    return true;
}

void append_allene_end_order(std::vector<int>& out, const std::vector<int>& written_order, bool preceded,
                             int hydrogens, int inner) {
    const size_t insert_at = preceded ? 1 : 0;
    for (size_t i = 0; i <= written_order.size(); ++i) {
        if (i == insert_at)
            for (int h = 0; h < hydrogens; ++h) out.push_back(kImplicitHydrogen);
        if (i < written_order.size() && written_order[i] != inner) out.push_back(written_order[i]);
    }
}

int permutation_parity(const std::vector<int>& from, const std::vector<int>& to) {
    if (from.size() != to.size()) return -1;
    const size_t n = from.size();
    // position[i]: where to[i] stands in from
    std::vector<int> position(n, -1);
    std::vector<unsigned char> taken(n, 0);
    for (size_t i = 0; i < n; ++i) {
        for (size_t j = 0; j < n; ++j)
            if (!taken[j] && from[j] == to[i]) {
                taken[j] = 1;
                position[i] = static_cast<int>(j);
                break;
            }
        if (position[i] < 0) return -1;
    }
    int inversions = 0;
    for (size_t i = 0; i < n; ++i)
        for (size_t j = i + 1; j < n; ++j)
            if (position[i] > position[j]) ++inversions;
    return inversions % 2;
}

std::vector<int> with_lone_pair(const std::vector<int>& order, int centre) {
    if (order.size() != 3) return order;
    std::vector<int> out = order;
    const bool preceded = !(order[0] > centre);  // a later first neighbour means nothing preceded
    out.insert(out.begin() + (preceded ? 1 : 0), kLonePairMark);
    return out;
}

}  // namespace repel
