// SMILES reader and writer: a table of valid SMILES checked against the molecular formulas of the compounds, the
// Kekule structures of aromatic rings, stereo marks, and write -> read round trips.
#include <gtest/gtest.h>

#include <algorithm>
#include <map>
#include <numeric>
#include <random>
#include <string>
#include <vector>

#include "core/element.hpp"
#include "core/error.hpp"
#include "graph/polyhedral_stereo.hpp"
#include "input/kekulize.hpp"
#include "input/smiles.hpp"

using namespace repel;

namespace {

// Hill formula (C first, then H, then the rest alphabetically; without carbon all alphabetically), counting
// implicit hydrogens.
std::string formula(const Molecule& m) {
    std::map<std::string, int> count;
    for (const Atom& a : m.atoms) {
        count[std::string(element(a.z).symbol)] += 1;
        if (a.hydrogens > 0) count["H"] += a.hydrogens;
    }
    std::string out;
    auto put = [&](const std::string& s) {
        auto it = count.find(s);
        if (it == count.end()) return;
        out += s;
        if (it->second > 1) out += std::to_string(it->second);
        count.erase(it);
    };
    if (count.count("C")) {
        put("C");
        put("H");
    }
    while (!count.empty()) put(count.begin()->first);
    return out;
}

int double_bonds(const Molecule& m) {
    int n = 0;
    for (const Bond& b : m.bonds) n += b.order == 2;
    return n;
}

int components(const Molecule& m) {
    int c = 0;
    m.components(&c);
    return c;
}

struct ValidCase {
    const char* smiles;
    const char* formula;  // Hill formula with implicit hydrogens
    int charge;
    int components;
    int double_bonds;  // after kekulization; -1: not checked
};

// Molecular formulas of the named compounds: standard chemistry (from memory); the SMILES marked "spec" are the
// examples of the OpenSMILES specification (opensmiles.org, v1.0) with the formula that follows from its text.
const std::vector<ValidCase> kValid = {
    // organic subset, implicit hydrogens by normal valence
    {"C", "CH4", 0, 1, 0},                   // methane
    {"N", "H3N", 0, 1, 0},                   // ammonia
    {"O", "H2O", 0, 1, 0},                   // water
    {"S", "H2S", 0, 1, 0},                   // hydrogen sulfide
    {"P", "H3P", 0, 1, 0},                   // phosphine
    {"B", "BH3", 0, 1, 0},                   // borane
    {"F", "FH", 0, 1, 0},                    // hydrogen fluoride
    {"Cl", "ClH", 0, 1, 0},                  // spec: hydrochloric acid
    {"Br", "BrH", 0, 1, 0},                  // hydrogen bromide
    {"I", "HI", 0, 1, 0},                    // hydrogen iodide
    {"CC", "C2H6", 0, 1, 0},                 // ethane
    {"CCO", "C2H6O", 0, 1, 0},               // ethanol
    {"C=C", "C2H4", 0, 1, 1},                // ethene
    {"C#N", "CHN", 0, 1, 0},                 // hydrogen cyanide
    {"CC#CC", "C4H6", 0, 1, 0},              // 2-butyne
    {"CCC=O", "C3H6O", 0, 1, 1},             // propanal
    {"C-C=C-C", "C4H8", 0, 1, 1},            // spec: same as CC=CC
    {"CCC(CC)CO", "C6H14O", 0, 1, 0},        // spec: 2-ethyl-1-butanol
    {"CC(C)C(=O)C(C)C", "C7H14O", 0, 1, 1},  // spec: 2,4-dimethyl-3-pentanone
    {"OS(=O)(=O)O", "H2O4S", 0, 1, 2},       // sulfuric acid (S valence 6)
    {"OS(=O)(=S)O", "H2O3S2", 0, 1, 2},      // spec: thiosulfuric acid
    {"CS(=O)C", "C2H6OS", 0, 1, 1},          // dimethyl sulfoxide (S valence 4)
    {"CN(=O)=O", "CH3NO2", 0, 1, 2},         // nitromethane, pentavalent form (N valence 5)
    {"C[N+](=O)[O-]", "CH3NO2", 0, 1, 1},    // nitromethane, charge-separated form
    {"B(C)(C)C", "C3H9B", 0, 1, 0},          // trimethylborane
    {"CP(C)C", "C3H9P", 0, 1, 0},            // trimethylphosphine
    {"C[N+](C)(C)C", "C4H12N", 1, 1, 0},     // tetramethylammonium
    {"[NH3+]CC([O-])=O", "C2H5NO2", 0, 1, 1},  // glycine zwitterion
    {"Clc1ccccc1Br", "C6H4BrCl", 0, 1, 3},   // 1-bromo-2-chlorobenzene
    {"C(C(C(C(C(C(C(C(C(C(C(C(C(C(C(C(C(C(C(C(C))))))))))))))))))))C", "C22H46", 0, 1, 0},  // spec
    // bracket atoms: exactly the hydrogens written
    {"[CH4]", "CH4", 0, 1, 0},               // spec
    {"[ClH]", "ClH", 0, 1, 0},               // spec
    {"[ClH1]", "ClH", 0, 1, 0},              // spec
    {"[CH2]", "CH2", 0, 1, 0},               // methylene (a bracket atom keeps its count)
    {"[C]", "C", 0, 1, 0},                   // atomic carbon
    {"[Cl-]", "Cl", -1, 1, 0},               // spec: chloride
    {"[OH1-]", "HO", -1, 1, 0},              // spec: hydroxide
    {"[OH-1]", "HO", -1, 1, 0},              // spec: hydroxide
    {"[Cu+2]", "Cu", 2, 1, 0},               // spec: copper(II)
    {"[Cu++]", "Cu", 2, 1, 0},               // spec: deprecated form
    {"[O--]", "O", -2, 1, 0},                // oxide, deprecated form
    {"[Fe+3]", "Fe", 3, 1, 0},               // iron(III)
    {"[Ti+15]", "Ti", 15, 1, 0},             // the largest charge a reader must accept (spec)
    {"[13CH4]", "CH4", 0, 1, 0},             // spec: 13C methane
    {"[2H+]", "H", 1, 1, 0},                 // spec: deuteron
    {"[222Rn]", "Rn", 0, 1, 0},              // radon-222 (the spec's [238U] lies beyond Rn)
    {"[002H]", "H", 0, 1, 0},                // spec: isotope read as a number
    {"[CH4:2]", "CH4", 0, 1, 0},             // spec: atom class 2
    {"[NH4+:005]", "H4N", 1, 1, 0},          // spec: atom class 5
    {"[NH4+]", "H4N", 1, 1, 0},              // ammonium
    {"[H][H]", "H2", 0, 1, 0},               // spec: molecular hydrogen
    {"[H]C([H])([H])[H]", "CH4", 0, 1, 0},   // spec: methane with explicit hydrogens
    {"[2H][CH2]C", "C2H6", 0, 1, 0},         // spec: deuteroethane
    {"[Rh-](Cl)(Cl)(Cl)(Cl)$[Rh-](Cl)(Cl)(Cl)Cl", "Cl8Rh2", -2, 1, 0},  // spec: octachlorodirhenate, '$'
    // rings, %nn, ring-number reuse, '.'
    {"C1CCCCC1", "C6H12", 0, 1, 0},          // spec: cyclohexane
    {"C0CCCCC0", "C6H12", 0, 1, 0},          // spec: ring number zero
    {"C%25CCCCC%25", "C6H12", 0, 1, 0},      // spec: two-digit ring number
    {"C1CCCCC%01", "C6H12", 0, 1, 0},        // spec: ring numbers match as numbers
    {"C%00CCCCC%00", "C6H12", 0, 1, 0},      // spec
    {"C=1CCCCC=1", "C6H10", 0, 1, 1},        // spec: cyclohexene, bond on both digits
    {"C=1CCCCC1", "C6H10", 0, 1, 1},         // spec
    {"C1CCCCC=1", "C6H10", 0, 1, 1},         // spec
    {"N1CC2CCCC2CC1", "C8H15N", 0, 1, 0},    // spec: perhydroisoquinoline
    {"C1CCCCC1C1CCCCC1", "C12H22", 0, 1, 0}, // spec: bicyclohexyl, ring number reused
    {"C12(CCCCC1)CCCCC2", "C11H20", 0, 1, 0},  // spec: spiro[5.5]undecane
    {"C%123CCC3CCCCC%12", "C9H16", 0, 1, 0},   // spec: %123 is %12 then 3 (bicyclo[5.2.0]nonane)
    {"[Na+].[Cl-]", "ClNa", 0, 2, 0},        // spec: sodium chloride
    {"Oc1ccccc1.NCCO", "C8H13NO2", 0, 2, 3}, // spec: phenol, 2-aminoethanol
    {"c1cc(O.NCCO)ccc1", "C8H13NO2", 0, 2, 3},  // spec
    {"Oc1cc(.NCCO)ccc1", "C8H13NO2", 0, 2, 3},  // spec: dot opening a branch
    {"[NH4+].[NH4+].[O-]S(=O)(=O)[S-]", "H8N2O3S2", 0, 3, 2},  // spec: diammonium thiosulfate
    {"C1.C1", "C2H6", 0, 1, 0},              // spec: ethane from fragments
    {"C1.C12.C2", "C3H8", 0, 1, 0},          // spec: propane from fragments
    {"c1c2c3c4cc1.Br2.Cl3.Cl4", "C6H3BrCl2", 0, 1, 3},  // spec: 1-bromo-2,3-dichlorobenzene
    // aromatic input, kekulized
    {"c1ccccc1", "C6H6", 0, 1, 3},                   // benzene
    {"C1=CC=CC=C1", "C6H6", 0, 1, 3},                // benzene, Kekule input
    {"c1=cc=cc=c1", "C6H6", 0, 1, 3},                // benzene, aromatic atoms with '=' written
    {"n1ccccc1", "C5H5N", 0, 1, 3},                  // pyridine
    {"c1cc[nH]c1", "C4H5N", 0, 1, 2},                // pyrrole
    {"Cn1cccc1", "C5H7N", 0, 1, 2},                  // N-methylpyrrole
    {"o1cccc1", "C4H4O", 0, 1, 2},                   // furan
    {"c1occc1", "C4H4O", 0, 1, 2},                   // spec: furan
    {"s1cccc1", "C4H4S", 0, 1, 2},                   // thiophene
    {"[se]1cccc1", "C4H4Se", 0, 1, 2},               // selenophene
    {"c1ccpcc1", "C5H5P", 0, 1, 3},                  // phosphinine
    {"c1ccc2[nH]ccc2c1", "C8H7N", 0, 1, 4},          // indole
    {"c1ccc2ccccc2c1", "C10H8", 0, 1, 5},            // naphthalene
    {"c1ccc2cc3ccccc3cc2c1", "C14H10", 0, 1, 7},     // anthracene
    {"c1ccc2cccc2cc1", "C10H8", 0, 1, 5},            // azulene (5- and 7-membered rings)
    {"c1ccc2ncccc2c1", "C9H7N", 0, 1, 5},            // quinoline
    {"c1ccn2cccc2c1", "C8H7N", 0, 1, 4},             // indolizine (bridgehead nitrogen)
    {"c1ncc2[nH]cnc2n1", "C5H4N4", 0, 1, 4},         // purine
    {"Cn1cnc2c1c(=O)n(C)c(=O)n2C", "C8H10N4O2", 0, 1, 4},  // caffeine
    {"c1cc2cc3ccc(cc4ccc(cc5ccc(cc1n2)[nH]5)n4)[nH]3", "C20H14N4", 0, 1, 11},  // porphine
    {"O=c1cccc[nH]1", "C5H5NO", 0, 1, 3},            // 2-pyridone
    {"O=c1cccccc1", "C7H6O", 0, 1, 4},               // tropone
    {"c1cc[nH+]cc1", "C5H6N", 1, 1, 3},              // pyridinium
    {"[O-][n+]1ccccc1", "C5H5NO", 0, 1, 3},          // pyridine N-oxide
    {"c1cc[o+]cc1", "C5H5O", 1, 1, 3},               // pyrylium
    {"[cH+]1cccccc1", "C7H7", 1, 1, 3},              // tropylium
    {"[cH-]1cccc1", "C5H5", -1, 1, 2},               // cyclopentadienide
    {"c1ccccc1-c2ccccc2", "C12H10", 0, 1, 6},        // spec: biphenyl
    {"c1ccccc1c1ccccc1", "C12H10", 0, 1, 6},         // biphenyl, inter-ring bond not written
    {"c1ccc2CCCc2c1", "C9H10", 0, 1, 3},             // spec: indane
    {"c1ccc1", "C4H4", 0, 1, 2},                     // spec: cyclobutadiene
    // stereo
    {"N[C@@H](C)C(=O)O", "C3H7NO2", 0, 1, 1},        // L-alanine
    {"N[C@H](C)C(=O)O", "C3H7NO2", 0, 1, 1},         // D-alanine
    {"N[C@](Br)(O)C", "C2H6BrNO", 0, 1, 0},           // spec: tetrahedral example
    {"Br[C@](O)(N)C", "C2H6BrNO", 0, 1, 0},           // spec: the same centre
    {"N[C@H](O)C", "C2H7NO", 0, 1, 0},               // spec: implicit hydrogen
    {"[C@@H](F)(Cl)Br", "CHBrClF", 0, 1, 0},         // bromochlorofluoromethane, hydrogen first
    {"C[C@H]1CCCCO1", "C6H12O", 0, 1, 0},            // 2-methyloxane, ring-closure neighbour
    {"C[C@@]12CCCC[C@H]1CCCC2", "C11H20", 0, 1, 0},  // methyldecalin, two ring closures on one centre
    {"C[S@](=O)c1ccccc1", "C7H8OS", 0, 1, 4},        // methyl phenyl sulfoxide, lone pair
    {"F/C=C/F", "C2H2F2", 0, 1, 1},                  // spec: trans-1,2-difluoroethene
    {"F\\C=C\\F", "C2H2F2", 0, 1, 1},                // spec: trans
    {"F/C=C\\F", "C2H2F2", 0, 1, 1},                 // spec: cis
    {"C(\\F)=C/F", "C2H2F2", 0, 1, 1},               // spec: trans
    {"C(/F)=C/F", "C2H2F2", 0, 1, 1},                // spec: cis
    {"F/C(CC)=C/F", "C4H6F2", 0, 1, 1},              // spec: one mark per end is enough
    {"C/C=C/C=C/C", "C6H10", 0, 1, 2},               // (2E,4E)-hexa-2,4-diene, shared mark
    {"F/C=C/C/C=C\\C", "C6H9F", 0, 1, 2},            // spec: completely specified
    {"F/C=C/CC=CC", "C6H9F", 0, 1, 2},               // spec: partially specified
    {"C/1=C/CCCCCC1", "C8H14", 0, 1, 1},             // spec: cis-cyclooctene, mark on a ring digit
    {"C1CCCCC/C=C\\1", "C8H14", 0, 1, 1},            // cis-cyclooctene, mark on the closing digit
    {"NC(Br)=[C@]=C(O)C", "C4H6BrNO", 0, 1, 2},      // spec: allene
    {"C[CH]=[C@@]=[CH]C", "C5H8", 0, 1, 2},          // penta-2,3-diene, hydrogens on the allene ends
    {"N[Pt@SP1](Cl)(Cl)N", "Cl2H4N2Pt", 0, 1, 0},    // cisplatin as the spec-style SMILES writes it (bare N: NH2)
    {"F[P@TB1](F)(F)(F)F", "F5P", 0, 1, 0},          // trigonal bipyramidal mark
    {"F[S@OH1](F)(F)(F)(F)F", "F6S", 0, 1, 0},       // octahedral mark
};


// Normal valences of the neutral organic-subset elements (OpenSMILES specification, section "Organic Subset").
const std::map<int, std::vector<int>> kOrganicValences = {{5, {3}},     {6, {4}},  {7, {3, 5}}, {8, {2}},
                                                          {9, {1}},     {15, {3, 5}}, {16, {2, 4, 6}},
                                                          {17, {1}},    {35, {1}}, {53, {1}}};

// Parity of the permutation taking from to to; -1 when they are not the same multiset.
int parity(const std::vector<int>& from, const std::vector<int>& to) {
    if (from.size() != to.size()) return -1;
    std::vector<int> pos;
    std::vector<bool> used(from.size(), false);
    for (int x : to) {
        int found = -1;
        for (size_t j = 0; j < from.size(); ++j)
            if (!used[j] && from[j] == x) {
                used[j] = true;
                found = static_cast<int>(j);
                break;
            }
        if (found < 0) return -1;
        pos.push_back(found);
    }
    int inversions = 0;
    for (size_t i = 0; i < pos.size(); ++i)
        for (size_t j = i + 1; j < pos.size(); ++j) inversions += pos[i] > pos[j];
    return inversions % 2;
}

// A three-neighbour tetrahedral list with its lone pair put where an implicit hydrogen would stand (first when the
// first neighbour comes later than the centre, second otherwise): the reading the builder applies.
std::vector<int> lone_pair_reading(std::vector<int> list, int centre) {
    if (list.size() == 3) list.insert(list.begin() + (list[0] > centre ? 0 : 1), -100);
    return list;
}

// The two end atoms of the cumulated chain around an allene centre, lower index first.
std::pair<int, int> allene_ends(const Molecule& m, int centre) {
    int ends[2] = {-1, -1};
    for (int side = 0; side < 2; ++side) {
        int previous = centre;
        int current = m.neighbors(centre)[side].atom;
        while (m.degree(current) == 2) {
            const auto& nbs = m.neighbors(current);
            if (m.bonds[nbs[0].bond].order != 2 || m.bonds[nbs[1].bond].order != 2) break;
            const int next = nbs[0].atom == previous ? nbs[1].atom : nbs[0].atom;
            previous = current;
            current = next;
        }
        ends[side] = current;
    }
    return {std::min(ends[0], ends[1]), std::max(ends[0], ends[1])};
}

// An allene list whose end hydrogens were implicit (kImplicitHydrogen in that end's half) and have since been made
// explicit: the end's hydrogen atoms, in the order they were added.
std::vector<int> resolve_allene_hydrogens(const Molecule& m, int centre, std::vector<int> list) {
    const auto [first, second] = allene_ends(m, centre);
    for (int side = 0; side < 2 && list.size() == 4; ++side) {
        const int end = side == 0 ? first : second;
        if (m.atoms[end].hydrogens > 0) continue;
        std::vector<int> hs;
        for (const Neighbor& nb : m.neighbors(end))
            if (m.atoms[nb.atom].z == 1 && m.atoms[nb.atom].parent == end) hs.push_back(nb.atom);
        std::sort(hs.begin(), hs.end());
        size_t next = 0;
        for (int k = 2 * side; k < 2 * side + 2; ++k)
            if (list[k] == kImplicitHydrogen && next < hs.size()) list[k] = hs[next++];
    }
    return list;
}

// Same graph: atoms in the same order with the same element, charge, isotope, hydrogens, class; the same bonds and
// orders; equivalent chirality and double-bond configurations.
void expect_same_graph(const Molecule& x, const Molecule& y, const std::string& context) {
    SCOPED_TRACE(context);
    ASSERT_EQ(x.atom_count(), y.atom_count());
    ASSERT_EQ(x.bond_count(), y.bond_count());
    for (int i = 0; i < x.atom_count(); ++i) {
        const Atom& a = x.atoms[i];
        const Atom& b = y.atoms[i];
        SCOPED_TRACE("atom " + std::to_string(i + 1));
        EXPECT_EQ(a.z, b.z);
        EXPECT_EQ(a.charge, b.charge);
        EXPECT_EQ(a.isotope, b.isotope);
        EXPECT_EQ(a.hydrogens, b.hydrogens);
        EXPECT_EQ(a.atom_class, b.atom_class);
        ASSERT_EQ(a.chiral_class, b.chiral_class);
        if (a.chiral_class == ChiralClass::none) continue;
        if (a.chiral_class == ChiralClass::TH || a.chiral_class == ChiralClass::AL) {
            const int p = a.chiral_class == ChiralClass::TH
                              ? parity(lone_pair_reading(a.stereo_neighbors, i), lone_pair_reading(b.stereo_neighbors, i))
                              : parity(resolve_allene_hydrogens(x, i, a.stereo_neighbors), b.stereo_neighbors);
            ASSERT_GE(p, 0);
            EXPECT_EQ(b.chiral_index, p ? 3 - a.chiral_index : a.chiral_index);
        } else {
            // SP/TB/OH: the same arrangement (sites up to a rotation), whatever order each list is in
            EXPECT_EQ(b.chiral_index,
                      reorder_polyhedral_index(a.chiral_class, a.chiral_index, a.stereo_neighbors, b.stereo_neighbors));
        }
    }
    for (const Bond& bx : x.bonds) {
        const int k = y.bond_between(bx.a, bx.b);
        ASSERT_GE(k, 0) << "bond " << bx.a + 1 << "-" << bx.b + 1 << " lost";
        const Bond& by = y.bonds[k];
        EXPECT_EQ(bx.order, by.order) << "bond " << bx.a + 1 << "-" << bx.b + 1;
        if (bx.stereo == BondStereo::none) {
            EXPECT_EQ(by.stereo, BondStereo::none) << "bond " << bx.a + 1 << "-" << bx.b + 1;
            continue;
        }
        ASSERT_NE(by.stereo, BondStereo::none) << "bond " << bx.a + 1 << "-" << bx.b + 1;
        const int ra = by.a == bx.a ? by.ref_a : by.ref_b;
        const int rb = by.a == bx.a ? by.ref_b : by.ref_a;
        const int flips = (ra != bx.ref_a) + (rb != bx.ref_b);
        const bool same = bx.stereo == by.stereo;
        EXPECT_EQ(same, flips % 2 == 0) << "bond " << bx.a + 1 << "-" << bx.b + 1;
    }
}

// The molecule with its atoms renumbered: atom i becomes atom order[i].
Molecule renumbered(const Molecule& m, const std::vector<int>& order) {
    const int n = m.atom_count();
    std::vector<int> old_of(n);
    for (int i = 0; i < n; ++i) old_of[order[i]] = i;
    auto map = [&](int v) { return v < 0 ? v : order[v]; };
    Molecule out;
    for (int j = 0; j < n; ++j) {
        Atom a = m.atoms[old_of[j]];
        for (int& s : a.stereo_neighbors) s = map(s);
        out.add_atom(a);
    }
    for (const Bond& b : m.bonds) {
        const int k = out.add_bond(map(b.a), map(b.b), b.order, b.aromatic);
        Bond& nb = out.bonds[k];
        nb.stereo = b.stereo;
        nb.ref_a = map(b.ref_a);
        nb.ref_b = map(b.ref_b);
    }
    return out;
}

}  // namespace

