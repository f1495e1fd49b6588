// The formula reader: single-centre species written as formulas, their Lewis structures, and every refusal.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "core/element.hpp"
#include "core/error.hpp"
#include "input/formula.hpp"

using namespace repel;

namespace {

// The electrons of an atom outside its bonds: valence - formal charge - bond-order sum.
int nonbonding(const Molecule& m, int atom) {
    const Atom& a = m.atoms[static_cast<size_t>(atom)];
    return element(a.z).valence_electrons - a.charge - m.bond_order_sum(atom);
}

// The centre's AXE class, counted from the structure read (not from any label): X bonded neighbours, E lone pairs
// = nonbonding // 2, and "+e" for the odd electron apart.
std::string centre_axe(const Molecule& m) {
    const int nb = nonbonding(m, 0);
    std::string s = "AX" + std::to_string(m.degree(0));
    if (nb / 2 > 0) s += "E" + std::to_string(nb / 2);
    if (nb % 2 == 1) s += "+e";
    return s;
}

std::vector<std::string> symbols(const Molecule& m) {
    std::vector<std::string> out;
    for (const Atom& a : m.atoms) out.emplace_back(element(a.z).symbol);
    return out;
}

// Bond orders of the ligands in atom order (bond i joins the centre and atom i + 1).
std::vector<int> orders(const Molecule& m) {
    std::vector<int> out;
    for (int i = 1; i < m.atom_count(); ++i) out.push_back(m.bonds[static_cast<size_t>(m.bond_between(0, i))].order);
    return out;
}

std::vector<int> charges(const Molecule& m) {
    std::vector<int> out;
    for (const Atom& a : m.atoms) out.push_back(a.charge);
    return out;
}

// What every accepted formula must satisfy: a star around atom 0, no implicit hydrogens, the ligands' octets (the
// duet for hydrogen) complete, a period-2 centre within its octet, and the formal charges summing to the written
// charge.
void expect_buildable(const Molecule& m, int written_charge, const std::string& formula) {
    SCOPED_TRACE(formula);
    EXPECT_EQ(m.bond_count(), m.atom_count() - 1);
    for (const Bond& b : m.bonds) EXPECT_EQ(b.a, 0);
    for (int i = 0; i < m.atom_count(); ++i) EXPECT_EQ(m.atoms[static_cast<size_t>(i)].hydrogens, 0);
    for (int i = 1; i < m.atom_count(); ++i) {
        const ElementData& e = element(m.atoms[static_cast<size_t>(i)].z);
        if (e.group == 1 || e.group == 2 || e.group == 13) continue;  // electron-poor ligands keep no octet
        EXPECT_EQ(nonbonding(m, i) + 2 * m.bond_order_sum(i), e.number == 1 ? 2 : 8) << "ligand " << i;
    }
    EXPECT_GE(nonbonding(m, 0), 0);
    if (element(m.atoms[0].z).period == 2) {
        EXPECT_LE(nonbonding(m, 0) + 2 * m.bond_order_sum(0), 8);
    }
    EXPECT_EQ(m.total_charge(), written_charge);
}

struct ClassCase {
    const char* formula;
    int charge;
    const char* axe;
};

// VSEPR classes of single-centre species: Gillespie and Hargittai, The VSEPR Model of Molecular Geometry (1991);
// the odd-electron ones (NO2, ClO2) with a single-electron domain on the centre, as the same book treats them.
const ClassCase kClasses[] = {
    {"XeF4", 0, "AX4E2"},   {"SF4", 0, "AX4E1"},    {"ClF3", 0, "AX3E2"},   {"BrF5", 0, "AX5E1"},
    {"IF7", 0, "AX7"},      {"XeF2", 0, "AX2E3"},   {"XeOF4", 0, "AX5E1"},  {"SF6", 0, "AX6"},
    {"PCl5", 0, "AX5"},     {"ICl4-", -1, "AX4E2"}, {"XeO4", 0, "AX4"},     {"XeO3", 0, "AX3E1"},
    {"H2O", 0, "AX2E2"},    {"NH3", 0, "AX3E1"},    {"CH4", 0, "AX4"},      {"H3O+", 1, "AX3E1"},
    {"NH4+", 1, "AX4"},     {"CH3+", 1, "AX3"},     {"CH3-", -1, "AX3E1"},  {"BF3", 0, "AX3"},
    {"BeCl2", 0, "AX2"},    {"SO2", 0, "AX2E1"},    {"SO3", 0, "AX3"},      {"CO2", 0, "AX2"},
    {"NO2-", -1, "AX2E1"},  {"NO2+", 1, "AX2"},     {"NO2", 0, "AX2+e"},    {"ClO2", 0, "AX2E1+e"},
    {"OF2", 0, "AX2E2"},    {"SiF6 2-", -2, "AX6"}, {"AlCl4-", -1, "AX4"},  {"BH4-", -1, "AX4"},
    {"PF6-", -1, "AX6"},    {"SO4 2-", -2, "AX4"},  {"ClO4-", -1, "AX4"},   {"PO4 3-", -3, "AX4"},
    {"NO3-", -1, "AX3"},    {"CO3 2-", -2, "AX3"},
};

}  // namespace

