// The structure writers: exact columns and codes of each format, byte-identical output, refusal of what a format
// cannot hold. Structures are made by hand (methane, the methyl cation and radical, triplet methylene, a 1200-atom
// chain). WriterSamples also writes sample files for tests/external/check_ase_reads_writers.py (ASE as the reader).
#include <fmt/format.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <limits>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#include <unistd.h>

#include "core/element.hpp"
#include "core/error.hpp"
#include "output/formats.hpp"
#include "input/structure_reader.hpp"
#include "output/writer.hpp"

using namespace repel;

namespace {

// ---- hand-made structures ------------------------------------------------------------------------------------

Atom make_atom(int z, int charge = 0) {
    Atom a;
    a.z = z;
    a.charge = charge;
    return a;
}

int add(Structure& s, int z, Eigen::Vector3d p, int charge = 0) {
    s.positions.push_back(p);
    return s.molecule.add_atom(make_atom(z, charge));
}

// CH4, C at the origin, C-H 1.087 A along the cube diagonals (hand-made test data).
Structure methane() {
    Structure s;
    const double d = 1.087 / std::sqrt(3.0);
    add(s, 6, {0, 0, 0});
    const double signs[4][3] = {{1, 1, 1}, {-1, -1, 1}, {-1, 1, -1}, {1, -1, -1}};
    for (const auto& v : signs) s.molecule.add_bond(0, add(s, 1, {d * v[0], d * v[1], d * v[2]}));
    return s;
}

// Planar CH3 (trigonal, C-H 1.09 A): the cation with C charge +1 or, with no charge, the radical.
Structure methyl(bool cation) {
    Structure s;
    add(s, 6, {0, 0, 0}, cation ? 1 : 0);
    for (int k = 0; k < 3; ++k) {
        const double t = 2.0 * M_PI * k / 3.0;
        s.molecule.add_bond(0, add(s, 1, {1.09 * std::cos(t), 1.09 * std::sin(t), 0}));
    }
    if (cation) {
        s.charge = 1;
    } else {
        s.molecule.atoms[0].radical_electrons = 1;
        s.multiplicity = 2;
    }
    return s;
}

// Triplet CH2: two unpaired electrons on C.
Structure methylene() {
    Structure s;
    add(s, 6, {0, 0, 0});
    s.molecule.add_bond(0, add(s, 1, {0.86, 0.70, 0}));
    s.molecule.add_bond(0, add(s, 1, {-0.86, 0.70, 0}));
    s.molecule.atoms[0].radical_electrons = 2;
    s.multiplicity = 3;
    return s;
}

// CH3F with a deuterium and a warning (exercises M  ISO and the warnings items).
Structure fluoromethane() {
    Structure s;
    add(s, 6, {0, 0, 0});
    s.molecule.add_bond(0, add(s, 9, {0, 0, 1.383}));
    s.molecule.add_bond(0, add(s, 1, {1.03, 0, -0.36}));
    s.molecule.add_bond(0, add(s, 1, {-0.515, 0.892, -0.36}));
    s.molecule.add_bond(0, add(s, 1, {-0.515, -0.892, -0.36}));
    s.molecule.atoms[2].isotope = 2;
    s.warnings = {"refinement stopped before convergence", "second warning"};
    return s;
}

// A zigzag chain of n carbons (C-C 1.54 A, 109.5 deg), hydrogens left out: n atoms, n-1 single bonds.
Structure chain(int n) {
    Structure s;
    const double half = 109.5 / 2.0 * M_PI / 180.0;
    const double dx = 1.54 * std::sin(half), dy = 1.54 * std::cos(half);
    for (int i = 0; i < n; ++i) {
        add(s, 6, {i * dx, (i % 2) * dy, 0});
        if (i > 0) s.molecule.add_bond(i - 1, i);
    }
    return s;
}

std::vector<std::string> lines_of(const std::string& text) {
    std::vector<std::string> out;
    std::istringstream in(text);
    for (std::string line; std::getline(in, line);) out.push_back(line);
    return out;
}

// 1-based, inclusive columns as the format specifications count them.
std::string cols(const std::string& line, size_t first, size_t last) {
    if (line.size() < last) return "<line too short: " + line + ">";
    return line.substr(first - 1, last - first + 1);
}

std::string write(Format f, const Structure& s, const std::string& title) {
    return make_writer(f)->record(s, title);
}

const Format kAllFormats[] = {Format::xyz, Format::pdb, Format::sdf, Format::json};

bool has_element(int z) {
    try {
        return !element(z).symbol.empty();
    } catch (const std::out_of_range&) {
        return false;
    }
}

}  // namespace

// ---- format choice ---------------------------------------------------------------------------------------------

