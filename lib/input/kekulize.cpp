#include "input/kekulize.hpp"

#include <algorithm>

namespace repel {
namespace {

// Reused between calls: a batch of millions of SMILES should not allocate per molecule.
struct Workspace {
    // bridge search
    std::vector<int> discovered, low;
    struct Frame {
        int atom;
        int parent_bond;
        int next;  // next index into the atom's neighbour list
    };
    std::vector<Frame> frames;
    // matching graph in compressed rows
    std::vector<int> local;  // atom -> vertex, -1 when the atom does not take part
    std::vector<int> atom_of, row, column, column_bond;
    // Edmonds' search state
    std::vector<int> match, parent, base, queue, touched, mark;
    std::vector<int> free_degree, forced;  // first matching
    std::vector<unsigned char> used, in_blossom;
    int stamp = 0;
};
thread_local Workspace ws;

// Aromatic bonds that are bridges of the graph of aromatic bonds (in no ring of aromatic bonds) lose the aromatic
// flag. Tarjan's low-link method, iterative so that long chains do not exhaust the call stack.
void demote_aromatic_bridges(Molecule& m) {
    const int n = m.atom_count();
    ws.discovered.assign(static_cast<size_t>(n), -1);
    ws.low.assign(static_cast<size_t>(n), 0);
    int time = 0;
    auto aromatic_bond = [&](int bond) { return m.bonds[static_cast<size_t>(bond)].aromatic; };
    for (int start = 0; start < n; ++start) {
        if (ws.discovered[static_cast<size_t>(start)] >= 0) continue;
        bool any = false;
        for (const Neighbor& nb : m.neighbors(start)) any = any || aromatic_bond(nb.bond);
        if (!any) continue;
        ws.discovered[static_cast<size_t>(start)] = ws.low[static_cast<size_t>(start)] = time++;
        ws.frames.clear();
        ws.frames.push_back({start, -1, 0});
        while (!ws.frames.empty()) {
            const size_t top = ws.frames.size() - 1;
            const int v = ws.frames[top].atom;
            const auto& nbs = m.neighbors(v);
            if (ws.frames[top].next < static_cast<int>(nbs.size())) {
                const Neighbor nb = nbs[static_cast<size_t>(ws.frames[top].next++)];
                if (!aromatic_bond(nb.bond) || nb.bond == ws.frames[top].parent_bond) continue;
                const auto w = static_cast<size_t>(nb.atom);
                if (ws.discovered[w] < 0) {
                    ws.discovered[w] = ws.low[w] = time++;
                    ws.frames.push_back({nb.atom, nb.bond, 0});
                } else {
                    ws.low[static_cast<size_t>(v)] = std::min(ws.low[static_cast<size_t>(v)], ws.discovered[w]);
                }
            } else {
                const int parent_bond = ws.frames[top].parent_bond;
                ws.frames.pop_back();
                if (ws.frames.empty()) break;
                const auto u = static_cast<size_t>(ws.frames.back().atom);
                ws.low[u] = std::min(ws.low[u], ws.low[static_cast<size_t>(v)]);
                if (ws.low[static_cast<size_t>(v)] > ws.discovered[u]) {
                    Bond& b = m.bonds[static_cast<size_t>(parent_bond)];
                    b.aromatic = false;
                    b.order = 1;
                }
            }
        }
    }
}

// Edmonds' blossom algorithm for one augmenting path from an exposed root (the formulation with bases of contracted
// blossoms, as in Edmonds, Can. J. Math. 17 (1965) 449). State is reset only where the last search touched it, so
// a search costs the size of the region it explores, not of the whole molecule.
class Matcher {
public:
    explicit Matcher(int vertices) : n_(vertices) {
        const auto n = static_cast<size_t>(vertices);
        ws.match.assign(n, -1);
        ws.parent.assign(n, -1);
        ws.base.resize(n);
        for (int v = 0; v < vertices; ++v) ws.base[static_cast<size_t>(v)] = v;
        ws.used.assign(n, 0);
        ws.in_blossom.assign(n, 0);
        ws.mark.assign(n, 0);
        ws.stamp = 0;
        ws.touched.clear();
    }

