// `repel check` on metal complexes: repel's own builds (written as XYZ and read back, bonds perceived from the
// coordinates) give no finding; hand-damaged copies (square-planar Pt(II) made tetrahedral, a Cl turned out of the
// plane, an octahedron twisted into a trigonal prism, a Co-N bond stretched) are found at the right atoms; the report
// names each centre's polyhedron, its continuous shape measure, oxidation state and d count.
#include <gtest/gtest.h>

#include <Eigen/Geometry>
#include <cmath>
#include <sstream>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "check/audit.hpp"
#include "check/clean.hpp"
#include "check/report.hpp"
#include "input/smiles.hpp"
#include "input/structure_reader.hpp"
#include "output/writer.hpp"

using namespace repel;
using Eigen::Vector3d;

namespace {

// The complex built by repel, written as XYZ (elements and coordinates, charge in the comment) and read back.
ReadStructure built(const std::string& smiles) {
    const Structure s = build(smiles, {.notation = TextNotation::smiles});
    std::istringstream in(make_writer(Format::xyz)->record(s, smiles));
    return read_xyz(in).at(0);
}

std::vector<Vector3d>& positions(ReadStructure& r) { return r.structure.positions; }

// The donor atom and the hydrogens within 1.2 A of it (its own), 0-based.
std::vector<int> ligand_group(const ReadStructure& r, int donor) {
    std::vector<int> g{donor};
    const auto& p = r.structure.positions;
    for (int i = 0; i < r.structure.molecule.atom_count(); ++i)
        if (i != donor && r.structure.molecule.atoms[static_cast<size_t>(i)].z == 1 &&
            (p[static_cast<size_t>(i)] - p[static_cast<size_t>(donor)]).norm() < 1.2)
            g.push_back(i);
    return g;
}

// Turns a ligand (donor and its hydrogens) rigidly about the metal so that the donor points along `direction`.
void turn_ligand(ReadStructure& r, int metal, int donor, const Vector3d& direction) {
    auto& p = positions(r);
    const Vector3d o = p[static_cast<size_t>(metal)];
    const Eigen::Quaterniond q = Eigen::Quaterniond::FromTwoVectors(p[static_cast<size_t>(donor)] - o, direction);
    for (int i : ligand_group(r, donor)) p[static_cast<size_t>(i)] = o + q * (p[static_cast<size_t>(i)] - o);
}

const MetalCentreAudit& only_metal(const Audit& a) {
    EXPECT_EQ(a.metals.size(), 1u);
    return a.metals.at(0);
}

std::string all_findings(const Audit& a) {
    std::string s;
    for (const Finding& f : a.findings) s += f.message + "\n";
    return s;
}

// Atom numbers (0-based) of the SMILES below, in the order written.
constexpr const char* kCisplatin = "Cl[Pt@SP1](Cl)([NH3])[NH3]";  // Cl0 Pt1 Cl2 N3 N4
constexpr const char* kCobalt = "[NH3][Co+3]([NH3])([NH3])([NH3])([NH3])[NH3]";  // N0 Co1 N2..N6
constexpr const char* kFerrocene = "C1=CC=C[CH-]1.C1=CC=C[CH-]1.[Fe+2]";  // Fe10

}  // namespace

