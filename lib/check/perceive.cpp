// Bonds from coordinates, then bond orders and formal charges that give every atom a normal valence.
#include "check/perceive.hpp"

#include <Eigen/Geometry>
#include <algorithm>
#include <array>
#include <cmath>
#include <numeric>
#include <optional>
#include <queue>
#include <tuple>
#include <unordered_map>

#include "core/bond_length.hpp"
#include "core/element.hpp"
#include "core/limits.hpp"
#include "core/neighbor_grid.hpp"
#include "domains/metal.hpp"
#include "graph/valence.hpp"

namespace repel {
namespace {

using State = ValenceState;

// The first state (in the table's order) of the given charge whose valence holds `bonds`; valence -1 when none.
State first_state(int z, int bonds, std::optional<int> charge) {
    for (const State& s : valence_states(z))
        if (s.valence >= bonds && (!charge || s.charge == *charge)) return s;
    return {-1, charge.value_or(0)};
}

State initial_state(int z, int bonds) {
    // Neutral first; then any charged state that holds the bonds.
    State s = first_state(z, bonds, 0);
    if (s.valence >= 0) return s;
    return first_state(z, bonds, std::nullopt);
}

// The degree-constrained matching of step 2.
class OrderMatcher {
public:
    OrderMatcher(const Molecule& m, const std::vector<Eigen::Vector3d>& pos, const std::vector<char>& free)
        : m_(m), free_(free) {
        const int n = m.atom_count();
        adj_.assign(static_cast<size_t>(n), {});
        pref_.assign(m.bonds.size(), 1.0);
        length_.assign(m.bonds.size(), 0.0);
        for (int e = 0; e < m.bond_count(); ++e) {
            if (!free_[static_cast<size_t>(e)]) continue;
            const Bond& b = m.bonds[static_cast<size_t>(e)];
            const double single = bond_length(m.atoms[static_cast<size_t>(b.a)].z, m.atoms[static_cast<size_t>(b.b)].z, 1);
            length_[static_cast<size_t>(e)] = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
            pref_[static_cast<size_t>(e)] = length_[static_cast<size_t>(e)] / single;
        }
        for (int i = 0; i < n; ++i) {
            for (const Neighbor& nb : m.neighbors(i))
                if (free_[static_cast<size_t>(nb.bond)]) adj_[static_cast<size_t>(i)].push_back(nb);
            std::sort(adj_[static_cast<size_t>(i)].begin(), adj_[static_cast<size_t>(i)].end(),
                      [&](const Neighbor& x, const Neighbor& y) {
                          const double px = pref_[static_cast<size_t>(x.bond)], py = pref_[static_cast<size_t>(y.bond)];
                          return px != py ? px < py : x.bond < y.bond;
                      });
        }
    }

    // Extra order per bond (0..2) for deficits `need`; fills `left` with what each atom still lacks.
    std::vector<int> solve(const std::vector<int>& need, std::vector<int>& left) {
        const int n = m_.atom_count();
        rem_ = need;
        x_.assign(m_.bonds.size(), 0);
        // Components of the subgraph of unsaturated atoms, each solved on its own (keeps the search small).
        std::vector<int> comp(static_cast<size_t>(n), -1);
        for (int s = 0; s < n; ++s) {
            if (comp[static_cast<size_t>(s)] >= 0 || rem_[static_cast<size_t>(s)] <= 0) continue;
            std::vector<int> atoms{s};
            comp[static_cast<size_t>(s)] = s;
            for (size_t k = 0; k < atoms.size(); ++k)
                for (const Neighbor& nb : adj_[static_cast<size_t>(atoms[k])])
                    if (comp[static_cast<size_t>(nb.atom)] < 0 && rem_[static_cast<size_t>(nb.atom)] > 0 &&
                        capacity(nb.bond) > 0) {
                        comp[static_cast<size_t>(nb.atom)] = s;
                        atoms.push_back(nb.atom);
                    }
            std::sort(atoms.begin(), atoms.end());
            const std::vector<int> saved_rem = rem_;
            const std::vector<int> saved_x = x_;
            nodes_ = 0;
            // Each search step scans the component: cap the steps so that the work stays near kWork per component.
            limit_ = std::clamp<long>(kWork / static_cast<long>(atoms.size()), 2000, kNodeLimit);
            long sum = 0;
            for (int a : atoms) sum += rem_[static_cast<size_t>(a)];
            // Each extra order serves two atoms: an odd total cannot be matched perfectly.
            if (sum % 2 == 0 && perfect(atoms)) continue;
            check_deadline("assigning bond orders");
            // No perfect matching: one atom keeps an unpaired electron. Which one is decided by the bond lengths:
            // the Lewis structure whose orders fit the measured lengths best (the CH2 of CH2-C#N, not its N).
            std::vector<int> candidates;
            for (int a : atoms)
                if (saved_rem[static_cast<size_t>(a)] > 0) candidates.push_back(a);
            std::stable_sort(candidates.begin(), candidates.end(), [&](int a, int b) {
                return saved_rem[static_cast<size_t>(a)] > saved_rem[static_cast<size_t>(b)];
            });
            const size_t max_candidates = atoms.size() > 500 ? 3 : kMaxCandidates;
            if (candidates.size() > max_candidates) candidates.resize(max_candidates);
            double best_fit = 1e300;
            std::vector<int> best_rem, best_x;
            for (int c : candidates) {
                rem_ = saved_rem;
                x_ = saved_x;
                rem_[static_cast<size_t>(c)] -= 1;
                nodes_ = limit_ - std::min(limit_, kCandidateNodes);
                if (!perfect(atoms)) {
                    check_deadline("assigning bond orders");
                    continue;
                }
                const double fit = misfit(atoms);
                if (fit < best_fit - kFitTie) {
                    best_fit = fit;
                    best_rem = rem_;
                    best_rem[static_cast<size_t>(c)] += 1;  // the electron it keeps
                    best_x = x_;
                }
            }
            if (!best_rem.empty()) {
                rem_ = best_rem;
                x_ = best_x;
                continue;
            }
            rem_ = saved_rem;
            x_ = saved_x;
            greedy(atoms);
        }
        left = rem_;
        return x_;
    }

private:
    int capacity(int bond) const {
        const Bond& b = m_.bonds[static_cast<size_t>(bond)];
        return std::max(0, 3 - b.order - x_[static_cast<size_t>(bond)]);
    }
    // Bonds of `atom` that can still take order, with the other atom still below valence.
    int usable(int atom, int* total) const {
        int count = 0, sum = 0;
        for (const Neighbor& nb : adj_[static_cast<size_t>(atom)]) {
            const int c = std::min(capacity(nb.bond), rem_[static_cast<size_t>(nb.atom)]);
            if (c > 0) {
                ++count;
                sum += c;
            }
        }
        if (total) *total = sum;
        return count;
    }

