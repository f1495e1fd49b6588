#include <gtest/gtest.h>

#include "graph/molecule.hpp"

using namespace repel;

// Atom order contract (shared/docs/interface.md): input atoms, then implicit hydrogens grouped by parent.
TEST(Molecule, ImplicitHydrogensAreAppendedByParentInParentOrder) {
    Molecule m;
    Atom c;
    c.z = 6;
    c.hydrogens = 3;
    Atom o;
    o.z = 8;
    o.hydrogens = 1;
    m.add_atom(c);
    m.add_atom(o);
    m.add_bond(0, 1);
    m.make_hydrogens_explicit();
    ASSERT_EQ(m.atom_count(), 6);
    EXPECT_EQ(m.input_atom_count(), 2);
    for (int i = 2; i < 5; ++i) EXPECT_EQ(m.atoms[i].parent, 0);
    EXPECT_EQ(m.atoms[5].parent, 1);
    EXPECT_EQ(m.degree(0), 4);
    EXPECT_EQ(m.degree(1), 2);
}

TEST(Molecule, ImplicitHydrogenInStereoListBecomesTheFirstAddedHydrogen) {
    Molecule m;
    Atom c;
    c.z = 6;
    c.hydrogens = 1;
    c.chiral_class = ChiralClass::TH;
    c.chiral_index = 1;
    c.stereo_neighbors = {kImplicitHydrogen};
    m.add_atom(c);
    m.make_hydrogens_explicit();
    EXPECT_EQ(m.atoms[0].stereo_neighbors[0], 1);
}
