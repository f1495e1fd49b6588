// Reading a species: SMILES first, then a formula, and the error of the notation the text looks like.
#include <gtest/gtest.h>

#include <string>

#include "core/error.hpp"
#include "core/limits.hpp"
#include "input/species.hpp"

using namespace repel;

namespace {
std::string error_of(const char* text) {
    try {
        read_species(text);
    } catch (const InputError& e) {
        return e.what();
    }
    return {};
}
}  // namespace

TEST(Species, SmilesFirstThenFormula) {
    EXPECT_EQ(read_species("CO").atom_count(), 2);        // methanol as SMILES (two heavy atoms, hydrogens implicit)
    EXPECT_EQ(read_species("CO").atoms[0].hydrogens, 3);
    EXPECT_EQ(read_species("XeF4").atom_count(), 5);      // not SMILES: read as a formula
    EXPECT_EQ(read_species("SO4 2-").total_charge(), -2);
    EXPECT_EQ(read_species("CO", Notation::formula).atom_count(), 2);  // carbon monoxide when asked
}

TEST(Species, ErrorFollowsTheNotationTheTextLooksLike) {
    EXPECT_NE(error_of("C1CC").find("ring 1"), std::string::npos);        // ring-closure digits are not counts
    EXPECT_NE(error_of("CC(C").find("("), std::string::npos);
    EXPECT_NE(error_of("CH5").find("formula"), std::string::npos);        // a formula with no Lewis structure
    EXPECT_NE(error_of("C2H6").find("SMILES"), std::string::npos);        // a chain: says to give SMILES
}

TEST(Species, ALimitStaysALimitError) {
    // Past the reader's atom limit (core/limits.hpp) the text is too large, not a formula: the SMILES reader's
    // LimitError comes out whole, not sliced to an InputError after a second read as a formula.
    const std::string huge(static_cast<size_t>(kMaxAtoms) + 1, 'C');
    EXPECT_THROW(read_species(huge), LimitError);
    EXPECT_THROW(read_species(huge, Notation::smiles), LimitError);
}
