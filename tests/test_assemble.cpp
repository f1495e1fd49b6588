// Whole-molecule assembly, judged from the coordinates: bond lengths, angles, ring shapes, planarity, contacts.
#include <gtest/gtest.h>

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <Eigen/SVD>
#include <algorithm>
#include <array>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>
#include <utility>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "assemble/place.hpp"
#include "core/bond_length.hpp"
#include "core/element.hpp"
#include "domains/domains.hpp"
#include "graph/rings.hpp"
#include "input/smiles.hpp"

using namespace repel;
using Eigen::Vector3d;

namespace {

Structure build_smiles(const std::string& smiles, bool refine = true) {
    return repel::build(smiles, {.notation = TextNotation::smiles, .refine = refine});
}

double dist(const Structure& s, int a, int b) { return (s.positions[a] - s.positions[b]).norm(); }

double angle(const Structure& s, int a, int b, int c) {
    const Vector3d u = (s.positions[a] - s.positions[b]).normalized(), v = (s.positions[c] - s.positions[b]).normalized();
    return std::acos(std::clamp(u.dot(v), -1.0, 1.0)) * 180 / M_PI;
}

double torsion(const Structure& s, int a, int b, int c, int d) {
    return dihedral(s.positions[a], s.positions[b], s.positions[c], s.positions[d]) * 180 / M_PI;
}

// Every bond at the length the domain analysis gives it (covalent radii, domains.hpp) within tol.
void expect_bond_lengths(const Structure& s, double tol) {
    const Molecule& m = s.molecule;
    const MoleculeDomains d = analyse_domains(m, false);
    ASSERT_EQ(d.bond_lengths.size(), m.bonds.size());
    for (size_t e = 0; e < m.bonds.size(); ++e) {
        const Bond& b = m.bonds[e];
        EXPECT_NEAR(dist(s, b.a, b.b), d.bond_lengths[e], tol) << "bond " << b.a + 1 << "-" << b.b + 1;
    }
}

// Shortest path length in bonds (small molecules only).
int bonds_apart(const Molecule& m, int a, int b) {
    std::vector<int> d(m.atom_count(), -1);
    std::vector<int> q{a};
    d[a] = 0;
    for (size_t k = 0; k < q.size(); ++k)
        for (const Neighbor& n : m.neighbors(q[k]))
            if (d[n.atom] < 0) {
                d[n.atom] = d[q[k]] + 1;
                q.push_back(n.atom);
            }
    return d[b] < 0 ? 1000 : d[b];
}

// No two atoms more than three bonds apart closer than `fraction` of their van der Waals sum (Bondi radii via
// element()).
void expect_no_clash(const Structure& s, double fraction) {
    const Molecule& m = s.molecule;
    for (int i = 0; i < m.atom_count(); ++i)
        for (int j = i + 1; j < m.atom_count(); ++j) {
            if (bonds_apart(m, i, j) <= 3) continue;
            const double sum = element(m.atoms[i].z).r_vdw + element(m.atoms[j].z).r_vdw;
            EXPECT_GE(dist(s, i, j), fraction * sum) << "atoms " << i + 1 << " and " << j + 1;
        }
}

// Largest distance of the given atoms from their best plane.
double plane_deviation(const Structure& s, const std::vector<int>& atoms) {
    Vector3d c = Vector3d::Zero();
    for (int a : atoms) c += s.positions[a];
    c /= static_cast<double>(atoms.size());
    Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
    for (int a : atoms) cov += (s.positions[a] - c) * (s.positions[a] - c).transpose();
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> es(cov);
    const Vector3d normal = es.eigenvectors().col(0);
    double worst = 0;
    for (int a : atoms) worst = std::max(worst, std::abs((s.positions[a] - c).dot(normal)));
    return worst;
}

// Every angle between bonded neighbours of every centre as the domain analysis predicts it, within tol degrees.
void expect_domain_angles(const Structure& s, double tol) {
    const MoleculeDomains d = analyse_domains(s.molecule);
    for (const CentreDomains& c : d.atoms)
        for (const PredictedAngle& a : c.angles)
            EXPECT_NEAR(angle(s, a.a, c.atom, a.b), a.degrees, tol)
                << "angle " << a.a + 1 << "-" << c.atom + 1 << "-" << a.b + 1;
}

}  // namespace

// ---- single-centre species: the centre at the origin, each ligand along its domain direction ----

TEST(SingleCentre, SulfurTetrafluorideIsASeesaw) {
    const Structure s = build_smiles("F[S](F)(F)F", false);
    ASSERT_EQ(s.positions.size(), 5u);
    EXPECT_LT(s.positions[1].norm(), 1e-9);  // the centre at the origin
    expect_bond_lengths(s, 1e-6);
    expect_domain_angles(s, 1e-6);
    // Seesaw: one F-S-F pair nearly linear (axial), one pair well below 120 (equatorial), no pair near 180 twice.
    std::vector<double> a;
    for (int i : {0, 2, 3, 4})
        for (int j : {0, 2, 3, 4})
            if (i < j) a.push_back(angle(s, i, 1, j));
    std::sort(a.begin(), a.end());
    EXPECT_GT(a.back(), 130.0);
    EXPECT_LT(a.front(), 105.0);
}

TEST(SingleCentre, XenonTetrafluorideIsSquarePlanar) {
    const Structure s = build_smiles("F[Xe](F)(F)F", false);
    EXPECT_LT(s.positions[1].norm(), 1e-9);
    EXPECT_LT(plane_deviation(s, {0, 1, 2, 3, 4}), 1e-3);
    expect_bond_lengths(s, 1e-6);
}

TEST(SingleCentre, SulfateHasItsDomainAnglesAndChargeMinusTwo) {
    const Structure s = build_smiles("[O-]S(=O)(=O)[O-]", false);
    EXPECT_EQ(s.charge, -2);
    EXPECT_EQ(s.multiplicity, 1);
    EXPECT_LT(s.positions[1].norm(), 1e-9);
    expect_domain_angles(s, 1e-6);
    expect_bond_lengths(s, 1e-6);
}

TEST(SingleCentre, AmmoniumIsATetrahedron) {
    const Structure s = build_smiles("[NH4+]", false);
    ASSERT_EQ(s.positions.size(), 5u);
    EXPECT_EQ(s.charge, 1);
    for (int i = 1; i < 5; ++i)
        for (int j = i + 1; j < 5; ++j) EXPECT_NEAR(angle(s, i, 0, j), 109.47, 0.01);
}

TEST(SingleCentre, WaterIsBent) {
    const Structure s = build_smiles("O", false);
    ASSERT_EQ(s.positions.size(), 3u);
    expect_domain_angles(s, 1e-6);
    EXPECT_LT(angle(s, 1, 0, 2), 120.0);
}

TEST(SingleCentre, NitrogenDioxideIsABentDoublet) {
    const Structure s = build_smiles("O=[N+][O-]", false);
    EXPECT_EQ(s.multiplicity, 2);
    EXPECT_EQ(s.charge, 0);
    EXPECT_EQ(s.molecule.atoms[1].radical_electrons, 1);
    EXPECT_EQ(s.molecule.atoms[0].radical_electrons, 0);
    expect_domain_angles(s, 1e-6);
    const double a = angle(s, 0, 1, 2);
    EXPECT_GT(a, 115.0);
    EXPECT_LT(a, 170.0);
}

TEST(SingleCentre, IodineHeptafluorideHasSevenLigands) {
    const Structure s = build_smiles("F[I](F)(F)(F)(F)(F)F", false);
    ASSERT_EQ(s.positions.size(), 8u);
    expect_bond_lengths(s, 1e-6);
    double closest = 1e9;
    for (int i = 0; i < 8; ++i)
        for (int j = i + 1; j < 8; ++j)
            if (i != 1 && j != 1) closest = std::min(closest, angle(s, i, 1, j));
    EXPECT_GT(closest, 65.0);  // pentagonal bipyramid: nearest ligands 72 degrees apart
}

TEST(SingleCentre, LoneIonSitsAtTheOrigin) {
    const Structure s = build_smiles("[Cl-]");
    ASSERT_EQ(s.positions.size(), 1u);
    EXPECT_LT(s.positions[0].norm(), 1e-12);
    EXPECT_EQ(s.charge, -1);
}