TEST(CheckMetals, OwnBuildsGiveNoFinding) {
    struct Case {
        const char* smiles;
        int charge, oxidation, d;
        const char* symbol;
    };
    // Oxidation states and d counts by the ionic model (common practice): Pt(II) d8 square planar, Co(III) d6 and
    // Cr(0) d6 octahedral, Fe(II) d6 sandwich (two ring centroids: linear), Ni(0) d10 tetrahedral, Fe(0) d8 trigonal
    // bipyramidal, Ti(IV) d0 tetrahedral.
    const Case cases[] = {
        {kCisplatin, 0, 2, 8, "SP-4"},
        {"Cl[Pt@SP2](Cl)([NH3])[NH3]", 0, 2, 8, "SP-4"},
        {kCobalt, 3, 3, 6, "OC-6"},
        {kFerrocene, 0, 2, 6, "L-2"},
        {"Cl[Pt-2](Cl)(Cl)Cl", -2, 2, 8, "SP-4"},
        {"[O+]#[C-][Ni]([C-]#[O+])([C-]#[O+])[C-]#[O+]", 0, 0, 10, "T-4"},
        {"[O+]#[C-][Cr]([C-]#[O+])([C-]#[O+])([C-]#[O+])([C-]#[O+])[C-]#[O+]", 0, 0, 6, "OC-6"},
        {"[O+]#[C-][Fe]([C-]#[O+])([C-]#[O+])([C-]#[O+])[C-]#[O+]", 0, 0, 8, "TBPY-5"},
        {"Cl[Ti](Cl)(Cl)Cl", 0, 4, 0, "T-4"},
    };
    for (const Case& c : cases) {
        ReadStructure r = built(c.smiles);
        AuditOptions o;
        o.charge = c.charge;
        const Audit a = audit_structure(r, o);
        EXPECT_TRUE(a.findings.empty()) << c.smiles << "\n" << all_findings(a);
        const MetalCentreAudit& m = only_metal(a);
        EXPECT_EQ(m.oxidation_state, c.oxidation) << c.smiles;
        EXPECT_EQ(m.d_electrons, c.d) << c.smiles;
        EXPECT_EQ(m.symbol, c.symbol) << c.smiles;
        EXPECT_LT(m.shape_measure, 0.1) << c.smiles;
        EXPECT_LT(m.model_shape_measure, 0.1) << c.smiles;
    }
}

TEST(CheckMetals, LigandsAreClosedShellAndTheMetalTakesTheRest) {
    const Audit a = audit_structure(built(kCisplatin));
    const Molecule& m = a.structure.molecule;
    EXPECT_EQ(m.atoms[0].charge, -1);  // Cl-
    EXPECT_EQ(m.atoms[1].charge, 2);   // Pt(II)
    EXPECT_EQ(m.atoms[3].charge, 0);   // NH3
    EXPECT_EQ(a.charge, 0);
    EXPECT_EQ(a.multiplicity, 1);
    const Audit f = audit_structure(built(kFerrocene));
    EXPECT_EQ(only_metal(f).oxidation_state, 2);
    EXPECT_EQ(f.structure.molecule.atoms[10].charge, 2);
}

TEST(CheckMetals, AnAlkylideneCarbonCutOffItsMetalIsADianionNotARadical) {
    // A ruthenium methylidene with two chlorides and two phosphines, built by repel and read back from XYZ: the CH2
    // cut off the metal is CH2(2-) (the ionic model's alkylidene, as O2- is its oxo), not CH2- with an unpaired
    // electron; the metal is Ru(IV), as the build has it.
    const Audit a = audit_structure(built("C=[Ru](Cl)(Cl)([P](C)(C)C)[P](C)(C)C"));
    for (const Finding& f : a.findings) EXPECT_NE(f.kind, "radical") << f.message;
    EXPECT_EQ(a.structure.molecule.atoms[0].charge, -2);
    EXPECT_EQ(only_metal(a).oxidation_state, 4);
    EXPECT_EQ(a.multiplicity, 1);
}

