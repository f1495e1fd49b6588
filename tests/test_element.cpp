#include <gtest/gtest.h>

#include <set>
#include <stdexcept>
#include <string>
#include <string_view>

#include "core/element.hpp"

using namespace repel;

TEST(Element, RowIHoldsAtomicNumberIPlusOne) {
    for (int z = 1; z <= kMaxElement; ++z) EXPECT_EQ(element(z).number, z);
    EXPECT_EQ(element(1).symbol, "H");
    EXPECT_EQ(element(kMaxElement).symbol, "Rn");
}

TEST(Element, SymbolsRoundTrip) {
    std::set<std::string_view> seen;
    for (int z = 1; z <= kMaxElement; ++z) {
        const auto symbol = element(z).symbol;
        EXPECT_TRUE(seen.insert(symbol).second) << "duplicate symbol " << symbol;
        EXPECT_EQ(element_number(symbol), z) << symbol;
    }
    EXPECT_EQ(element_number("Cl"), 17);
    EXPECT_EQ(element_number("C"), 6);
    EXPECT_EQ(element_number("Co"), 27);
    EXPECT_EQ(element_number("I"), 53);
}

TEST(Element, UnknownSymbolsAreZero) {
    for (std::string_view s : {"", "X", "Xx", "cl", "CL", "c", "C1", "Cl ", " Cl", "Uue", "D", "Fr", "Og", "Q", "Zz",
                               "@", "\xC3\x9F"})
        EXPECT_EQ(element_number(s), 0) << '"' << std::string(s) << '"';
}

TEST(Element, AtomicNumbersOutsideTheTableThrow) {
    EXPECT_THROW(element(0), std::out_of_range);
    EXPECT_THROW(element(-1), std::out_of_range);
    EXPECT_THROW(element(kMaxElement + 1), std::out_of_range);
}

// Periods, IUPAC groups and valence electrons: the periodic table (common practice); lanthanides in group 3.
TEST(Element, PeriodGroupAndValenceOfASample) {
    struct Expected {
        std::string_view symbol;
        int period, group, valence;
    };
    for (const Expected& e : {Expected{"H", 1, 1, 1}, Expected{"He", 1, 18, 2}, Expected{"C", 2, 14, 4},
                              Expected{"O", 2, 16, 6}, Expected{"Cl", 3, 17, 7}, Expected{"Ar", 3, 18, 8},
                              Expected{"K", 4, 1, 1}, Expected{"Fe", 4, 8, 8}, Expected{"Zn", 4, 12, 12},
                              Expected{"Ga", 4, 13, 3}, Expected{"Xe", 5, 18, 8}, Expected{"Ba", 6, 2, 2},
                              Expected{"La", 6, 3, 3}, Expected{"Gd", 6, 3, 3}, Expected{"Lu", 6, 3, 3},
                              Expected{"Hf", 6, 4, 4}, Expected{"Hg", 6, 12, 12}, Expected{"Pb", 6, 14, 4},
                              Expected{"Rn", 6, 18, 8}}) {
        const ElementData& d = element(element_number(e.symbol));
        EXPECT_EQ(d.period, e.period) << e.symbol;
        EXPECT_EQ(d.group, e.group) << e.symbol;
        EXPECT_EQ(d.valence_electrons, e.valence) << e.symbol;
    }
}

// Structural rules of the periodic table (common practice), over every row: periods have 2, 8, 8, 18, 18, 32
// elements; the main-group valence count follows the group.
TEST(Element, PeriodsGroupsAndValenceAreConsistent) {
    int per_period[7] = {};
    for (int z = 1; z <= kMaxElement; ++z) {
        const ElementData& d = element(z);
        ASSERT_GE(d.period, 1);
        ASSERT_LE(d.period, 6);
        ++per_period[d.period];
        EXPECT_GE(d.group, 1) << d.symbol;
        EXPECT_LE(d.group, 18) << d.symbol;
        if (z == 2)
            EXPECT_EQ(d.valence_electrons, 2);
        else if (d.group <= 2)
            EXPECT_EQ(d.valence_electrons, d.group) << d.symbol;
        else if (d.group >= 13)
            EXPECT_EQ(d.valence_electrons, d.group - 10) << d.symbol;
        else
            EXPECT_TRUE(is_transition_metal(z)) << d.symbol;
    }
    EXPECT_EQ(per_period[1], 2);
    EXPECT_EQ(per_period[2], 8);
    EXPECT_EQ(per_period[3], 8);
    EXPECT_EQ(per_period[4], 18);
    EXPECT_EQ(per_period[5], 18);
    EXPECT_EQ(per_period[6], 32);
}

TEST(Element, TransitionMetalsAreTheDAndFBlock) {
    EXPECT_FALSE(is_transition_metal(20));  // Ca
    EXPECT_TRUE(is_transition_metal(21));   // Sc
    EXPECT_TRUE(is_transition_metal(30));   // Zn
    EXPECT_FALSE(is_transition_metal(31));  // Ga
    EXPECT_TRUE(is_transition_metal(64));   // Gd
    EXPECT_TRUE(is_transition_metal(80));   // Hg
    EXPECT_FALSE(is_transition_metal(81));  // Tl
}

