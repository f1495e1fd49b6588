#include "check/expected_length.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>

#include "core/element.hpp"

namespace repel {
namespace {

// Mean residual (measured - the analysis' length, Angstrom) per kind of bond, fitted on the fitting half (even
// positions) of the sound structures of tests/external/check_audit_damage.py: the closed-shell G2 geometries of three
// or more atoms (MP2/6-31G(d), Curtiss et al., J. Chem. Phys. 94 (1991) 7221 and 106 (1997) 1063; Debian's
// python3-ase) and the GFN2-xTB optima of tests/data/check_optima.xyz (Bannwarth, Ehlert and Grimme, J. Chem. Theory
// Comput. 15 (2019) 1652). A kind is listed with 2 or more bonds from 2 or more structures and a mean of 0.01 A or
// more, rounded to 0.005 A. Made and judged on the other half by tests/external/fit_check_lengths.py (refit it when the
// length model changes). Keys without neighbour counts ("C-S 1") are the fallback for bonds with an atom beyond F whose
// own kind is not listed: those kinds are too sparse to fit one by one, but their error is shared by the element pair.
const std::map<std::string, double>& corrections() {
    static const std::map<std::string, double> table = {
        // TABLE BEGIN
        {"C-S 1", +0.020},
        {"C2-N1 3", +0.040},
        {"C2u-O1 2", -0.020},
        {"C3-N3 2", -0.025},
        {"C3-O1 2", -0.030},
        {"C3-O1 s", -0.045},
        {"C3u-C3u 1", +0.020},
        {"C3u-C3u ar f", +0.035},
        {"C3u-C3u ar r5 f", +0.035},
        {"C3u-C4 1", +0.025},
        {"C3u-F1 1", -0.015},
        {"C3u-N2u ar", -0.015},
        {"C3u-N2u ar r5", -0.015},
        {"C3u-N3 1", -0.075},
        {"C3u-N3c 1", -0.055},
        {"C3u-N3u ar", +0.045},
        {"C3u-N3u ar r5", +0.025},
        {"C3u-O1 2", -0.030},
        {"C3u-O1 s", -0.035},
        {"C3u-O2 1", -0.020},
        {"C3u-O2u ar r5", +0.060},
        {"C4-C4 1", +0.015},
        {"C4-C4 1 r3", -0.030},
        {"C4-Cl1 1", +0.020},
        {"C4-N3 1", -0.015},
        {"C4-N3c 1", -0.025},
        {"C4-N3u 1", -0.020},
        {"C4-N4 1", +0.010},
        {"C4-S2 1", +0.025},
        {"C4-S4u 1", +0.035},
        {"C4-Si4 1", +0.045},
        {"Cl-P 1", +0.045},
        {"F-S 1", +0.030},
        {"H1-N3 1", -0.015},
        {"H1-N3c 1", -0.025},
        {"H1-N3u 1", -0.020},
        {"H1-O2 1", +0.015},
        {"H1-O2c 1", +0.020},
        {"H1-S2 1", -0.015},
        {"O-S 2", +0.020},
        {"O1-S4u s", +0.025},
        // TABLE END
    };
    return table;
}

int neighbour_count(const Molecule& m, int i) {
    return m.degree(i) + std::max(0, m.atoms[static_cast<size_t>(i)].hydrogens);
}

bool multiple(const Bond& b) { return b.aromatic || b.order >= 2; }

}  // namespace

std::string bond_kind(const Molecule& m, int e) {
    const Bond& b = m.bonds[static_cast<size_t>(e)];
    auto unsaturated = [&](int i, int other) {
        for (const Neighbor& nb : m.neighbors(i))
            if (nb.atom != other && multiple(m.bonds[static_cast<size_t>(nb.bond)])) return true;
        return false;
    };
    auto end = [&](int i, int other) {
        const int z = m.atoms[static_cast<size_t>(i)].z;
        std::string flag;
        if (unsaturated(i, other)) {
            flag = "u";
        } else if (z == 7 || z == 8) {
            for (const Neighbor& nb : m.neighbors(i))
                if (nb.atom != other && unsaturated(nb.atom, i)) flag = "c";
        }
        return std::string(element(z).symbol) + std::to_string(neighbour_count(m, i)) + flag;
    };
    bool shared = false;
    for (int side = 0; side < 2; ++side) {
        const int centre = side == 0 ? b.a : b.b, term = side == 0 ? b.b : b.a;
        if (neighbour_count(m, term) != 1 || neighbour_count(m, centre) < 2) continue;
        const int z = m.atoms[static_cast<size_t>(term)].z;
        int same = 0;
        bool any_multiple = false;
        for (const Neighbor& nb : m.neighbors(centre)) {
            if (m.atoms[static_cast<size_t>(nb.atom)].z != z || neighbour_count(m, nb.atom) != 1) continue;
            ++same;
            any_multiple = any_multiple || multiple(m.bonds[static_cast<size_t>(nb.bond)]);
        }
        shared = shared || (same >= 2 && any_multiple);
    }
    std::string tags;
    for (const Neighbor& x : m.neighbors(b.a))
        if (x.atom != b.b && m.bond_between(x.atom, b.b) >= 0) {
            tags += " r3";
            break;
        }
    if (b.aromatic) {
        // In a five-membered ring: a path a-x-y-z-b besides the bond.
        bool ring5 = false;
        for (const Neighbor& x : m.neighbors(b.a)) {
            if (x.atom == b.b) continue;
            for (const Neighbor& y : m.neighbors(x.atom)) {
                if (y.atom == b.a || y.atom == b.b) continue;
                for (const Neighbor& z : m.neighbors(y.atom))
                    if (z.atom != b.a && z.atom != b.b && z.atom != x.atom && m.bond_between(z.atom, b.b) >= 0)
                        ring5 = true;
            }
        }
        auto aromatic_bonds = [&](int i) {
            int n = 0;
            for (const Neighbor& nb : m.neighbors(i)) n += m.bonds[static_cast<size_t>(nb.bond)].aromatic ? 1 : 0;
            return n;
        };
        if (ring5) tags += " r5";
        if (aromatic_bonds(b.a) == 3 && aromatic_bonds(b.b) == 3) tags += " f";
    }
    std::string ea = end(b.a, b.b), eb = end(b.b, b.a);
    // Sorted as the fitting script sorts (symbol, count, flag): compare symbol first, then the rest.
    auto key = [&](int i, const std::string& s) {
        return std::make_pair(std::string(element(m.atoms[static_cast<size_t>(i)].z).symbol), s);
    };
    if (key(b.b, eb) < key(b.a, ea)) std::swap(ea, eb);
    const std::string order = shared ? "s" : b.aromatic ? "ar" : std::to_string(std::clamp(b.order, 1, 3));
    return ea + "-" + eb + " " + order + tags;
}

std::string coarse_bond_kind(const Molecule& m, int e) {
    const Bond& b = m.bonds[static_cast<size_t>(e)];
    const int za = m.atoms[static_cast<size_t>(b.a)].z, zb = m.atoms[static_cast<size_t>(b.b)].z;
    if (za <= 9 && zb <= 9) return {};
    std::string sa(element(za).symbol), sb(element(zb).symbol);
    if (sb < sa) std::swap(sa, sb);
    // The order word as bond_kind() writes it (the text after the first space, up to any tag).
    const std::string fine = bond_kind(m, e);
    const size_t space = fine.find(' ');
    const std::string order = fine.substr(space + 1, fine.find(' ', space + 1) - space - 1);
    return sa + "-" + sb + " " + order;
}

std::vector<double> corrected_lengths(const Molecule& m, const std::vector<double>& model) {
    const size_t n = m.bonds.size();
    std::vector<double> shift(n, 0.0);
    for (size_t e = 0; e < n; ++e) {
        if (e >= model.size() || model[e] <= 0) continue;
        auto it = corrections().find(bond_kind(m, static_cast<int>(e)));
        if (it == corrections().end()) it = corrections().find(coarse_bond_kind(m, static_cast<int>(e)));
        if (it != corrections().end()) shift[e] = it->second;
    }
    // Groups of bonds of one atom to one element written with different orders but of equal model lengths: orders the
    // analysis shared (union-find over shared atoms).
    std::vector<size_t> parent(n);
    std::iota(parent.begin(), parent.end(), size_t{0});
    auto find = [&](size_t x) {
        while (parent[x] != x) x = parent[x] = parent[parent[x]];
        return x;
    };
    auto pair_of = [&](const Bond& b) {
        const int za = m.atoms[static_cast<size_t>(b.a)].z, zb = m.atoms[static_cast<size_t>(b.b)].z;
        return std::make_pair(std::min(za, zb), std::max(za, zb));
    };
    for (int i = 0; i < m.atom_count(); ++i) {
        const auto& nbs = m.neighbors(i);
        for (size_t p = 0; p < nbs.size(); ++p)
            for (size_t q = p + 1; q < nbs.size(); ++q) {
                const size_t e = static_cast<size_t>(nbs[p].bond), f = static_cast<size_t>(nbs[q].bond);
                if (e >= model.size() || f >= model.size() || model[e] <= 0 || model[f] <= 0) continue;
                if (pair_of(m.bonds[e]) != pair_of(m.bonds[f]) || std::fabs(model[e] - model[f]) > 1e-4) continue;
                if (m.bonds[e].order == m.bonds[f].order && m.bonds[e].aromatic == m.bonds[f].aromatic) continue;
                parent[find(e)] = find(f);
            }
    }
    std::vector<double> sum(n, 0.0);
    std::vector<int> count(n, 0);
    for (size_t e = 0; e < n; ++e) {
        sum[find(e)] += shift[e];
        ++count[find(e)];
    }
    std::vector<double> out(n, 0.0);
    for (size_t e = 0; e < n; ++e)
        if (e < model.size() && model[e] > 0) out[e] = model[e] + sum[find(e)] / count[find(e)];
    return out;
}

}  // namespace repel
