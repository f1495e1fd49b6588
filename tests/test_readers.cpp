// Structure readers (XYZ, PDB, SDF V2000/V3000): good files read into atoms, positions, bonds and charges; malformed
// files give an InputError that names the 1-based line and carries its text. Formats: XYZ (common practice), wwPDB
// PDB format 3.3, CTfile formats specification (V2000, V3000).
#include <gtest/gtest.h>

#include <sstream>

#include "core/error.hpp"
#include "input/structure_reader.hpp"

using namespace repel;

namespace {

std::vector<ReadStructure> read(const std::string& text, InputFormat f) {
    std::istringstream in(text);
    return read_structures(in, f);
}

// The error for a malformed file: its message names the line, and its text is that line (when there is one).
InputError error_of(const std::string& text, InputFormat f) {
    try {
        read(text, f);
    } catch (const InputError& e) {
        return e;
    }
    ADD_FAILURE() << "no error for:\n" << text;
    return InputError("none");
}

void expect_line(const std::string& text, InputFormat f, int line, const std::string& line_text = "") {
    InputError e = error_of(text, f);
    EXPECT_NE(std::string(e.what()).find("line " + std::to_string(line) + ":"), std::string::npos) << e.what();
    if (!line_text.empty()) {
        EXPECT_EQ(e.text(), line_text) << e.what();
    }
}

const char* kWater =
    "3\n"
    "name=\"water\" charge=0 multiplicity=1\n"
    "O 0.000 0.000 0.117\n"
    "H 0.000 0.757 -0.469\n"
    "h 0.000 -0.757 -0.469\n";

}  // namespace

TEST(XyzReader, ReadsOneFrameWithChargeAndMultiplicity) {
    auto s = read(kWater, InputFormat::xyz);
    ASSERT_EQ(s.size(), 1u);
    EXPECT_EQ(s[0].title, "water");
    EXPECT_TRUE(s[0].has_charge);
    EXPECT_TRUE(s[0].has_multiplicity);
    EXPECT_FALSE(s[0].has_bonds);
    ASSERT_EQ(s[0].structure.molecule.atom_count(), 3);
    EXPECT_EQ(s[0].structure.molecule.atoms[0].z, 8);
    EXPECT_EQ(s[0].structure.molecule.atoms[2].z, 1);  // lower-case symbol
    EXPECT_DOUBLE_EQ(s[0].structure.positions[1].y(), 0.757);
    EXPECT_EQ(s[0].structure.molecule.bond_count(), 0);
}

TEST(XyzReader, ReadsSeveralFramesAndChargedOnes) {
    auto s = read(std::string(kWater) + "1\ncharge=-1 multiplicity=1\nCl 0 0 0\n\n\n", InputFormat::xyz);
    ASSERT_EQ(s.size(), 2u);
    EXPECT_EQ(s[1].line, 6);
    EXPECT_EQ(s[1].structure.charge, -1);
    EXPECT_EQ(s[1].structure.molecule.atoms[0].z, 17);
}

TEST(XyzReader, MalformedFilesNameTheLine) {
    expect_line("", InputFormat::xyz, 1);
    expect_line("three\ncomment\n", InputFormat::xyz, 1, "three");
    expect_line("3\ncomment\nO 0 0 0\nH 0 0 1\n", InputFormat::xyz, 5);                       // truncated
    expect_line("2\ncomment\nO 0 0 0\nH 0 0 1\nH 1 0 0\n", InputFormat::xyz, 5, "H 1 0 0");  // count too small
    expect_line("1\ncomment\nO 0 zero 0\n", InputFormat::xyz, 3, "O 0 zero 0");
    expect_line("1\ncomment\nO 0 nan 0\n", InputFormat::xyz, 3, "O 0 nan 0");
    expect_line("1\ncomment\nO 0 inf 0\n", InputFormat::xyz, 3);
    expect_line("1\ncomment\nO 0 1e999 0\n", InputFormat::xyz, 3);
    expect_line("1\ncomment\nXx 0 0 0\n", InputFormat::xyz, 3, "Xx 0 0 0");
    expect_line("1\ncomment\nO 0 0\n", InputFormat::xyz, 3);
    expect_line("1\ncharge=abc\nO 0 0 0\n", InputFormat::xyz, 2, "charge=abc");
    expect_line("-4\ncomment\n", InputFormat::xyz, 1);
    expect_line("1\n", InputFormat::xyz, 2);
    expect_line("0\nnothing\n", InputFormat::xyz, 1, "0");
}