TEST(SingleCentre, DiatomicAtItsBondLength) {
    const Structure s = build_smiles("[H][H]", false);
    // H-H has a length of its own in the domain analysis (lib/core/bond_length.cpp), not the plain radii sum that
    // bond_length() keeps: the built bond is the analysis's, and that is the measured 0.741 A (Huber and Herzberg,
    // Constants of Diatomic Molecules, 1979, from memory).
    EXPECT_NEAR(dist(s, 0, 1), analyse_domains(s.molecule, false).bond_lengths[0], 1e-9);
    EXPECT_NEAR(dist(s, 0, 1), 0.741, 0.005);
    const Structure co = build_smiles("[C-]#[O+]", false);
    EXPECT_NEAR(dist(co, 0, 1), bond_length(6, 8, 3), 1e-9);
}

// ---- chains and torsions ----

TEST(Chains, HexaneIsAllAnti) {
    const Structure s = build_smiles("CCCCCC", false);
    expect_bond_lengths(s, 1e-6);
    expect_domain_angles(s, 1e-6);
    for (int i = 0; i + 3 < 6; ++i) EXPECT_NEAR(std::abs(torsion(s, i, i + 1, i + 2, i + 3)), 180.0, 1e-6);
    expect_no_clash(s, 0.8);
}

TEST(Chains, EthaneIsStaggered) {
    const Structure s = build_smiles("CC", false);
    // H-C-C-H torsions are 60 or 180 degrees, never eclipsed.
    for (int a = 2; a < 5; ++a)
        for (int b = 5; b < 8; ++b) {
            const double t = std::abs(torsion(s, a, 0, 1, b));
            EXPECT_TRUE(std::abs(t - 60) < 1 || std::abs(t - 180) < 1) << t;
        }
}

TEST(Chains, ButadieneIsPlanarSTrans) {
    const Structure s = build_smiles("C=CC=C", false);
    EXPECT_NEAR(std::abs(torsion(s, 0, 1, 2, 3)), 180.0, 1e-6);
    std::vector<int> all(s.positions.size());
    for (size_t i = 0; i < all.size(); ++i) all[i] = static_cast<int>(i);
    EXPECT_LT(plane_deviation(s, all), 1e-3);
}

TEST(Chains, SecondaryAmideIsTransAndPlanar) {
    // N-methylacetamide: the two methyl carbons anti across the C-N bond (the trans amide; common practice).
    const Structure s = build_smiles("CC(=O)NC", false);
    EXPECT_NEAR(std::abs(torsion(s, 0, 1, 3, 4)), 180.0, 1.0);
    EXPECT_NEAR(std::abs(torsion(s, 2, 1, 3, 4)), 0.0, 1.0);
}

TEST(Chains, EsterIsZ) {
    // Methyl acetate: the O-methyl cis to the carbonyl oxygen (the Z ester; common practice).
    const Structure s = build_smiles("CC(=O)OC", false);
    EXPECT_NEAR(std::abs(torsion(s, 2, 1, 3, 4)), 0.0, 1.0);
}

// Amide and ester links on aromatic rings: planar and in the preferred form, built and refined. The ideal frames put
// an anilide's or aryl ester's carbonyl O 1.7 A from the ring's ortho hydrogen, and the assembly used to turn the link
// by 90 degrees to avoid it; GFN2-xTB (Debian's xtb) then took 46 cycles from paracetamol and 42 from aspirin, and
// went to the cis amide (measured); from the planar start 8 and 8. Expected (common practice; GFN2-xTB's optimum of
// paracetamol, measured: O=C-N-C 179.1 in its cis form, the trans one lower): the carbonyl O syn to the single-bonded
// partner (O=C-X-Y within 10 degrees of 0), and the O...H contact opened past 2.0 A by the refinement.
// A benzylic CH2 of an alkyl chain: the chain's carbon perpendicular to the ring (ethylbenzene's ethyl group, from
// memory; GFN2-xTB's minimum 1.34 kcal/mol below the in-plane saddle the assembly used to build, measured). A CH2
// bearing O stays in the plane (benzyl alcohol: xtb reached a lower minimum from there, measured).
TEST(Chains, BenzylicAlkylChainStandsPerpendicularToTheRing) {
    for (const auto& [smiles, atoms] : {std::pair{"CCc1ccccc1", std::array<int, 4>{0, 1, 2, 3}},
                                        std::pair{"CCCc1ccccc1", std::array<int, 4>{1, 2, 3, 4}}}) {
        const Structure s = build_smiles(smiles);
        EXPECT_NEAR(std::abs(torsion(s, atoms[0], atoms[1], atoms[2], atoms[3])), 90.0, 10.0) << smiles;
    }
    const Structure alcohol = build_smiles("OCc1ccccc1");
    const double phi = std::abs(torsion(alcohol, 0, 1, 2, 3));
    EXPECT_LT(std::min(phi, 180 - phi), 10.0);
}

// A methine on an aromatic ring keeps its hydrogen in the ring's plane, and a sulfonyl its other substituent
// perpendicular to it. GFN2-xTB (Debian's xtb), measured from starts turned in steps: cumene's optimum has the
// hydrogen in the plane (from memory too), 1-phenylethanol's within 35 degrees of it; from the former start (a methyl
// in the plane) xtb needed 59-94 cycles, from this one 8-20. Methyl phenyl sulfone in the plane is a saddle xtb keeps,
// 2.25 kcal/mol above the perpendicular minimum; benzenesulfonamide's N lies 88-98 degrees out of the plane at the
// optimum. The last case reaches the ring from the sulfonyl's side (the seven-membered ring is built first).
TEST(Chains, RingSideHydrogenInThePlaneAndSulfonylSubstituentPerpendicular) {
    auto folded = [](double phi) { return std::min(std::abs(phi), 180 - std::abs(phi)); };
    for (const auto& [smiles, atoms] : {std::pair{"CC(C)c1ccccc1", std::array<int, 4>{4, 3, 1, 12}},
                                        std::pair{"CC(O)c1ccccc1", std::array<int, 4>{4, 3, 1, 12}},
                                        std::pair{"C[C@@H](C(=O)O)c1ccc(CC(C)C)cc1", std::array<int, 4>{6, 5, 1, 0}},
                                        // nicotine: the pyrrolidine entered from the pyridine, its hydrogen placed
                                        // after it (from the ring's frame)
                                        std::pair{"CN1CCC[C@H]1c1cccnc1", std::array<int, 4>{7, 6, 5, 21}}}) {
        for (bool refine : {false, true}) {
            const Structure s = build_smiles(smiles, refine);
            if (atoms[3] == 0) {  // ibuprofen: the methyl 60 degrees out of the plane, so its hydrogen in it
                EXPECT_NEAR(folded(torsion(s, atoms[0], atoms[1], atoms[2], atoms[3])), 60.0, 15.0) << smiles;
                continue;
            }
            ASSERT_EQ(s.molecule.atoms[static_cast<size_t>(atoms[3])].z, 1) << smiles;
            EXPECT_LT(folded(torsion(s, atoms[0], atoms[1], atoms[2], atoms[3])), 15.0)
                << smiles << (refine ? " refined" : " assembled");
        }
    }
    for (const auto& [smiles, atoms] : {std::pair{"CS(=O)(=O)c1ccccc1", std::array<int, 4>{5, 4, 1, 0}},
                                        std::pair{"NS(=O)(=O)c1ccccc1", std::array<int, 4>{5, 4, 1, 0}},
                                        std::pair{"O=S(=O)(N1CCCCCC1)c1ccccc1", std::array<int, 4>{11, 10, 1, 3}}})
        for (bool refine : {false, true}) {
            const Structure s = build_smiles(smiles, refine);
            EXPECT_NEAR(folded(torsion(s, atoms[0], atoms[1], atoms[2], atoms[3])), 90.0, 15.0)
                << smiles << (refine ? " refined" : " assembled");
        }
    // A diaryl methine is a propeller and keeps the common rule: no ring of benzhydrol with its hydrogen in the plane
    // of both.
    const Structure benzhydrol = build_smiles("OC(c1ccccc1)c1ccccc1");
    EXPECT_TRUE(benzhydrol.warnings.empty());
}