TEST(FormatChoice, NamesAndExtensionsInAnyCase) {
    EXPECT_EQ(format_from_name("xyz"), Format::xyz);
    EXPECT_EQ(format_from_name("PDB"), Format::pdb);
    EXPECT_EQ(format_from_name("sdf"), Format::sdf);
    EXPECT_EQ(format_from_name("mol"), Format::sdf);
    EXPECT_EQ(format_from_name("Json"), Format::json);
    EXPECT_EQ(format_from_path("out/water.xyz"), Format::xyz);
    EXPECT_EQ(format_from_path("WATER.PDB"), Format::pdb);
    EXPECT_EQ(format_from_path("a.b/c.Sdf"), Format::sdf);
    EXPECT_EQ(format_from_path("c.mol"), Format::sdf);
    EXPECT_EQ(format_from_path("/tmp/x.json"), Format::json);
}

TEST(FormatChoice, UnknownNameOrExtensionListsTheAcceptedOnes) {
    try {
        format_from_name("cif");
        FAIL() << "no error for 'cif'";
    } catch (const InputError& e) {
        const std::string what = e.what();
        EXPECT_NE(what.find("'cif'"), std::string::npos) << what;
        EXPECT_NE(what.find("xyz, pdb, sdf, mol, json"), std::string::npos) << what;
    }
    for (const char* path : {"molecule.txt", "molecule", "dir.xyz/molecule", "molecule.", ".xyz"}) {
        try {
            format_from_path(path);
            FAIL() << "no error for " << path;
        } catch (const InputError& e) {
            const std::string what = e.what();
            EXPECT_NE(what.find(".xyz, .pdb, .sdf, .mol, .json"), std::string::npos) << what;
            EXPECT_NE(what.find(path), std::string::npos) << what;
        }
    }
    EXPECT_THROW(format_from_name(""), InputError);
}

TEST(FormatChoice, FactoryMakesEveryWriter) {
    for (Format f : kAllFormats) EXPECT_NE(make_writer(f), nullptr);
}

// ---- XYZ -------------------------------------------------------------------------------------------------------

TEST(Xyz, MethaneWholeText) {
    const std::string d = "0.627580";  // 1.087/sqrt(3) to 6 decimals
    const std::string expected = "5\n"
                                 "name=\"methane\" charge=0 multiplicity=1\n"
                                 "C      0.000000     0.000000     0.000000\n"
                                 "H      " + d + "     " + d + "     " + d + "\n"
                                 "H     -" + d + "    -" + d + "     " + d + "\n"
                                 "H     -" + d + "     " + d + "    -" + d + "\n"
                                 "H      " + d + "    -" + d + "    -" + d + "\n";
    EXPECT_EQ(write(Format::xyz, methane(), "methane"), expected);
}

TEST(Xyz, CommentEscapesQuotesBackslashesAndNewlines) {
    Structure s = methyl(true);
    s.warnings = {"a \"quoted\" word", "", "path\\to"};
    const auto lines = lines_of(write(Format::xyz, s, "my \"best\"\nmolecule"));
    ASSERT_EQ(lines.size(), 6u);
    EXPECT_EQ(lines[1], "name=\"my \\\"best\\\" molecule\" charge=1 multiplicity=1 "
                        "warnings=\"a \\\"quoted\\\" word; path\\\\to\"");
}

TEST(Xyz, EmptyTitleOmitsTheNameAndNoWarningsOmitsThem) {
    const auto lines = lines_of(write(Format::xyz, methylene(), ""));
    EXPECT_EQ(lines[1], "charge=0 multiplicity=3");
}

TEST(Xyz, NegativeZeroIsWrittenAsZero) {
    Structure s;
    add(s, 1, {-1e-9, -0.0, 0.0});
    const auto lines = lines_of(write(Format::xyz, s, "h"));
    EXPECT_EQ(lines[2], "H      0.000000     0.000000     0.000000");
}

// ---- PDB -------------------------------------------------------------------------------------------------------

