// The normal-valence tables of graph/valence.hpp, and the differences between them that the callers rely on.
#include <gtest/gtest.h>

#include <algorithm>

#include "graph/valence.hpp"

using namespace repel;

namespace {

std::vector<int> neutral_valences(int z) {
    std::vector<int> out;
    for (const ValenceState& s : valence_states(z))
        if (s.charge == 0) out.push_back(s.valence);
    std::sort(out.begin(), out.end());
    return out;
}

}  // namespace

// OpenSMILES specification v1.0, "Organic Subset": N 3 or 5, S 2, 4 or 6, Cl 1; CC implies 3 hydrogens per carbon.
TEST(Valence, OrganicSubsetAsTheSpecificationGivesIt) {
    ASSERT_NE(organic_element(7), nullptr);
    EXPECT_EQ(organic_element(7)->lowest_valence_at_least(4), 5);
    EXPECT_EQ(organic_element(16)->max_valence(), 6);
    EXPECT_EQ(organic_element(17)->max_valence(), 1);
    EXPECT_EQ(organic_implicit_hydrogens(*organic_element(6), 1), 3);
    EXPECT_EQ(organic_element(14), nullptr);  // Si is written in brackets
}

// Isoelectronic counting (common practice): N+ takes carbon's 4, O- fluorine's 1, C- and C+ three bonds.
TEST(Valence, ChargedAtomsCountAsTheirIsoelectronicNeutral) {
    EXPECT_EQ(charged_organic_valence(*organic_element(7), +1, 4), 4);
    EXPECT_EQ(charged_organic_valence(*organic_element(8), -1, 1), 1);
    EXPECT_EQ(charged_organic_valence(*organic_element(6), -1, 3), 3);
    EXPECT_EQ(charged_organic_valence(*organic_element(6), +1, 3), 3);
    std::array<int, 4> v{};
    ASSERT_EQ(isoelectronic_valences(7, +1, v), 1);  // [n+] like c
    EXPECT_EQ(v[0], 4);
    ASSERT_EQ(isoelectronic_valences(8, +1, v), 2);  // [o+] like n
    EXPECT_EQ(v[0], 3);
    EXPECT_EQ(isoelectronic_valences(8, 0, v), 1);  // period 2: no expanded octet
    EXPECT_EQ(isoelectronic_valences(16, 0, v), 3);
}

// The differences listed in valence.hpp: neutral N is 3 or 5 for SMILES, 3 when perceived from coordinates; heavy
// halogens are 1 for SMILES, 1, 3, 5 or 7 when perceived (ClF3, IF5, IF7).
TEST(Valence, PerceptionStatesDifferFromTheOrganicSubsetWhereDocumented) {
    EXPECT_EQ(neutral_valences(7), (std::vector<int>{3}));
    EXPECT_EQ(neutral_valences(15), (std::vector<int>{3, 5}));
    EXPECT_EQ(neutral_valences(17), (std::vector<int>{1, 3, 5, 7}));
    EXPECT_EQ(neutral_valences(9), (std::vector<int>{1}));
    EXPECT_TRUE(valence_states(26).empty());  // Fe: no main-group rule
    // A donor cut off a metal may be oxo O2- (valence 0), beyond the plain table.
    const auto d = donor_valence_states(8);
    EXPECT_TRUE(std::any_of(d.begin(), d.end(), [](const ValenceState& s) { return s.valence == 0 && s.charge == -2; }));
    const auto p = valence_states(8);
    EXPECT_FALSE(std::any_of(p.begin(), p.end(), [](const ValenceState& s) { return s.charge == -2; }));
}