// Which substituent of a tetrahedral carbon an acid's, ester's or ketone's C=O eclipses. GFN2-xTB (Debian's xtb),
// measured from starts turned in 60-degree steps: alpha-amino and alpha-hydroxy acids and esters have the C=O syn to
// the N or O at their lowest minimum (N-C-C=O 0 to -40; alanine methyl ester 62 cycles from the former start, 16
// from this one; lactic acid's former start was a minimum 2.6 kcal/mol up), and isobutyric acid, its ester and
// 3-methylbutan-2-one the C=O anti to the methine hydrogen (7 cycles, 22-24 from the former start).
TEST(Chains, CarbonylNextToATetrahedralCarbonEclipsesTheMeasuredSubstituent) {
    for (const auto& [smiles, atoms] : {std::pair{"C[C@H](N)C(=O)OC", std::array<int, 4>{2, 1, 3, 4}},
                                        std::pair{"CC(C)[C@H](N)C(=O)O", std::array<int, 4>{4, 3, 5, 6}},
                                        std::pair{"C[C@H](O)C(=O)O", std::array<int, 4>{2, 1, 3, 4}}})
        for (bool refine : {false, true}) {
            const Structure s = build_smiles(smiles, refine);
            EXPECT_LT(std::abs(torsion(s, atoms[0], atoms[1], atoms[2], atoms[3])), 20.0)
                << smiles << (refine ? " refined" : " assembled");
        }
    for (bool refine : {false, true}) {
        const Structure s = build_smiles("CC(C)C(=O)OC", refine);  // methyl isobutyrate: H10 on C1, O4 the C=O
        ASSERT_EQ(s.molecule.atoms[10].z, 1);
        EXPECT_GT(std::abs(torsion(s, 10, 1, 3, 4)), 160.0) << (refine ? " refined" : " assembled");
    }
    // Propanoic acid keeps its C=O eclipsing the methyl (the lowest minimum, measured the same way).
    const Structure acid = build_smiles("CCC(=O)O");
    EXPECT_LT(std::abs(torsion(acid, 0, 1, 2, 3)), 10.0);
}

TEST(Chains, AmideAndEsterLinksOnAromaticRingsArePlanar) {
    struct Case {
        const char* smiles;
        std::array<int, 4> link;  // O, C, X, Y: O=C-X-Y
    };
    for (const Case& c : {Case{"CC(=O)Nc1ccccc1", {2, 1, 3, 4}},         // acetanilide
                          Case{"CC(=O)Nc1ccc(O)cc1", {2, 1, 3, 4}},      // paracetamol
                          Case{"CNC(=O)c1ccccc1", {3, 2, 1, 0}},         // N-methylbenzamide
                          Case{"O=C(Nc1ccccc1)c1ccccc1", {0, 1, 2, 3}},  // benzanilide
                          Case{"CC(=O)Oc1ccccc1", {2, 1, 3, 4}},         // phenyl acetate
                          Case{"CC(=O)Oc1ccccc1C(=O)O", {2, 1, 3, 4}}}) {  // aspirin's ester
        for (bool refine : {false, true}) {
            const Structure s = build_smiles(c.smiles, refine);
            EXPECT_LT(std::abs(torsion(s, c.link[0], c.link[1], c.link[2], c.link[3])), 10.0)
                << c.smiles << (refine ? " refined" : " assembled");
            if (!refine) continue;
            double closest = 1e9;
            for (int h = 0; h < static_cast<int>(s.positions.size()); ++h)
                if (s.molecule.atoms[h].z == 1) closest = std::min(closest, dist(s, c.link[0], h));
            EXPECT_GT(closest, 2.0) << c.smiles;
            EXPECT_TRUE(s.warnings.empty()) << c.smiles << ": " << s.warnings.front();
        }
    }
}

// Delocalised lone pairs in the built structure, against G2 (ase.collections.g2 in Debian's python3-ase,
// MP2(full)/6-31G(d)): acetamide's N is nearly planar (angles at N sum to 354.4), methyl formate's C-O-C is 114.0
// and methyl nitrite's C-O-N 114.6 (the analysis with both O pairs as sigma domains built 103.5 and 103.0).
TEST(Chains, AmideNitrogenIsPlanarAndEsterOxygenOpens) {
    const Structure amide = build_smiles("CC(N)=O");
    double sum = 0;
    const auto& nbs = amide.molecule.neighbors(2);
    for (size_t p = 0; p < nbs.size(); ++p)
        for (size_t q = p + 1; q < nbs.size(); ++q) sum += angle(amide, nbs[p].atom, 2, nbs[q].atom);
    EXPECT_EQ(nbs.size(), 3u);
    EXPECT_NEAR(sum, 354.4, 6.0);
    EXPECT_NEAR(angle(build_smiles("COC=O"), 0, 1, 2), 114.0, 6.0);
    EXPECT_NEAR(angle(build_smiles("CON=O"), 0, 1, 2), 114.6, 6.0);
    EXPECT_TRUE(build_smiles("COC=O").warnings.empty());
}

// Every angle X-O-Y (X, Y of the given elements) at a two-coordinate oxygen of the structure.
std::vector<double> bridge_angles(const Structure& s, int x, int y) {
    std::vector<double> out;
    const Molecule& m = s.molecule;
    for (int i = 0; i < m.atom_count(); ++i) {
        if (m.atoms[i].z != 8 || m.degree(i) != 2) continue;
        const int a = m.neighbors(i)[0].atom, b = m.neighbors(i)[1].atom;
        const int za = m.atoms[a].z, zb = m.atoms[b].z;
        if ((za == x && zb == y) || (za == y && zb == x)) out.push_back(angle(s, a, i, b));
    }
    return out;
}

// An oxygen between a heavy p-block atom and another heavy atom counts one lone pair delocalised (domains.cpp,
// delocalised_lone_pair) and the pair left is smaller (model.cpp, bridge_lone_pair_factor, fitted on P-O-P and S-O-S).
// Measured (from memory): P-O-P about 130 and C-O-P about 118 in ATP and pyrophosphate crystal structures, S-O-S
// about 124 in pyrosulfate (crystal), Si-O-Si 148 in hexamethyldisiloxane (gas-phase electron diffraction). With both
// pairs as domains every one of them was built at 104-110. Judged within 4 degrees, but Si-O-Si, which the 12-degree
// tether of the sphere relaxation caps (README.md, known limits): asserted is its opening to at least 130.
TEST(Chains, OxygenBetweenHeavyAtomsOpens) {
    const Structure atp = build_smiles("Nc1ncnc2c1ncn2[C@@H]1O[C@H](COP(=O)([O-])OP(=O)([O-])OP(=O)([O-])[O-])[C@@H](O)[C@H]1O");
    const std::vector<double> pop = bridge_angles(atp, 15, 15), cop = bridge_angles(atp, 6, 15);
    ASSERT_EQ(pop.size(), 2u);
    ASSERT_EQ(cop.size(), 1u);
    for (double a : pop) EXPECT_NEAR(a, 130.0, 4.0) << "P-O-P";
    EXPECT_NEAR(cop[0], 118.0, 4.0) << "C-O-P";
    const std::vector<double> siosi = bridge_angles(build_smiles("C[Si](C)(C)O[Si](C)(C)C"), 14, 14);
    ASSERT_EQ(siosi.size(), 1u);
    EXPECT_GT(siosi[0], 130.0) << "Si-O-Si";
    const std::vector<double> sos = bridge_angles(build_smiles("[O-]S(=O)(=O)OS(=O)(=O)[O-]"), 16, 16);
    ASSERT_EQ(sos.size(), 1u);
    EXPECT_NEAR(sos[0], 124.0, 4.0) << "S-O-S";
    // Dimethyl ether keeps both pairs (no heavy neighbour).
    EXPECT_LT(bridge_angles(build_smiles("COC"), 6, 6)[0], 109.0);
}