TEST(CheckMetals, TetrahedralPlatinumIsAGeometryFindingAtPlatinum) {
    ReadStructure r = built(kCisplatin);
    const int donors[] = {0, 2, 3, 4};
    const Vector3d t[] = {Vector3d(1, 1, 1), Vector3d(1, -1, -1), Vector3d(-1, 1, -1), Vector3d(-1, -1, 1)};
    for (int k = 0; k < 4; ++k) turn_ligand(r, 1, donors[k], t[k]);
    const Audit a = audit_structure(r);
    ASSERT_EQ(a.findings.size(), 1u) << all_findings(a);
    EXPECT_EQ(a.findings[0].kind, "geometry");
    EXPECT_EQ(a.findings[0].atoms.at(0), 2);  // Pt, 1-based
    EXPECT_EQ(a.findings[0].severity, Severity::error);
    EXPECT_EQ(only_metal(a).symbol, "T-4");
    EXPECT_GT(only_metal(a).model_shape_measure, 30.0);  // SP-4 to T-4: 33.3 (Alvarez et al. 2005, from memory)
}

TEST(CheckMetals, ChlorideTurnedOutOfThePlaneIsFoundAndASmallTiltIsNot) {
    for (double degrees : {15.0, 60.0}) {
        ReadStructure r = built(kCisplatin);
        const auto& p = positions(r);
        const Vector3d u = (p[2] - p[1]).normalized();
        const Vector3d normal = (p[0] - p[1]).cross(p[2] - p[1]).normalized();
        const double t = degrees * M_PI / 180;
        turn_ligand(r, 1, 2, std::cos(t) * u + std::sin(t) * normal);
        const Audit a = audit_structure(r);
        if (degrees < 30) {
            EXPECT_TRUE(a.findings.empty()) << all_findings(a);
            continue;
        }
        ASSERT_EQ(a.findings.size(), 1u) << all_findings(a);
        EXPECT_EQ(a.findings[0].kind, "geometry");
        EXPECT_EQ(a.findings[0].atoms.at(0), 2);
        EXPECT_EQ(only_metal(a).symbol, "SS-4");
    }
}

TEST(CheckMetals, OctahedronTwistedIntoAPrismIsFoundAtTheMetal) {
    // [PtCl6]2- (Pt(IV) d6, octahedral): Cl0 Pt1 Cl2..Cl6. Without hydrogens nothing else clashes.
    ReadStructure r = built("Cl[Pt-2](Cl)(Cl)(Cl)(Cl)Cl");
    auto& p = positions(r);
    // Three mutually cis chlorides (a face), turned 60 degrees about the face's normal through the metal.
    std::vector<int> face;
    const Vector3d o = p[1];
    for (int d = 0; d < 7 && face.size() < 3; ++d) {
        if (d == 1) continue;
        bool cis = true;
        for (int f : face)
            cis = cis && std::fabs((p[static_cast<size_t>(d)] - o).normalized().dot((p[static_cast<size_t>(f)] - o).normalized())) < 0.3;
        if (cis) face.push_back(d);
    }
    ASSERT_EQ(face.size(), 3u);
    Vector3d axis = Vector3d::Zero();
    for (int f : face) axis += (p[static_cast<size_t>(f)] - o).normalized();
    const Eigen::AngleAxisd turn(M_PI / 3, axis.normalized());
    for (int f : face) p[static_cast<size_t>(f)] = o + turn * (p[static_cast<size_t>(f)] - o);
    AuditOptions opt;
    opt.charge = -2;
    const Audit a = audit_structure(r, opt);
    ASSERT_EQ(a.findings.size(), 1u) << audit_text(a, 1);
    EXPECT_EQ(a.findings[0].kind, "geometry");
    EXPECT_EQ(a.findings[0].atoms.at(0), 2);
    EXPECT_EQ(only_metal(a).symbol, "TPR-6");
    EXPECT_EQ(only_metal(a).oxidation_state, 4);
}

