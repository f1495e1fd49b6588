// The audit of structures built elsewhere: clean structures give no finding; hand-damaged copies (a centre
// flattened, an atom moved onto another, a hydrogen deleted, a bond stretched by 0.3 A, an sp2 centre made pyramidal)
// give the right finding at the right atom; bond orders and formal charges are perceived from coordinates alone.
#include <gtest/gtest.h>

#include <cmath>
#include <sstream>

#include "check/audit.hpp"
#include "check/clean.hpp"
#include "check/perceive.hpp"
#include "check/report.hpp"
#include "input/structure_reader.hpp"

using namespace repel;

namespace {

ReadStructure xyz(const std::string& text) {
    std::istringstream in(text);
    return read_xyz(in).at(0);
}

// Methane, tetrahedral, C-H 1.087 A (CRC Handbook gas-phase structure, from memory).
std::string methane(double stretch_h2 = 0, bool flat = false, bool drop_h5 = false) {
    // Flattened: the four hydrogens on a square in the plane, C-H still 1.087 A (only the angles are wrong).
    const double a = flat ? 1.087 / std::sqrt(2.0) : 1.087 / std::sqrt(3.0);
    std::ostringstream s;
    s << (drop_h5 ? 4 : 5) << "\nmethane\nC 0 0 0\n";
    const double k = (1.087 + stretch_h2) / 1.087;
    s << "H " << a * k << " " << a * k << " " << (flat ? 0.0 : a * k) << "\n";
    if (flat) {
        s << "H " << -a << " " << a << " 0\nH " << a << " " << -a << " 0\n";
        if (!drop_h5) s << "H " << -a << " " << -a << " 0\n";
    } else {
        s << "H " << -a << " " << -a << " " << a << "\nH " << -a << " " << a << " " << -a << "\n";
        if (!drop_h5) s << "H " << a << " " << -a << " " << -a << "\n";
    }
    return s.str();
}

// Water: O-H 0.958 A, H-O-H 104.5 degrees (CRC Handbook gas-phase structure, from memory).
const char* kWater = "3\nwater\nO 0 0 0.1173\nH 0 0.7572 -0.4692\nH 0 -0.7572 -0.4692\n";

// SF4: S-F(axial) 1.646 A, S-F(equatorial) 1.545 A, Fax-S-Fax 173.1, Feq-S-Feq 101.6 degrees (CRC Handbook
// gas-phase structure, from memory). The lone pair points along +x.
std::string sf4(bool tetrahedral = false) {
    std::ostringstream s;
    s << "5\nsulfur tetrafluoride\nS 0 0 0\n";
    if (tetrahedral) {
        const double a = 1.6 / std::sqrt(3.0);
        s << "F " << a << " " << a << " " << a << "\nF " << -a << " " << -a << " " << a << "\nF " << -a << " " << a
          << " " << -a << "\nF " << a << " " << -a << " " << -a << "\n";
        return s.str();
    }
    const double tilt = (180.0 - 173.1) / 2 * M_PI / 180, half = 101.6 / 2 * M_PI / 180;
    s << "F " << -1.646 * std::sin(tilt) << " 0 " << 1.646 * std::cos(tilt) << "\n";
    s << "F " << -1.646 * std::sin(tilt) << " 0 " << -1.646 * std::cos(tilt) << "\n";
    s << "F " << -1.545 * std::cos(half) << " " << 1.545 * std::sin(half) << " 0\n";
    s << "F " << -1.545 * std::cos(half) << " " << -1.545 * std::sin(half) << " 0\n";
    return s.str();
}

std::string describe(const Audit& a) { return audit_text(a, 1); }

// The kinds of the findings, and whether one of `kind` names `atom` (1-based) first.
bool has(const Audit& a, const std::string& kind, int atom) {
    for (const Finding& f : a.findings)
        if (f.kind == kind && !f.atoms.empty() && f.atoms[0] == atom) return true;
    return false;
}

}  // namespace

TEST(Audit, CleanStructuresGiveNoFinding) {
    for (const std::string& text : {std::string(kWater), methane(), sf4()}) {
        Audit a = audit_structure(xyz(text));
        EXPECT_TRUE(a.findings.empty()) << describe(a);
        EXPECT_TRUE(a.bonds_from_coordinates);
        EXPECT_EQ(a.multiplicity, 1);
    }
}

TEST(Audit, FlattenedMethaneIsAGeometryFindingAtCarbon) {
    Audit a = audit_structure(xyz(methane(0, true)));
    ASSERT_EQ(a.findings.size(), 1u) << describe(a);
    EXPECT_TRUE(has(a, "geometry", 1)) << describe(a);
    EXPECT_EQ(a.findings[0].severity, Severity::error);
}