TEST(SmilesRead, FormulaChargeComponentsAndKekuleStructure) {
    for (const ValidCase& c : kValid) {
        SCOPED_TRACE(c.smiles);
        Molecule m;
        try {
            m = read_smiles(c.smiles);
        } catch (const InputError& e) {
            ADD_FAILURE() << e.describe();
            continue;
        }
        EXPECT_EQ(formula(m), c.formula);
        EXPECT_EQ(m.total_charge(), c.charge);
        EXPECT_EQ(components(m), c.components);
        if (c.double_bonds >= 0) {
            EXPECT_EQ(double_bonds(m), c.double_bonds);
        }
        for (int i = 0; i < m.atom_count(); ++i) {
            const Atom& a = m.atoms[i];
            // Every neutral organic atom (written bare, or aromatic in brackets) ends at a normal valence.
            auto it = kOrganicValences.find(a.z);
            if (it != kOrganicValences.end() && a.charge == 0 && (!a.bracket || a.aromatic)) {
                const int valence = m.bond_order_sum(i) + a.hydrogens;
                EXPECT_NE(std::find(it->second.begin(), it->second.end(), valence), it->second.end())
                    << "atom " << i + 1 << " ends at valence " << valence;
            }
            int aromatic_doubles = 0;
            for (const Neighbor& nb : m.neighbors(i)) {
                const Bond& b = m.bonds[nb.bond];
                if (!b.aromatic) continue;
                EXPECT_TRUE(b.order == 1 || b.order == 2);
                aromatic_doubles += b.order == 2;
            }
            EXPECT_LE(aromatic_doubles, 1) << "atom " << i + 1;
        }
    }
}