    // Depth-first search for a perfect assignment, most constrained atom first (forced choices cost nothing).
    bool perfect(const std::vector<int>& atoms) {
        if (++nodes_ > limit_) return false;
        if ((nodes_ & 1023) == 0 && deadline_passed()) return false;  // solve() then throws the LimitError
        int best = -1, best_count = 1 << 30;
        for (int a : atoms) {
            if (rem_[static_cast<size_t>(a)] <= 0) continue;
            int total = 0;
            const int c = usable(a, &total);
            if (total < rem_[static_cast<size_t>(a)]) return false;
            if (c < best_count) {
                best_count = c;
                best = a;
                if (c == 1) break;
            }
        }
        if (best < 0) return true;
        for (const Neighbor& nb : adj_[static_cast<size_t>(best)]) {
            if (std::min(capacity(nb.bond), rem_[static_cast<size_t>(nb.atom)]) <= 0) continue;
            step(best, nb, +1);
            if (perfect(atoms)) return true;
            step(best, nb, -1);
            if (nodes_ > limit_) return false;
        }
        return false;
    }

    // Most constrained atom first (fewest usable bonds, then lowest index), one order at a time. A heap with stale
    // entries skipped keeps it O(n log n): a step changes the counts only of the two atoms and their neighbours.
    void greedy(const std::vector<int>& atoms) {
        using Entry = std::pair<int, int>;  // (usable bonds, atom)
        std::priority_queue<Entry, std::vector<Entry>, std::greater<Entry>> heap;
        auto push = [&](int a) {
            if (rem_[static_cast<size_t>(a)] <= 0) return;
            const int c = usable(a, nullptr);
            if (c > 0) heap.push({c, a});
        };
        for (int a : atoms) push(a);
        std::vector<char> in_component(static_cast<size_t>(m_.atom_count()), 0);
        for (int a : atoms) in_component[static_cast<size_t>(a)] = 1;
        while (!heap.empty()) {
            const auto [count, best] = heap.top();
            heap.pop();
            if (rem_[static_cast<size_t>(best)] <= 0 || usable(best, nullptr) != count) continue;  // stale
            for (const Neighbor& nb : adj_[static_cast<size_t>(best)])
                if (std::min(capacity(nb.bond), rem_[static_cast<size_t>(nb.atom)]) > 0) {
                    step(best, nb, +1);
                    for (int changed : {best, nb.atom}) {
                        if (in_component[static_cast<size_t>(changed)]) push(changed);
                        for (const Neighbor& around : adj_[static_cast<size_t>(changed)])
                            if (in_component[static_cast<size_t>(around.atom)]) push(around.atom);
                    }
                    break;
                }
        }
    }

    void step(int atom, const Neighbor& nb, int d) {
        x_[static_cast<size_t>(nb.bond)] += d;
        rem_[static_cast<size_t>(atom)] -= d;
        rem_[static_cast<size_t>(nb.atom)] -= d;
    }

    // Sum over the free bonds of the component of |measured - expected length| for the current orders.
    double misfit(const std::vector<int>& atoms) const {
        double sum = 0;
        for (int a : atoms)
            for (const Neighbor& nb : adj_[static_cast<size_t>(a)]) {
                if (nb.atom < a) continue;
                const Bond& b = m_.bonds[static_cast<size_t>(nb.bond)];
                const int order = std::min(3, b.order + x_[static_cast<size_t>(nb.bond)]);
                const double expected = bond_length(m_.atoms[static_cast<size_t>(b.a)].z, m_.atoms[static_cast<size_t>(b.b)].z, order);
                sum += std::fabs(length_[static_cast<size_t>(nb.bond)] - expected);
            }
        return sum;
    }