// Single / double / triple covalent radii of Pyykko and Atsumi, Chem. Eur. J. 15 (2009) 186 and 12770, and Pyykko,
// Riedel and Patzschke, Chem. Eur. J. 11 (2005) 3511, as read from the combined table in python3-periodictable.
TEST(Element, PyykkoRadiiOfASample) {
    const auto& c = element(6);
    EXPECT_DOUBLE_EQ(c.r_single, 0.75);
    EXPECT_DOUBLE_EQ(c.r_double, 0.67);
    EXPECT_DOUBLE_EQ(c.r_triple, 0.60);
    const auto& n = element(7);
    EXPECT_DOUBLE_EQ(n.r_single, 0.71);
    EXPECT_DOUBLE_EQ(n.r_double, 0.60);
    EXPECT_DOUBLE_EQ(n.r_triple, 0.54);
    EXPECT_DOUBLE_EQ(element(8).r_single, 0.63);
    EXPECT_DOUBLE_EQ(element(1).r_single, 0.32);
    EXPECT_DOUBLE_EQ(element(1).r_double, 0.0);  // not tabulated
    EXPECT_DOUBLE_EQ(element(17).r_single, 0.99);
    EXPECT_DOUBLE_EQ(element(26).r_single, 1.16);
    EXPECT_DOUBLE_EQ(element(53).r_single, 1.33);
    EXPECT_DOUBLE_EQ(element(30).r_triple, 0.0);  // Zn: none
    for (int z = 1; z <= kMaxElement; ++z) EXPECT_GT(element(z).r_single, 0.0) << element(z).symbol;
}

// Cordero et al., Dalton Trans. (2008) 2832 (as in ase.data.covalent_radii): C sp3, Fe low spin.
TEST(Element, CorderoRadiiOfASample) {
    EXPECT_DOUBLE_EQ(element(1).r_perception, 0.31);
    EXPECT_DOUBLE_EQ(element(6).r_perception, 0.76);
    EXPECT_DOUBLE_EQ(element(26).r_perception, 1.32);
    EXPECT_DOUBLE_EQ(element(86).r_perception, 1.50);
    for (int z = 1; z <= kMaxElement; ++z) EXPECT_GT(element(z).r_perception, 0.0) << element(z).symbol;
}

// van der Waals radii: Bondi, J. Phys. Chem. 68 (1964) 441 (C, N, O, Cl); Mantina et al., J. Phys. Chem. A 113 (2009)
// 5806 (B, Al); Alvarez, Dalton Trans. 42 (2013) 8617 (Fe, Pt) -- as in ase.data.vdw and ase.data.vdw_alvarez.
TEST(Element, VanDerWaalsRadiiOfASample) {
    EXPECT_DOUBLE_EQ(element(6).r_vdw, 1.70);
    EXPECT_DOUBLE_EQ(element(7).r_vdw, 1.55);
    EXPECT_DOUBLE_EQ(element(8).r_vdw, 1.52);
    EXPECT_DOUBLE_EQ(element(17).r_vdw, 1.75);
    EXPECT_DOUBLE_EQ(element(5).r_vdw, 1.92);
    EXPECT_DOUBLE_EQ(element(13).r_vdw, 1.84);
    EXPECT_DOUBLE_EQ(element(26).r_vdw, 2.44);
    EXPECT_DOUBLE_EQ(element(78).r_vdw, 2.29);
    for (int z = 1; z <= kMaxElement; ++z) {
        if (z != 61) { EXPECT_GT(element(z).r_vdw, element(z).r_perception) << element(z).symbol; }
    }
    EXPECT_DOUBLE_EQ(element(61).r_vdw, 0.0);  // Pm: in neither table
}

// Pauling electronegativities, Allred, J. Inorg. Nucl. Chem. 17 (1961) 215.
TEST(Element, ElectronegativitiesOfASample) {
    EXPECT_DOUBLE_EQ(element(9).electronegativity, 3.98);
    EXPECT_DOUBLE_EQ(element(8).electronegativity, 3.44);
    EXPECT_DOUBLE_EQ(element(6).electronegativity, 2.55);
    EXPECT_DOUBLE_EQ(element(1).electronegativity, 2.20);
    EXPECT_DOUBLE_EQ(element(55).electronegativity, 0.79);
    const std::set<int> none = {2, 10, 18, 61, 63, 65, 70};  // He Ne Ar; Pm Eu Tb Yb (see element.cpp)
    for (int z = 1; z <= kMaxElement; ++z) {
        if (none.count(z))
            EXPECT_DOUBLE_EQ(element(z).electronegativity, 0.0) << element(z).symbol;
        else
            EXPECT_GT(element(z).electronegativity, 0.5) << element(z).symbol;
    }
    // F is the most electronegative element (common practice).
    for (int z = 1; z <= kMaxElement; ++z) {
        if (z == 9) continue;
        EXPECT_LT(element(z).electronegativity, element(9).electronegativity) << element(z).symbol;
    }
}

// Standard atomic weights, IUPAC 2013 (Meija et al., Pure Appl. Chem. 88 (2016) 265).
TEST(Element, AtomicWeightsOfASampleAndTheirOrder) {
    EXPECT_DOUBLE_EQ(element(1).mass, 1.008);
    EXPECT_DOUBLE_EQ(element(6).mass, 12.011);
    EXPECT_DOUBLE_EQ(element(17).mass, 35.45);
    EXPECT_DOUBLE_EQ(element(26).mass, 55.845);
    // Weight rises with Z except at the three inversions of H..Rn (common practice): Ar/K, Co/Ni, Te/I. A swapped
    // or shifted row would break this.
    const std::set<int> inversions = {19, 28, 53};
    for (int z = 2; z <= kMaxElement; ++z) {
        if (inversions.count(z))
            EXPECT_LT(element(z).mass, element(z - 1).mass) << element(z).symbol;
        else
            EXPECT_GT(element(z).mass, element(z - 1).mass) << element(z).symbol;
    }
}