// The S8 crown: S-S-S 108 deg (crystal, from memory). Every angle was 97 (the AX2E2 angle of H2S); the step for two
// heavy ligands at a centre with lone pairs (model.cpp, fitted on OCl2 and SCl2) opens it to about 105.
TEST(Rings, CycloOctasulfurOpensItsAngles) {
    const Structure s8 = build_smiles("S1SSSSSSS1");
    for (int i = 0; i < 8; ++i) EXPECT_NEAR(angle(s8, (i + 7) % 8, i, (i + 1) % 8), 108.0, 4.0) << "atom " << i + 1;
}

TEST(Chains, BranchedAlkaneHasNoClash) {
    const Structure s = build_smiles("CC(C)(C)C(C)(C)C(C)(C)C(C)(C)C");
    expect_no_clash(s, 0.6);
}

// ---- rings ----

namespace {
std::vector<double> ring_torsions(const Structure& s, const std::vector<int>& ring) {
    std::vector<double> t;
    const size_t n = ring.size();
    for (size_t i = 0; i < n; ++i) t.push_back(torsion(s, ring[i], ring[(i + 1) % n], ring[(i + 2) % n], ring[(i + 3) % n]));
    return t;
}
// A chair: every ring torsion gauche (40-75 degrees) with alternating signs; a boat has two torsions near 0.
bool is_chair(const Structure& s, const std::vector<int>& ring) {
    const auto t = ring_torsions(s, ring);
    for (size_t i = 0; i < t.size(); ++i) {
        if (std::abs(t[i]) < 40 || std::abs(t[i]) > 75) return false;
        if (t[i] * t[(i + 1) % t.size()] > 0) return false;
    }
    return true;
}
}  // namespace

TEST(Rings, BenzeneIsAFlatRegularHexagon) {
    const Structure s = build_smiles("c1ccccc1");
    std::vector<int> all(12);
    for (int i = 0; i < 12; ++i) all[i] = i;
    EXPECT_LT(plane_deviation(s, all), 0.01);
    for (int i = 0; i < 6; ++i) EXPECT_NEAR(dist(s, i, (i + 1) % 6), dist(s, 0, 1), 0.005);
    for (int i = 0; i < 6; ++i) EXPECT_NEAR(angle(s, (i + 5) % 6, i, (i + 1) % 6), 120.0, 1.0);
}

TEST(Rings, CyclohexaneIsAChair) {
    EXPECT_TRUE(is_chair(build_smiles("C1CCCCC1", false), {0, 1, 2, 3, 4, 5}));
    EXPECT_TRUE(is_chair(build_smiles("C1CCCCC1"), {0, 1, 2, 3, 4, 5}));
    EXPECT_TRUE(is_chair(build_smiles("C1CCOCC1"), {0, 1, 2, 3, 4, 5}));
    EXPECT_TRUE(is_chair(build_smiles("C1CNCCN1"), {0, 1, 2, 3, 4, 5}));
}

TEST(Rings, SubstituentOnCyclohexaneIsEquatorial) {
    // Methylcyclohexane: the methyl carbon lies near the ring's mean plane, not along its normal (common practice:
    // the equatorial conformer is the more stable).
    const Structure s = build_smiles("CC1CCCCC1", false);
    std::vector<int> ring{1, 2, 3, 4, 5, 6};
    Vector3d c = Vector3d::Zero();
    for (int a : ring) c += s.positions[a];
    c /= 6;
    Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
    for (int a : ring) cov += (s.positions[a] - c) * (s.positions[a] - c).transpose();
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> es(cov);
    const Vector3d normal = es.eigenvectors().col(0);
    const Vector3d bond = (s.positions[0] - s.positions[1]).normalized();
    EXPECT_LT(std::abs(bond.dot(normal)), 0.5);  // axial would be about 1
}

TEST(Rings, CyclopentaneIsPuckered) {
    const Structure s = build_smiles("C1CCCC1");
    EXPECT_GT(plane_deviation(s, {0, 1, 2, 3, 4}), 0.1);
    expect_bond_lengths(s, 0.03);
}

TEST(Rings, SmallRingsAreFlatPolygons) {
    const Structure s = build_smiles("C1CC1", false);
    EXPECT_NEAR(angle(s, 0, 1, 2), 60.0, 1e-6);
    const Structure o = build_smiles("C1CO1", false);
    expect_bond_lengths(o, 0.06);
}

TEST(Rings, DecalinIsTwoChairs) {
    const Structure s = build_smiles("C1CCC2CCCCC2C1");
    EXPECT_TRUE(is_chair(s, {0, 1, 2, 3, 8, 9}));
    EXPECT_TRUE(is_chair(s, {3, 4, 5, 6, 7, 8}));
    expect_no_clash(s, 0.6);
}

TEST(Rings, NaphthaleneAndIndoleAreFlat) {
    for (const char* smi : {"c1ccc2ccccc2c1", "c1ccc2[nH]ccc2c1", "c1cc2ccc3cccc4ccc(c1)c2c34"}) {
        const Structure s = build_smiles(smi);
        std::vector<int> all(s.positions.size());
        for (size_t i = 0; i < all.size(); ++i) all[i] = static_cast<int>(i);
        EXPECT_LT(plane_deviation(s, all), 0.05) << smi;
        expect_bond_lengths(s, 0.05);
    }
}

TEST(Rings, SteroidRingsBAndCAreChairs) {
    // Testosterone: rings B and C saturated chairs (ring A carries the enone, ring D is five-membered).
    const Structure s = build_smiles("C[C@]12CC[C@H]3[C@@H](CCC4=CC(=O)CC[C@]34C)[C@@H]1CC[C@@H]2O");
    EXPECT_TRUE(is_chair(s, {1, 2, 3, 4, 5, 16}));   // ring C: atoms 2-6 and 17
    EXPECT_TRUE(is_chair(s, {4, 5, 6, 7, 8, 14}));   // ring B
    expect_no_clash(s, 0.6);
}

TEST(Rings, BridgedAndCagedSystemsKeepTheirBonds) {
    for (const char* smi : {"C1CC2CCC1C2", "C1C2CC3CC1CC(C2)C3", "C12C3C4C1C5C2C3C45", "C1CC2CC3CC1C23",
                            "C1CC2CC3CCC1C3C2" /* twistane */, "C1CC2CCC1CC2" /* bicyclo[2.2.2]octane */}) {
        const Structure s = build_smiles(smi);
        expect_bond_lengths(s, 0.06);
        expect_no_clash(s, 0.6);
    }
}

TEST(Rings, AdamantaneIsFourChairs) {
    const Structure s = build_smiles("C1C2CC3CC1CC(C2)C3");
    EXPECT_TRUE(is_chair(s, {0, 1, 2, 3, 4, 5}));
    EXPECT_TRUE(is_chair(s, {1, 2, 3, 9, 7, 8}));
}

TEST(Rings, CubaneIsACubeAndIsWarnedAbout) {
    const Structure s = build_smiles("C12C3C4C1C5C2C3C45");
    for (const Bond& b : s.molecule.bonds)
        if (s.molecule.atoms[b.a].z == 6 && s.molecule.atoms[b.b].z == 6)
            for (const Neighbor& n : s.molecule.neighbors(b.b))
                if (n.atom != b.a && s.molecule.atoms[n.atom].z == 6) {
                    EXPECT_NEAR(angle(s, b.a, b.b, n.atom), 90.0, 4.0);
                }
    bool warned = false;
    for (const auto& w : s.warnings) warned |= w.find("strained") != std::string::npos;
    EXPECT_TRUE(warned);
    // Each hydrogen points along the cube's body diagonal: H-C-C arccos(-1/sqrt 3) = 125.26 degrees by symmetry
    // (symmetry alone gives it; the check is that the ring rule keeps it).
    for (int c = 0; c < s.molecule.atom_count(); ++c) {
        if (s.molecule.atoms[c].z != 6) continue;
        for (const Neighbor& h : s.molecule.neighbors(c)) {
            if (s.molecule.atoms[h.atom].z != 1) continue;
            for (const Neighbor& o : s.molecule.neighbors(c))
                if (o.atom != h.atom) {
                    EXPECT_NEAR(angle(s, h.atom, c, o.atom), 125.26, 2.0);
                }
        }
    }
}