    static constexpr long kNodeLimit = 50000;
    static constexpr long kWork = 50'000'000;     // atom visits per component search
    long limit_ = kNodeLimit;
    static constexpr double kFitTie = 0.01;        // Angstrom: closer fits are a tie, won by the most unsaturated site
    static constexpr size_t kMaxCandidates = 40;   // radical sites tried per component
    static constexpr long kCandidateNodes = 5000;  // search steps per tried site
    std::vector<double> length_;  // search steps per component before the greedy fallback
    const Molecule& m_;
    const std::vector<char>& free_;
    std::vector<std::vector<Neighbor>> adj_;
    std::vector<double> pref_;
    std::vector<int> rem_, x_;
    long nodes_ = 0;
};

// A long pair that would close a three- or four-membered ring across a trigonal centre is not a bond: an atom of a
// flat ring pulled 0.3 A along one ring bond comes within the perception distance of the atom across (adenine's C6
// and C8 at 1.89 A), and read as bonded it made a four-membered ring, took the ring's aromaticity and hid the bond
// that was moved. Dropped when the pair lies beyond the radii sum by more than kFalseClosure, both atoms are among
// B..F, Si..Cl (no metal, where long bonds in small chelate rings are real), and at one end the other neighbours lie
// in one plane (angle sum 350 degrees or more) that the pair lies in too (within 30 degrees): no such atom has a
// fourth bond in its own plane. The long bonds of real small rings (bicyclobutane's 1.50 A, [1.1.1]propellane's
// 1.60 A; from memory) lie far inside the margin, and a stretched ring bond between tetrahedral centres is kept.
void drop_false_ring_closures(const Molecule& m, const std::vector<Eigen::Vector3d>& pos,
                              std::vector<std::pair<int, int>>& pairs, const std::vector<char>& excluded) {
    constexpr double kFalseClosure = 0.25;  // Angstrom beyond the radii sum (a choice: C-C 1.77 A)
    auto light = [&](int i) {
        const int z = m.atoms[static_cast<size_t>(i)].z;
        return (z >= 5 && z <= 9) || (z >= 14 && z <= 17);
    };
    auto at = [&](int i) -> const Eigen::Vector3d& { return pos[static_cast<size_t>(i)]; };
    std::vector<std::vector<int>> adj(static_cast<size_t>(m.atom_count()));
    for (auto [i, j] : pairs) {
        if (excluded[static_cast<size_t>(i)] || excluded[static_cast<size_t>(j)]) continue;
        adj[static_cast<size_t>(i)].push_back(j);
        adj[static_cast<size_t>(j)].push_back(i);
    }
    // At c, the neighbours other than x lie in one plane with c, and x lies near that plane.
    auto in_own_plane = [&](int c, int x) {
        std::vector<Eigen::Vector3d> u;
        for (int o : adj[static_cast<size_t>(c)])
            if (o != x) u.push_back((at(o) - at(c)).normalized());
        if (u.size() != 3) return false;
        double sum = 0;
        for (size_t p = 0; p < 3; ++p)
            for (size_t q = p + 1; q < 3; ++q) sum += std::acos(std::clamp(u[p].dot(u[q]), -1.0, 1.0));
        if (sum * 180.0 / M_PI < 350.0) return false;
        const Eigen::Vector3d normal = (u[1] - u[0]).cross(u[2] - u[0]);
        if (normal.norm() < 1e-6) return false;
        const double s = std::fabs(normal.normalized().dot((at(x) - at(c)).normalized()));
        return s < std::sin(30.0 * M_PI / 180.0);
    };
    auto small_ring = [&](int i, int j) {
        for (int a : adj[static_cast<size_t>(i)]) {
            if (a == j) continue;
            for (int b : adj[static_cast<size_t>(a)]) {
                if (b == i) continue;
                if (b == j) return true;  // i-a-j
                for (int c : adj[static_cast<size_t>(b)])
                    if (c == j && b != j && a != j) return true;  // i-a-b-j
            }
        }
        return false;
    };
    std::vector<std::pair<int, int>> kept;
    for (auto pr : pairs) {
        const auto [i, j] = pr;
        const double r = element(m.atoms[static_cast<size_t>(i)].z).r_perception +
                         element(m.atoms[static_cast<size_t>(j)].z).r_perception;
        const bool drop = light(i) && light(j) && (at(i) - at(j)).norm() > r + kFalseClosure && small_ring(i, j) &&
                          (in_own_plane(i, j) || in_own_plane(j, i));
        if (!drop) kept.push_back(pr);
    }
    pairs.swap(kept);
}

}  // namespace

std::vector<Overlap> perceive_bonds(Molecule& m, const std::vector<Eigen::Vector3d>& pos,
                                    const PerceptionOptions& options) {
    const int n = m.atom_count();
    std::vector<Overlap> overlaps;
    if (n == 0) return overlaps;
    double rmax = 0;
    for (const Atom& a : m.atoms) rmax = std::max(rmax, element(a.z).r_perception);
    const double cell = std::max(0.5, 2 * rmax + options.tolerance);
    NeighborGrid grid(cell);
    for (int i = 0; i < n; ++i) grid.insert(i, pos[static_cast<size_t>(i)]);
    std::vector<std::pair<int, int>> pairs;  // candidate bonds, i < j
    std::vector<char> excluded(static_cast<size_t>(n), 0);
    for (int i = 0; i < n; ++i) {
        const double ri = element(m.atoms[static_cast<size_t>(i)].z).r_perception;
        grid.for_each_near(pos[static_cast<size_t>(i)], [&](int j) {
                        if (j <= i) return;
                        const double d = (pos[static_cast<size_t>(i)] - pos[static_cast<size_t>(j)]).norm();
                        const double r = ri + element(m.atoms[static_cast<size_t>(j)].z).r_perception;
                        if (d > r + options.tolerance) return;
                        if (d < options.overlap * r) {
                            // The atom left out (b): the hydrogen of a hydrogen and a heavier atom, else the later.
                            const bool first_is_h = m.atoms[static_cast<size_t>(i)].z == 1 && m.atoms[static_cast<size_t>(j)].z != 1;
                            overlaps.push_back(first_is_h ? Overlap{j, i, d, true, {}} : Overlap{i, j, d, true, {}});
                            return;
                        }
                        pairs.emplace_back(i, j);
        });
    }
    // Keep the pair list canonical (sorted, each pair once) whatever order the grid visits cells in.
    std::sort(pairs.begin(), pairs.end());
    pairs.erase(std::unique(pairs.begin(), pairs.end()), pairs.end());
    std::sort(overlaps.begin(), overlaps.end(), [](const Overlap& x, const Overlap& y) {
        return std::tie(x.a, x.b) < std::tie(y.a, y.b);
    });  // a pair is listed once per visit of its cell: keep one
    overlaps.erase(std::unique(overlaps.begin(), overlaps.end(),
                               [](const Overlap& x, const Overlap& y) { return x.a == y.a && x.b == y.b; }),
                   overlaps.end());
    for (const Overlap& o : overlaps) excluded[static_cast<size_t>(o.b)] = 1;
    // Hydrogens within bonding distance of more atoms than they can bond to.
    {
        auto z = [&](int i) { return m.atoms[static_cast<size_t>(i)].z; };
        auto dist = [&](int i, int j) { return (pos[static_cast<size_t>(i)] - pos[static_cast<size_t>(j)]).norm(); };
        std::vector<std::vector<int>> partners(static_cast<size_t>(n));
        for (auto [i, j] : pairs) {
            if (excluded[static_cast<size_t>(i)] || excluded[static_cast<size_t>(j)]) continue;
            if (z(i) == 1) partners[static_cast<size_t>(i)].push_back(j);
            if (z(j) == 1) partners[static_cast<size_t>(j)].push_back(i);
        }
        auto heavy_partners = [&](int h) {
            std::vector<int> out;
            for (int p : partners[static_cast<size_t>(h)])
                if (z(p) != 1 && !excluded[static_cast<size_t>(p)]) out.push_back(p);
            return out;
        };
        std::vector<std::pair<int, int>> dropped;  // H-H pairs not bonded
        for (auto [i, j] : pairs)
            if (z(i) == 1 && z(j) == 1 && !excluded[static_cast<size_t>(i)] && !excluded[static_cast<size_t>(j)] &&
                (!heavy_partners(i).empty() || !heavy_partners(j).empty())) {
                dropped.emplace_back(i, j);
                Overlap o{i, j, dist(i, j), true, {}};
                o.left_out = false;
                overlaps.push_back(o);
            }
        for (int h = 0; h < n; ++h) {
            if (z(h) != 1 || excluded[static_cast<size_t>(h)]) continue;
            std::vector<int> heavy = heavy_partners(h);
            if (heavy.size() < 2) continue;
            const bool bridging = heavy.size() == 2 && std::all_of(heavy.begin(), heavy.end(), [&](int p) {
                return z(p) == 5 || is_d_block_metal(z(p));
            });
            if (bridging) continue;
            std::sort(heavy.begin(), heavy.end(), [&](int x, int y) { return dist(h, x) < dist(h, y) || (dist(h, x) == dist(h, y) && x < y); });
            Overlap o{heavy.front(), h, dist(h, heavy.front()), true, {}};
            o.also.assign(heavy.begin() + 1, heavy.end());
            overlaps.push_back(o);
            excluded[static_cast<size_t>(h)] = 1;
        }
        std::sort(dropped.begin(), dropped.end());
        std::vector<std::pair<int, int>> kept;
        for (auto pr : pairs)
            if (!std::binary_search(dropped.begin(), dropped.end(), pr)) kept.push_back(pr);
        pairs.swap(kept);
    }
    drop_false_ring_closures(m, pos, pairs, excluded);
    for (auto [i, j] : pairs) {
        if (excluded[static_cast<size_t>(i)] || excluded[static_cast<size_t>(j)]) continue;
        if (m.bond_between(i, j) < 0) m.add_bond(i, j, 1);
    }
    return overlaps;
}

namespace {

// The assignment of assign_valences. With free_charge the total charge is not imposed: unsatisfied atoms take
// anionic states until every atom is closed-shell (the ligands of the ionic model); `cut` marks the atoms that were
// bonded to a metal, which may also take the deeper anion states of donor_valence_states.
// The search for bond orders and formal charges behind assign_valences: a matching of the free bonds' extra orders
// (OrderMatcher) under each atom's valence state, and rules that change one state at a time while that lowers the
// number of electrons left unpaired or brings the charge to the target.
class ValenceSearch {
public:
    ValenceSearch(Molecule& m, const std::vector<Eigen::Vector3d>& pos, int total_charge, int unpaired_allowed,
                  const std::vector<int>* free_bonds, bool fixed_charges, const std::vector<char>* ignore,
                  bool free_charge, const std::vector<char>* cut)
        : m_(m), n_(m.atom_count()), unpaired_allowed_(unpaired_allowed), fixed_charges_(fixed_charges),
          ignore_(ignore), free_charge_(free_charge), cut_(cut), is_free_(m.bonds.size(), free_bonds ? 0 : 1),
          matcher_(m, pos, (mark_free(free_bonds), is_free_)) {
        initial_states();
        residual_ = solve();
        target_ = fixed_charges_ ? charge() : total_charge;
    }