TEST(CheckMetals, StretchedMetalLigandBondIsFoundAtItsAtoms) {
    ReadStructure r = built(kCobalt);
    auto& p = positions(r);
    const Vector3d u = (p[2] - p[1]).normalized();
    // Co-N 1.97 -> 2.37 A: still a bond by perception (Cordero Co 1.26 + N 0.71 + 0.45 = 2.42 A).
    for (int i : ligand_group(r, 2)) p[static_cast<size_t>(i)] += 0.4 * u;
    AuditOptions opt;
    opt.charge = 3;
    const Audit a = audit_structure(r, opt);
    ASSERT_EQ(a.findings.size(), 1u) << audit_text(a, 1);
    EXPECT_EQ(a.findings[0].kind, "bond length") << audit_text(a, 1);
    EXPECT_EQ(a.findings[0].atoms, (std::vector<int>{2, 3}));
    // 0.1 A further the NH3 is no longer bonded: the centre is five-coordinate, a square pyramid (the octahedron
    // with a vacant site) where the model has a trigonal bipyramid.
    ReadStructure far = built(kCobalt);
    for (int i : ligand_group(far, 2)) positions(far)[static_cast<size_t>(i)] += 0.5 * u;
    const Audit b = audit_structure(far, opt);
    ASSERT_EQ(b.findings.size(), 1u) << audit_text(b, 1);
    EXPECT_EQ(b.findings[0].kind, "geometry");
    EXPECT_EQ(b.findings[0].atoms.at(0), 2);
    EXPECT_EQ(only_metal(b).symbol, "vOC-5");
    // Within the metal tolerance (0.3 A) a 0.2 A stretch passes.
    ReadStructure s = built(kCobalt);
    auto& q = positions(s);
    for (int i : ligand_group(s, 2)) q[static_cast<size_t>(i)] += 0.2 * u;
    EXPECT_TRUE(audit_structure(s, opt).findings.empty());
}

TEST(CheckMetals, ReportNamesThePolyhedronInTextAndJson) {
    const Audit a = audit_structure(built(kCisplatin));
    const std::string text = audit_text(a, 1);
    EXPECT_NE(text.find("metal Pt2: oxidation state +2, d8, 4-coordinate: square planar (SP-4, CShM"), std::string::npos)
        << text;
    const nlohmann::json j = audit_json(a);
    ASSERT_TRUE(j.contains("metal_centres"));
    const nlohmann::json& c = j["metal_centres"].at(0);
    EXPECT_EQ(c["atom"], 2);
    EXPECT_EQ(c["polyhedron"], "square planar");
    EXPECT_EQ(c["polyhedron_symbol"], "SP-4");
    EXPECT_EQ(c["oxidation_state"], 2);
    EXPECT_EQ(c["d_electrons"], 8);
    EXPECT_EQ(c["model_polyhedron"], "square planar");
    EXPECT_TRUE(c["shape_measure"].is_number());
    EXPECT_LT(c["shape_measure"].get<double>(), 0.1);
    // The fields every audit had are still there, and a structure without metals has no metal_centres.
    for (const char* key : {"title", "atoms", "bonds", "charge", "multiplicity", "findings", "notes", "formal_charges"})
        EXPECT_TRUE(j.contains(key)) << key;
    std::istringstream water("3\nwater\nO 0 0 0\nH 0.757 0.586 0\nH -0.757 0.586 0\n");
    EXPECT_FALSE(audit_json(audit_structure(read_xyz(water).at(0))).contains("metal_centres"));
}

TEST(CheckMetals, FixRestoresThePolyhedronOrRefuses) {
    ReadStructure r = built(kCisplatin);
    const int donors[] = {0, 2, 3, 4};
    const Vector3d t[] = {Vector3d(1, 1, 1), Vector3d(1, -1, -1), Vector3d(-1, 1, -1), Vector3d(-1, -1, 1)};
    for (int k = 0; k < 4; ++k) turn_ligand(r, 1, donors[k], t[k]);
    const CleanResult c = clean_structure(audit_structure(r));
    ASSERT_TRUE(c.refined) << c.summary;
    ReadStructure again = r;
    again.structure.positions = c.structure.positions;
    const Audit b = audit_structure(again);
    EXPECT_TRUE(b.findings.empty()) << all_findings(b);
    EXPECT_EQ(only_metal(b).symbol, "SP-4");
    // Hapto ligands: refused, said, and the coordinates left as they were.
    const ReadStructure f = built(kFerrocene);
    const CleanResult cf = clean_structure(audit_structure(f));
    EXPECT_FALSE(cf.refined);
    EXPECT_NE(cf.summary.find("hapto"), std::string::npos) << cf.summary;
}