// Bicyclobutane's bridgehead hydrogens (G2, MP2(full)/6-31G(d), ase.collections.g2: H-C-C 128.1 to the other
// bridgehead, 129.6 to the CH2 carbons) point away from the three ring bonds, not at 109.5 degrees to them.
TEST(Rings, BicyclobutaneBridgeheadHydrogensPointAway) {
    const Structure s = build_smiles("C1C2C1C2");
    int checked = 0;
    for (int c = 0; c < s.molecule.atom_count(); ++c) {
        int carbons = 0, h = -1;
        for (const Neighbor& n : s.molecule.neighbors(c)) {
            if (s.molecule.atoms[n.atom].z == 6) ++carbons;
            if (s.molecule.atoms[n.atom].z == 1) h = n.atom;
        }
        if (s.molecule.atoms[c].z != 6 || carbons != 3) continue;
        for (const Neighbor& n : s.molecule.neighbors(c))
            if (n.atom != h) {
                EXPECT_NEAR(angle(s, h, c, n.atom), 129.0, 8.0);
                ++checked;
            }
    }
    EXPECT_EQ(checked, 6);
}

// Furan's alpha C-H leans towards the oxygen (G2: H-C-O 115.5, H-C-C 134.0): the ring leaves 252 degrees to the
// two exocyclic angles, shared keeping the analysis' difference between them.
TEST(Rings, FuranAlphaHydrogenLeansTowardsTheOxygen) {
    const Structure s = build_smiles("c1ccoc1");
    const int o = 3, c = 2;  // atoms as written: c1 c c o c1
    ASSERT_EQ(s.molecule.atoms[o].z, 8);
    int h = -1, other = -1;
    for (const Neighbor& n : s.molecule.neighbors(c)) {
        if (s.molecule.atoms[n.atom].z == 1) h = n.atom;
        else if (n.atom != o) other = n.atom;
    }
    ASSERT_GE(h, 0);
    EXPECT_LT(angle(s, h, c, o), angle(s, h, c, other));
}

namespace {
// Number of crossings of the ring's projection on its best plane: zero proves the ring is not knotted.
int projected_crossings(const Structure& s, const std::vector<int>& ring) {
    Vector3d c = Vector3d::Zero();
    for (int a : ring) c += s.positions[a];
    c /= static_cast<double>(ring.size());
    Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
    for (int a : ring) cov += (s.positions[a] - c) * (s.positions[a] - c).transpose();
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> es(cov);
    const Vector3d u = es.eigenvectors().col(2), v = es.eigenvectors().col(1);
    std::vector<Eigen::Vector2d> p;
    for (int a : ring) p.emplace_back((s.positions[a] - c).dot(u), (s.positions[a] - c).dot(v));
    auto cross = [](Eigen::Vector2d a, Eigen::Vector2d b) { return a.x() * b.y() - a.y() * b.x(); };
    int count = 0;
    const size_t n = p.size();
    for (size_t i = 0; i < n; ++i)
        for (size_t j = i + 2; j < n; ++j) {
            if (i == 0 && j == n - 1) continue;
            const auto a = p[i], b = p[(i + 1) % n], q = p[j], r = p[(j + 1) % n];
            const double d1 = cross(b - a, q - a), d2 = cross(b - a, r - a), d3 = cross(r - q, a - q), d4 = cross(r - q, b - q);
            if (d1 * d2 < 0 && d3 * d4 < 0) ++count;
        }
    return count;
}
}  // namespace

TEST(Rings, ThirtyMemberedMacrocycleIsOpenAndUnknotted) {
    const Structure s = build_smiles("C1CCCCCCCCCCCCCCCCCCCCCCCCCCCCC1");
    std::vector<int> ring(30);
    for (int i = 0; i < 30; ++i) ring[i] = i;
    EXPECT_EQ(projected_crossings(s, ring), 0);
    expect_bond_lengths(s, 0.03);
    expect_no_clash(s, 0.6);
}

TEST(Rings, MacrocyclicLactoneAndCrownEther) {
    for (const char* smi : {"O=C1CCCCCCCCCCCCCCO1", "C1COCCOCCOCCOCCOCCO1"}) {
        const Structure s = build_smiles(smi);
        expect_bond_lengths(s, 0.05);
        expect_no_clash(s, 0.6);
    }
}

TEST(Rings, SpiroRingsArePerpendicular) {
    const Structure s = build_smiles("C1CCC2(CC1)CCCC2");
    expect_bond_lengths(s, 0.05);
    expect_no_clash(s, 0.6);
}

// ---- separate components ----

TEST(Components, SaltIsAnIonPairAtContact) {
    // Packing puts the ions at the ion-pair contact (components.cpp, 2.95 A here) and the refinement's soft contact
    // term pushes them out to its contact distance (80% of the van der Waals sum, 3.22 A) and no further: an ion pair
    // in contact, closer than two neutral atoms would sit. (NLopt's first unit step used to overshoot past the van der
    // Waals sum, which this test once asserted.)
    const Structure s = build_smiles("[Na+].[Cl-]");
    const double contact = element(11).r_vdw + element(17).r_vdw;
    EXPECT_GE(dist(s, 0, 1), 0.8 * contact - 1e-3);
    EXPECT_LT(dist(s, 0, 1), contact);
    EXPECT_EQ(s.charge, 0);
}

TEST(Components, CounterIonSitsByTheChargedAtom) {
    // Sodium acetate: Na+ nearer the carboxylate oxygen that carries the charge than the methyl carbon.
    const Structure s = build_smiles("CC(=O)[O-].[Na+]");
    EXPECT_LT(dist(s, 3, 4), dist(s, 0, 4));
}

TEST(Components, WatersDoNotOverlapAndTheFirstStaysPut) {
    const Structure one = build_smiles("O", false);
    const Structure s = build_smiles("O.O.O.O", false);
    // Atom order: the four oxygens, then their hydrogens by parent (atoms 5-6 belong to the first oxygen).
    EXPECT_LT((s.positions[0] - one.positions[0]).norm(), 1e-9);
    EXPECT_LT((s.positions[4] - one.positions[1]).norm(), 1e-9);
    EXPECT_LT((s.positions[5] - one.positions[2]).norm(), 1e-9);
    const auto comp = s.molecule.components();
    for (int i = 0; i < 12; ++i)
        for (int j = i + 1; j < 12; ++j) {
            if (comp[i] == comp[j]) continue;
            const double sum = element(s.molecule.atoms[i].z).r_vdw + element(s.molecule.atoms[j].z).r_vdw;
            EXPECT_GE(dist(s, i, j), sum) << i << " " << j;
        }
}

// ---- molecules a chemist writes ----

TEST(DrugLike, NoClashesAndBondsAtLength) {
    // Aspirin, ibuprofen, caffeine, nicotine, paracetamol, diazepam, a penicillin, a macrolide fragment, a salt,
    // a sulfonamide and a phosphate ester.
    for (const char* smi : {"CC(=O)Oc1ccccc1C(=O)O", "CC(C)Cc1ccc(cc1)[C@@H](C)C(=O)O", "Cn1cnc2c1c(=O)n(C)c(=O)n2C",
                            "CN1CCC[C@H]1c1cccnc1", "CC(=O)Nc1ccc(O)cc1", "CN1C(=O)CN=C(c2ccccc2)c2cc(Cl)ccc21",
                            "CC1([C@@H](N2[C@H](S1)[C@@H](C2=O)NC(=O)Cc1ccccc1)C(=O)O)C",
                            "C[C@H]1C[C@@H](C)C(=O)O[C@@H](CC)[C@H](C)C=C[C@@H](O)C1",
                            "C[NH3+].[O-]C(=O)c1ccccc1", "Nc1ccc(cc1)S(=O)(=O)Nc1ncccn1", "COP(=O)(OC)OC"}) {
        const Structure s = build_smiles(smi);
        expect_bond_lengths(s, 0.08);
        expect_no_clash(s, 0.5);
        for (const auto& w : s.warnings) EXPECT_EQ(w.find("handedness"), std::string::npos) << smi << ": " << w;
    }
}