TEST(Pdb, HetatmFieldsAreInTheirColumns) {
    const auto lines = lines_of(write(Format::pdb, methyl(true), "methyl cation"));
    ASSERT_GE(lines.size(), 6u);
    EXPECT_EQ(lines[0], "TITLE     methyl cation" + std::string(80 - 23, ' '));
    // What format 3.3 has no field for, in a free-text remark (charge +1, singlet: the structure's own values).
    const std::string remark = "REMARK   6 CHARGE 1 MULTIPLICITY 1";
    EXPECT_EQ(lines[1], remark + std::string(80 - remark.size(), ' '));
    const std::string& c = lines[2];
    ASSERT_EQ(c.size(), 80u);
    EXPECT_EQ(cols(c, 1, 6), "HETATM");
    EXPECT_EQ(cols(c, 7, 11), "    1");
    EXPECT_EQ(cols(c, 12, 12), " ");
    EXPECT_EQ(cols(c, 13, 16), " C1 ");  // one-letter element: symbol in column 14
    EXPECT_EQ(cols(c, 17, 17), " ");
    EXPECT_EQ(cols(c, 18, 20), "LIG");  // a wwPDB code kept for new ligands
    EXPECT_EQ(cols(c, 22, 22), "A");
    EXPECT_EQ(cols(c, 23, 26), "   1");
    EXPECT_EQ(cols(c, 31, 38), "   0.000");
    EXPECT_EQ(cols(c, 39, 46), "   0.000");
    EXPECT_EQ(cols(c, 47, 54), "   0.000");
    EXPECT_EQ(cols(c, 55, 60), "  1.00");
    EXPECT_EQ(cols(c, 61, 66), "  0.00");
    EXPECT_EQ(cols(c, 67, 76), std::string(10, ' '));
    EXPECT_EQ(cols(c, 77, 78), " C");
    EXPECT_EQ(cols(c, 79, 80), "1+");
    const std::string& h2 = lines[4];
    EXPECT_EQ(cols(h2, 7, 11), "    3");
    EXPECT_EQ(cols(h2, 13, 16), " H3 ");  // the third atom of its residue
    EXPECT_EQ(cols(h2, 31, 38), "  -0.545");  // 1.09 cos(120 deg)
    EXPECT_EQ(cols(h2, 39, 46), "   0.944");  // 1.09 sin(120 deg)
    EXPECT_EQ(cols(h2, 77, 80), " H  ");
    EXPECT_EQ(lines.back(), "END" + std::string(77, ' '));
}

TEST(Pdb, NegativeChargeAndTwoDigitCharges) {
    Structure s = methyl(false);
    s.molecule.atoms[0].charge = -2;
    EXPECT_EQ(cols(lines_of(write(Format::pdb, s, "x"))[2], 79, 80), "2-");
    s.molecule.atoms[0].charge = 10;
    EXPECT_THROW(write(Format::pdb, s, "x"), std::runtime_error);
}

TEST(Pdb, AtomNamesAreUniqueAndAlignedPastNineHundredNinetyNine) {
    const auto lines = lines_of(write(Format::pdb, chain(1200), "chain"));
    // lines[0] is TITLE, lines[1] REMARK 6; atom k (1-based) is lines[k + 1].
    EXPECT_EQ(cols(lines[10], 13, 16), " C9 ");
    EXPECT_EQ(cols(lines[11], 13, 16), " C10");
    EXPECT_EQ(cols(lines[100], 13, 16), " C99");
    EXPECT_EQ(cols(lines[101], 13, 16), "C100");
    EXPECT_EQ(cols(lines[1000], 13, 16), "C999");  // four characters start in column 13
    EXPECT_EQ(cols(lines[1001], 13, 16), "CA00");  // hybrid-36 for the number 1000 in 3 columns
    EXPECT_EQ(cols(lines[1002], 13, 16), "CA01");
    std::set<std::string> names;
    for (int k = 1; k <= 1200; ++k) {
        EXPECT_EQ(cols(lines[static_cast<size_t>(k) + 1], 77, 78), " C");
        names.insert(cols(lines[static_cast<size_t>(k) + 1], 13, 16));
    }
    EXPECT_EQ(names.size(), 1200u);
}

TEST(Pdb, TwoLetterElementStartsInColumnThirteen) {
    if (!has_element(17)) GTEST_SKIP() << "the element table does not know Cl yet";
    Structure s;
    add(s, 6, {0, 0, 0});
    s.molecule.add_bond(0, add(s, 17, {1.77, 0, 0}));
    const auto lines = lines_of(write(Format::pdb, s, "x"));
    EXPECT_EQ(cols(lines[3], 13, 16), "CL2 ");  // the second atom of its residue
    EXPECT_EQ(cols(lines[3], 77, 78), "CL");
}

TEST(Pdb, ConectForEveryBondBothWaysFourPartnersALine) {
    // A carbon with six bonded fluorines (hand-made): six partners need two CONECT lines.
    Structure s;
    add(s, 6, {0, 0, 0});
    const double r = 1.35;
    const Eigen::Vector3d dirs[6] = {{r, 0, 0}, {-r, 0, 0}, {0, r, 0}, {0, -r, 0}, {0, 0, r}, {0, 0, -r}};
    for (const auto& p : dirs) s.molecule.add_bond(0, add(s, 9, p));
    const auto lines = lines_of(write(Format::pdb, s, "x"));
    std::vector<std::string> conect;
    for (const auto& l : lines)
        if (l.rfind("CONECT", 0) == 0) conect.push_back(l);
    ASSERT_EQ(conect.size(), 2u + 6u);
    EXPECT_EQ(conect[0].substr(0, 31), "CONECT    1    2    3    4    5");
    EXPECT_EQ(conect[1].substr(0, 21), "CONECT    1    6    7");
    EXPECT_EQ(cols(conect[1], 22, 31), std::string(10, ' '));
    for (int k = 0; k < 6; ++k)
        EXPECT_EQ(conect[2 + static_cast<size_t>(k)].substr(0, 16), fmt::format("CONECT{:5}    1", k + 2));
    for (const auto& l : conect) EXPECT_EQ(l.size(), 80u);
}