    ValenceResult run() {
        for (int round = 0; round < 4 * n_ + 8 && tries_ <= kMaxTries; ++round)
            if (!one_round()) break;
        last_charge();
        return result();
    }

private:
    // Each trial re-runs the matching; the budget keeps a large structure with many unsatisfied atoms (a protein
    // without hydrogens) from taking long. Real molecules need a handful.
    static constexpr int kMaxTries = 400;

    // The free bonds (every bond when none are named) start single.
    int mark_free(const std::vector<int>* free_bonds) {
        if (free_bonds)
            for (int b : *free_bonds) is_free_[static_cast<size_t>(b)] = 1;
        for (size_t b = 0; b < m_.bonds.size(); ++b)
            if (is_free_[b]) m_.bonds[b].order = 1;
        return 0;
    }

    void initial_states() {
        Molecule& m = m_;
        const int n = n_;
        const bool fixed_charges = fixed_charges_;
        const std::vector<char>* ignore = ignore_;
        state_.resize(static_cast<size_t>(n));
        fixed_sum_.assign(static_cast<size_t>(n), 0);  // order sum with every free bond single
        for (int i = 0; i < n; ++i) fixed_sum_[static_cast<size_t>(i)] = m.bond_order_sum(i);
        for (int i = 0; i < n; ++i) {
            const Atom& a = m.atoms[static_cast<size_t>(i)];
            const int bonds = fixed_sum_[static_cast<size_t>(i)];
            if (ignore && (*ignore)[static_cast<size_t>(i)]) {
                state_[static_cast<size_t>(i)] = {bonds, fixed_charges ? a.charge : 0};
                continue;
            }
            State s = fixed_charges ? first_state(a.z, bonds + std::max(0, a.radical_electrons), a.charge)
                                    : initial_state(a.z, bonds);
            if (fixed_charges && s.valence >= 0) s.valence -= std::max(0, a.radical_electrons);
            if (s.valence < 0) {
                // No normal valence holds these bonds (a metal, or an atom with too many neighbours): take it as it is.
                if (!is_transition_metal(a.z) && (fixed_charges ? first_state(a.z, 0, a.charge).valence >= 0
                                                                : !valence_states(a.z).empty()))
                    overbonded_.push_back(i);
                s = {bonds, fixed_charges ? a.charge : 0};
            }
            state_[static_cast<size_t>(i)] = s;
        }
    }