    // A first matching by the Karp-Sipser rule (R. M. Karp and M. Sipser, Proc. 22nd FOCS (1981) 364): an atom
    // with one free neighbour left must take it; otherwise the next free atom in atom order takes its free
    // neighbour with the fewest free neighbours. On ring systems this is almost always perfect already, so the
    // augmenting searches rarely run.
    void greedy() {
        ws.free_degree.assign(static_cast<size_t>(n_), 0);
        ws.forced.clear();
        for (int v = 0; v < n_; ++v) {
            ws.free_degree[static_cast<size_t>(v)] = row(v + 1) - row(v);
            if (ws.free_degree[static_cast<size_t>(v)] == 1) ws.forced.push_back(v);
        }
        int next = 0;
        for (;;) {
            int v = -1;
            while (!ws.forced.empty() && v < 0) {
                const int f = ws.forced.back();
                ws.forced.pop_back();
                if (ws.match[static_cast<size_t>(f)] < 0 && ws.free_degree[static_cast<size_t>(f)] == 1) v = f;
            }
            if (v < 0) {
                while (next < n_ && (ws.match[static_cast<size_t>(next)] >= 0 ||
                                     ws.free_degree[static_cast<size_t>(next)] == 0))
                    ++next;
                if (next == n_) break;
                v = next;
            }
            int best = -1;
            for (int e = row(v); e < row(v + 1); ++e) {
                const int w = ws.column[static_cast<size_t>(e)];
                if (ws.match[static_cast<size_t>(w)] >= 0) continue;
                if (best < 0 || ws.free_degree[static_cast<size_t>(w)] < ws.free_degree[static_cast<size_t>(best)])
                    best = w;
            }
            ws.match[static_cast<size_t>(v)] = best;
            ws.match[static_cast<size_t>(best)] = v;
            for (int x : {v, best})
                for (int e = row(x); e < row(x + 1); ++e) {
                    const int y = ws.column[static_cast<size_t>(e)];
                    if (ws.match[static_cast<size_t>(y)] >= 0) continue;
                    if (--ws.free_degree[static_cast<size_t>(y)] == 1) ws.forced.push_back(y);
                }
        }
    }

    // Augments the matching along a path from root; false when there is none.
    bool augment(int root) {
        int v = find_path(root);
        if (v < 0) return false;
        while (v >= 0) {
            const int pv = ws.parent[static_cast<size_t>(v)];
            const int next = ws.match[static_cast<size_t>(pv)];
            ws.match[static_cast<size_t>(v)] = pv;
            ws.match[static_cast<size_t>(pv)] = v;
            v = next;
        }
        return true;
    }

private:
    static int row(int v) { return ws.row[static_cast<size_t>(v)]; }

    void touch(int v) { ws.touched.push_back(v); }

    int lowest_common_ancestor(int a, int b) {
        ++ws.stamp;
        for (;;) {
            a = ws.base[static_cast<size_t>(a)];
            ws.mark[static_cast<size_t>(a)] = ws.stamp;
            if (ws.match[static_cast<size_t>(a)] < 0) break;
            a = ws.parent[static_cast<size_t>(ws.match[static_cast<size_t>(a)])];
        }
        for (;;) {
            b = ws.base[static_cast<size_t>(b)];
            if (ws.mark[static_cast<size_t>(b)] == ws.stamp) return b;
            b = ws.parent[static_cast<size_t>(ws.match[static_cast<size_t>(b)])];
        }
    }

    void mark_path(int v, int b, int child) {
        while (ws.base[static_cast<size_t>(v)] != b) {
            const int mv = ws.match[static_cast<size_t>(v)];
            ws.in_blossom[static_cast<size_t>(ws.base[static_cast<size_t>(v)])] = 1;
            ws.in_blossom[static_cast<size_t>(ws.base[static_cast<size_t>(mv)])] = 1;
            ws.parent[static_cast<size_t>(v)] = child;
            child = mv;
            v = ws.parent[static_cast<size_t>(mv)];
        }
    }

