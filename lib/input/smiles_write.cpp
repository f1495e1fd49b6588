// SMILES writer: a molecular graph back to a SMILES that reads to the same graph with the atoms in the same order.
// Not canonical and not pretty: atoms are written in index order, each joined to the deepest earlier neighbour that
// is still open on the branch path, every other bond as a ring closure. Aromatic rings are written in the Kekule
// form the graph holds; chirality marks are re-derived for the neighbour order as written, and '/' '\' marks are
// solved from the double-bond configurations.
#include <algorithm>
#include <array>
#include <fmt/format.h>
#include <string>

#include "core/element.hpp"
#include "core/error.hpp"
#include "graph/polyhedral_stereo.hpp"
#include "graph/valence.hpp"
#include "input/smiles.hpp"
#include "input/smiles_stereo.hpp"

namespace repel {
namespace {

constexpr int kRingNumbers = 100;
constexpr int kMaxHydrogenCount = 9;  // OpenSMILES: hcount is 'H' and one digit
constexpr int kMaxCharge = 15;
constexpr int kMaxIsotope = 999;

[[noreturn]] void cannot(const std::string& why) { throw UnsupportedError("cannot write SMILES: " + why); }

// Union-find with parity over bonds: the relation "direction of x times direction of y is +1 or -1".
class ParityUnion {
public:
    explicit ParityUnion(int n) : parent_(static_cast<size_t>(n)), parity_(static_cast<size_t>(n), 0) {
        for (int i = 0; i < n; ++i) parent_[static_cast<size_t>(i)] = i;
    }
    // root and parity of x relative to its root
    std::pair<int, int> find(int x) {
        int parity = 0;
        int r = x;
        while (parent_[static_cast<size_t>(r)] != r) {
            parity ^= parity_[static_cast<size_t>(r)];
            r = parent_[static_cast<size_t>(r)];
        }
        // compress
        int p = parity;
        while (parent_[static_cast<size_t>(x)] != x) {
            const int next = parent_[static_cast<size_t>(x)];
            const int px = parity_[static_cast<size_t>(x)];
            parent_[static_cast<size_t>(x)] = r;
            parity_[static_cast<size_t>(x)] = p;
            p ^= px;
            x = next;
        }
        return {r, parity};
    }
    // Requires direction(x) * direction(y) == (odd ? -1 : +1); false when that contradicts what is known.
    bool relate(int x, int y, bool odd) {
        auto [rx, px] = find(x);
        auto [ry, py] = find(y);
        const int want = odd ? 1 : 0;
        if (rx == ry) return (px ^ py) == want;
        parent_[static_cast<size_t>(rx)] = ry;
        parity_[static_cast<size_t>(rx)] = px ^ py ^ want;
        return true;
    }

private:
    std::vector<int> parent_, parity_;
};

class Writer {
public:
    explicit Writer(const Molecule& m) : m_(m), n_(m.atom_count()) {}
    std::string write();

private:
    int low(int k) const { return std::min(bond(k).a, bond(k).b); }
    const Bond& bond(int k) const { return m_.bonds[static_cast<size_t>(k)]; }
    const Atom& atom(int v) const { return m_.atoms[static_cast<size_t>(v)]; }

    void build_tree();
    void order_ring_digits();
    void solve_directions();
    std::vector<int> written_order(int v, bool with_hydrogen) const;
    void derive_chirality();
    std::string atom_text(int v) const;
    std::string bond_text(int k) const;