    int solve() {
        std::vector<int> need(static_cast<size_t>(n_));
        for (int i = 0; i < n_; ++i)
            need[static_cast<size_t>(i)] = std::max(0, state_[static_cast<size_t>(i)].valence - fixed_sum_[static_cast<size_t>(i)]);
        x_ = matcher_.solve(need, left_);
        return std::accumulate(left_.begin(), left_.end(), 0);
    }
    int charge() const {
        int q = 0;
        for (const State& s : state_) q += s.charge;
        return q;
    }
    double electronegativity(int i) const { return element(m_.atoms[static_cast<size_t>(i)].z).electronegativity; }

    bool try_state(int atom, State s) {
        if (++tries_ > kMaxTries) return false;
        const State old = state_[static_cast<size_t>(atom)];
        state_[static_cast<size_t>(atom)] = s;
        const int r = solve();
        if (r < residual_) {
            residual_ = r;
            return true;
        }
        state_[static_cast<size_t>(atom)] = old;
        residual_ = solve();
        return false;
    }

    // Rule 1 is kept only when the atoms it leaves unsatisfied (those to take the -1) are the host's neighbours or
    // theirs: a charge pair across the molecule (C=Cl+ here, C- there) is no Lewis structure anyone means. One such
    // atom is enough: the other unsatisfied atoms may belong to another group of the same kind (p-dinitrobenzene's
    // second nitro group: requiring all of them near left its four O as radicals).
    bool local(int host) const {
        for (int i = 0; i < n_; ++i) {
            if (left_[static_cast<size_t>(i)] <= 0 || i == host) continue;
            bool near = m_.bond_between(i, host) >= 0;
            for (const Neighbor& nb : m_.neighbors(host)) near = near || m_.bond_between(i, nb.atom) >= 0;
            if (near) return true;
        }
        return false;
    }