TEST(SmilesWrite, RoundTripKeepsTheGraph) {
    for (const ValidCase& c : kValid) {
        const Molecule m = read_smiles(c.smiles);
        const std::string written = write_smiles(m);
        SCOPED_TRACE(std::string(c.smiles) + " -> " + written);
        Molecule back;
        try {
            back = read_smiles(written);
        } catch (const InputError& e) {
            ADD_FAILURE() << e.describe();
            continue;
        }
        expect_same_graph(m, back, "round trip");
    }
}

TEST(SmilesWrite, RoundTripWithExplicitHydrogens) {
    for (const ValidCase& c : kValid) {
        Molecule m = read_smiles(c.smiles);
        m.make_hydrogens_explicit();
        if (m.atom_count() > 60) continue;  // index order puts every H last: too many open ring bonds
        const std::string written = write_smiles(m);
        SCOPED_TRACE(std::string(c.smiles) + " -> " + written);
        Molecule back;
        try {
            back = read_smiles(written);
        } catch (const InputError& e) {
            ADD_FAILURE() << e.describe();
            continue;
        }
        expect_same_graph(m, back, "explicit hydrogens");
    }
}

// Writing in an arbitrary atom order exercises ring closures, branches and the re-derivation of every stereo mark.
TEST(SmilesWrite, RoundTripInShuffledAtomOrders) {
    std::mt19937 rng(20240611);
    for (const ValidCase& c : kValid) {
        const Molecule m = read_smiles(c.smiles);
        if (m.atom_count() > 150) continue;
        for (int trial = 0; trial < 4; ++trial) {
            std::vector<int> order(m.atom_count());
            std::iota(order.begin(), order.end(), 0);
            std::shuffle(order.begin(), order.end(), rng);
            const Molecule shuffled = renumbered(m, order);
            std::string written;
            try {
                written = write_smiles(shuffled);
            } catch (const UnsupportedError& e) {
                // every mark, @SP/@TB/@OH included, is re-derived for the order written
                ADD_FAILURE() << c.smiles << ": " << e.what();
                continue;
            }
            SCOPED_TRACE(std::string(c.smiles) + " shuffled -> " + written);
            Molecule back;
            try {
                back = read_smiles(written);
            } catch (const InputError& e) {
                ADD_FAILURE() << e.describe();
                continue;
            }
            expect_same_graph(shuffled, back, "shuffled");
        }
    }
}