TEST(Output, AtomOrderAndRadicals) {
    const Structure s = build_smiles("[CH3]", false);
    EXPECT_EQ(s.multiplicity, 2);
    EXPECT_EQ(s.molecule.atoms[0].radical_electrons, 1);
    EXPECT_EQ(s.molecule.atoms[0].z, 6);
    for (int i = 1; i < 4; ++i) EXPECT_EQ(s.molecule.atoms[i].z, 1);
}

TEST(Output, LongChainBuildsWithoutOverlap) {
    std::string smi;
    for (int i = 0; i < 2000; ++i) smi += 'C';
    const Structure s = build_smiles(smi, false);
    expect_bond_lengths(s, 1e-6);
    // Anti chain: the ends are far apart, nothing folds back.
    EXPECT_GT(dist(s, 0, 1999), 1000.0);
}

// A refinement that does not reach its tolerance (here one it cannot reach: an RMS gradient below 0) is reported by
// RefineResult::converged and surfaces as a warning of the structure, which still gets coordinates.
TEST(Build, UnconvergedRefinementIsAWarning) {
    Molecule m = read_smiles("CCO");
    m.make_hydrogens_explicit();
    BuildOptions o;
    o.refine_tolerance = 0;
    const Structure s = build_structure(m, o);
    const bool warned = std::any_of(s.warnings.begin(), s.warnings.end(), [](const std::string& w) {
        return w.find("refinement not converged") != std::string::npos;
    });
    EXPECT_TRUE(warned);
    for (const Vector3d& p : s.positions) EXPECT_TRUE(p.allFinite());
    EXPECT_TRUE(build_smiles("CCO").warnings.empty());  // at the default tolerance it converges without a warning
}

// ---- fused macrocycles: the ring embedding keeps every ring the right way out ----

namespace {
bool has_warning(const Structure& s, const char* part) {
    return std::any_of(s.warnings.begin(), s.warnings.end(),
                       [&](const std::string& w) { return w.find(part) != std::string::npos; });
}
}  // namespace

// Porphine's four pyrroles hang on its sixteen-membered inner ring, which turns back at each nitrogen: embedded with
// distances only, a pyrrole could sit inside out (its beta carbons towards the centre; one C-C bond came out 1.21 A,
// angles 155 degrees). The targets are the model's own; the xtb check (check_xtb_macrocycles.py) compares with GFN2.
TEST(Rings, PorphyrinsAreFlatWithTheirPyrrolesTheRightWayOut) {
    for (const char* smi : {"c1cc2cc3ccc(cc4ccc(cc5ccc(cc1n2)[nH]5)n4)[nH]3",
                            "C1Cc2cc3ccc(cc4ccc(cc5ccc(cc1n2)[nH]5)n4)[nH]3"}) {
        const Structure s = build_smiles(smi);
        expect_bond_lengths(s, 0.05);
        std::vector<int> core(24);
        for (int i = 0; i < 24; ++i) core[i] = i;
        EXPECT_LT(plane_deviation(s, core), 0.15) << smi;
        // The nitrogens (atoms 21-24) point at the centre: each is nearer the centre than the beta carbons of its
        // ring (atoms 1, 2 beside N21).
        Vector3d centre = Vector3d::Zero();
        for (int i : core) centre += s.positions[i] / 24.0;
        EXPECT_LT((s.positions[20] - centre).norm(), (s.positions[0] - centre).norm()) << smi;
        EXPECT_LT((s.positions[20] - centre).norm(), (s.positions[1] - centre).norm()) << smi;
        EXPECT_TRUE(s.warnings.empty()) << smi << ": " << s.warnings.front();
    }
}

// Strychnine (SMILES from memory, the usual stereo marks of the natural alkaloid): seven fused and bridged rings whose
// six-membered carbocycle cannot be a chair, and an indoline whose puckered five-membered ring meets the benzene ring
// at two planar atoms. The ring embedding held every six-membered ring of sp3 atoms as a chair and gave the indoline's
// fusion atoms 120 degrees in the five-membered ring: the system came out with ring angles 30 degrees off and, after
// refinement, two non-bonded atoms inside bonding distance (what `repel check` reads as a five-neighbour carbon).
// Here: no non-bonded pair closer than 1.25 x the sum of the perception radii (Cordero et al. 2008; the factor is
// the one the external checks use, tests/external/common.py), no warning, the model's bond lengths.
TEST(Rings, StrychnineEmbedsWithoutStrain) {
    const Structure s = build_smiles("C1CN2CC3=CCO[C@H]4CC(=O)N5[C@H]6[C@H]4[C@H]3C[C@H]2[C@@]61c7ccccc75");
    const Molecule& m = s.molecule;
    for (int i = 0; i < m.atom_count(); ++i)
        for (int j = i + 1; j < m.atom_count(); ++j) {
            if (m.bond_between(i, j) >= 0) continue;
            const double bonding = 1.25 * (element(m.atoms[i].z).r_perception + element(m.atoms[j].z).r_perception);
            EXPECT_GT(dist(s, i, j), bonding) << "atoms " << i + 1 << " and " << j + 1;
        }
    expect_bond_lengths(s, 0.05);
    EXPECT_FALSE(has_warning(s, "strained ring system"));
    EXPECT_TRUE(s.warnings.empty()) << s.warnings.front();
}

// Tetraphenylporphyrin's phenyls would lie flat on the pyrrole hydrogens beside them (H...H 0.76 A): the assembly
// sees those hydrogens when it turns each phenyl, and nothing clashes.
TEST(Rings, TetraphenylporphyrinPhenylsTurnOutOfThePlane) {
    const Structure s = build_smiles("c1ccc(cc1)-c1c2ccc(n2)c(-c2ccccc2)c2ccc([nH]2)c(-c2ccccc2)c2ccc(n2)c(-c2ccccc2)"
                              "c2ccc1[nH]2");
    expect_bond_lengths(s, 0.05);
    expect_no_clash(s, 0.6);
    EXPECT_TRUE(s.warnings.empty()) << s.warnings.front();
}

// Calix[4]arene: its large ring enters each benzene ring and leaves at the next atom; the benzene's own bond says
// cis and trans there, so the benzene rings stay flat (they came out folded, with a strain warning).
TEST(Rings, CalixareneBenzeneRingsAreFlat) {
    const Structure s = build_smiles("Oc1c2cccc1Cc1cccc(c1O)Cc1cccc(c1O)Cc1cccc(c1O)C2");
    expect_bond_lengths(s, 0.05);
    EXPECT_LT(plane_deviation(s, {1, 2, 3, 4, 5, 6}), 0.05);
    EXPECT_TRUE(s.warnings.empty()) << s.warnings.front();
}

// ---- the final self-check ----

// A structure whose bonds or angles end far from their targets says so, naming them. Forced here with limits no
// structure meets (an angle limit of 0.01 degree): the warning lists the worst and counts the rest.
TEST(Build, SelfCheckNamesTheOutliers) {
    Molecule m = read_smiles("CC(C)(C)C(C(C)(C)C)(C(C)(C)C)C(C)(C)C");  // tetra-tert-butylmethane: crowded
    m.make_hydrogens_explicit();
    BuildOptions o;
    o.angle_outlier = 0.01;
    const Structure s = build_structure(m, o);
    ASSERT_TRUE(has_warning(s, "distorted geometry"));
    EXPECT_TRUE(has_warning(s, "angle "));
    EXPECT_TRUE(has_warning(s, ", ...)"));  // more than the four named
    o.angle_outlier = 0;
    o.bond_outlier = 0.001;
    const Structure b = build_structure(m, o);
    ASSERT_TRUE(has_warning(b, "distorted geometry"));
    EXPECT_TRUE(has_warning(b, "bond "));
    EXPECT_FALSE(has_warning(b, "angle "));
    EXPECT_FALSE(has_warning(build_structure(m), "distorted geometry"));  // within the default limits
}