TEST(Formula, EverySpeciesHasItsVseprClass) {
    for (const ClassCase& c : kClasses) {
        SCOPED_TRACE(c.formula);
        Molecule m;
        ASSERT_NO_THROW(m = read_formula(c.formula));
        EXPECT_EQ(centre_axe(m), c.axe);
        expect_buildable(m, c.charge, c.formula);
    }
}

// Centre choice: the least electronegative non-hydrogen atom that occurs once; atom order: the centre, then the
// ligands as written (the project's atom-order rule).
TEST(Formula, CentreFirstThenLigandsAsWritten) {
    using V = std::vector<std::string>;
    EXPECT_EQ(symbols(read_formula("XeOF4")), (V{"Xe", "O", "F", "F", "F", "F"}));
    EXPECT_EQ(symbols(read_formula("H2O")), (V{"O", "H", "H"}));
    EXPECT_EQ(symbols(read_formula("NH3")), (V{"N", "H", "H", "H"}));
    EXPECT_EQ(symbols(read_formula("F4Xe")), (V{"Xe", "F", "F", "F", "F"}));
    EXPECT_EQ(symbols(read_formula("FXeF")), (V{"Xe", "F", "F"}));
    EXPECT_EQ(symbols(read_formula("OF2")), (V{"O", "F", "F"}));
    // Cl is less electronegative than O but, being univalent, only terminal: Cl-O-Cl (common practice).
    EXPECT_EQ(symbols(read_formula("Cl2O")), (V{"O", "Cl", "Cl"}));
    EXPECT_EQ(read_formula("XeF4").atoms[1].column, 3);
}