TEST(SmilesWrite, SimpleMoleculesReadBackAsWritten) {
    EXPECT_EQ(write_smiles(read_smiles("CCO")), "CCO");
    EXPECT_EQ(write_smiles(read_smiles("CC(C)C(=O)O")), "CC(C)C(=O)O");
    EXPECT_EQ(write_smiles(read_smiles("C1CCCCC1")), "C1CCCCC1");
    EXPECT_EQ(write_smiles(read_smiles("N[C@@H](C)C(=O)O")), "N[C@@H](C)C(=O)O");
    EXPECT_EQ(write_smiles(read_smiles("F/C=C/F")), "F/C=C/F");
    EXPECT_EQ(write_smiles(read_smiles("[Na+].[Cl-]")), "[Na+].[Cl-]");
    EXPECT_EQ(write_smiles(read_smiles("[13CH3][2H]")), "[13CH3][2H]");
    EXPECT_EQ(write_smiles(read_smiles("[NH4+:7]")), "[NH4+:7]");
    EXPECT_EQ(write_smiles(Molecule{}), "");
}

// OpenSMILES v1.0, "Atoms", "Organic Subset": an organic-subset atom whose bond orders sum above every normal valence
// has no implicit hydrogens ("... or is greater than any known valence then the implicit hydrogen count is 0"). These
// are hypervalent molecules as databases write them; the writer keeps them bare, and an atom with no hydrogens that the
// reader would give some stays in brackets.
TEST(SmilesRead, OrganicSubsetAboveItsNormalValencesHasNoHydrogens) {
    struct Case {
        const char* smiles;
        int atom;       // 0-based, the hypervalent atom
        int bonds;      // its bond-order sum
    };
    const Case cases[] = {
        {"FCl(F)F", 1, 3},                            // ClF3
        {"FCl(F)(F)(F)F", 1, 5},                      // ClF5
        {"O=I(=O)(=O)[O-]", 1, 7},                    // periodate
        {"CC(=O)OI(OC(C)=O)c1ccccc1", 4, 3},         // (diacetoxyiodo)benzene
        {"FBr(F)F", 1, 3},                            // BrF3
        {"FI(F)(F)(F)(F)(F)F", 1, 7},                 // IF7
        {"O=Cl(=O)(=O)O", 1, 7},                      // perchloric acid
        {"FS(F)(F)(F)(F)(F)F", 1, 7},                 // over sulfur's 6: read, refused by the domain analysis
    };
    for (const Case& c : cases) {
        SCOPED_TRACE(c.smiles);
        const Molecule m = read_smiles(c.smiles);
        EXPECT_EQ(m.atoms[static_cast<size_t>(c.atom)].hydrogens, 0);
        EXPECT_EQ(m.bond_order_sum(c.atom), c.bonds);
        const std::string written = write_smiles(m);
        const Molecule back = read_smiles(written);
        ASSERT_EQ(back.atom_count(), m.atom_count()) << written;
        for (int i = 0; i < m.atom_count(); ++i)
            EXPECT_EQ(back.atoms[static_cast<size_t>(i)].hydrogens, m.atoms[static_cast<size_t>(i)].hydrogens) << written;
    }
    EXPECT_EQ(write_smiles(read_smiles("FCl(F)F")), "FCl(F)F");
    EXPECT_EQ(write_smiles(read_smiles("F[Cl]F")), "FClF");        // above chlorine's 1: bare means no hydrogens
    EXPECT_EQ(write_smiles(read_smiles("F[S](F)(F)F")), "FS(F)(F)F");  // at sulfur's 4 alike
    // Below a normal valence a bare atom would get hydrogens, so one written with none stays in brackets.
    EXPECT_EQ(write_smiles(read_smiles("F[P]F")), "F[P]F");
    EXPECT_EQ(write_smiles(read_smiles("F[S](F)(F)(F)F")), "F[S](F)(F)(F)F");
}