TEST(PdbReader, ReadsAtomsElementsChargesAndConect) {
    const std::string pdb =
        "TITLE     AMMONIUM FROM THE INVENTED LAB\n"
        "HETATM    1  N   NH4 A   1       0.000   0.000   0.000  1.00  0.00           N1+\n"
        "HETATM    2  H1  NH4 A   1       0.590   0.590   0.590  1.00  0.00           H\n"
        "HETATM    3  H2  NH4 A   1      -0.590  -0.590   0.590  1.00  0.00           H\n"
        "HETATM    4  H3  NH4 A   1      -0.590   0.590  -0.590  1.00  0.00           H\n"
        "HETATM    5  H4  NH4 A   1       0.590  -0.590  -0.590  1.00  0.00           H\n"
        "CONECT    1    2    3    4    5\n"
        "CONECT    2    1\n"
        "END\n";
    auto s = read(pdb, InputFormat::pdb);
    ASSERT_EQ(s.size(), 1u);
    EXPECT_EQ(s[0].title, "AMMONIUM FROM THE INVENTED LAB");
    EXPECT_EQ(s[0].structure.molecule.atom_count(), 5);
    EXPECT_EQ(s[0].structure.molecule.bond_count(), 4);  // 1-2 listed twice is one bond
    EXPECT_TRUE(s[0].has_bonds);
    EXPECT_FALSE(s[0].has_orders);
    EXPECT_EQ(s[0].structure.molecule.atoms[0].charge, 1);
    EXPECT_EQ(s[0].structure.charge, 1);
    EXPECT_DOUBLE_EQ(s[0].structure.positions[2].x(), -0.59);
}

TEST(PdbReader, ModelsAreStructures) {
    const std::string atom = "ATOM      1  O   HOH A   1       0.000   0.000   0.000  1.00  0.00           O\n";
    auto s = read("MODEL        1\n" + atom + "ENDMDL\nMODEL        2\n" + atom + "ENDMDL\nEND\n", InputFormat::pdb);
    EXPECT_EQ(s.size(), 2u);
}

TEST(PdbReader, MalformedFilesNameTheLine) {
    const std::string no_element = "ATOM      1  CA  GLY A   1       0.000   0.000   0.000  1.00  0.00\n";
    expect_line("REMARK\n" + no_element, InputFormat::pdb, 2, no_element.substr(0, no_element.size() - 1));
    expect_line("ATOM      1  O   HOH A   1       0.000   abc     0.000  1.00  0.00           O\n", InputFormat::pdb, 1);
    expect_line("ATOM      1  O   HOH A   1       0.000   0.000   0.000  1.00  0.00           Q\n", InputFormat::pdb, 1);
    expect_line("ATOM      1  O   HOH A   1       0.000   0.000\n", InputFormat::pdb, 1);
    expect_line("ATOM      1  O   HOH A   1       0.000   0.000   0.000  1.00  0.00           O\nCONECT    1    7\n",
                InputFormat::pdb, 2);
    expect_line("REMARK nothing here\n", InputFormat::pdb, 2);
}

namespace {

const char* kFormaldehyde =
    "formaldehyde\n"
    "  invented lab\n"
    "\n"
    "  4  3  0  0  0  0  0  0  0  0999 V2000\n"
    "    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "    1.2050    0.0000    0.0000 O   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "   -0.5900    0.9400    0.0000 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "   -0.5900   -0.9400    0.0000 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "  1  2  2  0\n"
    "  1  3  1  0\n"
    "  1  4  1  0\n"
    "M  END\n"
    "> <source>\n"
    "invented\n"
    "\n"
    "$$$$\n";

}  // namespace

