#include "graph/molecule.hpp"

#include <array>
#include <numeric>
#include <stdexcept>
#include <string>

namespace repel {

int Molecule::add_atom(const Atom& atom) {
    if (!adjacency_current()) rebuild_adjacency();
    atoms.push_back(atom);
    adjacency_.emplace_back();
    return atom_count() - 1;
}

int Molecule::add_bond(int a, int b, int order, bool aromatic) {
    if (!adjacency_current()) rebuild_adjacency();
    Bond bond;
    bond.a = a;
    bond.b = b;
    bond.order = order;
    bond.aromatic = aromatic;
    bonds.push_back(bond);
    int index = bond_count() - 1;
    adjacency_[static_cast<size_t>(a)].push_back({b, index});
    adjacency_[static_cast<size_t>(b)].push_back({a, index});
    ++adjacency_bonds_;
    return index;
}

void Molecule::set_bonds(std::vector<Bond> new_bonds) {
    bonds = std::move(new_bonds);
    rebuild_adjacency();
}

void Molecule::stale_adjacency() const {
    throw std::logic_error("Molecule: atoms or bonds changed (" + std::to_string(atoms.size()) + " atoms, " +
                           std::to_string(bonds.size()) + " bonds) without add_atom/add_bond/set_bonds; the neighbour "
                           "lists are of " + std::to_string(adjacency_.size()) + " atoms and " +
                           std::to_string(adjacency_bonds_) + " bonds: call rebuild_adjacency()");
}

int Molecule::bond_between(int a, int b) const {
    for (const Neighbor& n : neighbors(a))
        if (n.atom == b) return n.bond;
    return -1;
}

int Molecule::bond_order_sum(int atom) const {
    int sum = 0;
    for (const Neighbor& n : neighbors(atom)) sum += bonds[static_cast<size_t>(n.bond)].order;
    return sum;
}

int Molecule::total_charge() const {
    int q = 0;
    for (const Atom& a : atoms) q += a.charge;
    return q;
}

namespace {

// The two end atoms of the cumulated chain through `middle` (an allene's or a cumulene's middle atom): each found by
// walking double bonds away from the middle while the chain goes on.
std::array<int, 2> cumulene_ends(const Molecule& m, int middle) {
    std::array<int, 2> ends{-1, -1};
    int found = 0;
    for (const Neighbor& start : m.neighbors(middle)) {
        if (m.bonds[static_cast<size_t>(start.bond)].order != 2 || found == 2) continue;
        int prev = middle, cur = start.atom;
        for (int guard = 0; guard < m.atom_count(); ++guard) {
            int next = -1;
            if (m.degree(cur) == 2)
                for (const Neighbor& nb : m.neighbors(cur))
                    if (nb.atom != prev && m.bonds[static_cast<size_t>(nb.bond)].order == 2) next = nb.atom;
            if (next < 0) break;
            prev = cur;
            cur = next;
        }
        ends[static_cast<size_t>(found++)] = cur;
    }
    return ends;
}

}  // namespace

void Molecule::make_hydrogens_explicit() {
    if (input_atoms_ < 0) input_atoms_ = atom_count();
    const int n = atom_count();
    std::vector<int> first_hydrogen(static_cast<size_t>(n), -1);
    for (int i = 0; i < n; ++i) {
        int count = atoms[static_cast<size_t>(i)].hydrogens;
        if (count <= 0) continue;
        atoms[static_cast<size_t>(i)].hydrogens = 0;
        bool first = true;
        for (int k = 0; k < count; ++k) {
            Atom h;
            h.z = 1;
            h.parent = i;
            h.column = atoms[static_cast<size_t>(i)].column;
            int hi = add_atom(h);
            add_bond(i, hi, 1);
            if (first) {
                // The implicit hydrogen of a stereo mark ([C@H]) is the first one added for that atom.
                for (int& s : atoms[static_cast<size_t>(i)].stereo_neighbors)
                    if (s == kImplicitHydrogen) s = hi;
                first_hydrogen[static_cast<size_t>(i)] = hi;
                first = false;
            }
        }
    }
    // An allene mark lists the two substituents of each end (OpenSMILES "Tetrahedral Allene-like Systems"): an
    // implicit hydrogen in a half is the hydrogen of that half's end, the end bonded to the half's other substituent.
    for (int i = 0; i < n; ++i) {
        Atom& a = atoms[static_cast<size_t>(i)];
        if (a.chiral_class != ChiralClass::AL || a.stereo_neighbors.size() != 4) continue;
        const std::array<int, 2> ends = cumulene_ends(*this, i);
        for (size_t half = 0; half < 2; ++half) {
            int& x = a.stereo_neighbors[2 * half];
            int& y = a.stereo_neighbors[2 * half + 1];
            if ((x == kImplicitHydrogen) == (y == kImplicitHydrogen)) continue;
            int& implicit = x == kImplicitHydrogen ? x : y;
            const int real = x == kImplicitHydrogen ? y : x;
            for (int end : ends)
                if (end >= 0 && bond_between(end, real) >= 0 && first_hydrogen[static_cast<size_t>(end)] >= 0)
                    implicit = first_hydrogen[static_cast<size_t>(end)];
        }
    }
}

std::vector<int> Molecule::components(int* count) const {
    std::vector<int> comp(atoms.size(), -1);
    int c = 0;
    std::vector<int> stack;
    for (int start = 0; start < atom_count(); ++start) {
        if (comp[static_cast<size_t>(start)] >= 0) continue;
        stack.push_back(start);
        comp[static_cast<size_t>(start)] = c;
        while (!stack.empty()) {
            int v = stack.back();
            stack.pop_back();
            for (const Neighbor& nb : neighbors(v))
                if (comp[static_cast<size_t>(nb.atom)] < 0) {
                    comp[static_cast<size_t>(nb.atom)] = c;
                    stack.push_back(nb.atom);
                }
        }
        ++c;
    }
    if (count) *count = c;
    return comp;
}

void Molecule::rebuild_adjacency() {
    adjacency_.assign(atoms.size(), {});
    for (int i = 0; i < bond_count(); ++i) {
        const Bond& b = bonds[static_cast<size_t>(i)];
        adjacency_[static_cast<size_t>(b.a)].push_back({b.b, i});
        adjacency_[static_cast<size_t>(b.b)].push_back({b.a, i});
    }
    adjacency_bonds_ = bonds.size();
}

}  // namespace repel
