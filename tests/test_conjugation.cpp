// graph/conjugation: the pi-bond rules and where the three callers' decisions differ on purpose.
#include <gtest/gtest.h>

#include "graph/conjugation.hpp"
#include "input/smiles.hpp"

using namespace repel;

namespace {
Molecule mol(const std::string& smi) {
    Molecule m = read_smiles(smi);
    m.make_hydrogens_explicit();
    return m;
}
}  // namespace

// Cyanamide N#C-N: the nitrile carbon's triple bond counts for delocalisation and for the audit, not for a planar
// (three-domain) centre, which a nitrile carbon is not.
TEST(Conjugation, PiBondRulesDifferOnTripleAndAromaticBonds) {
    const Molecule cy = mol("N#CN");
    EXPECT_TRUE(has_pi_bond(cy, 1, kPiBondForDelocalisation, 2));
    EXPECT_TRUE(has_pi_bond(cy, 1, kPiBondKekule));
    EXPECT_FALSE(has_pi_bond(cy, 1, kPiBondForPlanarCentre));
    EXPECT_FALSE(has_pi_bond(cy, 1, kPiBondForDelocalisation, 0));  // the triple bond left out: none
    // Benzene carbon: every rule counts the ring (Kekule double or aromatic flag).
    const Molecule bz = mol("c1ccccc1");
    EXPECT_TRUE(has_pi_bond(bz, 0, kPiBondForPlanarCentre));
    EXPECT_TRUE(has_pi_bond(bz, 0, kPiBondKekule));
}

// Acetamide's N (atom 3): delocalised (one lone pair, neutral, single bonds, next to C=O); methylamine's is not.
// Aziridine N-acyl: no delocalisation in a three-membered ring (common practice, conjugation.hpp).
TEST(Conjugation, DelocalisedLonePairFollowsTheDomainRule) {
    EXPECT_TRUE(delocalised_lone_pair(mol("CC(=O)N"), 3, 1, 0));
    EXPECT_FALSE(delocalised_lone_pair(mol("CN"), 1, 1, 0));
    EXPECT_FALSE(delocalised_lone_pair(mol("CC(=O)N1CC1"), 3, 1, 0));
    EXPECT_FALSE(delocalised_lone_pair(mol("CC(=O)N"), 3, 1, 1));  // a single electron: no
    // Hydroxyl O of acetic acid: not delocalised (one heavy neighbour); the ester O of methyl acetate is.
    EXPECT_FALSE(delocalised_lone_pair(mol("CC(=O)O"), 3, 2, 0));
    EXPECT_TRUE(delocalised_lone_pair(mol("CC(=O)OC"), 3, 2, 0));
}

// The audit's conjugated N: one Lewis lone pair and three bonds, next to a written multiple bond.
TEST(Conjugation, ConjugatedNitrogenForTheAudit) {
    EXPECT_TRUE(conjugated_nitrogen(mol("CC(=O)N"), 3, 1, 3));
    EXPECT_FALSE(conjugated_nitrogen(mol("CCN"), 2, 1, 3));
    EXPECT_FALSE(conjugated_nitrogen(mol("CC(=O)N"), 3, 2, 3));
}

// The refinement's donor: also a hydroxyl O at four domains next to a pi centre (acetic acid's OH), which the
// domain rule leaves out.
TEST(Conjugation, ConjugatedDonorTakesWhatTheDomainRuleLeaves) {
    const Molecule acid = mol("CC(=O)O");
    std::vector<bool> pi(static_cast<size_t>(acid.atom_count()), false);
    pi[1] = true;  // the carbonyl carbon
    EXPECT_TRUE(conjugated_donor(acid, 3, {2, 0, 0, 4}, pi));
    EXPECT_FALSE(conjugated_donor(acid, 3, {2, 0, 1, 4}, pi));  // a single electron
    pi[1] = false;
    EXPECT_FALSE(conjugated_donor(acid, 3, {2, 0, 0, 4}, pi));
    EXPECT_TRUE(pi_centre_for_planarity(acid, 1, 3, 3));
    EXPECT_FALSE(pi_centre_for_planarity(acid, 0, 4, 4));
}