// The self-check is silent on what builds well: the benchmark's 102 drug-sized molecules (benchmarks/drug_like.smi)
// and the G2 molecules of tests/data/g2_smiles.tsv (their other warnings, the domain model's known limits, are
// tested where they are made).
TEST(Build, SelfCheckIsSilentOnDrugsAndG2) {
    const char* dir = std::getenv("REPEL_SOURCE_DIR");
    ASSERT_NE(dir, nullptr);
    int drugs = 0, g2 = 0;
    for (const auto& [file, g2_table] : {std::pair{"/benchmarks/drug_like.smi", false},
                                         std::pair{"/tests/data/g2_smiles.tsv", true}}) {
        std::ifstream in(std::string(dir) + file);
        ASSERT_TRUE(in) << file;
        std::string line;
        while (std::getline(in, line)) {
            if (line.empty() || line[0] == '#') continue;
            std::istringstream fields(line);
            std::string first, second;
            fields >> first >> second;
            const std::string smiles = g2_table ? second : first;
            const Structure s = build_smiles(smiles);
            ++(g2_table ? g2 : drugs);
            for (const auto& w : s.warnings) EXPECT_EQ(w.find("distorted geometry"), std::string::npos) << smiles;
        }
    }
    EXPECT_EQ(drugs, 102);
    EXPECT_GT(g2, 100);
}

// BuildOptions::charge (BuildSettings::charge at the front door) is a check of the written charges; multiplicity
// replaces the analysis's and is checked against the electron count (multiplicity - 1 unpaired electrons, of the
// parity of the electron count).
TEST(BuildOptionsSpin, ChargeMustMatchAndMultiplicityMustFitTheElectrons) {
    auto with = [](const std::string& smiles, std::optional<int> charge, std::optional<int> multiplicity) {
        BuildSettings o{.notation = TextNotation::smiles};
        o.charge = charge;
        o.multiplicity = multiplicity;
        return repel::build(smiles, o);
    };
    EXPECT_EQ(with("[NH4+]", 1, std::nullopt).charge, 1);
    EXPECT_THROW(with("[NH4+]", 0, std::nullopt), InputError);
    const Structure singlet = with("[CH2]", std::nullopt, 3);
    EXPECT_EQ(singlet.multiplicity, 3);
    EXPECT_EQ(with("c1ccccc1[N]", std::nullopt, 1).multiplicity, 1);  // the singlet nitrene on request
    EXPECT_EQ(with("[O]N=O", 0, 4).multiplicity, 4);                   // 23 electrons: 2, 4, ... possible
    EXPECT_THROW(with("C", std::nullopt, 2), InputError);              // 10 electrons: odd multiplicities only
    EXPECT_THROW(with("[H][H]", std::nullopt, 5), InputError);         // 4 unpaired of 2 electrons
    EXPECT_THROW(with("C", std::nullopt, 0), InputError);
    try {
        with("C", std::nullopt, 2);
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("odd multiplicities"), std::string::npos) << e.what();
    }
}

// Cumulenes: the planes of the two ends are perpendicular across an even number of cumulated double bonds (allene,
// D2d: H-C-C-H planes at 90 degrees; tetramethylhexapentaene's ends likewise) and coplanar across an odd number
// (butatriene, D2h) -- the p orbitals alternate along the chain (common practice; the symmetries from memory).
// Measured from the written coordinates as the dihedral between an end's substituent and the other end's.
TEST(Assemble, CumuleneEndsArePerpendicularOrCoplanarByTheCountOfDoubleBonds) {
    struct Case {
        const char* smiles;
        int a, end1, end2, d;  // 0-based: a on end1, d on end2 (heavy atoms first, hydrogens after in input order)
        double expected;       // |dihedral| in degrees
    };
    // Atom order: the SMILES atoms, then the hydrogens. Allene C=C=C: C0 C1 C2, H3 H4 on C0, H5 H6 on C2.
    const Case cases[] = {
        {"C=C=C", 3, 0, 2, 5, 90.0},
        {"CC=C=CC", 0, 1, 3, 4, 90.0},                    // 1,3-dimethylallene: C0 on C1, C4 on C3
        {"CC(C)=C=C=C=C(C)C", 0, 1, 6, 7, 90.0},          // four cumulated double bonds
        {"C=C=C=C", 4, 0, 3, 6, 0.0},                     // butatriene: three, coplanar (0 or 180)
    };
    for (const Case& k : cases) {
        const Structure s = build(k.smiles);
        double phi = std::abs(dihedral(s.positions[static_cast<size_t>(k.a)], s.positions[static_cast<size_t>(k.end1)],
                                       s.positions[static_cast<size_t>(k.end2)], s.positions[static_cast<size_t>(k.d)]) *
                              180 / M_PI);
        if (k.expected == 0.0) phi = std::min(phi, 180.0 - phi);  // coplanar: cis or trans
        EXPECT_NEAR(phi, k.expected, 5.0) << k.smiles;
    }
}

// Allene marks (OpenSMILES "Tetrahedral Allene-like Systems": the two substituents of each end read as the
// neighbours of a tetrahedral centre, looking from the first): '@' puts the other three anticlockwise, so
// det[n1 - c, n2 - c, n3 - c] < 0 about the middle atom c, '@@' > 0 (the definition, as tests/external/common.py's
// expected_chiral_sign). The ends' implicit hydrogens stand in the mark's list; no "not applied" warning.
TEST(Assemble, AlleneMarksArePlacedWithTheirHandedness) {
    for (const char* smiles : {"FC=[C@]=CF", "FC=[C@@]=CF", "CC(F)=[C@AL1]=C(Cl)C", "OC(=O)C=[C@@]=CC"}) {
        const Structure s = build(smiles);
        int middle = -1;
        for (int i = 0; i < s.molecule.atom_count(); ++i)
            if (s.molecule.atoms[static_cast<size_t>(i)].chiral_class == ChiralClass::AL) middle = i;
        ASSERT_GE(middle, 0) << smiles;
        const Atom& a = s.molecule.atoms[static_cast<size_t>(middle)];
        ASSERT_EQ(a.stereo_neighbors.size(), 4u) << smiles;
        for (int x : a.stereo_neighbors) ASSERT_GE(x, 0) << smiles << ": an implicit hydrogen left unresolved";
        const Vector3d c = s.positions[static_cast<size_t>(middle)];
        const Vector3d n1 = s.positions[static_cast<size_t>(a.stereo_neighbors[1])] - c;
        const Vector3d n2 = s.positions[static_cast<size_t>(a.stereo_neighbors[2])] - c;
        const Vector3d n3 = s.positions[static_cast<size_t>(a.stereo_neighbors[3])] - c;
        const double det = n1.dot(n2.cross(n3));
        EXPECT_LT(a.chiral_index == 1 ? det : -det, -0.1) << smiles << ": det " << det;
        for (const std::string& w : s.warnings) EXPECT_EQ(w.find("not applied"), std::string::npos) << smiles << ": " << w;
    }
}

// A cis-1,4- or cis-1,2-disubstituted cyclohexane has one substituent axial in either chair; the bulkier goes
// equatorial (A-values, Eliel and Wilen, Stereochemistry of Organic Compounds, Wiley 1994, from memory: tert-butyl
// 4.9, methyl 1.74, hydroxy 0.9, chlorine 0.5 kcal/mol). Axial: the substituent's bond within 35 degrees of the ring's
// mean-plane normal (about 0-10 in a chair), equatorial beyond (about 70).
TEST(Rings, BulkierSubstituentOfACisCyclohexaneIsEquatorial) {
    struct Case {
        const char* smiles;
        int ring_big, big, ring_small, small;  // 0-based atoms: the bulkier substituent and the other
    };
    for (const Case& c : {Case{"CC(C)(C)[C@H]1CC[C@@H](O)CC1", 4, 1, 7, 8},  // cis-4-tert-butylcyclohexanol
                          Case{"C[C@H]1CC[C@@H](Cl)CC1", 1, 0, 4, 5},        // cis-1-chloro-4-methylcyclohexane
                          Case{"CC(C)(C)[C@H]1CCCC[C@H]1O", 4, 1, 9, 10}}) {  // cis-2-tert-butylcyclohexanol
        const Structure s = build_smiles(c.smiles);
        const RingInfo rings = perceive_rings(s.molecule);
        ASSERT_EQ(rings.rings.size(), 1u) << c.smiles;
        Vector3d centre = Vector3d::Zero();
        for (int a : rings.rings[0]) centre += s.positions[static_cast<size_t>(a)];
        centre /= 6.0;
        Eigen::MatrixXd pts(6, 3);
        for (int k = 0; k < 6; ++k) pts.row(k) = (s.positions[static_cast<size_t>(rings.rings[0][static_cast<size_t>(k)])] - centre).transpose();
        const Vector3d normal = Eigen::JacobiSVD<Eigen::MatrixXd>(pts, Eigen::ComputeThinV).matrixV().col(2);
        auto tilt = [&](int ring_atom, int sub) {
            const Vector3d u = (s.positions[static_cast<size_t>(sub)] - s.positions[static_cast<size_t>(ring_atom)]).normalized();
            return std::acos(std::min(1.0, std::fabs(u.dot(normal)))) * 180 / M_PI;
        };
        EXPECT_GT(tilt(c.ring_big, c.big), 35.0) << c.smiles << ": the bulkier substituent is axial";
        EXPECT_LT(tilt(c.ring_small, c.small), 35.0) << c.smiles << ": the other substituent is equatorial (not cis?)";
    }
}

