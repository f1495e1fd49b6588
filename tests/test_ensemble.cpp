// Conformer ensembles (repel build --conformers): what comes back is distinct, ordered, keeps the written
// stereochemistry, covers the shapes that matter (both chairs, anti and gauche), and is the same on every run.
#include <gtest/gtest.h>

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <cmath>
#include <nlohmann/json.hpp>
#include <numbers>
#include <set>
#include <repel/repel.hpp>

#include "assemble/ensemble.hpp"
#include "core/geometry.hpp"
#include "domains/domains.hpp"
#include "graph/stereo.hpp"

namespace repel {
namespace {

using Eigen::Vector3d;

double degrees(double radians) { return radians * 180 / std::numbers::pi; }

ConformerSettings count(int n) {
    ConformerSettings c;
    c.count = n;
    return c;
}

// n-butane has two conformers that differ in heavy atoms: anti (C-C-C-C 180) and gauche (about 60; its mirror image
// is the same shape). Anti is the lower (Allinger/experiment: gauche about 0.6-0.9 kcal/mol above, from memory).
TEST(Ensemble, ButaneGivesAntiThenGauche) {
    const std::vector<Structure> e = build_conformers("CCCC", {}, count(10));
    ASSERT_EQ(e.size(), 2u);
    const double anti = std::abs(degrees(dihedral(e[0].positions[0], e[0].positions[1], e[0].positions[2], e[0].positions[3])));
    const double gauche = std::abs(degrees(dihedral(e[1].positions[0], e[1].positions[1], e[1].positions[2], e[1].positions[3])));
    EXPECT_NEAR(anti, 180, 10);
    EXPECT_NEAR(gauche, 65, 15);  // gauche n-butane is 65 degrees in gas-phase structures (from memory)
    EXPECT_EQ(e[0].conformer->rank, 1);
    EXPECT_EQ(e[1].conformer->rank, 2);
    EXPECT_EQ(e[1].conformer->count, 2);
    EXPECT_GE(e[1].conformer->relative_energy, 0);
    EXPECT_GT(e[1].conformer->rmsd_to_first, 0.5);
}

// The normal of a ring's least-squares plane.
Vector3d ring_normal(const std::vector<Vector3d>& x, const std::vector<int>& ring) {
    Vector3d c = Vector3d::Zero();
    for (int a : ring) c += x[static_cast<size_t>(a)];
    c /= static_cast<double>(ring.size());
    Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
    for (int a : ring) cov += (x[static_cast<size_t>(a)] - c) * (x[static_cast<size_t>(a)] - c).transpose();
    return Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d>(cov).eigenvectors().col(0);
}

// Angle (degrees) between a substituent's bond and the normal of its six-membered ring's mean plane: near 0 axial,
// near 70-90 equatorial (common practice).
double substituent_tilt(const std::vector<Vector3d>& x, const std::vector<int>& ring, int centre, int substituent) {
    const Vector3d bond = (x[static_cast<size_t>(substituent)] - x[static_cast<size_t>(centre)]).normalized();
    return degrees(std::acos(std::abs(bond.dot(ring_normal(x, ring)))));
}

// The first conformer has atom 0 (on ring atom 1 of the ring of atoms 1-6) equatorial, the second axial.
void expect_equatorial_then_axial(const std::vector<Structure>& e) {
    ASSERT_GE(e.size(), 2u);
    const std::vector<int> ring{1, 2, 3, 4, 5, 6};
    EXPECT_GT(substituent_tilt(e[0].positions, ring, 1, 0), 60);
    EXPECT_LT(substituent_tilt(e[1].positions, ring, 1, 0), 30);
}

// Methylcyclohexane: both chairs, methyl equatorial first (A-value 1.7 kcal/mol, Eliel and Wilen, from memory), then
// axial.
TEST(Ensemble, MethylcyclohexaneGivesBothChairs) {
    expect_equatorial_then_axial(build_conformers("CC1CCCCC1", {}, count(10)));
}

// cis-4-tert-butylcyclohexanol (written stereocentres): the two chairs, the tert-butyl equatorial in the first; both
// keep the written handedness.
TEST(Ensemble, StereocentresKeptInEveryConformer) {
    const std::string smiles = "CC(C)(C)[C@H]1CC[C@@H](O)CC1";
    const Molecule m = read_molecule(smiles);
    std::vector<std::string> notes;
    const std::vector<ChiralTarget> targets = chiral_targets(m, notes);
    ASSERT_EQ(targets.size(), 2u);
    const std::vector<Structure> e = build_conformers(smiles, {}, count(10));
    ASSERT_GE(e.size(), 2u);
    for (const Structure& s : e)
        for (const ChiralTarget& t : targets) EXPECT_TRUE(chirality_met(t, s.positions)) << "rank " << s.conformer->rank;
    const std::vector<int> ring{4, 5, 6, 7, 9, 10};
    EXPECT_GT(substituent_tilt(e[0].positions, ring, 4, 1), 60);
}

// A drug-sized molecule with stereocentres and a marked double bond: every conformer keeps both, no two conformers
// lie closer than the threshold, energies rise with rank, and nothing overlaps.
TEST(Ensemble, DistinctOrderedAndStereoKept) {
    const std::string smiles = "C/C=C/C[C@H](N)C(=O)N[C@@H](Cc1ccccc1)C(=O)OCC";
    const Molecule m = read_molecule(smiles);
    std::vector<std::string> notes;
    const std::vector<ChiralTarget> chiral = chiral_targets(m, notes);
    const std::vector<DoubleBondTarget> doubles = double_bond_targets(m);
    ASSERT_EQ(chiral.size(), 2u);
    ASSERT_EQ(doubles.size(), 1u);
    ConformerSettings settings = count(10);
    const std::vector<Structure> e = build_conformers(smiles, {}, settings);
    ASSERT_EQ(e.size(), 10u);
    const ConformerComparer comparer(m, false);
    for (size_t i = 0; i < e.size(); ++i) {
        for (const ChiralTarget& t : chiral) EXPECT_TRUE(chirality_met(t, e[i].positions));
        for (const DoubleBondTarget& t : doubles) EXPECT_TRUE(double_bond_met(t, e[i].positions));
        if (i > 0) {
            EXPECT_GE(e[i].conformer->energy, e[i - 1].conformer->energy);
        }
        for (size_t j = 0; j < i; ++j) EXPECT_GE(comparer.rmsd(e[i].positions, e[j].positions), settings.distinct_rmsd);
        for (int a = 0; a < m.atom_count(); ++a)
            for (int b = a + 1; b < m.atom_count(); ++b)
                EXPECT_GT((e[i].positions[static_cast<size_t>(a)] - e[i].positions[static_cast<size_t>(b)]).norm(), 0.7);
    }
}

// A macrocycle (a 16-membered lactone) is embedded more than one way: several distinct ring shapes, each ring torsion
// set different from the first's by more than 30 degrees somewhere.
TEST(Ensemble, MacrocycleGivesSeveralRingShapes) {
    const std::string smiles = "O=C1CCCCCCCCCCCCCCO1";
    const auto e = build_conformers(smiles, {}, count(10));
    ASSERT_GE(e.size(), 3u);
    const std::vector<int> ring{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16};
    for (size_t k = 1; k < e.size(); ++k) {
        double largest = 0;
        for (size_t r = 0; r < ring.size(); ++r) {
            auto torsion = [&](const Structure& s) {
                auto p = [&](size_t q) { return s.positions[static_cast<size_t>(ring[(r + q) % ring.size()])]; };
                return degrees(dihedral(p(0), p(1), p(2), p(3)));
            };
            double d = std::abs(torsion(e[k]) - torsion(e[0]));
            largest = std::max(largest, std::min(d, 360 - d));
        }
        EXPECT_GT(largest, 30) << "conformer " << k + 1;
    }
}

TEST(Ensemble, SameOnEveryRunAndSeedMatters) {
    const std::string smiles = "CCOC(=O)CCCCN(C)Cc1ccccc1";
    const auto a = build_conformers(smiles, {}, count(6));
    const auto b = build_conformers(smiles, {}, count(6));
    ASSERT_EQ(a.size(), b.size());
    for (size_t k = 0; k < a.size(); ++k)
        EXPECT_EQ(write(a[k], WriteFormat::sdf), write(b[k], WriteFormat::sdf));
    ConformerSettings other = count(6);
    other.seed = 7;
    const auto c = build_conformers(smiles, {}, other);
    bool differs = c.size() != a.size();
    for (size_t k = 0; k < std::min(a.size(), c.size()); ++k) differs = differs || a[k].positions != c[k].positions;
    EXPECT_TRUE(differs);
}

// One conformer asked for: the default build itself, unless a candidate ranks lower; with count 1 no candidate is
// made, so it is the build.
TEST(Ensemble, OneConformerIsTheBuild) {
    const std::string smiles = "OC(=O)c1ccccc1OC(C)=O";
    const auto e = build_conformers(smiles, {}, count(1));
    ASSERT_EQ(e.size(), 1u);
    EXPECT_EQ(e[0].positions, build(smiles).positions);
    EXPECT_EQ(e[0].conformer->rank, 1);
}

// Rigid molecules have one conformer however many are asked for.
TEST(Ensemble, RigidMoleculesGiveOne) {
    for (const char* smiles : {"c1ccccc1", "O", "FS(F)(F)F", "C1CC2CCC1CC2", "[Xe](F)(F)(F)F"})
        EXPECT_EQ(build_conformers(smiles, {}, count(10)).size(), 1u) << smiles;
}

TEST(Ensemble, BadSettingsAreInputErrors) {
    EXPECT_THROW(build_conformers("CCCC", {}, count(0)), InputError);
    ConformerSettings nan = count(3);
    nan.distinct_rmsd = std::nan("");
    EXPECT_THROW(build_conformers("CCCC", {}, nan), InputError);
}

// The comparison: symmetry-equivalent atoms may trade places (a tert-butyl turned by 120 degrees is the same), a
// mirror image is the same shape only for a molecule without stereocentres.
TEST(Ensemble, ComparerSeesSymmetryAndMirrors) {
    const Structure s = build("CC(C)(C)CCO");
    std::vector<Vector3d> turned = s.positions;
    // Turn the three methyls (atoms 0, 2, 3) about the C1-C4 bond by 120 degrees.
    const Vector3d axis = (turned[1] - turned[4]).normalized();
    const Eigen::AngleAxisd r(2 * std::numbers::pi / 3, axis);
    for (size_t a : {size_t{0}, size_t{2}, size_t{3}}) turned[a] = turned[1] + r * (turned[a] - turned[1]);
    const ConformerComparer achiral(s.molecule, true);
    EXPECT_LT(achiral.rmsd(s.positions, turned), 0.05);
    std::vector<Vector3d> mirrored = s.positions;
    for (Vector3d& p : mirrored) p.x() = -p.x();
    EXPECT_LT(achiral.rmsd(s.positions, mirrored), 1e-6);

    const Structure chiral = build("C[C@H](N)C(C)CCl");
    std::vector<Vector3d> image = chiral.positions;
    for (Vector3d& p : image) p.x() = -p.x();
    const ConformerComparer strict(chiral.molecule, false);
    EXPECT_GT(strict.rmsd(chiral.positions, image), 0.1);
    EXPECT_TRUE(may_be_chiral(chiral.molecule, analyse_domains(chiral.molecule, true, nullptr),
                              symmetry_classes(chiral.molecule)));
    EXPECT_FALSE(may_be_chiral(s.molecule, analyse_domains(s.molecule, true, nullptr), symmetry_classes(s.molecule)));
}

// closer_than answers rmsd < threshold without the full minimum, for every pair of an ensemble and thresholds on
// both sides of their RMSDs, with mirror images equal or not (the bound it skips matchings by must never change the
// answer).
TEST(Ensemble, CloserThanAgreesWithTheRmsd) {
    for (const char* smiles : {"CC(C)(C)CCOCC(C)C", "CCCCC(=O)OCC1CCCCC1", "C[C@H](N)C(=O)N[C@@H](Cc1ccccc1)C(=O)O"}) {
        const std::vector<Structure> e = build_conformers(smiles, {}, count(10));
        const Molecule& m = e.front().molecule;
        for (bool mirror : {false, true}) {
            const ConformerComparer comparer(m, mirror);
            for (size_t i = 0; i < e.size(); ++i)
                for (size_t j = 0; j < e.size(); ++j) {
                    const double d = comparer.rmsd(e[i].positions, e[j].positions);
                    for (double t : {0.05, 0.3, 0.5, 0.8, 1.2, d, d + 1e-6, std::max(0.0, d - 1e-6)})
                        EXPECT_EQ(comparer.closer_than(e[i].positions, e[j].positions, t), d < t)
                            << smiles << " " << i << "/" << j << " rmsd " << d << " threshold " << t;
                }
        }
    }
}

// The writers carry each conformer's rank, count, energies and RMSD: SD data items, extended-XYZ keys, a JSON object
// per conformer.
TEST(Ensemble, WritersCarryTheConformer) {
    const auto e = build_conformers("CCCC", {}, count(10));
    ASSERT_EQ(e.size(), 2u);
    const std::string sdf = write(e, WriteFormat::sdf);
    EXPECT_NE(sdf.find("> <conformer>\n2\n"), std::string::npos);
    EXPECT_NE(sdf.find("> <conformers>\n2\n"), std::string::npos);
    EXPECT_NE(sdf.find("> <rmsd_to_first>\n0.0000\n"), std::string::npos);
    const std::string xyz = write(e[1], WriteFormat::xyz);
    EXPECT_NE(xyz.find(" conformer=2 conformers=2 energy="), std::string::npos);
    const auto json = nlohmann::json::parse(write(e, WriteFormat::json));
    ASSERT_TRUE(json.is_array());
    EXPECT_EQ(json[1]["conformer"]["rank"], 2);
    EXPECT_GT(json[1]["conformer"]["rmsd_to_first"].get<double>(), 0.5);
    const std::string pdb = write(e[1], WriteFormat::pdb);
    EXPECT_NE(pdb.find("REMARK   6 CONFORMER 2 OF 2 ENERGY"), std::string::npos);
    // A single build carries none of it.
    EXPECT_EQ(write(build("CCCC"), WriteFormat::sdf).find("<conformer>"), std::string::npos);
}


// Ring torsions (degrees) of a ring given in ring order.
std::vector<double> ring_torsions(const std::vector<Vector3d>& x, const std::vector<int>& ring) {
    std::vector<double> t;
    const size_t n = ring.size();
    for (size_t k = 0; k < n; ++k)
        t.push_back(degrees(dihedral(x[static_cast<size_t>(ring[k])], x[static_cast<size_t>(ring[(k + 1) % n])],
                                     x[static_cast<size_t>(ring[(k + 2) % n])], x[static_cast<size_t>(ring[(k + 3) % n])])));
    return t;
}

// A chair: ring torsions alternate in sign, each at least 30 degrees (cyclohexane's are about 55; common practice).
bool is_chair(const std::vector<double>& t) {
    for (size_t k = 0; k < t.size(); ++k)
        if (std::abs(t[k]) < 30 || (t[k] > 0) == (t[(k + 1) % t.size()] > 0)) return false;
    return true;
}

// Other ring puckers are sampled, not only the chairs and their mirror images: N-methyl-4-phenylpiperidine's ensemble
// holds a ring that is not a chair (a twist-boat or boat, about 5-6 kcal/mol above the chair in cyclohexane, from
// memory), ranked after both chairs; 2-methylcyclopentanol's holds envelopes with their flaps at different atoms.
// Before, only the chairs (and the mirror images of envelopes) were built. Since the phenyl is built with the
// methine's hydrogen in its plane, the twist-boats lie 0.4-0.5 A (heavy atoms) from a chair with the phenyl turned
// the same way, so the default threshold of 0.5 A prunes them: sampled, they are seen at 0.4.
TEST(Ensemble, RingPuckersBeyondTheChairsAreSampled) {
    ConformerSettings puckers = count(10);
    puckers.distinct_rmsd = 0.4;
    const std::vector<Structure> e = build_conformers("CN1CCC(CC1)c1ccccc1", {}, puckers);
    const std::vector<int> ring{1, 2, 3, 4, 5, 6};
    size_t chairs = 0, first_other = 0;
    for (size_t k = 0; k < e.size(); ++k) {
        if (is_chair(ring_torsions(e[k].positions, ring)))
            ++chairs;
        else if (first_other == 0)
            first_other = k;
    }
    EXPECT_GE(chairs, 2u);
    ASSERT_GT(first_other, 0u) << "no ring shape other than the chair among " << e.size();
    EXPECT_GT(e[first_other].conformer->relative_energy, 2.0);

    // Envelopes differ by little (0.2-0.4 A over the heavy atoms): seen below the default threshold.
    ConformerSettings close = count(10);
    close.distinct_rmsd = 0.2;
    const std::vector<Structure> c = build_conformers("CC1CCCC1O", {}, close);
    const std::vector<int> five{1, 2, 3, 4, 5};
    std::set<int> flaps;  // the ring atom opposite the torsion nearest zero
    for (const Structure& s : c) {
        const std::vector<double> t = ring_torsions(s.positions, five);
        size_t flat = 0;
        for (size_t k = 1; k < 5; ++k)
            if (std::abs(t[k]) < std::abs(t[flat])) flat = k;
        flaps.insert(five[(flat + 3) % 5]);
    }
    EXPECT_GE(flaps.size(), 3u) << c.size() << " conformers";
}


// A ring nitrogen inverts freely: N-methylpiperidine gives its methyl equatorial, then axial (about 3 kcal/mol above
// in the gas phase, from memory). Before, one conformer came back (the inversion was not sampled).
TEST(Ensemble, RingNitrogenInversionIsSampled) {
    const std::vector<Structure> e = build_conformers("CN1CCCCC1", {}, count(10));
    ASSERT_EQ(e.size(), 2u);
    expect_equatorial_then_axial(e);
    EXPECT_GT(e[1].conformer->relative_energy, 0.5);
}

// Whether the two methyls of a 1,4-dimethylcyclohexane (atoms 0 and 5 on ring atoms 1 and 4, SMILES CC1CCC(C)CC1) lie
// on one face of the ring (cis).
bool cis_dimethyl(const std::vector<Vector3d>& x) {
    const Vector3d n = ring_normal(x, {1, 2, 3, 4, 6, 7});
    return ((x[0] - x[1]).dot(n) > 0) == ((x[5] - x[4]).dot(n) > 0);
}

// An ensemble is of one stereoisomer, also where nothing is written: 1,4-dimethylcyclohexane without marks came out
// trans and cis mixed (the cis from substituents traded at one ring carbon, and from the other ring shapes); now
// every conformer has the first one's relative configuration, and both chairs of the trans isomer are there
// (diequatorial, then diaxial: 2 x 1.7 kcal/mol above by A-values, Eliel and Wilen, from memory).
TEST(Ensemble, UnwrittenStereocentresKeepTheFirstBuildsConfiguration) {
    const std::vector<Structure> e = build_conformers("CC1CCC(C)CC1", {}, count(10));
    ASSERT_GE(e.size(), 2u);
    const bool cis = cis_dimethyl(e[0].positions);
    for (const Structure& s : e) EXPECT_EQ(cis_dimethyl(s.positions), cis);
    if (!cis) {
        const std::vector<int> ring{1, 2, 3, 4, 6, 7};
        EXPECT_GT(substituent_tilt(e[0].positions, ring, 1, 0), 60);
        bool diaxial = false;
        for (const Structure& s : e)
            diaxial = diaxial || (substituent_tilt(s.positions, ring, 1, 0) < 30 && substituent_tilt(s.positions, ring, 4, 5) < 30);
        EXPECT_TRUE(diaxial);
    }
}

}  // namespace
}  // namespace repel