// Formal charges and bond orders of the least-formal-charge Lewis structures (Gillespie and Hargittai 1991; the
// resonance form listed is the one with the first ligands at the higher order, this reader's documented choice).
TEST(Formula, LewisStructuresWithTheLeastFormalCharge) {
    using V = std::vector<int>;
    Molecule m = read_formula("XeOF4");
    EXPECT_EQ(orders(m), (V{2, 1, 1, 1, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, 0, 0, 0, 0}));

    m = read_formula("SO4 2-");  // two S=O, two S-O(-), S neutral
    EXPECT_EQ(orders(m), (V{2, 2, 1, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, 0, -1, -1}));

    m = read_formula("ClO4-");  // three Cl=O, one Cl-O(-)
    EXPECT_EQ(orders(m), (V{2, 2, 2, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, 0, 0, -1}));

    m = read_formula("PO4 3-");  // one P=O
    EXPECT_EQ(orders(m), (V{2, 1, 1, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, -1, -1, -1}));

    m = read_formula("NH4+");
    EXPECT_EQ(m.atoms[0].charge, 1);

    m = read_formula("H3O+");
    EXPECT_EQ(m.atoms[0].charge, 1);

    m = read_formula("NO3-");  // N(+1), one N=O (N is period 2: no expansion)
    EXPECT_EQ(orders(m), (V{2, 1, 1}));
    EXPECT_EQ(charges(m), (V{1, 0, -1, -1}));

    m = read_formula("NO2-");
    EXPECT_EQ(orders(m), (V{2, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, -1}));

    m = read_formula("NO2+");  // O=N(+)=O
    EXPECT_EQ(orders(m), (V{2, 2}));
    EXPECT_EQ(charges(m), (V{1, 0, 0}));

    m = read_formula("NO2");  // radical: the odd electron on N, 7 electrons at N
    EXPECT_EQ(orders(m), (V{2, 1}));
    EXPECT_EQ(charges(m), (V{1, 0, -1}));
    EXPECT_EQ(nonbonding(m, 0), 1);

    m = read_formula("ClO2");  // radical on Cl with both Cl=O
    EXPECT_EQ(orders(m), (V{2, 2}));
    EXPECT_EQ(charges(m), (V{0, 0, 0}));
    EXPECT_EQ(nonbonding(m, 0), 3);

    m = read_formula("CO2");
    EXPECT_EQ(orders(m), (V{2, 2}));
    m = read_formula("SO2");  // O=S=O
    EXPECT_EQ(orders(m), (V{2, 2}));
    EXPECT_EQ(charges(m), (V{0, 0, 0}));
    m = read_formula("SO3");
    EXPECT_EQ(orders(m), (V{2, 2, 2}));
    m = read_formula("CO3 2-");  // one C=O
    EXPECT_EQ(orders(m), (V{2, 1, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, -1, -1}));
    m = read_formula("XeO4");
    EXPECT_EQ(orders(m), (V{2, 2, 2, 2}));
    m = read_formula("XeO3");
    EXPECT_EQ(orders(m), (V{2, 2, 2}));
    m = read_formula("BF3");  // B keeps a sextet rather than carry charge (electron-poor centre)
    EXPECT_EQ(orders(m), (V{1, 1, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, 0, 0}));
    m = read_formula("SiF6 2-");
    EXPECT_EQ(m.atoms[0].charge, -2);
    m = read_formula("ICl4-");
    EXPECT_EQ(m.atoms[0].charge, -1);
    m = read_formula("CH3+");
    EXPECT_EQ(m.atoms[0].charge, 1);
    m = read_formula("CH3-");
    EXPECT_EQ(m.atoms[0].charge, -1);
}

// The centre's octet comes before the formal charges for centres outside groups 1, 2 and 13: :C#O: and [N#O]+
// (common practice), although a sextet at C or N would carry less charge.
TEST(Formula, OctetOfTheCentreComesFirst) {
    using V = std::vector<int>;
    Molecule m = read_formula("CO");
    EXPECT_EQ(orders(m), (V{3}));
    EXPECT_EQ(charges(m), (V{-1, 1}));
    m = read_formula("NO+");
    EXPECT_EQ(orders(m), (V{3}));
    EXPECT_EQ(charges(m), (V{0, 1}));
    m = read_formula("HCO+");  // formyl cation H-C#O(+)
    EXPECT_EQ(orders(m), (V{1, 3}));
    EXPECT_EQ(charges(m), (V{0, 0, 1}));
    m = read_formula("HCN");  // H-C#N
    EXPECT_EQ(symbols(m), (std::vector<std::string>{"C", "H", "N"}));
    EXPECT_EQ(orders(m), (V{1, 3}));
    m = read_formula("H2CO");  // formaldehyde: carbon keeps its hydrogens
    EXPECT_EQ(orders(m), (V{1, 1, 2}));
    m = read_formula("COCl2");  // phosgene
    EXPECT_EQ(orders(m), (V{2, 1, 1}));
    EXPECT_EQ(charges(m), (V{0, 0, 0, 0}));
}

// Every way of writing a charge that the reader documents gives the same species (common practice).
TEST(Formula, ChargeNotations) {
    for (const char* text : {"SO4 2-", "SO4^2-", "SO4(2-)", "SO4-2", "SO4--", "SO4^{2-}", " SO4 2- ", "SO4 -2"}) {
        SCOPED_TRACE(text);
        Molecule m;
        ASSERT_NO_THROW(m = read_formula(text));
        EXPECT_EQ(m.total_charge(), -2);
        EXPECT_EQ(m.atom_count(), 5);
    }
    EXPECT_EQ(read_formula("ClO4-").total_charge(), -1);
    EXPECT_EQ(read_formula("ClO4(-)").total_charge(), -1);
    EXPECT_EQ(read_formula("NH4+").total_charge(), 1);
    EXPECT_EQ(read_formula("NH4^+").total_charge(), 1);
    EXPECT_EQ(read_formula("PO4 3-").total_charge(), -3);
    EXPECT_EQ(read_formula("PO4^3-").total_charge(), -3);
    EXPECT_EQ(read_formula("Cl-").atom_count(), 1);
}