TEST(Pdb, EachMoleculeOrIonIsAResidueAndWarningsGoToRemarks) {
    if (!has_element(17) || !has_element(11)) GTEST_SKIP() << "the element table does not know Na or Cl";
    Structure s;
    add(s, 11, {0, 0, 0}, 1);
    add(s, 17, {2.8, 0, 0}, -1);
    s.molecule.add_bond(1, add(s, 1, {4.1, 0, 0}));  // a hand-made HCl- piece: two atoms, one residue
    s.warnings = {std::string(100, 'w')};
    const auto lines = lines_of(write(Format::pdb, s, "salt"));
    ASSERT_GE(lines.size(), 7u);
    EXPECT_EQ(lines[2].substr(0, 26), "REMARK   6 WARNING " + std::string(7, 'w'));
    EXPECT_EQ(lines[3].substr(0, 11 + 100 - 61), "REMARK   6 " + std::string(100 - 61, 'w'));  // folded at 69
    EXPECT_EQ(cols(lines[4], 13, 16), "NA1 ");
    EXPECT_EQ(cols(lines[4], 23, 26), "   1");
    EXPECT_EQ(cols(lines[5], 13, 16), "CL1 ");
    EXPECT_EQ(cols(lines[5], 23, 26), "   2");
    EXPECT_EQ(cols(lines[6], 13, 16), " H2 ");
    EXPECT_EQ(cols(lines[6], 23, 26), "   2");
}

TEST(Pdb, LongTitleContinues) {
    const std::string title(150, 'c');
    const auto lines = lines_of(write(Format::pdb, methane(), title));
    EXPECT_EQ(lines[0], "TITLE     " + std::string(70, 'c'));
    EXPECT_EQ(lines[1], "TITLE    2 " + std::string(69, 'c'));
    EXPECT_EQ(lines[2].substr(0, 22), "TITLE    3 " + std::string(11, 'c'));
    EXPECT_EQ(cols(lines[3], 1, 10), "REMARK   6");
    EXPECT_EQ(cols(lines[4], 1, 6), "HETATM");
}

// Hybrid-36 values from the cctbx hybrid-36 reference implementation's description (Grosse-Kunstleve and Adams,
// 2007): 99999 is the last decimal serial, then A0000; 43770015 (99999 + 26*36^4) is ZZZZZ; 87440031 is zzzzz.
TEST(Pdb, Hybrid36MatchesThePublishedRanges) {
    using output::hybrid36;
    EXPECT_EQ(hybrid36(5, 1), "    1");
    EXPECT_EQ(hybrid36(5, 99999), "99999");
    EXPECT_EQ(hybrid36(5, 100000), "A0000");
    EXPECT_EQ(hybrid36(5, 100001), "A0001");
    EXPECT_EQ(hybrid36(5, 100010), "A000A");
    EXPECT_EQ(hybrid36(5, 43770015), "ZZZZZ");
    EXPECT_EQ(hybrid36(5, 43770016), "a0000");
    EXPECT_EQ(hybrid36(5, 87440031), "zzzzz");
    EXPECT_THROW(hybrid36(5, 87440032), std::out_of_range);
    EXPECT_EQ(hybrid36(4, 9999), "9999");
    EXPECT_EQ(hybrid36(4, 10000), "A000");
}

TEST(Pdb, SerialsPastNinetyNineThousandNineHundredNinetyNineUseHybrid36) {
    // 100,001 atoms cycling H, C, F (so that no element runs out of 4-column names), a bond between the last two.
    Structure s;
    const int n = 100001;
    const int zs[3] = {1, 6, 9};
    for (int i = 0; i < n; ++i) add(s, zs[i % 3], {0.001 * (i % 1000), 0.01 * (i / 1000), 0});
    s.molecule.add_bond(n - 2, n - 1);
    const auto lines = lines_of(write(Format::pdb, s, "big"));
    ASSERT_EQ(lines.size(), 2u + n + 2u + 1u);
    EXPECT_EQ(cols(lines[100000], 7, 11), "99999");
    EXPECT_EQ(cols(lines[100001], 7, 11), "A0000");
    EXPECT_EQ(cols(lines[100002], 7, 11), "A0001");
    // every unbonded atom is a residue of its own: resSeq 9999, then hybrid-36 (A000 = 10000)
    EXPECT_EQ(cols(lines[10000], 23, 26), "9999");
    EXPECT_EQ(cols(lines[10001], 23, 26), "A000");
    // the two bonded atoms at the end are one residue: H1, then C2
    EXPECT_EQ(cols(lines[100001], 13, 16), " H1 ");
    EXPECT_EQ(cols(lines[100002], 13, 16), " C2 ");
    EXPECT_EQ(lines[100003].substr(0, 16), "CONECTA0000A0001");
    EXPECT_EQ(lines[100004].substr(0, 16), "CONECTA0001A0000");
}