TEST(SdfReader, ReadsV2000AtomsBondsAndProperties) {
    std::string charged = kFormaldehyde;
    charged.replace(charged.find("M  END"), 6, "M  CHG  1   2  -1\nM  RAD  1   1   2\nM  END");
    auto s = read(std::string(kFormaldehyde) + charged, InputFormat::sdf);
    ASSERT_EQ(s.size(), 2u);
    EXPECT_EQ(s[0].title, "formaldehyde");
    EXPECT_EQ(s[1].line, 17);
    const Molecule& m = s[0].structure.molecule;
    ASSERT_EQ(m.bond_count(), 3);
    EXPECT_EQ(m.bonds[0].order, 2);
    EXPECT_TRUE(s[0].has_orders);
    EXPECT_EQ(s[1].structure.molecule.atoms[1].charge, -1);
    EXPECT_EQ(s[1].structure.molecule.atoms[0].radical_electrons, 1);
    EXPECT_EQ(s[1].structure.multiplicity, 2);
}

TEST(SdfReader, ReadsV3000) {
    const std::string v3 =
        "methanol\n  invented lab\n\n  0  0  0     0  0            999 V3000\n"
        "M  V30 BEGIN CTAB\nM  V30 COUNTS 2 1 0 0 0\nM  V30 BEGIN ATOM\n"
        "M  V30 1 C 0.0 0.0 0.0 0\nM  V30 2 O 1.43 0.0 -\nM  V30 0.0 0 CHG=-1\n"
        "M  V30 END ATOM\nM  V30 BEGIN BOND\nM  V30 1 1 1 2\nM  V30 END BOND\nM  V30 END CTAB\nM  END\n$$$$\n";
    auto s = read(v3, InputFormat::sdf);
    ASSERT_EQ(s.size(), 1u);
    ASSERT_EQ(s[0].structure.molecule.atom_count(), 2);
    EXPECT_EQ(s[0].structure.molecule.atoms[1].charge, -1);
    EXPECT_DOUBLE_EQ(s[0].structure.positions[1].x(), 1.43);
    EXPECT_EQ(s[0].structure.molecule.bond_count(), 1);
}

TEST(SdfReader, MalformedFilesNameTheLine) {
    std::string f = kFormaldehyde;
    expect_line(f.substr(0, f.find("  1  2  2")), InputFormat::sdf, 9);  // truncated in the bond block
    std::string bad_coord = f;
    bad_coord.replace(bad_coord.find("1.2050"), 6, "1.2x50");
    expect_line(bad_coord, InputFormat::sdf, 6);
    std::string bad_element = f;
    bad_element.replace(bad_element.find(" O   0"), 6, " Qq  0");
    expect_line(bad_element, InputFormat::sdf, 6);
    std::string bad_bond = f;
    bad_bond.replace(bad_bond.find("  1  4  1"), 9, "  1  9  1");
    expect_line(bad_bond, InputFormat::sdf, 11, "  1  9  1  0");
    std::string bad_counts = f;
    bad_counts.replace(bad_counts.find("  4  3"), 6, "  x  3");
    expect_line(bad_counts, InputFormat::sdf, 4);
    expect_line("title\nprogram\n", InputFormat::sdf, 3);
    std::string no_end = f.substr(0, f.find("M  END")) + "$$$$\n";
    expect_line(no_end, InputFormat::sdf, 12);
}

TEST(StructureReader, FormatFromExtension) {
    EXPECT_EQ(input_format_from_path("a/b.XYZ"), InputFormat::xyz);
    EXPECT_EQ(input_format_from_path("x.pdb"), InputFormat::pdb);
    EXPECT_EQ(input_format_from_path("x.mol"), InputFormat::sdf);
    EXPECT_EQ(input_format_from_path("x.sdf"), InputFormat::sdf);
    EXPECT_THROW(input_format_from_path("x.cif"), InputError);
}
