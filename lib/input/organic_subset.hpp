// The OpenSMILES organic subset: the elements written without brackets, their normal valences, and the implicit
// hydrogen count that follows from them. Shared by the SMILES reader and writer so that both count alike.
#pragma once

#include <array>
#include <string_view>

namespace repel {

struct OrganicElement {
    int z = 0;
    std::string_view name;          // for messages: "carbon"
    std::array<int, 3> valences{};  // normal valences, ascending; unused slots 0
    int count = 0;                  // how many of valences are used
    int max_valence() const { return valences[static_cast<size_t>(count - 1)]; }
    // The lowest normal valence >= sum, or -1 when sum exceeds them all.
    int lowest_valence_at_least(int sum) const {
        for (int i = 0; i < count; ++i)
            if (valences[static_cast<size_t>(i)] >= sum) return valences[static_cast<size_t>(i)];
        return -1;
    }
    bool is_valence(int sum) const {
        for (int i = 0; i < count; ++i)
            if (valences[static_cast<size_t>(i)] == sum) return true;
        return false;
    }
};

// Normal valences of the organic subset: OpenSMILES specification (opensmiles.org, v1.0), section "Organic Subset":
// B 3; C 4; N 3 or 5; O 2; P 3 or 5; S 2, 4 or 6; halogens 1.
inline constexpr std::array<OrganicElement, 10> kOrganicSubset{{
    {5, "boron", {3, 0, 0}, 1},
    {6, "carbon", {4, 0, 0}, 1},
    {7, "nitrogen", {3, 5, 0}, 2},
    {8, "oxygen", {2, 0, 0}, 1},
    {9, "fluorine", {1, 0, 0}, 1},
    {15, "phosphorus", {3, 5, 0}, 2},
    {16, "sulfur", {2, 4, 6}, 3},
    {17, "chlorine", {1, 0, 0}, 1},
    {35, "bromine", {1, 0, 0}, 1},
    {53, "iodine", {1, 0, 0}, 1},
}};

// The organic-subset entry for atomic number z, or nullptr when z is not in the subset.
inline const OrganicElement* organic_element(int z) {
    for (const OrganicElement& e : kOrganicSubset)
        if (e.z == z) return &e;
    return nullptr;
}

// Implicit hydrogens of a non-aromatic organic-subset atom whose explicit bond orders sum to bond_order_sum:
// the lowest normal valence that is at least the sum, minus the sum; 0 when the sum exceeds every normal valence
// (OpenSMILES specification v1.0, section "Atoms", "Organic Subset": "If that sum is equal to a known valence for the
// element or is greater than any known valence then the implicit hydrogen count is 0": FCl(F)F is ClF3, not an
// error). Whether such a valence is possible is the domain analysis's question (a period-2 atom over its octet).
inline int organic_implicit_hydrogens(const OrganicElement& e, int bond_order_sum) {
    const int v = e.lowest_valence_at_least(bond_order_sum);
    return v < 0 ? 0 : v - bond_order_sum;
}

}  // namespace repel
