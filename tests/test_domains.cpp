// Electron-domain perception: counts, AXE classes and names, charge and multiplicity, refusals.
#include <gtest/gtest.h>

#include <Eigen/Geometry>
#include <cmath>

#include "core/error.hpp"
#include "domains/domains.hpp"
#include "input/formula.hpp"

using namespace repel;

namespace {
MoleculeDomains of(const char* formula) { return analyse_domains(read_formula(formula)); }
}  // namespace

// Classes and shape names of the trade: Gillespie and Hargittai, The VSEPR Model of Molecular Geometry (1991).
TEST(Domains, ClassesAndNamesOfSingleCentreSpecies) {
    struct Row {
        const char* formula;
        const char* axe;
        const char* geometry;
        const char* shape;
    };
    const Row rows[] = {
        {"BeCl2", "AX2", "linear", "linear"},
        {"BF3", "AX3", "trigonal planar", "trigonal planar"},
        {"SO2", "AX2E", "trigonal planar", "bent"},
        {"CH4", "AX4", "tetrahedral", "tetrahedral"},
        {"NH3", "AX3E", "tetrahedral", "trigonal pyramidal"},
        {"H2O", "AX2E2", "tetrahedral", "bent"},
        {"PCl5", "AX5", "trigonal bipyramidal", "trigonal bipyramidal"},
        {"SF4", "AX4E", "trigonal bipyramidal", "seesaw"},
        {"ClF3", "AX3E2", "trigonal bipyramidal", "T-shaped"},
        {"XeF2", "AX2E3", "trigonal bipyramidal", "linear"},
        {"SF6", "AX6", "octahedral", "octahedral"},
        {"BrF5", "AX5E", "octahedral", "square pyramidal"},
        {"XeF4", "AX4E2", "octahedral", "square planar"},
        {"IF7", "AX7", "pentagonal bipyramidal", "pentagonal bipyramidal"},
        {"XeOF4", "AX5E", "octahedral", "square pyramidal"},
        {"NO2", "AX2+e", "trigonal planar", "bent"},
    };
    for (const Row& r : rows) {
        MoleculeDomains d = of(r.formula);
        const CentreDomains& c = d.atoms[0];
        EXPECT_EQ(c.axe, r.axe) << r.formula;
        EXPECT_EQ(c.electron_geometry, r.geometry) << r.formula;
        EXPECT_EQ(c.shape, r.shape) << r.formula;
    }
}

TEST(Domains, ChargeAndMultiplicity) {
    EXPECT_EQ(of("SO4 2-").charge, -2);
    EXPECT_EQ(of("SO4 2-").multiplicity, 1);
    EXPECT_EQ(of("NH4+").charge, 1);
    EXPECT_EQ(of("NO2").multiplicity, 2);  // one unpaired electron, on nitrogen
    EXPECT_EQ(of("NO2").atoms[0].single_electrons, 1);
}

TEST(Domains, DioxygenIsATriplet) {
    Molecule m;
    Atom o;
    o.z = 8;
    m.add_atom(o);
    m.add_atom(o);
    m.add_bond(0, 1, 2);
    MoleculeDomains d = analyse_domains(m);
    EXPECT_EQ(d.multiplicity, 3);  // O2 ground state 3Sigma_g- (common practice)
    EXPECT_FALSE(d.warnings.empty());
}

TEST(Domains, PredictedAnglesComeFromTheSolvedDirections) {
    MoleculeDomains d = of("XeF4");
    // square planar: four 90-degree and two 180-degree F-Xe-F angles
    int right = 0, straight = 0;
    for (const PredictedAngle& a : d.atoms[0].angles) {
        if (std::abs(a.degrees - 90) < 1) ++right;
        if (std::abs(a.degrees - 180) < 1) ++straight;
    }
    EXPECT_EQ(right, 4);
    EXPECT_EQ(straight, 2);
}

TEST(Domains, RefusesOverfullValenceWithTheColumn) {
    Molecule m;
    Atom c;
    c.z = 6;
    c.column = 1;
    m.add_atom(c);
    for (int k = 0; k < 5; ++k) {
        Atom h;
        h.z = 1;
        int i = m.add_atom(h);
        m.add_bond(0, i);
    }
    try {
        analyse_domains(m);
        FAIL() << "five bonds on carbon were accepted";
    } catch (const InputError& e) {
        EXPECT_EQ(e.column(), 1);
        EXPECT_NE(std::string(e.what()).find("valence"), std::string::npos);
    }
}

TEST(Domains, RefusesSecondRowOctetExpansion) {
    // A nitro group written without charges: N with five bonds' worth of electrons pairs.
    Molecule m;
    Atom n;
    n.z = 7;
    Atom o;
    o.z = 8;
    Atom c;
    c.z = 6;
    c.hydrogens = 3;
    m.add_atom(n);
    m.add_atom(o);
    m.add_atom(o);
    m.add_atom(c);
    m.add_bond(0, 1, 2);
    m.add_bond(0, 2, 2);
    m.add_bond(0, 3, 1);
    EXPECT_THROW(analyse_domains(m), InputError);
}

TEST(Domains, RefusesTransitionMetalsPlainly) {
    Molecule m;
    Atom fe;
    fe.z = 26;
    m.add_atom(fe);
    EXPECT_THROW(analyse_domains(m), UnsupportedError);
}
