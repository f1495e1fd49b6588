#include "graph/conjugation.hpp"

#include <algorithm>

#include "core/element.hpp"

namespace repel {

bool has_pi_bond(const Molecule& m, int atom, PiBondRule rule, int except) {
    for (const Neighbor& nn : m.neighbors(atom)) {
        if (nn.atom == except) continue;
        const Bond& b = m.bonds[static_cast<size_t>(nn.bond)];
        if (b.order == 2 || (rule.triple && b.order >= 3) || (rule.aromatic && b.aromatic)) return true;
    }
    return false;
}

bool carbene_on_metal(const Molecule& m, int j) {
    const Atom& c = m.atoms[static_cast<size_t>(j)];
    if (c.z != 6 || c.charge != 0 || std::max(0, c.hydrogens) != 0 || m.degree(j) != 3) return false;
    int metal = 0, hetero = 0;
    for (const Neighbor& nb : m.neighbors(j)) {
        const Atom& o = m.atoms[static_cast<size_t>(nb.atom)];
        if (m.bonds[static_cast<size_t>(nb.bond)].order != 1) return false;
        if (is_d_block_metal(o.z)) ++metal;
        else if ((o.z == 7 || o.z == 8 || o.z == 16) && o.charge == 0) ++hetero;
    }
    return metal == 1 && hetero >= 1;
}

bool empty_p_acceptor(const Molecule& m, int j) {
    const Atom& b = m.atoms[static_cast<size_t>(j)];
    if (b.z == 5)
        return b.charge == 0 && m.degree(j) + std::max(0, b.hydrogens) == 3 &&
               m.bond_order_sum(j) + std::max(0, b.hydrogens) == 3;
    return carbene_on_metal(m, j);
}

bool is_polar_bridge_neighbour(int z) {
    // Pauling units: S (2.58 against O's 3.44) is in, Cl (3.16), Br and I are out (a choice).
    constexpr double kPolarBridge = 0.8;
    const ElementData& j = element(z);
    return j.period >= 3 && j.group >= 13 && j.electronegativity > 0 &&
           element(8).electronegativity - j.electronegativity >= kPolarBridge;
}

namespace {

bool has_double_to_hetero(const Molecule& m, int atom) {
    for (const Neighbor& nb : m.neighbors(atom)) {
        const Bond& b = m.bonds[static_cast<size_t>(nb.bond)];
        const int z = m.atoms[static_cast<size_t>(nb.atom)].z;
        if (b.order == 2 && (z == 7 || z == 8 || z == 16)) return true;
    }
    return false;
}

}  // namespace

bool amide_like_link(const Molecule& m, int a, int b) {
    for (int side = 0; side < 2; ++side) {
        const int c = side ? b : a, x = side ? a : b;
        const int zx = m.atoms[static_cast<size_t>(x)].z;
        if (m.atoms[static_cast<size_t>(c)].z == 6 && (zx == 7 || zx == 8 || zx == 16) && has_double_to_hetero(m, c))
            return true;
    }
    return false;
}

bool delocalised_lone_pair(const Molecule& m, int i, int lone_pairs, int single_electrons) {
    const Atom& a = m.atoms[static_cast<size_t>(i)];
    if ((a.z != 7 && a.z != 8) || a.charge != 0 || lone_pairs < 1 || single_electrons != 0) return false;
    int heavy = 0;
    for (const Neighbor& nb : m.neighbors(i)) {
        if (m.bonds[static_cast<size_t>(nb.bond)].order != 1) return false;
        if (m.atoms[static_cast<size_t>(nb.atom)].z != 1) ++heavy;
    }
    const auto& nbs = m.neighbors(i);
    bool boron = false;
    for (const Neighbor& nb : nbs) boron = boron || empty_p_acceptor(m, nb.atom);
    if (a.z == 8 && !boron && (heavy != 2 || a.hydrogens > 0)) return false;
    for (size_t p = 0; p < nbs.size(); ++p)
        for (size_t q = p + 1; q < nbs.size(); ++q)
            if (m.bond_between(nbs[p].atom, nbs[q].atom) >= 0) return false;
    for (const Neighbor& nb : nbs)
        if (a.z == 8 && is_polar_bridge_neighbour(m.atoms[static_cast<size_t>(nb.atom)].z)) return true;
    for (const Neighbor& nb : nbs) {
        const Atom& j = m.atoms[static_cast<size_t>(nb.atom)];
        if (empty_p_acceptor(m, nb.atom)) return true;
        if (element(j.z).period != 2 || j.charge < 0) continue;
        if (has_pi_bond(m, nb.atom, kPiBondForDelocalisation, i)) return true;
    }
    return false;
}

bool pi_centre_for_planarity(const Molecule& m, int i, int steric_number, int bonded) {
    if (steric_number != 3) return false;
    if (m.atoms[static_cast<size_t>(i)].z == 5 && bonded == 3 && m.atoms[static_cast<size_t>(i)].charge == 0) return true;
    return has_pi_bond(m, i, kPiBondForPlanarCentre);
}

bool conjugated_donor(const Molecule& m, int i, const DonorCounts& c, const std::vector<bool>& pi_centre) {
    const int z = m.atoms[static_cast<size_t>(i)].z;
    if ((z != 7 && z != 8) || c.single_electrons != 0) return false;
    if (c.delocalised_lone_pairs == 0 && (c.lone_pairs < 1 || c.steric_number != 4)) return false;
    for (const Neighbor& nb : m.neighbors(i))
        if (m.bonds[static_cast<size_t>(nb.bond)].aromatic || pi_centre[static_cast<size_t>(nb.atom)]) return true;
    return false;
}

bool conjugated_nitrogen(const Molecule& m, int centre, int lewis_lone_pairs, int bonded) {
    if (m.atoms[static_cast<size_t>(centre)].z != 7 || lewis_lone_pairs != 1 || bonded != 3) return false;
    for (const Neighbor& nb : m.neighbors(centre))
        if (has_pi_bond(m, nb.atom, kPiBondKekule)) return true;
    return false;
}

bool crowded_biaryl_bond(const Molecule& m, int bond) {
    const Bond& b = m.bonds[static_cast<size_t>(bond)];
    if (b.aromatic || b.order != 1) return false;
    auto ortho_atoms = [&](int atom) {
        std::vector<int> out;
        for (const Neighbor& nb : m.neighbors(atom))
            if (m.bonds[static_cast<size_t>(nb.bond)].aromatic) out.push_back(nb.atom);
        return out;
    };
    auto heavy_degree = [&](int atom) {
        int n = 0;
        for (const Neighbor& nb : m.neighbors(atom)) n += m.atoms[static_cast<size_t>(nb.atom)].z != 1 ? 1 : 0;
        return n;
    };
    const std::vector<int> oa = ortho_atoms(b.a), ob = ortho_atoms(b.b);
    if (oa.size() != 2 || ob.size() != 2) return false;
    // Not an axis that closes a ring (fluorene, carbazole, dibenzofuran: an ortho atom of each side bonded to one
    // atom, or to each other).
    for (int x : oa)
        for (int y : ob) {
            if (m.bond_between(x, y) >= 0) return false;
            for (const Neighbor& nx : m.neighbors(x))
                if (nx.atom != b.a && m.bond_between(nx.atom, y) >= 0) return false;
        }
    // An ortho atom with three heavy neighbours (the axis atom, the next ring atom, and a substituent or a fused ring).
    for (const std::vector<int>* ortho : {&oa, &ob})
        for (int o : *ortho)
            if (heavy_degree(o) >= 3) return true;
    return false;
}

bool propeller_blade_bond(const Molecule& m, int bond) {
    const Bond& b = m.bonds[static_cast<size_t>(bond)];
    if (b.aromatic || b.order != 1) return false;
    auto aromatic_bonds = [&](int atom) {
        int n = 0;
        for (const Neighbor& nb : m.neighbors(atom)) n += m.bonds[static_cast<size_t>(nb.bond)].aromatic ? 1 : 0;
        return n;
    };
    for (int side = 0; side < 2; ++side) {
        const int ring = side == 0 ? b.a : b.b, hub = side == 0 ? b.b : b.a;
        if (aromatic_bonds(ring) != 2 || aromatic_bonds(hub) != 0 || m.degree(hub) != 3) continue;
        for (const Neighbor& nb : m.neighbors(hub))
            if (nb.atom != ring && m.bonds[static_cast<size_t>(nb.bond)].order == 1 && aromatic_bonds(nb.atom) == 2)
                return true;
    }
    return false;
}

}  // namespace repel