TEST(Pdb, CoordinatesThatDoNotFitTheFieldAreRefused) {
    Structure s = methane();
    s.positions[2].x() = 10000.0;
    try {
        write(Format::pdb, s, "x");
        FAIL();
    } catch (const std::runtime_error& e) {
        EXPECT_NE(std::string(e.what()).find("atom 3"), std::string::npos) << e.what();
    }
    s.positions[2].x() = -1000.0;
    EXPECT_THROW(write(Format::pdb, s, "x"), std::runtime_error);
    s.positions[2].x() = -999.999;
    EXPECT_NO_THROW(write(Format::pdb, s, "x"));
}

// ---- SDF -------------------------------------------------------------------------------------------------------

TEST(Sdf, MethaneWholeRecord) {
    const std::string expected =
        "methane\n"
        "  repel             3D\n"
        "\n"
        "  5  4  0  0  0  0  0  0  0  0999 V2000\n"
        "    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "    0.6276    0.6276    0.6276 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "   -0.6276   -0.6276    0.6276 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "   -0.6276    0.6276   -0.6276 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "    0.6276   -0.6276   -0.6276 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "  1  2  1  0  0  0  0\n"
        "  1  3  1  0  0  0  0\n"
        "  1  4  1  0  0  0  0\n"
        "  1  5  1  0  0  0  0\n"
        "M  END\n"
        "> <charge>\n0\n\n"
        "> <multiplicity>\n1\n\n"
        "$$$$\n";
    EXPECT_EQ(write(Format::sdf, methane(), "methane"), expected);
}

TEST(Sdf, CationChargeInAtomBlockAndChgLine) {
    const auto lines = lines_of(write(Format::sdf, methyl(true), "methyl cation"));
    EXPECT_EQ(lines[3], "  4  3  0  0  0  0  0  0  0  0999 V2000");
    EXPECT_EQ(cols(lines[4], 32, 34), "C  ");
    EXPECT_EQ(cols(lines[4], 37, 39), "  3");  // charge code 3 = +1
    EXPECT_EQ(lines[11], "M  CHG  1   1   1");
    EXPECT_EQ(lines[12], "M  END");
    EXPECT_EQ(lines[14], "1");  // > <charge>
}

TEST(Sdf, RadicalCodes) {
    auto doublet = lines_of(write(Format::sdf, methyl(false), "methyl"));
    EXPECT_EQ(doublet[11], "M  RAD  1   1   2");
    EXPECT_EQ(cols(doublet[4], 37, 39), "  0");
    auto triplet = lines_of(write(Format::sdf, methylene(), "methylene"));
    EXPECT_EQ(triplet[9], "M  RAD  1   1   3");
    const std::string text = write(Format::sdf, methylene(), "methylene");
    EXPECT_NE(text.find("> <multiplicity>\n3\n\n"), std::string::npos);
}

TEST(Sdf, IsotopesWarningsAndManyCharges) {
    const std::string text = write(Format::sdf, fluoromethane(), "CH2DF");
    EXPECT_NE(text.find("\nM  ISO  1   3   2\n"), std::string::npos) << text;
    EXPECT_NE(text.find("> <warnings>\nrefinement stopped before convergence\nsecond warning\n\n$$$$\n"),
              std::string::npos)
        << text;
    // Nine charged atoms: the M  CHG lines hold eight entries each.
    Structure s = chain(9);
    for (auto& a : s.molecule.atoms) a.charge = -1;
    const auto lines = lines_of(write(Format::sdf, s, "x"));
    EXPECT_EQ(lines[4 + 9 + 8], "M  CHG  8   1  -1   2  -1   3  -1   4  -1   5  -1   6  -1   7  -1   8  -1");
    EXPECT_EQ(lines[4 + 9 + 8 + 1], "M  CHG  1   9  -1");
    EXPECT_EQ(cols(lines[4], 37, 39), "  5");  // charge code 5 = -1
}

