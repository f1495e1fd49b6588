// Malformed SMILES: each must be refused with an InputError that names the column where the problem is and says
// what was found or expected. Decisions beyond the OpenSMILES text (opensmiles.org, v1.0) are marked "choice".
#include <gtest/gtest.h>

#include <random>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "domains/domains.hpp"
#include "input/smiles.hpp"

using namespace repel;

namespace {

struct BadCase {
    std::string smiles;
    int column;        // 1-based
    const char* word;  // the message must contain this
};

const std::vector<BadCase> kBad = {
    // empty input
    {"", 1, "empty"},
    {"  ", 1, "empty"},
    // unknown elements and elements outside the organic subset
    {"[Xx]", 2, "unknown element 'Xx'"},
    {"C[Qq]C", 3, "unknown element 'Qq'"},
    {"Xx", 1, "unknown element 'Xx'"},
    {"[238U]", 5, "beyond radon"},  // choice: valid OpenSMILES, outside repel's H..Rn
    {"CU", 2, "beyond radon"},
    {"CX", 2, "unknown element 'X'"},
    {"[Cx]", 2, "unknown element 'Cx'"},
    {"Na", 1, "[Na]"},
    {"C[Na]Cu", 6, "[Cu]"},
    {"K", 1, "[K]"},
    {"CZn", 2, "[Zn]"},
    {"[fe]", 2, "not an aromatic element symbol"},
    {"CH4", 2, "'H' outside brackets"},
    {"HC", 1, "'H' outside brackets"},
    {"*C", 1, "wildcard"},
    {"C[*]", 3, "wildcard"},
    {"c1cc(*)ccc1", 6, "wildcard"},
    // rings
    {"C1CC", 2, "ring 1 opened at column 2 is never closed"},
    {"C1CC2CC1", 5, "ring 2"},
    {"C%10CC", 2, "ring 10"},
    {"C11", 3, "itself"},
    {"C12CCCCC12", 10, "second time"},
    {"C1C1", 4, "second time"},       // spec: two bonds between one pair of atoms
    {"C12C2CCC1", 5, "second time"},  // spec
    {"C-1CCCCC=1", 9, "must agree"},  // spec: invalid
    {"C=1CCCCC#1", 9, "must agree"},
    {"C/1=C/CCCC/1", 11, "one end"},  // choice: a '/' mark on both digits of one ring bond is ambiguous
    {"1CC", 1, "no atom before"},
    {"C.1CC1", 3, "after '.'"},       // spec: a dot cannot precede a ring-closure digit
    {"C(1)C", 3, "after '('"},
    {"C1CC(C)1", 8, "after a branch"},  // spec grammar: ring bonds come before branches
    {"C%1", 2, "two digits"},
    {"C%a1CC%a1", 2, "two digits"},
    {"C%", 2, "two digits"},
    // parentheses and brackets
    {"C(C", 2, "never closed"},
    {"C(C(C)", 2, "never closed"},
    {"CC)C", 3, "no matching '('"},
    {")C", 1, "no matching '('"},
    {"(C)C", 1, "must follow an atom"},
    {"C()C", 3, "empty branch"},
    {"C((C))", 3, "after '('"},     // spec: extra parentheses are a relaxed rule only
    {"OC(=O)C(=O", 8, "never closed"},
    {"[C", 1, "never closed"},
    {"[CH4", 1, "never closed"},
    {"C]", 2, "no matching '['"},
    {"[]", 2, "element symbol"},
    {"[13]", 4, "element symbol"},
    {"[C[N]]", 3, "inside the bracket atom"},
    // bracket atom contents
    {"[1234C]", 2, "more than 3 digits"},
    {"[1C]", 2, "mass number 1"},
    {"[0S]", 2, "mass number 0"},
    {"[C+-]", 4, "malformed charge"},
    {"[C+++]", 3, "malformed charge"},
    {"[C++2]", 3, "malformed charge"},
    {"[C-+]", 4, "malformed charge"},
    {"[C+16]", 3, "out of range"},
    {"[Fe-20]", 4, "out of range"},
    {"[C:]", 4, "atom class"},
    {"[C:a]", 4, "atom class"},
    {"[HH]", 3, "cannot carry a hydrogen count"},  // spec: [HH1] is illegal
    {"[H2]", 3, "unexpected '2'"},
    {"[CH@]", 4, "chirality must come"},
    {"[C+H]", 4, "hydrogen count must come before the charge"},
    {"[C@@@H]", 3, "'@@@'"},
    {"[C@TH3]", 3, "out of range"},
    {"[C@TB21]", 3, "out of range"},
    {"[C@OH0]", 3, "out of range"},
    {"[C@XY1]", 3, "unknown chirality class"},
    {"[C@TH]", 3, "expected a number"},
    {"[CH4x]", 5, "unexpected 'x'"},
    // bonds and dots
    {"C=", 2, "not followed by an atom"},
    {"C(=)", 3, "not followed by an atom"},
    {"C=(C)", 3, "after bond '='"},
    {"=C", 1, "no atom before"},
    {"C==C", 3, "two bond symbols"},
    {"C=#C", 3, "two bond symbols"},
    {"C/C=C/C\\", 8, "not followed by an atom"},
    {"C=.C", 2, "not followed by an atom"},
    {"C..C", 3, "two dots"},  // choice: OpenSMILES has no empty components
    {".C", 1, "must follow an atom"},
    {"C.", 2, "ends after '.'"},
    {"[Na+].[Cl-].", 12, "ends after '.'"},
    {"C.=C", 3, "after '.'"},
    // aromatic systems that cannot be kekulized
    {"c1cccc1", 6, "left without a double bond"},
    {"c1ccnc1", 6, "left without a double bond"},
    {"c1ccc[nH]c1", 5, "left without a double bond"},
    {"c1cc[o]cc1", 4, "left without a double bond"},
    {"c1ccccc1c", 9, "double bond"},
    {"c", 1, "no aromatic ring"},
    {"Cc", 2, "no aromatic ring"},
    // double-bond marks
    {"C/C(\\F)=C/F", 5, "contradictory"},  // spec: both "down" relative to the first carbon
    {"F/C(\\F)=C/F", 5, "contradictory"},
    {"F/C=C(/F)/F", 10, "contradictory"},
    // chirality marks that cannot refer to anything
    {"[C@](F)Cl", 1, "needs 4 (or 3 and a lone pair) neighbours"},
    {"[C@@H](F)(Cl)(Br)(I)(C)C", 1, "this atom has 7"},  // five and six are @TB2/@OH2 (OpenSMILES)
    {"F[C@TH1](Cl)(Br)(I)C", 2, "this atom has 5"},     // only the bare '@' stands for @TB1
    {"[C@H2](F)Cl", 1, "2 hydrogens"},
    {"[Pt@SP1](Cl)Cl", 1, "needs 4 neighbours"},
    {"F[P@TB1](F)(F)F", 2, "needs 5 neighbours"},
    {"C[C@AL1](F)Cl", 2, "allene"},
    {"C=C=[C@]=C", 5, "middle atom"},
    // characters that have no place in a SMILES
    {"C1CCCCC1 C", 9, "a space"},
    {"CC\tO", 3, "a tab"},
    {"C\xc3\xa9", 2, "byte 0xC3"},
    {"C?", 2, "unexpected '?'"},
    {"C&1CC1", 2, "unexpected '&'"},
};

}  // namespace

