// Normal valences, the one place of them. Four views, each for the callers named, kept apart where a standard or a
// caller needs a different answer (the differences are listed below, so that a change to one is a choice):
// - kOrganicSubset: the OpenSMILES organic subset (the elements written without brackets, their normal valences, the
//   implicit hydrogens that follow): the SMILES reader and writer, the SD reader's missing hydrogens, the domain
//   analysis' message for an atom written above them;
// - charged_organic_valence: an organic-subset atom with a formal charge (isoelectronic counting): the SD reader;
// - isoelectronic_valences: an aromatic bracket atom, by its valence electrons less its charge: the SMILES reader;
// - valence_states: the (valence, charge) states a main-group atom may take when bond orders and charges are perceived
//   from coordinates (`repel check`); donor_valence_states adds a metal-bound donor's anion states.
// Differences on purpose:
// - neutral N: 3 or 5 in the organic subset and for isoelectronic counting (OpenSMILES reads a nitro group written
//   N(=O)=O), 3 only in valence_states (perception writes a nitro group charge-separated, [N+](=O)[O-]);
// - Cl, Br, I: 1 in the organic subset (the specification's table), 1, 3, 5 or 7 for isoelectronic counting and in
//   valence_states (interhalogens and perhalates are perceived from coordinates);
// - Si, Ge, Sn, Pb: valence_states adds the divalent state (silylenes, stannylenes) and the anions of hypervalent
//   silicates; isoelectronic counting gives 4 only.
#pragma once

#include <array>
#include <string_view>
#include <vector>

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

// The valence an organic-subset atom takes with formal charge q (isoelectronic counting: N+ like C, O- like F, C+ and
// C- with three bonds, B- like C), for an atom whose explicit bond orders sum to `sum`; common practice, the rule
// CTfile readers apply to atoms without stated hydrogens. -1 when a neutral atom's sum is above every normal valence.
int charged_organic_valence(const OrganicElement& e, int charge, int sum);

// Normal valences of an aromatic bracket atom, from its valence electrons less its charge (an ion counts as the
// isoelectronic neutral atom: [n+] like C, [o+] like N, [n-] like O). Octet rule, with the hypervalent states of
// period 3 and beyond as for the organic subset (common practice). Fills `out` in ascending order and returns how
// many; 0 when the atom cannot take a pi bond.
int isoelectronic_valences(int z, int charge, std::array<int, 4>& out);

// A normal valence and the formal charge that goes with it.
struct ValenceState {
    int valence = 0;
    int charge = 0;
};

// Normal valences and the charges that go with them (common practice: the octet rule, with the usual expanded
// valences of the period-3-and-later p-block elements and the common ions). The first state that holds an atom's
// bonds is taken first; neutral states come before charged ones. Empty for the transition metals and the elements
// without a rule here.
std::vector<ValenceState> valence_states(int z);

// The states of an atom cut off a metal (ionic model): valence_states, then the closed-shell anions a ligand donor can
// be beyond it (oxo and sulfido O2- S2-, imido and nitrido N2- N3-, phosphido P2- P3-, alkylidene and alkylidyne
// carbon CR2(2-) CR(3-); common practice of the ionic model), one charge step at a time.
std::vector<ValenceState> donor_valence_states(int z);

}  // namespace repel
