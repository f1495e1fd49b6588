// Stereochemistry in 3D: the written handedness of '@'/'@@' centres and the written configuration of '/' '\' double
// bonds, judged from the coordinates (signed volumes and dihedral angles).
#include <gtest/gtest.h>

#include <cmath>
#include <string>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "assemble/place.hpp"
#include "graph/stereo.hpp"
#include "input/smiles.hpp"

using namespace repel;
using Eigen::Vector3d;

namespace {

Structure build_smiles(const std::string& smiles, bool refine = true) {
    return repel::build(smiles, {.notation = TextNotation::smiles, .refine = refine});
}

// (a - c) . ((b - c) x (d - c)) for atoms given by index.
double volume(const Structure& s, int c, int a, int b, int d) {
    return signed_volume(s.positions[c], s.positions[a], s.positions[b], s.positions[d]);
}

double torsion_deg(const Structure& s, int a, int b, int c, int d) {
    return dihedral(s.positions[a], s.positions[b], s.positions[c], s.positions[d]) * 180 / M_PI;
}

// Every written stereocentre and double bond met in the coordinates.
void expect_all_stereo_met(const Structure& s, const std::string& smi) {
    std::vector<std::string> warnings;
    for (const ChiralTarget& t : chiral_targets(s.molecule, warnings))
        EXPECT_TRUE(chirality_met(t, s.positions)) << smi << ": centre " << t.centre + 1;
    for (const DoubleBondTarget& t : double_bond_targets(s.molecule))
        EXPECT_TRUE(double_bond_met(t, s.positions)) << smi << ": double bond " << t.b + 1 << "=" << t.c + 1;
    for (const auto& w : s.warnings) {
        EXPECT_EQ(w.find("handedness"), std::string::npos) << smi << ": " << w;
        EXPECT_EQ(w.find("configuration"), std::string::npos) << smi << ": " << w;
    }
}

// The first hydrogen bonded to an atom.
int hydrogen_on(const Molecule& m, int atom) {
    for (const Neighbor& n : m.neighbors(atom))
        if (m.atoms[n.atom].z == 1) return n.atom;
    return -1;
}

// Bond lengths stay sane in a strained ring (a trans double bond in a medium ring must not be built by squashing it).
void expect_no_overlap_hint(const Structure& s) {
    for (const Bond& b : s.molecule.bonds) {
        const double d = (s.positions[b.a] - s.positions[b.b]).norm();
        EXPECT_GT(d, 0.9);
        EXPECT_LT(d, 1.8);
    }
}

}  // namespace

// CIP from coordinates: with the lowest-priority group pointing away from the viewer, a -> b -> c clockwise is R.
// Put d along -z and a, b, c above the xy plane: clockwise seen from +z gives a . (b x c) < 0 (vectors from the
// centre). So R <=> a.(b x c) < 0 and S <=> > 0 for priorities a > b > c > d (derived from the CIP definition).
TEST(Stereo, LAlanineIsS) {
    // L-alanine is (S)-alanine (common practice). N[C@@H](C)C(=O)O: atoms N0 C1 C2(methyl) C3(carboxyl) O4 O5, H.
    // CIP priorities: N > COOH > CH3 > H.
    for (bool refine : {false, true}) {
        const Structure s = build_smiles("N[C@@H](C)C(=O)O", refine);
        EXPECT_GT(volume(s, 1, 0, 3, 2), 0) << "refine=" << refine;
    }
}

TEST(Stereo, DAlanineIsR) {
    const Structure s = build_smiles("N[C@H](C)C(=O)O");
    EXPECT_LT(volume(s, 1, 0, 3, 2), 0);
}

TEST(Stereo, LCysteineIsR) {
    // L-cysteine is (R) although written like L-alanine: CH2SH outranks COOH (common practice).
    // N0 C1 C2(CH2) S3 C4(carboxyl): priorities N > CH2SH > COOH > H.
    const Structure s = build_smiles("N[C@@H](CS)C(=O)O");
    EXPECT_LT(volume(s, 1, 0, 2, 4), 0);
}