TEST(SmilesErrors, TableOfMalformedInput) {
    EXPECT_GE(kBad.size(), 60u);
    for (const BadCase& c : kBad) {
        SCOPED_TRACE("SMILES \"" + c.smiles + "\"");
        try {
            const Molecule m = read_smiles(c.smiles);
            ADD_FAILURE() << "accepted, " << m.atom_count() << " atoms";
        } catch (const InputError& e) {
            EXPECT_EQ(e.column(), c.column) << e.what();
            EXPECT_NE(std::string(e.what()).find(c.word), std::string::npos)
                << "message: " << e.what() << "\nexpected to contain: " << c.word;
            EXPECT_EQ(e.text(), c.smiles);
        } catch (const std::exception& e) {
            ADD_FAILURE() << "threw something other than InputError: " << e.what();
        }
    }
}

// An organic-subset atom whose bonds exceed its normal valences gets no implicit hydrogens; the SMILES is valid
// (OpenSMILES v1.0, "Atoms", "Organic Subset": "If that sum is equal to a known valence for the element or is greater
// than any known valence then the implicit hydrogen count is 0"). The domain analysis then refuses what no Lewis
// structure allows (more bonds than valence electrons, a period-2 atom over its octet) and says how it was read.
TEST(SmilesErrors, AboveNormalValenceIsReadAndRefusedByTheDomainAnalysis) {
    const std::vector<BadCase> cases = {
        {"C(C)(C)(C)(C)C", 1, "read as a neutral carbon with no hydrogens: bonds of total order 5"},
        {"FC(F)(F)(F)F", 2, "more than its 4 valence electrons allow"},
        {"C=C(C)(C)C", 3, "bonds of total order 5"},
        {"C#C#C", 3, "bonds of total order 6"},
        {"O(C)(C)C", 1, "would hold 9 electrons; a period-2 atom holds at most 8 (read as a neutral oxygen"},
        {"CF(C)", 2, "would hold 9 electrons"},
        {"CS(C)(C)(C)(C)(C)C", 2, "bonds of total order 7, more than its 6 valence electrons allow"},
        {"B(C)(C)(C)C", 1, "more than its 3 valence electrons allow"},
        {"Cl[Al]1(Cl)Cl[Al](Cl)(Cl)Cl1", 3, "written with its charges (Al2Cl6: Cl[Al-]1(Cl)[Cl+][Al-](Cl)(Cl)[Cl+]1)"},
        {"CN(C)(C)(C)(C)C", 2, "read as a neutral nitrogen"},
        {"Co1cccc1C", 2, "would hold 9 electrons"},
    };
    for (const BadCase& c : cases) {
        SCOPED_TRACE("SMILES \"" + c.smiles + "\"");
        Molecule m = read_smiles(c.smiles);
        for (const Atom& a : m.atoms) EXPECT_GE(a.hydrogens, 0);
        m.make_hydrogens_explicit();
        try {
            analyse_domains(m, false);
            ADD_FAILURE() << "accepted by the domain analysis";
        } catch (const InputError& e) {
            EXPECT_EQ(e.column(), c.column) << e.what();
            EXPECT_NE(std::string(e.what()).find(c.word), std::string::npos)
                << "message: " << e.what() << "\nexpected to contain: " << c.word;
        }
    }
}