TEST(CheckMetals, OwnSdfFilesGiveNoFinding) {
    // SD files state orders and charges as the build writes them (NH3 with four bonds, neutral Cl bonded to Pt, C5H5
    // rings bonded through all five atoms): no valence finding at the donors.
    for (const char* smiles : {kCisplatin, kFerrocene, "[O+]#[C-][Ni]([C-]#[O+])([C-]#[O+])[C-]#[O+]"}) {
        std::istringstream in(make_writer(Format::sdf)->record(build(smiles, {.notation = TextNotation::smiles}), smiles));
        const Audit a = audit_structure(read_sdf(in).at(0));
        EXPECT_TRUE(a.findings.empty()) << smiles << "\n" << audit_text(a, 1);
        ASSERT_EQ(a.metals.size(), 1u) << smiles;
        EXPECT_LT(a.metals[0].model_shape_measure, 0.1) << smiles;
    }
}

TEST(CheckMetals, CisLigandMovedTransIsFoundAgainstTheReference) {
    // Cisplatin with Cl3 and the NH3 trans to Cl1 swapped (whole ligands, hydrogens along): transplatin. Without a
    // reference that is a valid isomer; against the cis SMILES (its @SP1 mark) it is a stereocentre finding at Pt.
    ReadStructure r = built(kCisplatin);
    auto& p = positions(r);
    int trans_to_cl1 = -1;  // the N opposite Cl1 (0-based 3 or 4)
    for (int n : {3, 4})
        if ((p[static_cast<size_t>(n)] - p[1]).normalized().dot((p[0] - p[1]).normalized()) < -0.9) trans_to_cl1 = n;
    ASSERT_GE(trans_to_cl1, 0);
    // Both groups taken before either moves (a moved NH3's hydrogens would otherwise count as the Cl's).
    const std::vector<int> ammine = ligand_group(r, trans_to_cl1), chloride = ligand_group(r, 2);
    const Eigen::Quaterniond to_cl = Eigen::Quaterniond::FromTwoVectors(p[static_cast<size_t>(trans_to_cl1)] - p[1], p[2] - p[1]);
    const Eigen::Quaterniond to_n = Eigen::Quaterniond::FromTwoVectors(p[2] - p[1], p[static_cast<size_t>(trans_to_cl1)] - p[1]);
    const Vector3d o = p[1];
    for (int i : ammine) p[static_cast<size_t>(i)] = o + to_cl * (p[static_cast<size_t>(i)] - o);
    for (int i : chloride) p[static_cast<size_t>(i)] = o + to_n * (p[static_cast<size_t>(i)] - o);
    EXPECT_TRUE(audit_structure(r).findings.empty()) << all_findings(audit_structure(r));
    AuditOptions cis;
    cis.reference_smiles = kCisplatin;
    const Audit a = audit_structure(r, cis);
    ASSERT_EQ(a.findings.size(), 1u) << all_findings(a);
    EXPECT_EQ(a.findings[0].kind, "stereocentre");
    EXPECT_EQ(a.findings[0].atoms.at(0), 2);
    AuditOptions trans;
    trans.reference_smiles = "Cl[Pt@SP2](Cl)([NH3])[NH3]";
    EXPECT_TRUE(audit_structure(r, trans).findings.empty()) << all_findings(audit_structure(r, trans));
    // The sandwich written as separate ions is the reference of the built ferrocene.
    AuditOptions fc;
    fc.reference_smiles = kFerrocene;
    EXPECT_TRUE(audit_structure(built(kFerrocene), fc).findings.empty());
}
