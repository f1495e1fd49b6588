#include <gtest/gtest.h>

#include <stdexcept>

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

// The neighbour lists follow add_atom/add_bond/set_bonds; a size change of `atoms` or `bonds` made around them is
// detected instead of answered from the stale lists (molecule.hpp).
TEST(Molecule, NeighbourListsFollowTheMutators) {
    Molecule m;
    Atom c;
    c.z = 6;
    for (int i = 0; i < 3; ++i) m.add_atom(c);
    m.add_bond(0, 1);
    m.add_bond(1, 2, 2);
    EXPECT_TRUE(m.adjacency_current());
    EXPECT_EQ(m.degree(1), 2);
    EXPECT_EQ(m.bond_between(2, 1), 1);
    // Keeping a subset of the bonds: the lists follow.
    m.set_bonds({m.bonds[1]});
    EXPECT_EQ(m.degree(0), 0);
    EXPECT_EQ(m.degree(1), 1);
    EXPECT_EQ(m.bond_between(1, 2), 0);
    EXPECT_EQ(m.bond_between(0, 1), -1);
}

TEST(Molecule, BondsChangedAroundTheMutatorsAreDetected) {
    Molecule m;
    Atom c;
    c.z = 6;
    m.add_atom(c);
    m.add_atom(c);
    m.add_bond(0, 1);
    m.bonds.pop_back();  // removed without set_bonds
    EXPECT_FALSE(m.adjacency_current());
    EXPECT_THROW((void)m.neighbors(0), std::logic_error);
    EXPECT_THROW((void)m.degree(1), std::logic_error);
    EXPECT_THROW((void)m.bond_between(0, 1), std::logic_error);
    m.rebuild_adjacency();
    EXPECT_EQ(m.degree(0), 0);

    // An atom appended directly: a reader is told; the next add_atom or add_bond rebuilds first.
    m.atoms.push_back(c);
    EXPECT_THROW((void)m.neighbors(2), std::logic_error);
    m.add_bond(1, 2);
    EXPECT_TRUE(m.adjacency_current());
    EXPECT_EQ(m.degree(2), 1);
    EXPECT_EQ(m.neighbors(1)[0].atom, 2);

    // A copy carries its lists with it and stays current.
    const Molecule copy = m;
    EXPECT_EQ(copy.degree(1), 1);
}