TEST(SmilesErrors, MessageShowsTheColumnWithACaret) {
    try {
        read_smiles("C1CC");
        FAIL() << "accepted";
    } catch (const InputError& e) {
        EXPECT_EQ(e.describe(), "column 2: ring 1 opened at column 2 is never closed\n  C1CC\n   ^");
    }
}

TEST(SmilesErrors, TrailingLineEndIsNotPartOfTheSmiles) {
    // choice: a line end left on the text is ignored; any other whitespace is an error (the caller splits names)
    EXPECT_EQ(read_smiles("CCO\r\n").atom_count(), 3);
    EXPECT_EQ(read_smiles("CCO ").atom_count(), 3);
}

TEST(SmilesErrors, ErrorsLeaveTheReaderUsable) {
    // the reader keeps scratch space between calls: a failure half-way must not leak into the next molecule
    EXPECT_THROW(read_smiles("C1CC(C"), InputError);
    EXPECT_THROW(read_smiles("c1cccc1"), InputError);
    const Molecule m = read_smiles("C1CC1");
    EXPECT_EQ(m.bond_count(), 3);
    const Molecule n = read_smiles("[C@@H](F)(Cl)Br");
    EXPECT_EQ(n.atoms[0].stereo_neighbors.size(), 4u);
}

// Random edits of valid SMILES (a character inserted, deleted or replaced, several times): the reader either reads
// the result or refuses it with an InputError, never anything else; what it reads writes back to the same graph.
TEST(SmilesErrors, RandomEditsAreReadOrRefusedCleanly) {
    const std::vector<std::string> seeds = {
        "N[C@@H](C)C(=O)O", "Cn1cnc2c1c(=O)n(C)c(=O)n2C", "F/C=C/C=C\\C", "C1CC[C@H]2CCCC[C@@H]2C1",
        "[NH4+].[O-]S(=O)(=O)[O-].[NH4+]", "c1ccc2[nH]ccc2c1", "C%10CC%11CC%10CC%11", "NC(Br)=[C@]=C(O)C",
        "[13CH3][C@@H](O)C#N", "O=c1cccc[nH]1", "C/1=C/CCCCCC1", "F[P@TB1](F)(F)(F)F"};
    const std::string alphabet = "CNOScnos[]()=#$:/\\.%0123456789@+-HBrClFI*";
    std::mt19937 rng(99);
    int read = 0, refused = 0;
    for (int trial = 0; trial < 20000; ++trial) {
        std::string s = seeds[rng() % seeds.size()];
        const int edits = 1 + static_cast<int>(rng() % 3);
        for (int e = 0; e < edits; ++e) {
            const size_t at = s.empty() ? 0 : rng() % (s.size() + 1);
            const char c = alphabet[rng() % alphabet.size()];
            switch (rng() % 3) {
            case 0: s.insert(s.begin() + static_cast<long>(at), c); break;
            case 1: if (at < s.size()) s.erase(at, 1); break;
            default: if (at < s.size()) s[at] = c; break;
            }
        }
        SCOPED_TRACE(s);
        Molecule m;
        try {
            m = read_smiles(s);
        } catch (const InputError& e) {
            ++refused;
            EXPECT_GE(e.column(), 1);
            EXPECT_LE(e.column(), static_cast<int>(s.size()) + 1);
            continue;
        } catch (const std::exception& e) {
            ADD_FAILURE() << "threw something other than InputError: " << e.what();
            continue;
        }
        ++read;
        std::string written;
        try {
            written = write_smiles(m);
        } catch (const UnsupportedError&) {
            continue;  // a documented refusal of the writer (e.g. contradictory double-bond marks)
        }
        try {
            const Molecule back = read_smiles(written);
            EXPECT_EQ(back.atom_count(), m.atom_count()) << written;
            EXPECT_EQ(back.bond_count(), m.bond_count()) << written;
        } catch (const InputError& e) {
            ADD_FAILURE() << "written SMILES does not read back: " << written << "\n" << e.describe();
        }
    }
    // both outcomes occur, so the edits exercise the reader and the writer
    EXPECT_GT(read, 1000);
    EXPECT_GT(refused, 1000);
}