TEST(Stereo, EnantiomerPairsHaveOppositeVolumes) {
    // Each pair differs only in @ / @@; the same four atoms must have opposite signed volumes.
    struct Case {
        const char* at;
        const char* atat;
        int c, a, b, d;
    };
    const Case cases[] = {
        {"F[C@H](Cl)Br", "F[C@@H](Cl)Br", 1, 0, 2, 3},
        {"C[C@H]1CCCCO1", "C[C@@H]1CCCCO1", 1, 0, 2, 6},       // ring-closure chirality
        {"[C@H](F)(Cl)Br", "[C@@H](F)(Cl)Br", 0, 1, 2, 3},     // the centre opens the SMILES
        {"C[S@](=O)CC", "C[S@@](=O)CC", 1, 0, 2, 3},           // lone pair as the fourth group (sulfoxide)
        {"N[C@@H](Cc1ccccc1)C(=O)O", "N[C@H](Cc1ccccc1)C(=O)O", 1, 0, 2, 10},
        {"O[C@@H]1CCCC[C@H]1O", "O[C@H]1CCCC[C@H]1O", 1, 0, 2, 6},
        {"C[C@@]12CCCC[C@H]1CCCC2", "C[C@]12CCCC[C@H]1CCCC2", 1, 0, 2, 6},  // a ring-fusion atom
    };
    for (const Case& k : cases)
        for (bool refine : {false, true}) {
            const Structure s1 = build_smiles(k.at, refine), s2 = build_smiles(k.atat, refine);
            expect_all_stereo_met(s1, k.at);
            expect_all_stereo_met(s2, k.atat);
            EXPECT_LT(volume(s1, k.c, k.a, k.b, k.d) * volume(s2, k.c, k.a, k.b, k.d), 0) << k.at;
        }
}

TEST(Stereo, SameMoleculeWrittenTwoWaysHasOneHandedness) {
    // F[C@H](Cl)Br and [C@@H](F)(Cl)Br are the same enantiomer (swapping the first two neighbours of the list flips
    // the mark; OpenSMILES). Compare the volume of F, Cl, Br around C.
    const Structure a = build_smiles("F[C@H](Cl)Br");          // F0 C1 Cl2 Br3
    const Structure b = build_smiles("[C@@H](F)(Cl)Br");       // C0 F1 Cl2 Br3
    EXPECT_GT(volume(a, 1, 0, 2, 3) * volume(b, 0, 1, 2, 3), 0);
    // And with the hydrogen written as an atom: F[C@]([H])(Cl)Br is F[C@H](Cl)Br.
    const Structure c = build_smiles("F[C@]([H])(Cl)Br");      // F0 C1 H2 Cl3 Br4
    EXPECT_GT(volume(a, 1, 0, 2, 3) * volume(c, 1, 0, 3, 4), 0);
}

TEST(Stereo, DoubleBondsAsWritten) {
    struct Case {
        const char* smi;
        int a, b, c, d;
        bool cis;
    };
    const Case cases[] = {
        {"F/C=C/F", 0, 1, 2, 3, false},
        {"F/C=C\\F", 0, 1, 2, 3, true},
        {"C/C=C/C", 0, 1, 2, 3, false},
        {"C/C=C\\C", 0, 1, 2, 3, true},
        {"C(/F)=C/F", 1, 0, 2, 3, true},   // written from the double-bond atom
        {"OC(=O)/C=C\\C(=O)O", 1, 3, 4, 5, true},   // maleic acid
        {"OC(=O)/C=C/C(=O)O", 1, 3, 4, 5, false},   // fumaric acid
        {"C/C=C/C=C/C", 0, 1, 2, 3, false},
        {"CC/C=C1/CCCC1", 1, 2, 3, 4, false},   // exocyclic double bond into a ring
        {"CC/C=C1\\CCCC1", 1, 2, 3, 4, true},
    };
    for (const Case& k : cases)
        for (bool refine : {false, true}) {
            const Structure s = build_smiles(k.smi, refine);
            expect_all_stereo_met(s, k.smi);
            const double t = std::abs(torsion_deg(s, k.a, k.b, k.c, k.d));
            if (k.cis) EXPECT_LT(t, 30.0) << k.smi;
            else EXPECT_GT(t, 150.0) << k.smi;
        }
}