TEST(SmilesRead, AtomFieldsAndColumns) {
    const Molecule m = read_smiles("C[13CH2:4][O-].[Fe+3]");
    ASSERT_EQ(m.atom_count(), 4);
    EXPECT_EQ(m.atoms[0].column, 1);
    EXPECT_FALSE(m.atoms[0].bracket);
    EXPECT_EQ(m.atoms[0].hydrogens, 3);
    EXPECT_EQ(m.atoms[1].column, 2);
    EXPECT_TRUE(m.atoms[1].bracket);
    EXPECT_EQ(m.atoms[1].isotope, 13);
    EXPECT_EQ(m.atoms[1].hydrogens, 2);
    EXPECT_EQ(m.atoms[1].atom_class, 4);
    EXPECT_EQ(m.atoms[2].column, 11);
    EXPECT_EQ(m.atoms[2].z, 8);
    EXPECT_EQ(m.atoms[2].charge, -1);
    EXPECT_EQ(m.atoms[2].hydrogens, 0);
    EXPECT_EQ(m.atoms[3].column, 16);
    EXPECT_EQ(m.atoms[3].z, 26);
    EXPECT_EQ(m.atoms[3].charge, 3);
    EXPECT_EQ(m.bond_count(), 2);
}

TEST(SmilesRead, BondOrdersAndWrittenFirstAtom) {
    const Molecule m = read_smiles("C-C=CC#N");
    ASSERT_EQ(m.bond_count(), 4);
    EXPECT_EQ(m.bonds[0].order, 1);
    EXPECT_EQ(m.bonds[1].order, 2);
    EXPECT_EQ(m.bonds[2].order, 1);
    EXPECT_EQ(m.bonds[3].order, 3);
    for (const Bond& b : m.bonds) EXPECT_LT(b.a, b.b);
    EXPECT_EQ(read_smiles("[Mo]$[Mo]").bonds[0].order, 4);
    // a ring bond runs from the atom that opened it
    const Molecule r = read_smiles("C1CC1");
    EXPECT_EQ(r.bonds[2].a, 0);
    EXPECT_EQ(r.bonds[2].b, 2);
}