TEST(Sdf, ThousandAtomsGoToV3000) {
    const std::string text = write(Format::sdf, chain(1200), "chain");
    const auto lines = lines_of(text);
    EXPECT_EQ(lines[3], "  0  0  0     0  0            999 V3000");
    EXPECT_EQ(lines[4], "M  V30 BEGIN CTAB");
    EXPECT_EQ(lines[5], "M  V30 COUNTS 1200 1199 0 0 0");
    EXPECT_EQ(lines[6], "M  V30 BEGIN ATOM");
    EXPECT_EQ(lines[7], "M  V30 1 C 0.0000 0.0000 0.0000 0");
    EXPECT_EQ(lines[7 + 1200], "M  V30 END ATOM");
    EXPECT_EQ(lines[8 + 1200], "M  V30 BEGIN BOND");
    EXPECT_EQ(lines[9 + 1200], "M  V30 1 1 1 2");
    EXPECT_EQ(lines[9 + 1200 + 1198], "M  V30 1199 1 1199 1200");
    EXPECT_EQ(lines[10 + 1200 + 1198], "M  V30 END BOND");
    EXPECT_EQ(lines[11 + 1200 + 1198], "M  V30 END CTAB");
    EXPECT_EQ(lines[12 + 1200 + 1198], "M  END");
    // 999 atoms and 998 bonds still fit V2000.
    EXPECT_EQ(lines_of(write(Format::sdf, chain(999), "c"))[3], "999998  0  0  0  0  0  0  0  0999 V2000");
}

TEST(Sdf, V3000ChargesRadicalsIsotopes) {
    Structure s = chain(1000);
    s.molecule.atoms[0].charge = -1;
    s.molecule.atoms[1].radical_electrons = 2;
    s.molecule.atoms[2].isotope = 13;
    const auto lines = lines_of(write(Format::sdf, s, "c"));
    EXPECT_EQ(lines[7], "M  V30 1 C 0.0000 0.0000 0.0000 0 CHG=-1");
    EXPECT_NE(lines[8].find(" 0 RAD=3"), std::string::npos) << lines[8];
    EXPECT_NE(lines[9].find(" 0 MASS=13"), std::string::npos) << lines[9];
}

TEST(Sdf, LongV3000LinesAreContinued) {
    // A coordinate of 1e75 A does not fit V2000's 10.4 field and makes a V3000 atom line longer than 80 columns.
    Structure s = methane();
    s.positions[1].x() = 1e75;
    const auto lines = lines_of(write(Format::sdf, s, "far"));
    EXPECT_EQ(lines[3], "  0  0  0     0  0            999 V3000");
    std::string joined;
    for (size_t k = 0; k < lines.size(); ++k) {
        EXPECT_LE(lines[k].size(), 80u) << k;
        if (lines[k].rfind("M  V30 2 H ", 0) == 0) {
            joined = lines[k].substr(7);
            for (size_t j = k; lines[j].back() == '-'; ++j) {
                joined.pop_back();
                joined += lines[j + 1].substr(7);
            }
        }
    }
    EXPECT_EQ(joined, fmt::format("2 H {:.4f} 0.6276 0.6276 0", output::tidy(1e75, 4)));
}

TEST(Sdf, QuadrupleBondIsRefused) {
    Structure s = chain(2);
    s.molecule.bonds[0].order = 4;
    try {
        write(Format::sdf, s, "x");
        FAIL();
    } catch (const std::runtime_error& e) {
        EXPECT_NE(std::string(e.what()).find("quadruple"), std::string::npos) << e.what();
    }
}

TEST(Sdf, LongTitleIsCutInTheHeaderAndKeptInANameItem) {
    const std::string title(100, 'C');
    const std::string text = write(Format::sdf, methane(), title);
    EXPECT_EQ(lines_of(text)[0], std::string(80, 'C'));
    EXPECT_NE(text.find("> <name>\n" + title + "\n\n"), std::string::npos);
    EXPECT_EQ(write(Format::sdf, methane(), "short").find("> <name>"), std::string::npos);
}

// ---- JSON ------------------------------------------------------------------------------------------------------

TEST(Json, OneRecordIsOneDocument) {
    const std::string text = write(Format::json, methyl(true), "methyl \"cation\"");
    const auto j = nlohmann::json::parse(text);
    EXPECT_EQ(j["name"], "methyl \"cation\"");
    EXPECT_EQ(j["charge"], 1);
    EXPECT_EQ(j["multiplicity"], 1);
    ASSERT_EQ(j["atoms"].size(), 4u);
    EXPECT_EQ(j["atoms"][0]["index"], 1);
    EXPECT_EQ(j["atoms"][0]["element"], "C");
    EXPECT_EQ(j["atoms"][0]["charge"], 1);
    EXPECT_DOUBLE_EQ(j["atoms"][1]["x"].get<double>(), 1.09);
    EXPECT_DOUBLE_EQ(j["atoms"][2]["y"].get<double>(), 0.943968);  // 1.09 sin(120 deg) to 6 decimals
    ASSERT_EQ(j["bonds"].size(), 3u);
    EXPECT_EQ(j["bonds"][2]["atoms"], nlohmann::json::array({1, 4}));
    EXPECT_EQ(j["bonds"][2]["order"], 1);
    EXPECT_TRUE(j["warnings"].is_array());
    EXPECT_TRUE(j["warnings"].empty());
}