TEST(Audit, TetrahedralSf4IsAGeometryFindingAtSulfur) {
    Audit a = audit_structure(xyz(sf4(true)));
    ASSERT_EQ(a.findings.size(), 1u) << describe(a);
    EXPECT_TRUE(has(a, "geometry", 1)) << describe(a);
}

TEST(Audit, StretchedBondIsFoundAndNothingElse) {
    Audit a = audit_structure(xyz(methane(0.3)));
    ASSERT_EQ(a.findings.size(), 1u) << describe(a);
    EXPECT_EQ(a.findings[0].kind, "bond length");
    EXPECT_EQ(a.findings[0].atoms, (std::vector<int>{1, 2}));
    EXPECT_NEAR(*a.findings[0].measured, 1.387, 1e-3);
    // A stretch below the threshold (0.12 A for bonds between H and B..F) is not a finding; 0.15 A is.
    EXPECT_TRUE(audit_structure(xyz(methane(0.08))).findings.empty());
    Audit b = audit_structure(xyz(methane(0.15)));
    ASSERT_EQ(b.findings.size(), 1u) << describe(b);
    EXPECT_EQ(b.findings[0].atoms, (std::vector<int>{1, 2}));
}

TEST(Audit, DeletedHydrogenIsARadicalAtItsAtom) {
    Audit a = audit_structure(xyz(methane(0, false, true)));
    ASSERT_EQ(a.findings.size(), 1u) << describe(a);
    EXPECT_TRUE(has(a, "radical", 1)) << describe(a);
    // The same structure declared a doublet is clean.
    AuditOptions doublet;
    doublet.multiplicity = 2;
    EXPECT_TRUE(audit_structure(xyz(methane(0, false, true)), doublet).findings.empty());
}

TEST(Audit, AtomMovedOntoAnotherIsAnOverlap) {
    // The second hydrogen of water moved to 0.1 A from the oxygen.
    Audit a = audit_structure(xyz("3\nwater\nO 0 0 0.1173\nH 0 0.7572 -0.4692\nH 0 0.0 0.0173\n"));
    ASSERT_FALSE(a.findings.empty());
    EXPECT_EQ(a.findings[0].kind, "overlap") << describe(a);
    EXPECT_EQ(a.findings[0].atoms, (std::vector<int>{1, 3}));
    // The oxygen lost a hydrogen: it is reported too, and nothing else.
    EXPECT_TRUE(has(a, "radical", 1)) << describe(a);
    EXPECT_EQ(a.findings.size(), 2u) << describe(a);
}

TEST(Audit, PyramidalSp2CentreIsFound) {
    // Formaldehyde with the carbon pushed 0.3 A out of the plane of its neighbours.
    Audit a = audit_structure(xyz("4\nformaldehyde\nC 0 0 0.3\nO 1.205 0 0\nH -0.59 0.94 0\nH -0.59 -0.94 0\n"));
    ASSERT_EQ(a.findings.size(), 1u) << describe(a);
    EXPECT_TRUE(has(a, "planarity", 1) || has(a, "geometry", 1)) << describe(a);
}

TEST(Audit, CloseContactBetweenMoleculesIsFound) {
    // Two waters with O...O 1.8 A: not bonded (Cordero O+O+0.45 = 1.77 A), but closer than 0.6 x 3.04 A.
    Audit a = audit_structure(xyz("6\ntwo waters\nO 0 0 0.1173\nH 0 0.7572 -0.4692\nH 0 -0.7572 -0.4692\n"
                                  "O 0 0 1.9173\nH 0 0.7572 2.5038\nH 0 -0.7572 2.5038\n"));
    ASSERT_EQ(a.findings.size(), 1u) << describe(a);
    EXPECT_EQ(a.findings[0].kind, "contact");
    EXPECT_EQ(a.findings[0].atoms, (std::vector<int>{1, 4}));
}

TEST(Audit, TooManyNeighboursAndWrongChargeAreFound) {
    const double a = 1.09;
    std::ostringstream s;
    s << "6\nfive hydrogens\nC 0 0 0\nH " << a << " 0 0\nH " << -a << " 0 0\nH 0 " << a << " 0\nH 0 " << -a
      << " 0\nH 0 0 " << a << "\n";
    Audit x = audit_structure(xyz(s.str()));
    EXPECT_TRUE(has(x, "neighbours", 1)) << describe(x);
    // Ammonium given as neutral: the formal charges add up to +1.
    const double b = 1.03 / std::sqrt(3.0);
    std::ostringstream nh4;
    nh4 << "5\nammonium\nN 0 0 0\nH " << b << " " << b << " " << b << "\nH " << -b << " " << -b << " " << b << "\nH "
        << -b << " " << b << " " << -b << "\nH " << b << " " << -b << " " << -b << "\n";
    Audit y = audit_structure(xyz(nh4.str()));
    ASSERT_EQ(y.findings.size(), 1u) << describe(y);
    EXPECT_EQ(y.findings[0].kind, "charge");
    AuditOptions cation;
    cation.charge = 1;
    EXPECT_TRUE(audit_structure(xyz(nh4.str()), cation).findings.empty());
}