    // One round of the rules, the first that helps; false when none does (or nothing is left to do).
    bool one_round() {
        Molecule& m = m_;
        const int n = n_;
        const int unpaired_allowed = unpaired_allowed_;
        const bool fixed_charges = fixed_charges_, free_charge = free_charge_;
        const std::vector<char>* ignore = ignore_;
        const std::vector<char>* cut = cut_;
        const int target = target_;
        int& residual = residual_;
        std::vector<int>& left = left_;
        std::vector<State>& state = state_;
        std::vector<int>& fixed_sum = fixed_sum_;
        std::vector<char>& is_free = is_free_;
        auto try_state = [&](int atom, State s) { return this->try_state(atom, s); };
        auto solve = [&]() { return this->solve(); };
        auto electronegativity = [&](int i) { return this->electronegativity(i); };
        auto local = [&](int host) { return this->local(host); };

        const int q = charge();
        if (residual <= unpaired_allowed && (free_charge || q == target)) return false;
        std::vector<int> unsat;
        for (int i = 0; i < n; ++i)
            if (left[static_cast<size_t>(i)] > 0) unsat.push_back(i);
        if (unsat.empty() && (free_charge || q == target)) return false;
        // Saturated neighbours of unsatisfied atoms, least electronegative first (they carry a positive charge best).
        std::vector<int> hosts;
        for (int u : unsat)
            for (const Neighbor& nb : m.neighbors(u))
                if (left[static_cast<size_t>(nb.atom)] == 0 && is_free[static_cast<size_t>(nb.bond)])
                    hosts.push_back(nb.atom);
        std::sort(hosts.begin(), hosts.end());
        hosts.erase(std::unique(hosts.begin(), hosts.end()), hosts.end());
        std::stable_sort(hosts.begin(), hosts.end(), [&](int a, int b) { return electronegativity(a) < electronegativity(b); });

        bool changed = false;
    // Rule 0: a neighbour takes its next neutral valence (S 4 -> 6, P 3 -> 5).
    if (residual > unpaired_allowed)
        for (int h : hosts) {
            const State cur = state[static_cast<size_t>(h)];
            for (const State& s : valence_states(m.atoms[static_cast<size_t>(h)].z))
                if (s.charge == cur.charge && s.valence == cur.valence + 2) {
                    changed = try_state(h, s);
                    break;
                }
            if (changed) break;
        }
    // Rule 1: a neighbour takes +1 and one more bond (N+ of a nitro group, O+ of CO), when the charge is to go up
    // or another atom is left to take the compensating -1.
    if (!changed && !fixed_charges && residual > unpaired_allowed &&
        ((!free_charge && q < target) || residual >= 2 + unpaired_allowed))
        for (int h : hosts) {
            const State cur = state[static_cast<size_t>(h)];
            for (const State& s : valence_states(m.atoms[static_cast<size_t>(h)].z))
                if (s.charge == cur.charge + 1 && s.valence == cur.valence + 1) {
                    changed = try_state(h, s);
                    if (changed && q >= target && !local(h)) {
                        state[static_cast<size_t>(h)] = cur;
                        residual = solve();
                        changed = false;
                    }
                    break;
                }
            if (changed) break;
        }
    // Rule 1 again for a cation, with any atom of the structure as the host: the matching is global, so an N+
    // anywhere in a conjugated ring serves (pyridinium: the carbon left over sits para to the N, which is no
    // neighbour of it; rule 2 then made that carbon the cation and the ring lost its aromaticity).
    if (!changed && !fixed_charges && !free_charge && residual > unpaired_allowed && q < target) {
        std::vector<int> others;
        for (int i = 0; i < n; ++i)
            if (left[static_cast<size_t>(i)] == 0 && std::find(hosts.begin(), hosts.end(), i) == hosts.end() &&
                !(ignore && (*ignore)[static_cast<size_t>(i)]))
                others.push_back(i);
        std::stable_sort(others.begin(), others.end(),
                         [&](int a, int b) { return electronegativity(a) < electronegativity(b); });
        for (int h : others) {
            const State cur = state[static_cast<size_t>(h)];
            bool free_bond = false;
            for (const Neighbor& nb : m.neighbors(h)) free_bond = free_bond || is_free[static_cast<size_t>(nb.bond)];
            if (!free_bond) continue;
            for (const State& s : valence_states(m.atoms[static_cast<size_t>(h)].z))
                if (s.charge == cur.charge + 1 && s.valence == cur.valence + 1) {
                    changed = try_state(h, s);
                    break;
                }
            if (changed) break;
        }
    }
    // Rule 2: an unsatisfied atom takes a charge and one bond less: an anion on the most electronegative atom
    // when the charge is to go down, a cation on the least electronegative when it is to go up.
    if (!changed && !fixed_charges && (free_charge ? residual > unpaired_allowed : q != target) && !unsat.empty()) {
        const int dq = free_charge || q > target ? -1 : 1;
        std::vector<int> order = unsat;
        std::stable_sort(order.begin(), order.end(), [&](int a, int b) {
            return dq < 0 ? electronegativity(a) > electronegativity(b) : electronegativity(a) < electronegativity(b);
        });
        for (int u : order) {
            const State cur = state[static_cast<size_t>(u)];
            const int zu = m.atoms[static_cast<size_t>(u)].z;
            for (const State& s : cut && (*cut)[static_cast<size_t>(u)] ? donor_valence_states(zu) : valence_states(zu))
                if (s.charge == cur.charge + dq && s.valence == cur.valence - 1 && s.valence >= fixed_sum[static_cast<size_t>(u)]) {
                    changed = try_state(u, s);
                    break;
                }
            if (changed) break;
        }
    }
        return changed;
    }