TEST(Json, BatchIsOneArrayWhateverItsSize) {
    auto w = make_writer(Format::json);
    const std::string two = w->begin() + w->record(methane(), "a") + w->separator() +
                            w->record(fluoromethane(), "b") + w->end();
    const auto j = nlohmann::json::parse(two);
    ASSERT_TRUE(j.is_array());
    ASSERT_EQ(j.size(), 2u);
    EXPECT_EQ(j[1]["warnings"][1], "second warning");
    EXPECT_EQ(j[1]["atoms"][1]["element"], "F");
    EXPECT_TRUE(nlohmann::json::parse(w->begin() + w->end()).empty());
    EXPECT_EQ(nlohmann::json::parse(w->begin() + w->record(methane(), "a") + w->end()).size(), 1u);
}

TEST(Json, InvalidUtf8InTheTitleStillParses) {
    const std::string text = write(Format::json, methane(), std::string("bad \xff\xfe byte"));
    EXPECT_NO_THROW(nlohmann::json::parse(text));
}

// ---- all formats -----------------------------------------------------------------------------------------------

TEST(AllFormats, NonFiniteCoordinatesAreRefused) {
    const double bad[] = {std::numeric_limits<double>::quiet_NaN(), std::numeric_limits<double>::infinity(),
                          -std::numeric_limits<double>::infinity()};
    for (Format f : kAllFormats)
        for (double v : bad) {
            Structure s = methane();
            s.positions[3].y() = v;
            try {
                write(f, s, "methane");
                ADD_FAILURE() << "no error for " << v;
            } catch (const std::runtime_error& e) {
                const std::string what = e.what();
                EXPECT_NE(what.find("non-finite y coordinate"), std::string::npos) << what;
                EXPECT_NE(what.find("atom 4 (H)"), std::string::npos) << what;
            }
        }
}

TEST(AllFormats, MismatchedPositionsAndBadBondsAreRefused) {
    for (Format f : kAllFormats) {
        Structure s = methane();
        s.positions.pop_back();
        EXPECT_THROW(write(f, s, "x"), std::runtime_error);
        Structure t = methane();
        t.molecule.bonds[0].b = 7;
        EXPECT_THROW(write(f, t, "x"), std::runtime_error);
        Structure u = methane();
        u.molecule.atoms[0].z = 0;
        EXPECT_THROW(write(f, u, "x"), std::runtime_error);
    }
}

TEST(AllFormats, OutputIsByteIdenticalRunToRun) {
    const Structure structures[] = {methane(), methyl(true), methyl(false), methylene(), fluoromethane(),
                                    chain(1200)};
    for (Format f : kAllFormats)
        for (const Structure& s : structures) {
            const std::string first = make_writer(f)->record(s, "same");
            const std::string second = make_writer(f)->record(s, "same");
            EXPECT_EQ(first, second);
            EXPECT_FALSE(first.empty());
            EXPECT_EQ(first.back(), '\n');
        }
}

TEST(AllFormats, EmptyStructureIsWritable) {
    for (Format f : kAllFormats) EXPECT_NO_THROW(write(f, Structure{}, "nothing"));
    EXPECT_EQ(write(Format::xyz, Structure{}, "nothing"), "0\nname=\"nothing\" charge=0 multiplicity=1\n");
}

// ---- sample files for the ASE check ----------------------------------------------------------------------------