TEST(SmilesRead, AromaticRingsKeepTheirFlagsAndGetKekuleBonds) {
    // pyrrole: the [nH] takes no double bond; the two C=C are C2=C3 and C4=C5
    const Molecule pyrrole = read_smiles("c1cc[nH]c1");
    for (const Atom& a : pyrrole.atoms) EXPECT_TRUE(a.aromatic);
    for (const Bond& b : pyrrole.bonds) EXPECT_TRUE(b.aromatic);
    for (const Neighbor& nb : pyrrole.neighbors(3)) EXPECT_EQ(pyrrole.bonds[nb.bond].order, 1);
    EXPECT_EQ(pyrrole.bonds[pyrrole.bond_between(0, 1)].order + pyrrole.bonds[pyrrole.bond_between(0, 4)].order, 3);
    // furan and thiophene: the heteroatom keeps single bonds
    for (const char* s : {"o1cccc1", "s1cccc1"}) {
        const Molecule m = read_smiles(s);
        for (const Neighbor& nb : m.neighbors(0)) EXPECT_EQ(m.bonds[nb.bond].order, 1) << s;
    }
    // caffeine: the carbonyl carbons take their exocyclic double bond, not a ring one
    const Molecule caffeine = read_smiles("Cn1cnc2c1c(=O)n(C)c(=O)n2C");
    for (int carbonyl : {6, 10})
        for (const Neighbor& nb : caffeine.neighbors(carbonyl))
            EXPECT_EQ(caffeine.bonds[nb.bond].order, nb.atom == carbonyl + 1 ? 2 : 1);
    // biphenyl without '-': the bond between the rings is in no ring, so it is a plain single bond
    const Molecule biphenyl = read_smiles("c1ccccc1c1ccccc1");
    const Bond& link = biphenyl.bonds[biphenyl.bond_between(5, 6)];
    EXPECT_FALSE(link.aromatic);
    EXPECT_EQ(link.order, 1);
    // an explicit '-' between aromatic atoms is a non-aromatic single bond
    const Molecule written = read_smiles("c1ccccc1-c2ccccc2");
    EXPECT_FALSE(written.bonds[written.bond_between(5, 6)].aromatic);
    // Kekule input stays non-aromatic
    for (const Bond& b : read_smiles("C1=CC=CC=C1").bonds) EXPECT_FALSE(b.aromatic);
    // implicit hydrogens of aromatic atoms
    const Molecule pyridine = read_smiles("n1ccccc1");
    EXPECT_EQ(pyridine.atoms[0].hydrogens, 0);
    for (int i = 1; i < 6; ++i) EXPECT_EQ(pyridine.atoms[i].hydrogens, 1);
    const Molecule naphthalene = read_smiles("c1ccc2ccccc2c1");
    EXPECT_EQ(naphthalene.atoms[3].hydrogens, 0);  // ring-fusion carbons
    EXPECT_EQ(naphthalene.atoms[8].hydrogens, 0);
}

TEST(SmilesRead, TetrahedralNeighbourOrder) {
    // OpenSMILES: the preceding atom, then the implicit hydrogen, then branches and the next atom
    const Molecule ala = read_smiles("N[C@@H](C)C(=O)O");
    EXPECT_EQ(ala.atoms[1].chiral_class, ChiralClass::TH);
    EXPECT_EQ(ala.atoms[1].chiral_index, 2);
    EXPECT_EQ(ala.atoms[1].stereo_neighbors, (std::vector<int>{0, kImplicitHydrogen, 2, 3}));
    EXPECT_EQ(read_smiles("N[C@H](C)C(=O)O").atoms[1].chiral_index, 1);
    // ring closure: the partner is known only when the ring closes, in the place of its digit
    const Molecule ring = read_smiles("C[C@H]1CCCCO1");
    EXPECT_EQ(ring.atoms[1].stereo_neighbors, (std::vector<int>{0, kImplicitHydrogen, 6, 2}));
    // two ring closures on one centre, in the order written; a centre that closes rings lists them at its digits
    const Molecule decalin = read_smiles("C[C@@]12CCCC[C@H]1CCCC2");
    EXPECT_EQ(decalin.atoms[1].stereo_neighbors, (std::vector<int>{0, 6, 10, 2}));
    EXPECT_EQ(decalin.atoms[6].stereo_neighbors, (std::vector<int>{5, kImplicitHydrogen, 1, 7}));
    // first atom: the implicit hydrogen comes first
    EXPECT_EQ(read_smiles("[C@@H](F)(Cl)Br").atoms[0].stereo_neighbors,
              (std::vector<int>{kImplicitHydrogen, 1, 2, 3}));
    // explicit @TH1/@TH2 are '@' and '@@'
    const Molecule th = read_smiles("F[C@TH2](Cl)(Br)I");
    EXPECT_EQ(th.atoms[1].chiral_class, ChiralClass::TH);
    EXPECT_EQ(th.atoms[1].chiral_index, 2);
    // a lone pair as the fourth neighbour: three in the list
    EXPECT_EQ(read_smiles("C[S@](=O)c1ccccc1").atoms[1].stereo_neighbors, (std::vector<int>{0, 2, 3}));
    // make_hydrogens_explicit() puts the hydrogen in the list
    Molecule explicit_h = read_smiles("N[C@@H](C)C(=O)O");
    explicit_h.make_hydrogens_explicit();
    EXPECT_EQ(explicit_h.atoms[1].stereo_neighbors[1], explicit_h.input_atom_count() + 2);
}