namespace {

struct ErrorCase {
    const char* formula;
    int column;
    const char* says;  // a fragment of the message
};

// Each refusal with the 1-based column where reading stopped and a word of why.
const ErrorCase kErrors[] = {
    // not text of a formula
    {"", 1, "empty"},
    {"   ", 1, "empty"},
    {"Xx4", 1, "unknown element 'Xx'"},
    {"XeQ4", 3, "unknown element 'Q'"},
    {"xeF4", 1, "upper-case"},
    {"Xef4", 3, "upper-case"},
    {"2H2O", 1, "starts with a symbol"},
    {"Xe.F4", 3, "unexpected '.'"},
    {"XeF4*", 5, "unexpected '*'"},
    {"Xe F4", 4, "write the element symbols together"},
    {"Xe(F)4", 3, "groups in parentheses"},
    {"(SO4)2-", 1, "unexpected '('"},
    {"XeF4 2", 7, "'+' or '-'"},
    {"SO4 2-x", 7, "unexpected 'x'"},
    {"SO4^", 5, "end of formula"},
    {"SO4(2-", 7, "')'"},
    {"SO4 +-", 6, "one kind of sign"},
    {"SO4 --2", 7, "one sign"},
    {"NH4 0+", 5, "charge of 0"},
    {"SO4 22-", 5, "at most"},
    {"XeF4\xc2\xb2", 5, "byte 0xc2"},
    // counts
    {"XeF0", 4, "from 1"},
    {"SF06", 3, "from 1"},
    {"SF13", 3, "more than 12 ligands"},
    {"CH4F10", 5, "more than 12 ligands"},
    {"SO42-", 3, "write it apart"},
    // no single centre
    {"H2", 1, "hydrogen is never central"},
    {"O3", 1, "no centre"},
    {"H2O2", 3, "no centre"},
    {"C2H6", 1, "no centre"},
    {"I3-", 1, "no centre"},
    {"N2O", 1, "needs a chain"},
    {"S2O", 1, "needs a chain"},
    {"OCSe", 3, "two candidate centres"},  // C and Se: Pauling 2.55 both (Allred 1961)
    {"HNO3", 1, "hydrogen and O"},
    {"H2SO4", 1, "hydrogen and O"},
    {"HOCl", 1, "hydrogen and O"},
    // no Lewis structure
    {"CH5", 1, "fewer than"},
    {"CF5-", 1, "period-2 centre holds at most 8"},
    {"NF5", 1, "period-2 centre holds at most 8"},
    {"CH4 4+", 1, "fewer than"},
    {"CH3OH", 1, "no Lewis structure"},
};

}  // namespace

TEST(Formula, RefusalsNameTheColumnAndWhy) {
    for (const ErrorCase& c : kErrors) {
        SCOPED_TRACE(c.formula);
        try {
            read_formula(c.formula);
            ADD_FAILURE() << "accepted";
        } catch (const InputError& e) {
            EXPECT_EQ(e.column(), c.column) << e.what();
            EXPECT_NE(std::string(e.what()).find(c.says), std::string::npos) << e.what();
            EXPECT_EQ(e.text(), c.formula);
        }
    }
}

TEST(Formula, AmbiguousFormulasSayToGiveSmiles) {
    for (const char* text : {"O3", "N2O", "OCSe", "H2SO4", "CH5", "H2"}) {
        SCOPED_TRACE(text);
        try {
            read_formula(text);
            ADD_FAILURE() << "accepted";
        } catch (const InputError& e) {
            EXPECT_NE(std::string(e.what()).find("SMILES"), std::string::npos) << e.what();
        }
    }
}

// Transition metals are a later capability: refused plainly, never given a main-group Lewis structure.
TEST(Formula, TransitionMetalsAreRefused) { EXPECT_THROW(read_formula("TiCl4"), UnsupportedError); }