    const Molecule& m_;
    int n_;
    std::vector<int> parent_, parent_bond_, last_child_;
    std::vector<std::vector<int>> children_, digits_;  // digits_: ring bonds at each atom, in the order written
    std::vector<int> direction_;                       // per bond, from the lower to the higher atom index
    std::vector<int> chiral_index_;                    // per atom, the index to write
};

void Writer::build_tree() {
    parent_.assign(static_cast<size_t>(n_), -1);
    parent_bond_.assign(static_cast<size_t>(n_), -1);
    last_child_.assign(static_cast<size_t>(n_), -1);
    children_.assign(static_cast<size_t>(n_), {});
    std::vector<int> depth(static_cast<size_t>(n_), -1);
    std::vector<int> path;
    for (int i = 0; i < n_; ++i) {
        int best = -1, best_bond = -1, best_depth = -1;
        for (const Neighbor& nb : m_.neighbors(i)) {
            if (nb.atom >= i) continue;
            const int d = depth[static_cast<size_t>(nb.atom)];
            if (d > best_depth) {
                best = nb.atom;
                best_bond = nb.bond;
                best_depth = d;
            }
        }
        const int keep = best >= 0 ? best_depth + 1 : 0;
        while (static_cast<int>(path.size()) > keep) {
            depth[static_cast<size_t>(path.back())] = -1;
            path.pop_back();
        }
        if (best >= 0) {
            parent_[static_cast<size_t>(i)] = best;
            parent_bond_[static_cast<size_t>(i)] = best_bond;
            children_[static_cast<size_t>(best)].push_back(i);
            last_child_[static_cast<size_t>(best)] = i;
        }
        depth[static_cast<size_t>(i)] = static_cast<int>(path.size());
        path.push_back(i);
    }
    std::vector<unsigned char> tree(static_cast<size_t>(m_.bond_count()), 0);
    for (int i = 0; i < n_; ++i)
        if (parent_bond_[static_cast<size_t>(i)] >= 0) tree[static_cast<size_t>(parent_bond_[static_cast<size_t>(i)])] = 1;
    digits_.assign(static_cast<size_t>(n_), {});
    for (int k = 0; k < m_.bond_count(); ++k) {
        if (tree[static_cast<size_t>(k)]) continue;
        digits_[static_cast<size_t>(bond(k).a)].push_back(k);
        digits_[static_cast<size_t>(bond(k).b)].push_back(k);
    }
}

// On a chiral atom, ring digits go in the order of the mark's neighbour list, so that the order read back is the
// stored one whenever the tree allows (the mark is then written with the index it was read with).
void Writer::order_ring_digits() {
    for (int v = 0; v < n_; ++v) {
        const Atom& a = atom(v);
        auto& list = digits_[static_cast<size_t>(v)];
        if (a.chiral_class == ChiralClass::none || list.size() < 2) continue;
        auto key = [&](int k) {
            const int partner = bond(k).other(v);
            const auto it = std::find(a.stereo_neighbors.begin(), a.stereo_neighbors.end(), partner);
            return static_cast<int>(it - a.stereo_neighbors.begin());
        };
        std::stable_sort(list.begin(), list.end(), [&](int x, int y) { return key(x) < key(y); });
    }
}

// '/' '\' marks for every double bond with a configuration: the reference bond at each end is marked, and the
// directions are solved as parity constraints (the configuration relates the two marks of a double bond; two marks
// at one end of any double bond must point to opposite sides, or the reader would reject them).
void Writer::solve_directions() {
    const int nb = m_.bond_count();
    direction_.assign(static_cast<size_t>(nb), 0);
    std::vector<unsigned char> marked(static_cast<size_t>(nb), 0);
    // side of bond k's far atom seen from x, per unit direction
    auto sign_at = [&](int x, int k) { return x == low(k) ? 1 : -1; };
    auto single_to = [&](int x, int y) {
        const int k = m_.bond_between(x, y);
        return k >= 0 && bond(k).order == 1 ? k : -1;
    };
    struct Need {
        int k_a, k_b;
        bool odd;
    };
    std::vector<Need> needs;
    for (int d = 0; d < nb; ++d) {
        const Bond& b = bond(d);
        if (b.order != 2 || b.stereo == BondStereo::none) continue;
        int flips = 0;
        int ends[2] = {b.a, b.b};
        int refs[2] = {b.ref_a, b.ref_b};
        int ks[2] = {-1, -1};
        for (int e = 0; e < 2; ++e) {
            if (refs[e] >= 0) ks[e] = single_to(ends[e], refs[e]);
            if (ks[e] >= 0) continue;
            // the reference cannot carry a mark: use another single-bonded neighbour, on the other side
            for (const Neighbor& n : m_.neighbors(ends[e]))
                if (n.bond != d && n.atom != refs[e] && bond(n.bond).order == 1) {
                    ks[e] = n.bond;
                    ++flips;
                    break;
                }
            if (ks[e] < 0) cannot(fmt::format("the configuration of the double bond between atoms {} and {} has no "
                                              "single bond to mark",
                                              b.a + 1, b.b + 1));
        }
        const bool cis = (b.stereo == BondStereo::cis) != (flips % 2 == 1);
        const int product = (cis ? 1 : -1) * sign_at(b.a, ks[0]) * sign_at(b.b, ks[1]);
        needs.push_back({ks[0], ks[1], product < 0});
        marked[static_cast<size_t>(ks[0])] = marked[static_cast<size_t>(ks[1])] = 1;
    }
    if (needs.empty()) return;
    ParityUnion rel(nb);
    for (const Need& need : needs)
        if (!rel.relate(need.k_a, need.k_b, need.odd))
            cannot("the double-bond configurations contradict each other along a conjugated chain");
    for (int d = 0; d < nb; ++d) {
        const Bond& b = bond(d);
        if (b.order != 2) continue;
        for (int x : {b.a, b.b}) {
            int first = -1;
            for (const Neighbor& n : m_.neighbors(x)) {
                if (n.bond == d || !marked[static_cast<size_t>(n.bond)]) continue;
                if (first < 0) {
                    first = n.bond;
                    continue;
                }
                // opposite sides: sign_at(x,first)*dir(first) == -sign_at(x,k)*dir(k)
                const bool odd = sign_at(x, first) * sign_at(x, n.bond) > 0;
                if (!rel.relate(first, n.bond, odd))
                    cannot("the double-bond configurations contradict each other at a shared atom");
            }
        }
    }
    for (int k = 0; k < nb; ++k)
        if (marked[static_cast<size_t>(k)]) direction_[static_cast<size_t>(k)] = rel.find(k).second ? -1 : 1;
}

// The neighbour order the reader will record for atom v as written: the tree parent, the bracket hydrogen, the
// ring-closure partners in digit order, then the children.
std::vector<int> Writer::written_order(int v, bool with_hydrogen) const {
    std::vector<int> out;
    if (parent_[static_cast<size_t>(v)] >= 0) out.push_back(parent_[static_cast<size_t>(v)]);
    if (with_hydrogen && atom(v).hydrogens > 0) out.push_back(kImplicitHydrogen);
    for (int k : digits_[static_cast<size_t>(v)]) out.push_back(bond(k).other(v));
    for (int c : children_[static_cast<size_t>(v)]) out.push_back(c);
    return out;
}

void Writer::derive_chirality() {
    chiral_index_.assign(static_cast<size_t>(n_), 0);
    for (int v = 0; v < n_; ++v) {
        const Atom& a = atom(v);
        if (a.chiral_class == ChiralClass::none) continue;
        const std::vector<int>& stored = a.stereo_neighbors;
        std::vector<int> written;
        int parity = -1;
        switch (a.chiral_class) {
        case ChiralClass::TH:
            written = written_order(v, true);
            parity = permutation_parity(with_lone_pair(stored, v), with_lone_pair(written, v));
            break;
        case ChiralClass::AL: {
            AlleneEnds ends;
            if (!find_allene_ends(m_, v, ends)) cannot(fmt::format("atom {} has an allene mark but is no allene centre", v + 1));
            std::vector<int> resolved = stored;
            for (int side = 0; side < 2; ++side) {
                const int end = side == 0 ? ends.first : ends.second;
                append_allene_end_order(written, written_order(end, false), parent_[static_cast<size_t>(end)] >= 0,
                                        atom(end).hydrogens, side == 0 ? ends.first_inner : ends.second_inner);
                // An end's implicit hydrogen made explicit since (make_hydrogens_explicit() resolves only the
                // centre's own): the end's hydrogen atoms, in the order they were added.
                if (atom(end).hydrogens > 0 || resolved.size() != 4) continue;
                std::vector<int> hydrogen_atoms;
                for (const Neighbor& nb : m_.neighbors(end))
                    if (atom(nb.atom).z == 1 && atom(nb.atom).parent == end) hydrogen_atoms.push_back(nb.atom);
                std::sort(hydrogen_atoms.begin(), hydrogen_atoms.end());
                size_t next = 0;
                for (size_t k = static_cast<size_t>(2 * side); k < static_cast<size_t>(2 * side + 2); ++k)
                    if (resolved[k] == kImplicitHydrogen && next < hydrogen_atoms.size()) resolved[k] = hydrogen_atoms[next++];
            }
            parity = permutation_parity(resolved, written);
            break;
        }
        default: {
            // @SP, @TB, @OH: the index that puts the neighbours, in the order written, on the same sites up to a
            // rotation (the specification's tables, graph/polyhedral_stereo.cpp)
            written = written_order(v, true);
            const int index = reorder_polyhedral_index(a.chiral_class, a.chiral_index, stored, written);
            if (index == 0)
                cannot(fmt::format("the chirality neighbours of atom {} do not match its bonds", v + 1));
            chiral_index_[static_cast<size_t>(v)] = index;
            continue;
        }
        }
        if (parity < 0)
            cannot(fmt::format("the chirality neighbours of atom {} do not match its bonds", v + 1));
        int index = a.chiral_index;
        if (parity == 1) index = index == 1 ? 2 : 1;
        chiral_index_[static_cast<size_t>(v)] = index;
    }
}

std::string Writer::atom_text(int v) const {
    const Atom& a = atom(v);
    if (a.z < 1 || a.z > kMaxElement) cannot(fmt::format("atom {} has atomic number {}", v + 1, a.z));
    const ElementData& e = element(a.z);
    if (a.chiral_class == ChiralClass::none && a.charge == 0 && a.isotope == 0 && a.atom_class == 0) {
        if (const OrganicElement* org = organic_element(a.z)) {
            int sum = 0;
            for (const Neighbor& nb : m_.neighbors(v)) sum += bond(nb.bond).order;
            if (organic_implicit_hydrogens(*org, sum) == a.hydrogens) return std::string(e.symbol);
        }
    }
    if (a.hydrogens > kMaxHydrogenCount || a.hydrogens < 0)
        cannot(fmt::format("atom {} has {} hydrogens; a bracket atom holds at most {}", v + 1, a.hydrogens,
                           kMaxHydrogenCount));
    if (a.z == 1 && a.hydrogens > 0) cannot(fmt::format("hydrogen atom {} carries a hydrogen count", v + 1));
    if (a.charge > kMaxCharge || a.charge < -kMaxCharge) cannot(fmt::format("atom {} has charge {}", v + 1, a.charge));
    if (a.isotope < 0 || a.isotope > kMaxIsotope) cannot(fmt::format("atom {} has isotope {}", v + 1, a.isotope));
    std::string out = "[";
    if (a.isotope > 0) out += std::to_string(a.isotope);
    out += e.symbol;
    if (a.chiral_class != ChiralClass::none) {
        const int index = chiral_index_[static_cast<size_t>(v)];
        switch (a.chiral_class) {
        case ChiralClass::TH: out += index == 1 ? "@" : "@@"; break;
        case ChiralClass::AL: out += fmt::format("@AL{}", index); break;
        case ChiralClass::SP: out += fmt::format("@SP{}", index); break;
        case ChiralClass::TB: out += fmt::format("@TB{}", index); break;
        case ChiralClass::OH: out += fmt::format("@OH{}", index); break;
        default: break;
        }
    }
    if (a.hydrogens == 1) out += 'H';
    else if (a.hydrogens > 1) out += fmt::format("H{}", a.hydrogens);
    if (a.charge == 1) out += '+';
    else if (a.charge == -1) out += '-';
    else if (a.charge != 0) out += fmt::format("{:+d}", a.charge);
    if (a.atom_class > 0) out += fmt::format(":{}", a.atom_class);
    out += ']';
    return out;
}

std::string Writer::bond_text(int k) const {
    const Bond& b = bond(k);
    switch (b.order) {
    case 1: {
        const int d = direction_[static_cast<size_t>(k)];
        return d > 0 ? "/" : d < 0 ? "\\" : "";
    }
    case 2: return "=";
    case 3: return "#";
    case 4: return "$";
    default: cannot(fmt::format("bond {} has order {}", k + 1, b.order));
    }
}

std::string Writer::write() {
    if (n_ == 0) return {};
    build_tree();
    order_ring_digits();
    solve_directions();
    derive_chirality();

    std::string out;
    out.reserve(static_cast<size_t>(n_) * 3);
    struct Open {
        int atom;
        bool parenthesis;
    };
    std::vector<Open> path;
    std::array<int, kRingNumbers> ring_of_number{};
    ring_of_number.fill(-1);
    std::vector<int> number_of_bond(static_cast<size_t>(m_.bond_count()), -1);
    std::vector<int> released;
    auto ring_text = [](int number) {
        return number < 10 ? std::string(1, static_cast<char>('0' + number)) : fmt::format("%{:02d}", number);
    };
    for (int i = 0; i < n_; ++i) {
        const int p = parent_[static_cast<size_t>(i)];
        if (p < 0) {
            if (i > 0) {
                for (auto it = path.rbegin(); it != path.rend(); ++it)
                    if (it->parenthesis) out += ')';
                path.clear();
                out += '.';
            }
            path.push_back({i, false});
        } else {
            while (path.back().atom != p) {
                if (path.back().parenthesis) out += ')';
                path.pop_back();
            }
            const bool last = last_child_[static_cast<size_t>(p)] == i;
            if (!last) out += '(';
            path.push_back({i, !last});
            out += bond_text(parent_bond_[static_cast<size_t>(i)]);
        }
        out += atom_text(i);
        released.clear();
        for (int k : digits_[static_cast<size_t>(i)]) {
            if (low(k) == i) {
                // lowest free number, 1..99 first and 0 last (as people write them)
                int number = -1;
                for (int t = 1; t <= kRingNumbers && number < 0; ++t)
                    if (ring_of_number[static_cast<size_t>(t % kRingNumbers)] < 0) number = t % kRingNumbers;
                if (number < 0) cannot("more than 100 ring bonds would be open at once in this atom order");
                ring_of_number[static_cast<size_t>(number)] = k;
                number_of_bond[static_cast<size_t>(k)] = number;
                out += bond_text(k);
                out += ring_text(number);
            } else {
                const int number = number_of_bond[static_cast<size_t>(k)];
                out += ring_text(number);
                released.push_back(number);
            }
        }
        for (int number : released) ring_of_number[static_cast<size_t>(number)] = -1;
    }
    for (auto it = path.rbegin(); it != path.rend(); ++it)
        if (it->parenthesis) out += ')';
    return out;
}

}  // namespace

std::string write_smiles(const Molecule& molecule) { return Writer(molecule).write(); }

}  // namespace repel