TEST(SmilesRead, OtherChiralityClasses) {
    const Molecule sp = read_smiles("N[Pt@SP1](Cl)(Cl)N");
    EXPECT_EQ(sp.atoms[1].chiral_class, ChiralClass::SP);
    EXPECT_EQ(sp.atoms[1].chiral_index, 1);
    EXPECT_EQ(sp.atoms[1].stereo_neighbors, (std::vector<int>{0, 2, 3, 4}));
    const Molecule tb = read_smiles("F[P@TB15](F)(F)(F)F");
    EXPECT_EQ(tb.atoms[1].chiral_class, ChiralClass::TB);
    EXPECT_EQ(tb.atoms[1].chiral_index, 15);
    const Molecule oh = read_smiles("F[S@OH27](F)(F)(F)(F)F");
    EXPECT_EQ(oh.atoms[1].chiral_class, ChiralClass::OH);
    EXPECT_EQ(oh.atoms[1].chiral_index, 27);
    EXPECT_EQ(oh.atoms[1].stereo_neighbors.size(), 6u);
}

TEST(SmilesRead, AlleneMarkRefersToTheEndSubstituents) {
    // OpenSMILES "Tetrahedral Allene-like Systems": NC(Br)=[C@]=C(O)C collapses to a centre with N, Br, O, C
    const Molecule m = read_smiles("NC(Br)=[C@]=C(O)C");
    EXPECT_EQ(m.atoms[3].chiral_class, ChiralClass::AL);
    EXPECT_EQ(m.atoms[3].chiral_index, 1);
    EXPECT_EQ(m.atoms[3].stereo_neighbors, (std::vector<int>{0, 2, 5, 6}));
    // hydrogens of the ends: after the preceding atom, or first; the halves say whose hydrogen it is
    const Molecule h = read_smiles("C[CH]=[C@@]=[CH]C");
    EXPECT_EQ(h.atoms[2].chiral_class, ChiralClass::AL);
    EXPECT_EQ(h.atoms[2].stereo_neighbors, (std::vector<int>{0, kImplicitHydrogen, kImplicitHydrogen, 4}));
    // a longer cumulene with an even number of double bonds: the middle atom
    const Molecule c5 = read_smiles("FC(Cl)=C=[C@]=C=C(Br)I");
    EXPECT_EQ(c5.atoms[4].chiral_class, ChiralClass::AL);
    EXPECT_EQ(c5.atoms[4].stereo_neighbors, (std::vector<int>{0, 2, 7, 8}));
}

TEST(SmilesRead, DoubleBondConfigurations) {
    struct Case {
        const char* smiles;
        int a, b;  // double-bond atoms
        BondStereo stereo;
        int ref_a, ref_b;
    };
    // OpenSMILES "Cis/Trans configuration of Double Bonds"
    const Case cases[] = {
        {"F/C=C/F", 1, 2, BondStereo::trans, 0, 3},   {"F\\C=C\\F", 1, 2, BondStereo::trans, 0, 3},
        {"F/C=C\\F", 1, 2, BondStereo::cis, 0, 3},    {"F\\C=C/F", 1, 2, BondStereo::cis, 0, 3},
        {"C(\\F)=C/F", 0, 2, BondStereo::trans, 1, 3}, {"C(/F)=C/F", 0, 2, BondStereo::cis, 1, 3},
        {"F/C(CC)=C/F", 1, 4, BondStereo::trans, 0, 5}, {"C/1=C/CCCCCC1", 0, 1, BondStereo::cis, 7, 2},
        {"C1CCCCC/C=C\\1", 6, 7, BondStereo::cis, 5, 0},
    };
    for (const Case& c : cases) {
        SCOPED_TRACE(c.smiles);
        const Molecule m = read_smiles(c.smiles);
        const int k = m.bond_between(c.a, c.b);
        ASSERT_GE(k, 0);
        EXPECT_EQ(m.bonds[k].stereo, c.stereo);
        EXPECT_EQ(m.bonds[k].ref_a, c.ref_a);
        EXPECT_EQ(m.bonds[k].ref_b, c.ref_b);
    }
    // conjugated: the middle mark serves both double bonds
    const Molecule diene = read_smiles("C/C=C/C=C/C");
    EXPECT_EQ(diene.bonds[diene.bond_between(1, 2)].stereo, BondStereo::trans);
    EXPECT_EQ(diene.bonds[diene.bond_between(3, 4)].stereo, BondStereo::trans);
    const Molecule mixed = read_smiles("C/C=C/C=C\\C");
    EXPECT_EQ(mixed.bonds[mixed.bond_between(3, 4)].stereo, BondStereo::cis);
    // the marks are kept as written, from the atom written first
    EXPECT_EQ(read_smiles("F/C=C\\F").bonds[2].direction, -1);
    EXPECT_EQ(read_smiles("F/C=C\\F").bonds[0].direction, 1);
    // one marked end only: no configuration
    EXPECT_EQ(read_smiles("F/C=CF").bonds[1].stereo, BondStereo::none);
    // two marks on one end pointing to opposite sides are consistent
    const Molecule both = read_smiles("F/C(/Cl)=C/F");
    EXPECT_EQ(both.bonds[both.bond_between(1, 3)].stereo, BondStereo::trans);
}

TEST(SmilesRead, DeepNestingAndLongChainsDoNotRecurse) {
    const int n = 100000;
    std::string nested = "C";
    for (int i = 0; i < n; ++i) nested += "(C";
    nested += std::string(n, ')');
    const Molecule m = read_smiles(nested);
    EXPECT_EQ(m.atom_count(), n + 1);
    EXPECT_EQ(m.bond_count(), n);
    const Molecule chain = read_smiles(std::string(n, 'C'));
    EXPECT_EQ(chain.atom_count(), n);
    EXPECT_EQ(chain.atoms[0].hydrogens, 3);
    EXPECT_EQ(chain.atoms[n / 2].hydrogens, 2);
    // and the writer, which also works without recursion
    EXPECT_EQ(read_smiles(write_smiles(m)).atom_count(), n + 1);
    EXPECT_EQ(write_smiles(chain), std::string(n, 'C'));
}

namespace {
std::string ring_label(int r) { return r < 10 ? std::to_string(r) : "%" + std::to_string(r); }
}  // namespace