// A biaryl axis with a heavy ortho group (or a naphthyl's peri ring) starts turned, and the refinement does not
// flatten it (graph/conjugation.hpp: coplanar is a saddle); axes without one, and axes that close a ring, stay
// coplanar. tests/external/check_xtb_saddles.py takes the twisted builds to GFN2-xTB minima (57-83 degrees).
TEST(Assemble, CrowdedBiarylAxesAreTurnedAndOthersStayCoplanar) {
    struct Case {
        const char* smiles;
        int a, b, c, d;  // 0-based: ortho atom, axis, axis, ortho atom
        bool twisted;
    };
    for (const Case& k : {Case{"Cc1ccccc1-c1ccccc1C", 1, 6, 7, 8, true}, Case{"Cc1ccccc1-c1ccccc1", 1, 6, 7, 8, true},
                          Case{"c1ccc2ccccc2c1-c1ccccc1", 8, 9, 10, 11, true},
                          Case{"c1ccccc1-c1ccccc1", 0, 5, 6, 7, false}, Case{"n1ccccc1-c1ccccn1", 0, 5, 6, 11, false},
                          Case{"C(=C/c1ccccc1)\\c1ccccc1", 0, 1, 2, 3, false}}) {
        const Structure s = build_smiles(k.smiles);
        const double phi = std::fabs(torsion(s, k.a, k.b, k.c, k.d));
        const double folded = std::min(phi, 180 - phi);
        if (k.twisted) {
            EXPECT_GT(folded, 45.0) << k.smiles;
        } else {
            EXPECT_LT(folded, 10.0) << k.smiles;
        }
    }
}

// The blades of a propeller (aromatic rings on one trigonal atom) start turned the same way by about 30 degrees
// (graph/conjugation.hpp; trityl cation about 32, benzophenone and triphenylborane about 30, from memory), not at
// 0/90/90, a saddle GFN2-xTB kept 16 kcal/mol above the propeller.
TEST(Assemble, PropellerBladesAreTurnedTheSameWay) {
    struct Case {
        const char* smiles;
        std::vector<std::array<int, 4>> blades;  // 0-based: hub neighbour, hub, ipso, ortho
    };
    for (const Case& k : {Case{"[C+](c1ccccc1)(c1ccccc1)c1ccccc1", {{7, 0, 1, 2}, {1, 0, 7, 8}, {1, 0, 13, 14}}},
                          Case{"O=C(c1ccccc1)c1ccccc1", {{0, 1, 2, 3}, {0, 1, 8, 9}}},
                          Case{"B(c1ccccc1)(c1ccccc1)c1ccccc1", {{7, 0, 1, 2}, {1, 0, 7, 8}, {1, 0, 13, 14}}}}) {
        const Structure s = build_smiles(k.smiles);
        for (const auto& d : k.blades) {
            const double phi = std::fabs(torsion(s, d[0], d[1], d[2], d[3]));
            const double folded = std::min(phi, 180 - phi);
            EXPECT_GT(folded, 15.0) << k.smiles;
            EXPECT_LT(folded, 50.0) << k.smiles;
        }
    }
}

namespace repel {
namespace {

// Largest distance of a heavy atom from the best plane through the heavy atoms (Angstrom).
double out_of_plane(const Structure& s) {
    std::vector<Eigen::Vector3d> heavy;
    for (int i = 0; i < s.molecule.atom_count(); ++i)
        if (s.molecule.atoms[static_cast<size_t>(i)].z != 1) heavy.push_back(s.positions[static_cast<size_t>(i)]);
    Eigen::Vector3d c = Eigen::Vector3d::Zero();
    for (const auto& p : heavy) c += p;
    c /= static_cast<double>(heavy.size());
    Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
    for (const auto& p : heavy) cov += (p - c) * (p - c).transpose();
    const Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> solver(cov);
    double worst = 0;
    for (const auto& p : heavy) worst = std::max(worst, std::abs((p - c).dot(solver.eigenvectors().col(0))));
    return worst;
}

// Helicenes come out wound (flat, [6]helicene is a saddle 97 kcal/mol above the helix in GFN2-xTB, measured; the end
// rings of [6]helicene stack about 3.2 A apart in its crystal, from memory), without a ring-geometry warning; flat
// polycyclic aromatics whose crowded atoms are only three bonds apart (bays: phenanthrene, chrysene, picene,
// perylene) stay flat.
TEST(Helicenes, WoundWhileBaysStayFlat) {
    for (const char* smiles : {"c1ccc2c(c1)ccc1ccc3ccccc3c12", "c1ccc2c(c1)ccc1ccc3ccc4ccccc4c3c12",
                               "c1ccc2c(c1)ccc1ccc3ccc4ccc5ccccc5c4c3c12"}) {
        const Structure s = build(smiles);
        EXPECT_GT(out_of_plane(s), 0.3) << smiles;  // [4]helicene 0.39 A, [6]helicene 1.2 A (measured)
        for (const std::string& w : s.warnings) EXPECT_EQ(w.find("ring system"), std::string::npos) << smiles << ": " << w;
    }
    for (const char* smiles : {"c1ccc2c(c1)ccc1c3ccccc3ccc21", "c1ccc2c(c1)ccc1c2ccc2ccccc21",
                               "c1ccc2c(c1)ccc1c2ccc2c1ccc1ccccc12", "c1ccc2c(c1)c1ccccc1c1ccccc21",
                               "c1cc2ccc3cccc4ccc(c1)c2c34", "c1cc2ccc3ccc4ccc5ccc6ccc1c1c2c3c4c5c61",
                               "c1ccc2cc3cc4ccccc4cc3cc2c1", "c1cc2cccc3c4cccc5cccc(c(c1)c23)c54"})
        EXPECT_LT(out_of_plane(build(smiles)), 0.01) << smiles;
}

}  // namespace
}  // namespace repel

// Three-membered rings take the angles their bond lengths make (the law of cosines), and a spiro centre of two small
// rings opens the angles between them, so the angle terms no longer stretch the ring bonds. Against G2's MP2/6-31G(d)
// geometries (ase.collections.g2 in Debian's python3-ase): spiropentane's CH2-CH2 1.524 A and 137.2 degrees between
// the rings (built 1.60 A and 135.6 before), cyclopropene's C=C 1.301 A (1.376 before).
TEST(Rings, SmallRingBondsAreNotStretchedByTheirAngles) {
    auto length = [](const Structure& s, int a, int b) {
        return (s.positions[static_cast<size_t>(a)] - s.positions[static_cast<size_t>(b)]).norm();
    };
    const Structure spiro = build_smiles("C12(CC1)CC2");  // C1 spiro; C2-C3 and C4-C5 the distal bonds
    EXPECT_NEAR(length(spiro, 1, 2), 1.524, 0.03);
    EXPECT_NEAR(length(spiro, 3, 4), 1.524, 0.03);
    const Eigen::Vector3d u = spiro.positions[1] - spiro.positions[0], v = spiro.positions[3] - spiro.positions[0];
    EXPECT_NEAR(std::acos(u.normalized().dot(v.normalized())) * 180 / M_PI, 137.2, 4.0);
    const Structure ene = build_smiles("C1=CC1");
    EXPECT_NEAR(length(ene, 0, 1), 1.301, 0.06);
}