    int find_path(int root) {
        for (int v : ws.touched) {
            const auto i = static_cast<size_t>(v);
            ws.used[i] = 0;
            ws.parent[i] = -1;
            ws.base[i] = v;
        }
        ws.touched.clear();
        ws.queue.clear();
        ws.used[static_cast<size_t>(root)] = 1;
        touch(root);
        ws.queue.push_back(root);
        for (size_t head = 0; head < ws.queue.size(); ++head) {
            const int v = ws.queue[head];
            for (int e = row(v); e < row(v + 1); ++e) {
                const int to = ws.column[static_cast<size_t>(e)];
                const auto t = static_cast<size_t>(to);
                if (ws.base[static_cast<size_t>(v)] == ws.base[t] || ws.match[static_cast<size_t>(v)] == to) continue;
                if (to == root || (ws.match[t] >= 0 && ws.parent[static_cast<size_t>(ws.match[t])] >= 0)) {
                    // An odd cycle: contract the blossom onto its base. Its vertices are all in the search tree.
                    const int b = lowest_common_ancestor(v, to);
                    for (int u : ws.touched) ws.in_blossom[static_cast<size_t>(u)] = 0;
                    mark_path(v, b, to);
                    mark_path(to, b, v);
                    for (int u : ws.touched) {
                        const auto ui = static_cast<size_t>(u);
                        if (!ws.in_blossom[static_cast<size_t>(ws.base[ui])]) continue;
                        ws.base[ui] = b;
                        if (!ws.used[ui]) {
                            ws.used[ui] = 1;
                            ws.queue.push_back(u);
                        }
                    }
                } else if (ws.parent[t] < 0) {
                    ws.parent[t] = v;
                    touch(to);
                    if (ws.match[t] < 0) return to;
                    const int next = ws.match[t];
                    ws.used[static_cast<size_t>(next)] = 1;
                    touch(next);
                    ws.queue.push_back(next);
                }
            }
        }
        return -1;
    }

    int n_;
};

}  // namespace

int kekulize(Molecule& m, const std::vector<unsigned char>& needs_double) {
    const int n = m.atom_count();
    for (Bond& b : m.bonds)
        if (b.aromatic) b.order = 1;
    demote_aromatic_bridges(m);

    // The matching graph: atoms that need a double bond, joined by aromatic bonds.
    ws.local.assign(static_cast<size_t>(n), -1);
    ws.atom_of.clear();
    for (int a = 0; a < n; ++a)
        if (needs_double[static_cast<size_t>(a)]) {
            ws.local[static_cast<size_t>(a)] = static_cast<int>(ws.atom_of.size());
            ws.atom_of.push_back(a);
        }
    const int vertices = static_cast<int>(ws.atom_of.size());
    if (vertices == 0) return -1;
    ws.row.assign(static_cast<size_t>(vertices) + 1, 0);
    ws.column.clear();
    ws.column_bond.clear();
    for (int v = 0; v < vertices; ++v) {
        for (const Neighbor& nb : m.neighbors(ws.atom_of[static_cast<size_t>(v)])) {
            const int w = ws.local[static_cast<size_t>(nb.atom)];
            if (w < 0 || !m.bonds[static_cast<size_t>(nb.bond)].aromatic) continue;
            ws.column.push_back(w);
            ws.column_bond.push_back(nb.bond);
        }
        ws.row[static_cast<size_t>(v) + 1] = static_cast<int>(ws.column.size());
    }

    Matcher matcher(vertices);
    matcher.greedy();
    for (int v = 0; v < vertices; ++v)
        if (ws.match[static_cast<size_t>(v)] < 0 && !matcher.augment(v)) return ws.atom_of[static_cast<size_t>(v)];

    for (int v = 0; v < vertices; ++v) {
        const int w = ws.match[static_cast<size_t>(v)];
        if (w < v) continue;
        for (int e = ws.row[static_cast<size_t>(v)]; e < ws.row[static_cast<size_t>(v) + 1]; ++e)
            if (ws.column[static_cast<size_t>(e)] == w) {
                m.bonds[static_cast<size_t>(ws.column_bond[static_cast<size_t>(e)])].order = 2;
                break;
            }
    }
    return -1;
}

}  // namespace repel