TEST(SmilesRead, LargeAromaticSystemsKekulize) {
    // a ring of 1000 aromatic carbons
    const std::string ring = "c1" + std::string(998, 'c') + "c1";
    const Molecule m = read_smiles(ring);
    EXPECT_EQ(m.atom_count(), 1000);
    EXPECT_EQ(double_bonds(m), 500);
    // a linear acene of 98 rings (4n + 2 carbons, 2n + 1 double bonds)
    const int rings = 98;
    std::string acene = "c1ccc" + ring_label(2);
    for (int r = 3; r <= rings; ++r) acene += "c" + std::string("c") + ring_label(r);
    acene += "cccc" + std::string("c") + ring_label(rings);
    for (int r = rings - 1; r >= 2; --r) acene += "c" + std::string("c") + ring_label(r);
    acene += "c1";
    const Molecule a = read_smiles(acene);
    EXPECT_EQ(a.atom_count(), 4 * rings + 2);
    EXPECT_EQ(double_bonds(a), 2 * rings + 1);
    EXPECT_EQ(formula(a), "C" + std::to_string(4 * rings + 2) + "H" + std::to_string(2 * rings + 4));
}

// Random graphs with a planted perfect matching and random extra edges, atoms in random order: kekulize() must find
// a perfect matching; random small graphs: it must succeed exactly when a brute-force search finds one.
namespace {
bool has_perfect_matching(int n, const std::vector<std::pair<int, int>>& edges) {
    std::vector<std::vector<int>> adj(n);
    for (auto [u, v] : edges) {
        adj[u].push_back(v);
        adj[v].push_back(u);
    }
    // iterative over masks: can[mask] = the vertices in mask can be perfectly matched
    std::vector<unsigned char> can(1u << n, 0);
    can[0] = 1;
    for (unsigned mask = 1; mask < (1u << n); ++mask) {
        int first = 0;
        while (!(mask & (1u << first))) ++first;
        for (int w : adj[first])
            if ((mask & (1u << w)) && can[mask & ~(1u << first) & ~(1u << w)]) {
                can[mask] = 1;
                break;
            }
    }
    return can[(1u << n) - 1];
}

Molecule aromatic_graph(int n, const std::vector<std::pair<int, int>>& edges) {
    Molecule m;
    for (int i = 0; i < n; ++i) {
        Atom a;
        a.z = 6;
        a.aromatic = true;
        m.add_atom(a);
    }
    for (auto [u, v] : edges) m.add_bond(u, v, 1, true);
    return m;
}

void expect_perfect(const Molecule& m) {
    for (int i = 0; i < m.atom_count(); ++i) {
        int doubles = 0;
        for (const Neighbor& nb : m.neighbors(i)) doubles += m.bonds[nb.bond].order == 2;
        EXPECT_EQ(doubles, 1) << "atom " << i;
    }
}
}  // namespace

TEST(Kekulize, FindsPlantedMatchingsInRandomGraphs) {
    // An even cycle through all atoms in random order (so every bond is a ring bond and a perfect matching exists)
    // plus random chords, which make odd cycles (blossoms) and mislead a greedy start.
    std::mt19937 rng(7);
    for (int trial = 0; trial < 300; ++trial) {
        const int n = 2 * std::uniform_int_distribution<int>(2, 150)(rng);
        std::vector<int> perm(n);
        std::iota(perm.begin(), perm.end(), 0);
        std::shuffle(perm.begin(), perm.end(), rng);
        std::vector<std::pair<int, int>> edges;
        for (int i = 0; i < n; ++i) edges.push_back({perm[i], perm[(i + 1) % n]});
        const int chords = std::uniform_int_distribution<int>(0, n)(rng);
        for (int e = 0; e < chords; ++e) {
            const int u = std::uniform_int_distribution<int>(0, n - 1)(rng);
            const int v = std::uniform_int_distribution<int>(0, n - 1)(rng);
            if (u == v) continue;
            bool dup = false;
            for (auto [x, y] : edges) dup = dup || (x == u && y == v) || (x == v && y == u);
            if (!dup) edges.push_back({u, v});
        }
        std::shuffle(edges.begin(), edges.end(), rng);
        Molecule m = aromatic_graph(n, edges);
        std::vector<unsigned char> need(n, 1);
        EXPECT_EQ(kekulize(m, need), -1) << "trial " << trial;
        expect_perfect(m);
    }
}

TEST(Kekulize, AgreesWithBruteForceOnSmallGraphs) {
    std::mt19937 rng(11);
    int checked = 0;
    for (int trial = 0; trial < 3000; ++trial) {
        const int n = std::uniform_int_distribution<int>(2, 12)(rng);
        std::vector<std::pair<int, int>> edges;
        for (int u = 0; u < n; ++u)
            for (int v = u + 1; v < n; ++v)
                if (std::uniform_real_distribution<double>(0, 1)(rng) < 0.3) edges.push_back({u, v});
        Molecule m = aromatic_graph(n, edges);
        std::vector<unsigned char> need(n, 1);
        const int failed = kekulize(m, need);
        // the reference works on the bonds that stayed aromatic (bridges are not ring bonds)
        std::vector<std::pair<int, int>> ring_edges;
        for (const Bond& b : m.bonds)
            if (b.aromatic) ring_edges.push_back({b.a, b.b});
        const bool expected = has_perfect_matching(n, ring_edges);
        EXPECT_EQ(failed < 0, expected) << "trial " << trial;
        if (failed < 0) expect_perfect(m);
        ++checked;
    }
    EXPECT_EQ(checked, 3000);
}

TEST(Kekulize, AtomsThatNeedNoDoubleBondAreLeftSingle) {
    // five-membered ring, one atom (index 3) needs none: the other four pair up
    Molecule m = aromatic_graph(5, {{0, 1}, {1, 2}, {2, 3}, {3, 4}, {4, 0}});
    std::vector<unsigned char> need = {1, 1, 1, 0, 1};
    EXPECT_EQ(kekulize(m, need), -1);
    for (const Neighbor& nb : m.neighbors(3)) EXPECT_EQ(m.bonds[nb.bond].order, 1);
    // odd count: impossible, and an atom that needs one is named
    Molecule odd = aromatic_graph(5, {{0, 1}, {1, 2}, {2, 3}, {3, 4}, {4, 0}});
    std::vector<unsigned char> all(5, 1);
    const int failed = kekulize(odd, all);
    EXPECT_GE(failed, 0);
    EXPECT_LT(failed, 5);
}
