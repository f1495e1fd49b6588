// SD records as build input (lib/input/sd_molecule.cpp): orders, hydrogens the file leaves out, aromatic rings from a
// Kekule structure, and stereo read from coordinates so that the rebuilt molecule keeps it. The records are written
// by repel's own SD writer from a SMILES build, then read back; the stereo checks compare signed volumes and torsions
// of the two builds (the OpenSMILES meaning of '@' is checked against L-alanine in test_stereo.cpp).
#include <gtest/gtest.h>

#include <Eigen/Geometry>
#include <fmt/format.h>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "core/error.hpp"
#include "input/sd_molecule.hpp"
#include "input/species.hpp"
#include "output/writer.hpp"

using namespace repel;

namespace {

Structure build_from(Molecule m) { return build(std::move(m)); }  // hydrogens made explicit inside

std::string sd_of(const std::string& smiles) {
    return make_writer(Format::sdf)->record(build_from(read_species(smiles, Notation::smiles)), "lab compound");
}

double volume(const Structure& s, int c, int a, int b, int d) {
    const auto& p = s.positions;
    return (p[a] - p[c]).dot((p[b] - p[c]).cross(p[d] - p[c]));
}

double torsion_cos(const Structure& s, int a, int b, int c, int d) {
    const auto& p = s.positions;
    const Eigen::Vector3d n1 = (p[b] - p[a]).cross(p[c] - p[b]), n2 = (p[c] - p[b]).cross(p[d] - p[c]);
    return n1.normalized().dot(n2.normalized());
}

}  // namespace

TEST(SdInput, KekuleBenzeneRingIsAromaticAgain) {
    Molecule m = molecule_from_sd_record(sd_of("c1ccccc1C(=O)O"), 1);
    EXPECT_EQ(m.name, "lab compound");
    int aromatic_bonds = 0;
    for (const Bond& b : m.bonds) aromatic_bonds += b.aromatic ? 1 : 0;
    EXPECT_EQ(aromatic_bonds, 6);
    for (int a = 0; a < 6; ++a) EXPECT_TRUE(m.atoms[static_cast<size_t>(a)].aromatic);
    EXPECT_FALSE(m.atoms[6].aromatic);
}

TEST(SdInput, MissingHydrogensAreAddedAtNormalValences) {
    // Heavy atoms only: acetate anion and methylammonium, as a hand-written file would give them.
    const std::string record =
        "acetate\n  lab\n\n  4  3  0  0  0  0  0  0  0  0999 V2000\n"
        "    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "    1.5000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "    2.2000    1.1000    0.0000 O   0  0  0  0  0  0  0  0  0  0  0  0\n"
        "    2.2000   -1.1000    0.0000 O   0  5  0  0  0  0  0  0  0  0  0  0\n"
        "  1  2  1  0\n  2  3  2  0\n  2  4  1  0\nM  CHG  1   4  -1\nM  END\n$$$$\n";
    Molecule m = molecule_from_sd_record(record, 1);
    EXPECT_EQ(m.atoms[0].hydrogens, 3);
    EXPECT_EQ(m.atoms[1].hydrogens, 0);
    EXPECT_EQ(m.atoms[3].hydrogens, 0);
    EXPECT_EQ(m.total_charge(), -1);
}

TEST(SdInput, TetrahedralCentresKeepTheirHandedness) {
    for (const char* smiles : {"N[C@@H](C)C(=O)O", "N[C@H](C)C(=O)O", "C[C@](F)(Cl)Br", "C[C@@](F)(Cl)Br"}) {
        Molecule original = read_species(smiles, Notation::smiles);
        const Structure first = build_from(original);
        Molecule again = molecule_from_sd_record(make_writer(Format::sdf)->record(first, "x"), 1);
        EXPECT_EQ(again.atoms[1].chiral_class, ChiralClass::TH) << smiles;
        const Structure second = build_from(again);
        // Neighbours of atom 1 (the centre) in both builds are the same atoms (same atom order).
        std::vector<int> n;
        for (const Neighbor& nb : second.molecule.neighbors(1)) n.push_back(nb.atom);
        ASSERT_EQ(n.size(), 4u);
        EXPECT_GT(volume(first, 1, n[1], n[2], n[3]) * volume(second, 1, n[1], n[2], n[3]), 0) << smiles;
    }
}

TEST(SdInput, DoubleBondsKeepTheirConfiguration) {
    for (const char* smiles : {"C/C=C/C", "C/C=C\\C", "Cl/C=C/Br", "Cl/C=C\\Br"}) {
        const Structure first = build_from(read_species(smiles, Notation::smiles));
        Molecule again = molecule_from_sd_record(make_writer(Format::sdf)->record(first, "x"), 1);
        const Structure second = build_from(again);
        EXPECT_GT(torsion_cos(first, 0, 1, 2, 3) * torsion_cos(second, 0, 1, 2, 3), 0) << smiles;
    }
}

TEST(SdInput, ErrorsNameTheFileLine) {
    const std::string bad = "broken\n  lab\n\n  2  1  0  0  0  0  0  0  0  0999 V2000\n    0.0 nonsense\n";
    try {
        molecule_from_sd_record(bad, 101);
        FAIL() << "no error";
    } catch (const InputError& e) {
        EXPECT_EQ(std::string(e.what()).rfind("line 105:", 0), 0u) << e.what();
    }
}

