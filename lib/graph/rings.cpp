#include "graph/rings.hpp"

#include <algorithm>
#include <cstdint>
#include <numeric>
#include <queue>

namespace repel {

namespace {

// Bonds that lie on a cycle: every bond that is not a bridge (Tarjan's low-link, iterative so that long chains
// cannot overflow the stack).
std::vector<char> ring_bonds(const Molecule& m) {
    const int n = m.atom_count();
    std::vector<int> disc(static_cast<size_t>(n), -1), low(static_cast<size_t>(n), 0);
    std::vector<char> ring(static_cast<size_t>(m.bond_count()), 1);
    struct Frame {
        int atom, parent_bond, next;
    };
    std::vector<Frame> stack;
    int time = 0;
    for (int root = 0; root < n; ++root) {
        if (disc[static_cast<size_t>(root)] >= 0) continue;
        disc[static_cast<size_t>(root)] = low[static_cast<size_t>(root)] = time++;
        stack.push_back({root, -1, 0});
        while (!stack.empty()) {
            Frame& f = stack.back();
            const auto& nb = m.neighbors(f.atom);
            if (f.next < static_cast<int>(nb.size())) {
                const Neighbor e = nb[static_cast<size_t>(f.next++)];
                if (e.bond == f.parent_bond) continue;
                if (disc[static_cast<size_t>(e.atom)] < 0) {
                    disc[static_cast<size_t>(e.atom)] = low[static_cast<size_t>(e.atom)] = time++;
                    stack.push_back({e.atom, e.bond, 0});
                } else {
                    low[static_cast<size_t>(f.atom)] =
                        std::min(low[static_cast<size_t>(f.atom)], disc[static_cast<size_t>(e.atom)]);
                }
            } else {
                const Frame done = f;
                stack.pop_back();
                if (done.parent_bond >= 0) {
                    const int up = m.bonds[static_cast<size_t>(done.parent_bond)].other(done.atom);
                    low[static_cast<size_t>(up)] = std::min(low[static_cast<size_t>(up)], low[static_cast<size_t>(done.atom)]);
                    if (low[static_cast<size_t>(done.atom)] > disc[static_cast<size_t>(up)])
                        ring[static_cast<size_t>(done.parent_bond)] = 0;
                }
            }
        }
    }
    return ring;
}

using Bits = std::vector<std::uint64_t>;

struct Candidate {
    std::vector<int> atoms;  // local indices in cyclic order
    Bits edges;
};

// One ring system as a small graph of its own (local indices).
struct SystemGraph {
    std::vector<int> atoms;                        // global atom per local index
    std::vector<std::vector<std::pair<int, int>>> adj;  // (local neighbour, local edge)
    std::vector<std::pair<int, int>> edges;        // local endpoints
};

struct Bfs {
    std::vector<int> dist, parent, parent_edge;
};

Bfs bfs(const SystemGraph& g, int source, int banned_edge = -1) {
    const size_t n = g.atoms.size();
    Bfs r{std::vector<int>(n, -1), std::vector<int>(n, -1), std::vector<int>(n, -1)};
    std::queue<int> q;
    r.dist[static_cast<size_t>(source)] = 0;
    q.push(source);
    while (!q.empty()) {
        const int v = q.front();
        q.pop();
        for (auto [w, e] : g.adj[static_cast<size_t>(v)]) {
            if (e == banned_edge || r.dist[static_cast<size_t>(w)] >= 0) continue;
            r.dist[static_cast<size_t>(w)] = r.dist[static_cast<size_t>(v)] + 1;
            r.parent[static_cast<size_t>(w)] = v;
            r.parent_edge[static_cast<size_t>(w)] = e;
            q.push(w);
        }
    }
    return r;
}

// Path from the BFS source to v, source first.
std::vector<int> path_to(const Bfs& b, int v) {
    std::vector<int> p;
    for (int x = v; x >= 0; x = b.parent[static_cast<size_t>(x)]) p.push_back(x);
    std::reverse(p.begin(), p.end());
    return p;
}

Bits cycle_bits(const SystemGraph& g, const std::vector<int>& cycle, int words) {
    Bits bits(static_cast<size_t>(words), 0);
    for (size_t i = 0; i < cycle.size(); ++i) {
        const int a = cycle[i], b = cycle[(i + 1) % cycle.size()];
        for (auto [w, e] : g.adj[static_cast<size_t>(a)])
            if (w == b) {
                bits[static_cast<size_t>(e) / 64] |= std::uint64_t{1} << (e % 64);
                break;
            }
    }
    return bits;
}

// Horton's candidates: for source v and edge (x, y), the cycle v..x-y..v when the two shortest paths meet only at v.
std::vector<Candidate> horton_candidates(const SystemGraph& g, int words) {
    std::vector<Candidate> out;
    const int n = static_cast<int>(g.atoms.size());
    std::vector<int> mark(static_cast<size_t>(n), -1);
    for (int v = 0; v < n; ++v) {
        const Bfs b = bfs(g, v);
        for (int e = 0; e < static_cast<int>(g.edges.size()); ++e) {
            const auto [x, y] = g.edges[static_cast<size_t>(e)];
            if (b.parent_edge[static_cast<size_t>(x)] == e || b.parent_edge[static_cast<size_t>(y)] == e) continue;
            const auto px = path_to(b, x), py = path_to(b, y);
            // Keep each cycle from the source where it is cheapest to find: paths must share only v.
            const int stamp = v * static_cast<int>(g.edges.size()) + e;
            for (int a : px) mark[static_cast<size_t>(a)] = stamp;
            bool disjoint = true;
            for (size_t i = 1; i < py.size(); ++i)
                if (mark[static_cast<size_t>(py[i])] == stamp) disjoint = false;
            if (!disjoint) continue;
            Candidate c;
            c.atoms = px;
            for (size_t i = py.size(); i-- > 1;) c.atoms.push_back(py[i]);
            c.edges = cycle_bits(g, c.atoms, words);
            out.push_back(std::move(c));
        }
    }
    return out;
}

// For very large systems: the shortest cycle through each edge plus the fundamental cycles of a BFS tree.
std::vector<Candidate> large_system_candidates(const SystemGraph& g, int words) {
    std::vector<Candidate> out;
    const Bfs tree = bfs(g, 0);
    for (int e = 0; e < static_cast<int>(g.edges.size()); ++e) {
        const auto [x, y] = g.edges[static_cast<size_t>(e)];
        const Bfs b = bfs(g, x, e);
        if (b.dist[static_cast<size_t>(y)] >= 0) {
            Candidate c;
            c.atoms = path_to(b, y);
            c.edges = cycle_bits(g, c.atoms, words);
            out.push_back(std::move(c));
        }
        if (tree.parent_edge[static_cast<size_t>(x)] == e || tree.parent_edge[static_cast<size_t>(y)] == e) continue;
        auto px = path_to(tree, x), py = path_to(tree, y);
        size_t common = 0;
        while (common < px.size() && common < py.size() && px[common] == py[common]) ++common;
        Candidate c;
        c.atoms.assign(px.begin() + static_cast<long>(common - 1), px.end());
        for (size_t i = py.size(); i-- > common;) c.atoms.push_back(py[i]);
        c.edges = cycle_bits(g, c.atoms, words);
        out.push_back(std::move(c));
    }
    return out;
}

std::vector<std::vector<int>> smallest_rings(const SystemGraph& g) {
    const int n = static_cast<int>(g.atoms.size()), m = static_cast<int>(g.edges.size());
    const int wanted = m - n + 1;
    const int words = (m + 63) / 64;
    // Horton's set costs about n*m paths; beyond this the cheaper candidate set is used.
    constexpr long kHortonLimit = 60000;
    auto cands = static_cast<long>(n) * m <= kHortonLimit ? horton_candidates(g, words) : large_system_candidates(g, words);
    std::stable_sort(cands.begin(), cands.end(),
                     [](const Candidate& a, const Candidate& b) { return a.atoms.size() < b.atoms.size(); });
    std::vector<Bits> basis;
    std::vector<int> pivots;
    std::vector<std::vector<int>> rings;
    for (const Candidate& c : cands) {
        if (static_cast<int>(rings.size()) == wanted) break;
        Bits r = c.edges;
        for (size_t k = 0; k < basis.size(); ++k)
            if (r[static_cast<size_t>(pivots[k]) / 64] >> (pivots[k] % 64) & 1)
                for (int w = 0; w < words; ++w) r[static_cast<size_t>(w)] ^= basis[k][static_cast<size_t>(w)];
        int pivot = -1;
        for (int w = 0; w < words && pivot < 0; ++w)
            if (r[static_cast<size_t>(w)]) pivot = w * 64 + __builtin_ctzll(r[static_cast<size_t>(w)]);
        if (pivot < 0) continue;
        basis.push_back(std::move(r));
        pivots.push_back(pivot);
        std::vector<int> ring;
        for (int a : c.atoms) ring.push_back(g.atoms[static_cast<size_t>(a)]);
        rings.push_back(std::move(ring));
    }
    return rings;
}

}  // namespace

int RingInfo::smallest_ring_with_bond(const Molecule& molecule, int bond) const {
    const Bond& b = molecule.bonds[static_cast<size_t>(bond)];
    const int s = atom_system[static_cast<size_t>(b.a)];
    if (s < 0 || !ring_bond[static_cast<size_t>(bond)]) return 0;
    int best = 0;
    for (int r : system_rings[static_cast<size_t>(s)]) {
        const auto& ring = rings[static_cast<size_t>(r)];
        for (size_t i = 0; i < ring.size(); ++i) {
            const int x = ring[i], y = ring[(i + 1) % ring.size()];
            if ((x == b.a && y == b.b) || (x == b.b && y == b.a)) {
                if (best == 0 || static_cast<int>(ring.size()) < best) best = static_cast<int>(ring.size());
                break;
            }
        }
    }
    return best;
}

RingInfo perceive_rings(const Molecule& molecule) {
    RingInfo info;
    const int n = molecule.atom_count();
    info.ring_bond = ring_bonds(molecule);
    info.atom_system.assign(static_cast<size_t>(n), -1);
    std::vector<int> local(static_cast<size_t>(n), -1);
    for (int start = 0; start < n; ++start) {
        if (info.atom_system[static_cast<size_t>(start)] >= 0) continue;
        bool has_ring_bond = false;
        for (const Neighbor& nb : molecule.neighbors(start)) has_ring_bond |= info.ring_bond[static_cast<size_t>(nb.bond)] != 0;
        if (!has_ring_bond) continue;
        const int sys = static_cast<int>(info.systems.size());
        std::vector<int> atoms{start};
        info.atom_system[static_cast<size_t>(start)] = sys;
        for (size_t k = 0; k < atoms.size(); ++k)
            for (const Neighbor& nb : molecule.neighbors(atoms[k]))
                if (info.ring_bond[static_cast<size_t>(nb.bond)] && info.atom_system[static_cast<size_t>(nb.atom)] < 0) {
                    info.atom_system[static_cast<size_t>(nb.atom)] = sys;
                    atoms.push_back(nb.atom);
                }
        std::sort(atoms.begin(), atoms.end());
        SystemGraph g;
        g.atoms = atoms;
        g.adj.resize(atoms.size());
        for (size_t k = 0; k < atoms.size(); ++k) local[static_cast<size_t>(atoms[k])] = static_cast<int>(k);
        for (size_t k = 0; k < atoms.size(); ++k)
            for (const Neighbor& nb : molecule.neighbors(atoms[k])) {
                if (!info.ring_bond[static_cast<size_t>(nb.bond)] || nb.atom < atoms[k]) continue;
                const int e = static_cast<int>(g.edges.size());
                const int w = local[static_cast<size_t>(nb.atom)];
                g.edges.emplace_back(static_cast<int>(k), w);
                g.adj[k].emplace_back(w, e);
                g.adj[static_cast<size_t>(w)].emplace_back(static_cast<int>(k), e);
            }
        std::vector<int> ring_ids;
        for (auto& r : smallest_rings(g)) {
            ring_ids.push_back(static_cast<int>(info.rings.size()));
            info.rings.push_back(std::move(r));
        }
        info.systems.push_back(std::move(atoms));
        info.system_rings.push_back(std::move(ring_ids));
    }
    return info;
}

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

bool SmallRingSearch::atom_in_ring(int centre, int max_size) {
    const auto& nbs = m_.neighbors(centre);
    for (size_t i = 0; i < nbs.size(); ++i)
        for (size_t j = i + 1; j < nbs.size(); ++j)
            if (angle_in_ring(nbs[i].atom, centre, nbs[j].atom, max_size)) return true;
    return false;
}

bool SmallRingSearch::bond_in_ring(int bond, int max_size) {
    const Bond& b = m_.bonds[static_cast<size_t>(bond)];
    const int max_bonds = max_size - 1;  // bonds on the path from one end to the other
    ++search_;
    // Breadth first from one end, never along the bond itself; parent_ holds the depth here.
    stamp_[static_cast<size_t>(b.a)] = search_;
    parent_[static_cast<size_t>(b.a)] = 0;
    queue_.assign(1, b.a);
    for (size_t k = 0; k < queue_.size(); ++k) {
        const int at = queue_[k];
        const int depth = parent_[static_cast<size_t>(at)];
        if (depth >= max_bonds) continue;
        for (const Neighbor& nb : m_.neighbors(at)) {
            if (nb.bond == bond || stamp_[static_cast<size_t>(nb.atom)] == search_) continue;
            if (nb.atom == b.b) return true;
            stamp_[static_cast<size_t>(nb.atom)] = search_;
            parent_[static_cast<size_t>(nb.atom)] = depth + 1;
            queue_.push_back(nb.atom);
        }
    }
    return false;
}

}  // namespace repel