TEST(Stereo, DoubleBondsInsideLargeRings) {
    // The ring-closure bond "/1" on atom 0 is written from atom 0 towards its ring partner 11, like the branch in
    // C(/F)=C/F: so C/1=C/C...1 is cis-cyclododecene and C/1=C\C...1 is trans (OpenSMILES bond directions).
    const Structure c = build_smiles("C/1=C/CCCCCCCCCC1");
    EXPECT_LT(std::abs(torsion_deg(c, 11, 0, 1, 2)), 30.0);
    const Structure t = build_smiles("C/1=C\\CCCCCCCCCC1");
    EXPECT_GT(std::abs(torsion_deg(t, 11, 0, 1, 2)), 150.0);
    expect_all_stereo_met(t, "trans-cyclododecene");
    expect_all_stereo_met(c, "cis-cyclododecene");
    // trans in a 14-membered ring written the other way round: the bond marks inside the chain.
    const Structure t14 = build_smiles("C1CCCCC/C=C/CCCCCC1");
    EXPECT_GT(std::abs(torsion_deg(t14, 5, 6, 7, 8)), 150.0);
    expect_no_overlap_hint(t14);
}

TEST(Stereo, UnmarkedDoubleBondInASmallRingIsCis) {
    const Structure s = build_smiles("C1=CCCCCC1");
    EXPECT_LT(std::abs(torsion_deg(s, 6, 0, 1, 2)), 30.0);
}

TEST(Stereo, RingFusionHydrogensCisOrTransAsWritten) {
    // Decalin written with both fusion hydrogens: the two marks decide cis or trans; the H-C-C-H torsion is about
    // 60 degrees for cis and 180 for trans (both chairs), whichever the marks say, and the marks are met.
    for (const char* smi : {"[C@@H]12CCCC[C@H]1CCCC2", "[C@@H]12CCCC[C@@H]1CCCC2"}) {
        const Structure s = build_smiles(smi);
        expect_all_stereo_met(s, smi);
        const double t = std::abs(torsion_deg(s, hydrogen_on(s.molecule, 0), 0, 5, hydrogen_on(s.molecule, 5)));
        EXPECT_TRUE(std::abs(t - 60) < 25 || std::abs(t - 180) < 25) << smi << " " << t;
    }
    const Structure a = build_smiles("[C@@H]12CCCC[C@H]1CCCC2"), b = build_smiles("[C@@H]12CCCC[C@@H]1CCCC2");
    const double ta = std::abs(torsion_deg(a, hydrogen_on(a.molecule, 0), 0, 5, hydrogen_on(a.molecule, 5)));
    const double tb = std::abs(torsion_deg(b, hydrogen_on(b.molecule, 0), 0, 5, hydrogen_on(b.molecule, 5)));
    EXPECT_GT(std::abs(ta - tb), 60.0);  // one cis, one trans
}

TEST(Stereo, NaturalProductsKeepEveryCentre) {
    // Testosterone, cholesterol, glucose (pyranose), a penicillin, morphine, sucrose-like disaccharide.
    for (const char* smi : {"C[C@]12CC[C@H]3[C@@H](CCC4=CC(=O)CC[C@]34C)[C@@H]1CC[C@@H]2O",
                            "C[C@H](CCCC(C)C)[C@H]1CC[C@@H]2[C@@]1(CC[C@H]3[C@H]2CC=C4[C@@]3(CC[C@@H](C4)O)C)C",
                            "OC[C@H]1O[C@H](O)[C@H](O)[C@@H](O)[C@@H]1O",
                            "CC1([C@@H](N2[C@H](S1)[C@@H](C2=O)NC(=O)Cc1ccccc1)C(=O)O)C",
                            "CN1CC[C@]23c4c5ccc(O)c4O[C@H]2[C@@H](O)C=C[C@H]3[C@H]1C5",
                            "OC[C@H]1O[C@@](CO)(O[C@H]2O[C@H](CO)[C@@H](O)[C@H](O)[C@H]2O)[C@@H](O)[C@@H]1O"}) {
        for (bool refine : {false, true}) {
            const Structure s = build_smiles(smi, refine);
            expect_all_stereo_met(s, smi);
        }
    }
}

TEST(Stereo, TargetsListEveryMark) {
    const Molecule m = read_molecule("N[C@@H](C)C(=O)O", {.notation = TextNotation::smiles});
    std::vector<std::string> w;
    const auto t = chiral_targets(m, w);
    ASSERT_EQ(t.size(), 1u);
    EXPECT_EQ(t[0].centre, 1);
    EXPECT_TRUE(w.empty());
    const Molecule d = read_molecule("F/C=C/F", {.notation = TextNotation::smiles});
    const auto db = double_bond_targets(d);
    ASSERT_EQ(db.size(), 1u);
    EXPECT_FALSE(db[0].cis);
}