TEST(Perception, OrdersAndChargesFromCoordinates) {
    // Nitromethane (common bond lengths, from memory): N+ with one N=O and one N-O-.
    ReadStructure r = xyz("7\nnitromethane\nC 0 0 0\nN 1.49 0 0\nO 2.10 1.07 0\nO 2.10 -1.07 0\n"
                          "H -0.36 1.03 0\nH -0.36 -0.51 0.89\nH -0.36 -0.51 -0.89\n");
    Molecule m = r.structure.molecule;
    perceive_bonds(m, r.structure.positions);
    ValenceResult v = assign_valences(m, r.structure.positions, 0, 0);
    EXPECT_EQ(v.total_unpaired, 0);
    EXPECT_EQ(v.charge, 0);
    EXPECT_EQ(m.atoms[1].charge, 1);
    EXPECT_EQ(m.atoms[2].charge + m.atoms[3].charge, -1);
    EXPECT_EQ(m.bond_order_sum(1), 4);

    // Carbon monoxide, 1.128 A (from memory): C-#O+ triple bond.
    ReadStructure co = xyz("2\nCO\nC 0 0 0\nO 1.128 0 0\n");
    Molecule c = co.structure.molecule;
    perceive_bonds(c, co.structure.positions);
    v = assign_valences(c, co.structure.positions, 0, 0);
    EXPECT_EQ(c.bonds.at(0).order, 3);
    EXPECT_EQ(c.atoms[0].charge, -1);
    EXPECT_EQ(c.atoms[1].charge, 1);

    // Benzene, C-C 1.39 A: three double bonds, every carbon satisfied.
    std::ostringstream bz;
    bz << "12\nbenzene\n";
    for (int k = 0; k < 6; ++k) bz << "C " << 1.39 * std::cos(k * M_PI / 3) << " " << 1.39 * std::sin(k * M_PI / 3) << " 0\n";
    for (int k = 0; k < 6; ++k) bz << "H " << 2.48 * std::cos(k * M_PI / 3) << " " << 2.48 * std::sin(k * M_PI / 3) << " 0\n";
    ReadStructure b = xyz(bz.str());
    Molecule bm = b.structure.molecule;
    perceive_bonds(bm, b.structure.positions);
    v = assign_valences(bm, b.structure.positions, 0, 0);
    EXPECT_EQ(v.total_unpaired, 0);
    int doubles = 0;
    for (const Bond& bond : bm.bonds) doubles += bond.order == 2;
    EXPECT_EQ(doubles, 3);

    // Sulfate dianion (S-O 1.49 A, from memory): two S=O, two O-, for the charge -2.
    const double s = 1.49 / std::sqrt(3.0);
    std::ostringstream so4;
    so4 << "5\nsulfate\nS 0 0 0\nO " << s << " " << s << " " << s << "\nO " << -s << " " << -s << " " << s << "\nO "
        << -s << " " << s << " " << -s << "\nO " << s << " " << -s << " " << -s << "\n";
    ReadStructure q = xyz(so4.str());
    Molecule qm = q.structure.molecule;
    perceive_bonds(qm, q.structure.positions);
    v = assign_valences(qm, q.structure.positions, -2, 0);
    EXPECT_EQ(v.total_unpaired, 0);
    EXPECT_EQ(v.charge, -2);
    EXPECT_EQ(qm.bond_order_sum(0), 6);
}

TEST(Perception, ToleranceDecidesWhatIsBonded) {
    // C-H at 1.50 A is bonded with the default tolerance (0.31 + 0.76 + 0.45 = 1.52 A), not with a tolerance of 0.3.
    ReadStructure r = xyz("2\nCH\nC 0 0 0\nH 1.50 0 0\n");
    Molecule m = r.structure.molecule;
    perceive_bonds(m, r.structure.positions);
    EXPECT_EQ(m.bond_count(), 1);
    Molecule n = r.structure.molecule;
    PerceptionOptions tight;
    tight.tolerance = 0.3;
    perceive_bonds(n, r.structure.positions, tight);
    EXPECT_EQ(n.bond_count(), 0);
}