// A flat drawing of a C(F)(Cl)(Br)CH3 centre: the wedge (CTfile bond stereo 1: toward the viewer) must give the
// handedness of the same drawing with the wedged methyl lifted toward the viewer (+z; CTfile coordinates are
// right-handed with z toward the viewer), the hash (6) the handedness of the methyl pushed away, and no wedge none.
TEST(SdInput, WedgesOfAFlatDrawingGiveTheHandedness) {
    auto record = [](double methyl_z, int stereo) {
        return fmt::format(
            "drawn\n  lab\n\n  5  4  0  0  0  0  0  0  0  0999 V2000\n"
            "    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
            "   -1.3000    0.7500    0.0000 F   0  0  0  0  0  0  0  0  0  0  0  0\n"
            "    1.3000    0.7500    0.0000 Cl  0  0  0  0  0  0  0  0  0  0  0  0\n"
            "    0.0000   -1.5000{:10.4f} C   0  0  0  0  0  0  0  0  0  0  0  0\n"
            "    0.0000    1.5000    0.0000 Br  0  0  0  0  0  0  0  0  0  0  0  0\n"
            "  1  2  1  0\n  1  3  1  0\n  1  4  1{:3d}\n  1  5  1  0\nM  END\n$$$$\n",
            methyl_z, stereo);
    };
    const Molecule up = molecule_from_sd_record(record(1.2, 0), 1), down = molecule_from_sd_record(record(-1.2, 0), 1);
    const Molecule wedge = molecule_from_sd_record(record(0, 1), 1), hash = molecule_from_sd_record(record(0, 6), 1),
                   plain = molecule_from_sd_record(record(0, 0), 1);
    ASSERT_EQ(up.atoms[0].chiral_class, ChiralClass::TH);
    EXPECT_NE(up.atoms[0].chiral_index, down.atoms[0].chiral_index);
    EXPECT_EQ(wedge.atoms[0].chiral_index, up.atoms[0].chiral_index);
    EXPECT_EQ(hash.atoms[0].chiral_index, down.atoms[0].chiral_index);
    EXPECT_EQ(plain.atoms[0].chiral_class, ChiralClass::none);
}

// The same drawing as a V3000 record: the CFG= keyword of a bond line carries the wedge (1) and the hash (3) (CTfile
// formats specification), and gives the handedness the V2000 wedge and hash give; a bond line continued over two
// lines ("-" at the end) is read whole.
TEST(SdInput, V3000ConfigurationKeywordsGiveTheHandedness) {
    auto v3000 = [](int cfg) {
        const std::string keyword = cfg ? fmt::format(" CFG={}", cfg) : "";
        return "drawn\n  lab\n\n  0  0  0     0  0            999 V3000\n"
               "M  V30 BEGIN CTAB\nM  V30 COUNTS 5 4 0 0 0\nM  V30 BEGIN ATOM\n"
               "M  V30 1 C 0 0 0 0\nM  V30 2 F -1.3 0.75 0 0\nM  V30 3 Cl 1.3 0.75 0 0\n"
               "M  V30 4 C 0 -1.5 0 0\nM  V30 5 Br 0 1.5 0 0\nM  V30 END ATOM\nM  V30 BEGIN BOND\n"
               "M  V30 1 1 1 2\nM  V30 2 1 1 3\nM  V30 3 1 -\nM  V30 1 4" + keyword + "\nM  V30 4 1 1 5\n"
               "M  V30 END BOND\nM  V30 END CTAB\nM  END\n$$$$\n";
    };
    auto v2000 = [](int stereo) {
        return fmt::format(
            "drawn\n  lab\n\n  5  4  0  0  0  0  0  0  0  0999 V2000\n"
            "    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
            "   -1.3000    0.7500    0.0000 F   0  0  0  0  0  0  0  0  0  0  0  0\n"
            "    1.3000    0.7500    0.0000 Cl  0  0  0  0  0  0  0  0  0  0  0  0\n"
            "    0.0000   -1.5000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
            "    0.0000    1.5000    0.0000 Br  0  0  0  0  0  0  0  0  0  0  0  0\n"
            "  1  2  1  0\n  1  3  1  0\n  1  4  1{:3d}\n  1  5  1  0\nM  END\n$$$$\n",
            stereo);
    };
    const Molecule wedge = molecule_from_sd_record(v3000(1), 1), hash = molecule_from_sd_record(v3000(3), 1),
                   plain = molecule_from_sd_record(v3000(0), 1);
    ASSERT_EQ(wedge.atoms[0].chiral_class, ChiralClass::TH);
    EXPECT_EQ(wedge.atoms[0].chiral_index, molecule_from_sd_record(v2000(1), 1).atoms[0].chiral_index);
    EXPECT_EQ(hash.atoms[0].chiral_index, molecule_from_sd_record(v2000(6), 1).atoms[0].chiral_index);
    EXPECT_NE(wedge.atoms[0].chiral_index, hash.atoms[0].chiral_index);
    EXPECT_EQ(plain.atoms[0].chiral_class, ChiralClass::none);
}