namespace {

struct Sample {
    std::string stem;
    std::string title;
    Structure structure;
};

// What the structure is, written straight from the data (not through a writer), for the script to compare with.
nlohmann::json describe(const Sample& sample) {
    const Structure& s = sample.structure;
    nlohmann::json j;
    j["stem"] = sample.stem;
    j["title"] = sample.title;
    j["charge"] = s.charge;
    j["multiplicity"] = s.multiplicity;
    j["warnings"] = s.warnings;
    for (size_t i = 0; i < s.molecule.atoms.size(); ++i) {
        const Atom& a = s.molecule.atoms[i];
        j["elements"].push_back(std::string(element(a.z).symbol));
        j["positions"].push_back({s.positions[i].x(), s.positions[i].y(), s.positions[i].z()});
        j["atom_charges"].push_back(a.charge);
        j["radical_electrons"].push_back(std::max(a.radical_electrons, 0));
        j["isotopes"].push_back(a.isotope);
    }
    j["bonds"] = nlohmann::json::array();
    for (const Bond& b : s.molecule.bonds) j["bonds"].push_back({b.a + 1, b.b + 1, b.order});
    return j;
}

void save(const std::filesystem::path& path, const std::string& text) {
    std::ofstream out(path, std::ios::binary);
    out << text;
    ASSERT_TRUE(out.good()) << path;
}

std::string load(const std::filesystem::path& path) {
    std::ifstream in(path, std::ios::binary);
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

}  // namespace

// Writes every sample in every format into $REPEL_WRITER_SAMPLES (a temporary folder when unset) with a manifest of
// what each holds; tests/external/check_ase_reads_writers.py runs this test and reads the files with ASE.
TEST(WriterSamples, WriteSampleFiles) {
    namespace fs = std::filesystem;
    const char* env = std::getenv("REPEL_WRITER_SAMPLES");
    const bool keep = env && *env;
    // Without the variable: a folder of this process's own, removed at the end.
    const fs::path dir = keep ? fs::path(env)
                              : fs::temp_directory_path() / ("repel-writer-samples-" + std::to_string(::getpid()));
    fs::create_directories(dir);

    std::vector<Sample> samples = {
        {"methane", "methane", methane()},
        {"methyl_cation", "methyl cation", methyl(true)},
        {"methyl_radical", "methyl radical", methyl(false)},
        {"methylene", "triplet methylene", methylene()},
        {"fluoromethane", "CH2DF \"quoted\" name", fluoromethane()},
        {"chain150", "C150 chain", chain(150)},
        {"chain1200", "C1200 chain", chain(1200)},
    };
    nlohmann::json manifest;
    manifest["samples"] = nlohmann::json::array();
    const std::pair<Format, std::string> outputs[] = {
        {Format::xyz, "xyz"}, {Format::pdb, "pdb"}, {Format::sdf, "sdf"}, {Format::sdf, "mol"}, {Format::json, "json"}};
    for (const Sample& sample : samples) {
        for (const auto& [format, ext] : outputs) {
            const fs::path path = dir / (sample.stem + "." + ext);
            const std::string text = make_writer(format)->record(sample.structure, sample.title);
            save(path, text);
            EXPECT_EQ(load(path), text) << path;
        }
        manifest["samples"].push_back(describe(sample));
    }
    // Multi-record files: every format's batch layout, methane then the methyl cation.
    manifest["batch"] = {"methane", "methyl_cation"};
    for (const auto& [format, ext] : outputs) {
        auto w = make_writer(format);
        save(dir / ("batch." + ext),
             w->begin() + w->record(samples[0].structure, samples[0].title) + w->separator() +
                 w->record(samples[1].structure, samples[1].title) + w->end());
    }
    save(dir / "manifest.json", manifest.dump(1) + "\n");
    EXPECT_TRUE(fs::exists(dir / "manifest.json"));
    EXPECT_EQ(nlohmann::json::parse(load(dir / "manifest.json"))["samples"].size(), samples.size());
    if (!keep) fs::remove_all(dir);
}

// append_fixed writes what fmt's "{:w.df}" writes for the tidied value (the writers used that before), for values
// across every magnitude a coordinate can take, both signs, values just off a rounding boundary, and zeros.
TEST(FixedNumbers, SameTextAsGeneralFormatting) {
    std::vector<double> values = {0.0, -0.0, 1e-9, -1e-9, 0.00005, -0.00005, 0.00004999, 0.5, -0.5, 1.23455, 9.99995,
                                  -9.99995, 99999.99995, 1e7, -1e7, 123.456789, 0.0000005, -0.0000005};
    unsigned long long state = 12345;
    for (int k = 0; k < 200000; ++k) {
        state = state * 6364136223846793005ULL + 1442695040888963407ULL;
        const double unit = static_cast<double>(state >> 11) / 9007199254740992.0;  // [0, 1)
        const double magnitude = std::pow(10.0, -7.0 + 14.0 * unit);
        values.push_back(((state >> 3) & 1 ? -1.0 : 1.0) * magnitude * (1.0 + unit));
    }
    for (const double v : values)
        for (const auto& [decimals, width] : {std::pair{4, 10}, std::pair{6, 12}, std::pair{3, 8}}) {
            std::string ours;
            repel::output::append_fixed(ours, v, decimals, width);
            const std::string general = fmt::format("{:{}.{}f}", repel::output::tidy(v, decimals), width, decimals);
            ASSERT_EQ(ours, general) << "value " << fmt::format("{:.17g}", v) << ", " << decimals << " places";
        }
}

// A name longer than a reader's longest line (64 KiB: repel's own LineReader, and a common limit) is cut in the SD
// file's name item and marked, so that the file still reads back; a shorter long name is kept whole.
TEST(Sdf, VeryLongNameStillReadsBack) {
    const repel::output::SdfWriter writer;
    for (const size_t length : {size_t{5000}, size_t{200000}}) {
        const std::string name(length, 'n');
        std::istringstream in(writer.begin() + writer.record(methane(), name) + writer.end());
        const auto read = repel::read_sdf(in);
        ASSERT_EQ(read.size(), 1u) << length;
        EXPECT_EQ(read[0].structure.molecule.atom_count(), 5) << length;
        const std::string text = writer.record(methane(), name);
        if (length < 65000) EXPECT_NE(text.find(name), std::string::npos);
        else EXPECT_NE(text.find(std::string(65000, 'n') + " [cut]"), std::string::npos);
    }
}