    void last_charge() {
        Molecule& m = m_;
        const int n = n_;
        const bool fixed_charges = fixed_charges_, free_charge = free_charge_;
        const std::vector<char>* ignore = ignore_;
        const int target = target_;
        std::vector<int>& left = left_;
        std::vector<State>& state = state_;
        int& residual = residual_;
        auto electronegativity = [&](int i) { return this->electronegativity(i); };
        constexpr int kTriesBudget = kMaxTries;
        const int tries = tries_;
    // Still short of the total charge with every atom satisfied (NH3 read with charge +1: an ammonium that lost a
    // hydrogen): the atom with the fewest neighbours that can hold the charge with one bond more takes it, and the
    // bond it lacks is reported at it as an unpaired electron (a missing hydrogen), not as a charge without a place.
    if (!fixed_charges && !free_charge && charge() != target && tries <= kTriesBudget) {
        const int dq = charge() < target ? 1 : -1;
        int best = -1;
        State best_state{};
        for (int i = 0; i < n; ++i) {
            if (left[static_cast<size_t>(i)] > 0 || (ignore && (*ignore)[static_cast<size_t>(i)])) continue;
            const State cur = state[static_cast<size_t>(i)];
            for (const State& s : valence_states(m.atoms[static_cast<size_t>(i)].z))
                if (s.charge == cur.charge + dq && s.valence == cur.valence + 1) {
                    if (best < 0 || m.degree(i) < m.degree(best) ||
                        (m.degree(i) == m.degree(best) && dq * electronegativity(i) < dq * electronegativity(best))) {
                        best = i;
                        best_state = s;
                    }
                    break;
                }
        }
        if (best >= 0) {
            state[static_cast<size_t>(best)] = best_state;
            residual = this->solve();
        }
    }

    }

    ValenceResult result() {
        ValenceResult out;
        out.unpaired.assign(static_cast<size_t>(n_), 0);
        out.overbonded = overbonded_;
        for (int b = 0; b < m_.bond_count(); ++b)
            if (is_free_[static_cast<size_t>(b)]) m_.bonds[static_cast<size_t>(b)].order = 1 + x_[static_cast<size_t>(b)];
        for (int i = 0; i < n_; ++i) {
            Atom& a = m_.atoms[static_cast<size_t>(i)];
            if (!fixed_charges_) a.charge = state_[static_cast<size_t>(i)].charge;
            out.unpaired[static_cast<size_t>(i)] = left_[static_cast<size_t>(i)];
            out.total_unpaired += left_[static_cast<size_t>(i)];
            if (left_[static_cast<size_t>(i)] > 0) a.radical_electrons = left_[static_cast<size_t>(i)];
        }
        out.charge = charge();
        return out;
    }

