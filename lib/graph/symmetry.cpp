#include "graph/symmetry.hpp"

#include <algorithm>
#include <map>

namespace repel {

namespace {
size_t at(int i) { return static_cast<size_t>(i); }
}  // namespace

std::vector<int> symmetry_classes(const Molecule& m) {
    const int n = m.atom_count();
    std::vector<long> key(at(n));
    for (int i = 0; i < n; ++i) {
        const Atom& a = m.atoms[at(i)];
        key[at(i)] = (static_cast<long>(a.z) * 16 + (a.charge + 8)) * 16 + static_cast<long>(m.neighbors(i).size());
    }
    std::vector<int> classes(at(n), 0);
    int distinct = -1;
    for (int round = 0; round <= n; ++round) {
        // Classes numbered by the sorted distinct keys.
        std::vector<long> sorted = key;
        std::sort(sorted.begin(), sorted.end());
        sorted.erase(std::unique(sorted.begin(), sorted.end()), sorted.end());
        for (int i = 0; i < n; ++i)
            classes[at(i)] = static_cast<int>(std::lower_bound(sorted.begin(), sorted.end(), key[at(i)]) - sorted.begin());
        if (static_cast<int>(sorted.size()) == distinct) break;
        distinct = static_cast<int>(sorted.size());
        // The next key: the class, then the sorted classes of the neighbours with their bond orders.
        std::map<std::vector<int>, long> ids;
        for (int i = 0; i < n; ++i) {
            std::vector<int> sig{classes[at(i)]};
            std::vector<int> around;
            for (const Neighbor& nb : m.neighbors(i))
                around.push_back(classes[at(nb.atom)] * 8 + (m.bonds[at(nb.bond)].aromatic ? 4 : m.bonds[at(nb.bond)].order));
            std::sort(around.begin(), around.end());
            sig.insert(sig.end(), around.begin(), around.end());
            key[at(i)] = ids.emplace(std::move(sig), static_cast<long>(ids.size())).first->second;
        }
    }
    return classes;
}

}  // namespace repel