TEST(Clean, FlattenedMethaneIsRefinedBackToClean) {
    // A mildly damaged methane (one C-H bond 0.3 A too long) is clean after refinement.
    Audit a = audit_structure(xyz(methane(0.3)));
    ASSERT_FALSE(a.findings.empty());
    CleanResult c = clean_structure(a);
    ASSERT_TRUE(c.refined) << c.summary;
    ReadStructure again;
    again.structure = c.structure;
    again.has_bonds = true;
    again.has_orders = true;
    again.has_charge = true;
    Audit b = audit_structure(again);
    EXPECT_TRUE(b.findings.empty()) << describe(b);
}

TEST(Reference, StereocentresDoubleBondsAndAtomsAreComparedWithTheSmiles) {
    // Bromochlorofluoromethane (C-F 1.35, C-Cl 1.77, C-Br 1.93, C-H 1.09 A, from memory), tetrahedral; the SMILES names
    // the neighbours F, Cl, Br, H of C after the first (OpenSMILES: '@' anticlockwise seen from the first neighbour).
    const std::string text =
        "5\nCHFClBr\nC 0 0 0\nF 0.78 0.78 0.78\nCl -1.02 -1.02 1.02\nBr -1.11 1.11 -1.11\nH 0.63 -0.63 -0.63\n";
    AuditOptions a, b;
    a.reference_smiles = "[C@](F)(Cl)(Br)[H]";
    b.reference_smiles = "[C@@](F)(Cl)(Br)[H]";
    Audit x = audit_structure(xyz(text), a), y = audit_structure(xyz(text), b);
    // Cl . (Br x H) = +4 (unit-cube directions): positive, which is '@@' (OpenSMILES puts the three neighbours after
    // the first at negative signed volume for '@'; derivation in graph/stereo.hpp). So '@' is the mirror image.
    EXPECT_TRUE(has(x, "stereocentre", 1)) << describe(x);
    EXPECT_EQ(x.findings.size(), 1u) << describe(x);
    EXPECT_TRUE(y.findings.empty()) << describe(y);

    AuditOptions wrong_atoms;
    wrong_atoms.reference_smiles = "CO";
    Audit z = audit_structure(xyz(methane()), wrong_atoms);
    ASSERT_EQ(z.findings.size(), 1u) << describe(z);
    EXPECT_EQ(z.findings[0].kind, "formula");
    EXPECT_NE(z.findings[0].message.find("missing 1 O"), std::string::npos) << z.findings[0].message;

    AuditOptions same;
    same.reference_smiles = "C";
    EXPECT_TRUE(audit_structure(xyz(methane()), same).findings.empty());
}

TEST(Reference, DoubleBondConfigurationIsCompared) {
    // trans-1,2-difluoroethene (planar, F trans): reference F/C=C/F is clean, F/C=C\F is a double-bond finding.
    const std::string text = "6\ndifluoroethene\nC 0 0.665 0\nC 0 -0.665 0\nF 0 1.40 1.10\nF 0 -1.40 -1.10\n"
                             "H 0 1.20 -0.95\nH 0 -1.20 0.95\n";
    AuditOptions trans, cis;
    trans.reference_smiles = "F/C=C/F";
    cis.reference_smiles = "F/C=C\\F";
    Audit t = audit_structure(xyz(text), trans);
    EXPECT_FALSE(has(t, "double bond", 1) || has(t, "double bond", 2)) << describe(t);
    Audit c = audit_structure(xyz(text), cis);
    EXPECT_TRUE(has(c, "double bond", 1)) << describe(c);
}

// A structure's audit has a time limit (AuditOptions::time_limit, `repel check --time-limit`): past it the audit
// throws a LimitError naming the stage, which the front end reports as "not audited" for that structure only.
TEST(Audit, TimeLimitFailsTheStructureWithAMessage) {
    std::ostringstream text;
    text << "2000\nbare carbon chain\n";
    for (int i = 0; i < 2000; ++i) text << "C " << 1.26 * i << " " << (i % 2 ? 0.8 : 0.0) << " 0\n";
    AuditOptions options;
    options.time_limit = 1e-9;  // already past when the first stage ends
    try {
        audit_structure(xyz(text.str()), options);
        FAIL() << "no LimitError";
    } catch (const LimitError& e) {
        EXPECT_NE(std::string(e.what()).find("gave up after"), std::string::npos) << e.what();
    }
    options.time_limit = 0;  // none: the audit runs to its end
    EXPECT_FALSE(audit_structure(xyz(text.str()), options).findings.empty());
}