    Molecule& m_;
    const int n_;
    const int unpaired_allowed_;
    const bool fixed_charges_;
    const std::vector<char>* ignore_;
    const bool free_charge_;
    const std::vector<char>* cut_;
    std::vector<char> is_free_;
    OrderMatcher matcher_;
    std::vector<State> state_;
    std::vector<int> fixed_sum_;  // order sum with every free bond single
    std::vector<int> overbonded_;
    std::vector<int> x_, left_;
    int residual_ = 0, target_ = 0, tries_ = 0;
};

ValenceResult assign_impl(Molecule& m, const std::vector<Eigen::Vector3d>& pos, int total_charge, int unpaired_allowed,
                          const std::vector<int>* free_bonds, bool fixed_charges, const std::vector<char>* ignore,
                          bool free_charge, const std::vector<char>* cut) {
    return ValenceSearch(m, pos, total_charge, unpaired_allowed, free_bonds, fixed_charges, ignore, free_charge, cut)
        .run();
}

}  // namespace

ValenceResult assign_valences(Molecule& m, const std::vector<Eigen::Vector3d>& pos, int total_charge,
                              int unpaired_allowed, const std::vector<int>* free_bonds, bool fixed_charges,
                              const std::vector<char>* ignore) {
    return assign_impl(m, pos, total_charge, unpaired_allowed, free_bonds, fixed_charges, ignore, false, nullptr);
}

ValenceResult assign_valences_ionic(Molecule& m, const std::vector<Eigen::Vector3d>& pos, int total_charge,
                                    const std::vector<char>* ignore) {
    const int n = m.atom_count();
    std::vector<char> metal(static_cast<size_t>(n), 0), cut(static_cast<size_t>(n), 0);
    for (int i = 0; i < n; ++i) metal[static_cast<size_t>(i)] = is_d_block_metal(m.atoms[static_cast<size_t>(i)].z);
    // The ligands as the species cut off the metals: the same atoms without the bonds to metals.
    Molecule ligands = m;
    std::vector<Bond> kept;
    for (const Bond& b : m.bonds) {
        const bool ma = metal[static_cast<size_t>(b.a)], mb = metal[static_cast<size_t>(b.b)];
        if (ma || mb) {
            if (!ma) cut[static_cast<size_t>(b.a)] = 1;
            if (!mb) cut[static_cast<size_t>(b.b)] = 1;
            continue;
        }
        kept.push_back(b);
    }
    ligands.set_bonds(kept);
    std::vector<char> skip(static_cast<size_t>(n), 0);
    for (int i = 0; i < n; ++i)
        skip[static_cast<size_t>(i)] = metal[static_cast<size_t>(i)] || (ignore && (*ignore)[static_cast<size_t>(i)]);
    ValenceResult out = assign_impl(ligands, pos, 0, 0, nullptr, false, &skip, true, &cut);
    // Orders and charges back onto the whole molecule; the bonds to metals stay single.
    for (Bond& b : m.bonds) {
        if (metal[static_cast<size_t>(b.a)] || metal[static_cast<size_t>(b.b)]) {
            b.order = 1;
            continue;
        }
        b.order = ligands.bonds[static_cast<size_t>(ligands.bond_between(b.a, b.b))].order;
    }
    int ligand_charge = 0, metals = 0;
    for (int i = 0; i < n; ++i) {
        Atom& a = m.atoms[static_cast<size_t>(i)];
        const Atom& l = ligands.atoms[static_cast<size_t>(i)];
        a.radical_electrons = l.radical_electrons;
        if (metal[static_cast<size_t>(i)]) {
            ++metals;
            continue;
        }
        a.charge = l.charge;
        ligand_charge += l.charge;
    }
    // The metals take what the ligands leave of the total charge, shared as evenly as it goes (the lower indices
    // take the remainder): their oxidation states, since their ligands take no electrons from them now.
    const int rest = total_charge - ligand_charge;
    int k = 0;
    for (int i = 0; i < n; ++i) {
        if (!metal[static_cast<size_t>(i)]) continue;
        const int share = rest / metals + ((rest % metals) != 0 && k < std::abs(rest % metals) ? (rest > 0 ? 1 : -1) : 0);
        m.atoms[static_cast<size_t>(i)].charge = share;
        ++k;
    }
    out.charge = total_charge;
    return out;
}

std::vector<int> valence_shortfall(const Molecule& m) {
    std::vector<int> out(static_cast<size_t>(m.atom_count()), 0);
    for (int i = 0; i < m.atom_count(); ++i) {
        const Atom& a = m.atoms[static_cast<size_t>(i)];
        if (valence_states(a.z).empty()) continue;
        if (first_state(a.z, 0, a.charge).valence < 0) continue;  // a charge the table does not know: no opinion
        int to_metals = 0;
        for (const Neighbor& nb : m.neighbors(i))
            if (is_d_block_metal(m.atoms[static_cast<size_t>(nb.atom)].z)) to_metals += m.bonds[static_cast<size_t>(nb.bond)].order;
        if (to_metals > 0) {
            // A donor: its bonds to metals count as covalent for as many units as its valence needs, the rest as
            // dative (a lone pair each), as domains/metal.cpp counts them: NH3-Pt, Cl-Pt and C5H5 rings on Fe are
            // all satisfied as written.
            const int own = m.bond_order_sum(i) - to_metals + std::max(0, a.radical_electrons);
            bool satisfied = false;
            for (int t = 0; t <= to_metals && !satisfied; ++t) satisfied = first_state(a.z, own + t, a.charge).valence == own + t;
            if (satisfied) continue;
            if (first_state(a.z, own, a.charge).valence < 0) {
                out[static_cast<size_t>(i)] = -1;
                continue;
            }
            const State s = first_state(a.z, own + to_metals, a.charge);
            out[static_cast<size_t>(i)] = s.valence < 0 ? 0 : s.valence - own - to_metals;
            continue;
        }
        const int bonds = m.bond_order_sum(i) + std::max(0, a.radical_electrons);
        const State s = first_state(a.z, bonds, a.charge);
        out[static_cast<size_t>(i)] = s.valence < 0 ? -1 : s.valence - bonds;
    }
    return out;
}

}  // namespace repel
