// Metal-ligand distances. Two regimes (common practice of inorganic structural chemistry):
// - hard donors (N, O, F, the heavier halides, S) and cyanide carbon on a metal in a positive oxidation state: the
//   bond is largely ionic and its length is the metal's effective ionic radius for that oxidation state, coordination
//   number and spin state (Shannon) plus an effective radius of the donor. The donor radii are fitted on the `fit`
//   half of tests/data/metal_complexes.tsv (tests/external/check_metal_complexes.py prints both halves);
// - soft and covalent donors (carbonyl, alkyl and aryl carbon, P, As, hydride), hapto ligands, low oxidation states
//   the ionic table does not cover: Pyykko and Atsumi's covalent radii (as the main-group bonds), with the
//   corrections below.
#include "domains/metal_lengths.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>

#include "core/element.hpp"

namespace repel {
namespace {

// Effective ionic radii, Angstrom: R. D. Shannon, Acta Cryst. A32 (1976) 751, Table 1 (from memory; the common
// coordination numbers of the d-block ions used here). spin: 0 not distinguished, 1 low spin, 2 high spin;
// sp: the square-planar entry of a four-coordinate ion.
struct IonicRadius {
    int z, ox, cn, spin;
    bool sp;
    double r;
};
constexpr IonicRadius kShannon[] = {
    {21, 3, 6, 0, false, 0.745}, {21, 3, 8, 0, false, 0.870},
    {22, 2, 6, 0, false, 0.860}, {22, 3, 6, 0, false, 0.670}, {22, 4, 4, 0, false, 0.420},
    {22, 4, 5, 0, false, 0.510}, {22, 4, 6, 0, false, 0.605}, {22, 4, 8, 0, false, 0.740},
    {23, 2, 6, 0, false, 0.790}, {23, 3, 6, 0, false, 0.640}, {23, 4, 5, 0, false, 0.530},
    {23, 4, 6, 0, false, 0.580}, {23, 4, 8, 0, false, 0.720}, {23, 5, 4, 0, false, 0.355},
    {23, 5, 5, 0, false, 0.460}, {23, 5, 6, 0, false, 0.540},
    {24, 2, 6, 1, false, 0.730}, {24, 2, 6, 2, false, 0.800}, {24, 3, 6, 0, false, 0.615},
    {24, 4, 4, 0, false, 0.410}, {24, 4, 6, 0, false, 0.550}, {24, 5, 4, 0, false, 0.345},
    {24, 6, 4, 0, false, 0.260}, {24, 6, 6, 0, false, 0.440},
    {25, 2, 4, 2, false, 0.660}, {25, 2, 5, 2, false, 0.750}, {25, 2, 6, 1, false, 0.670},
    {25, 2, 6, 2, false, 0.830}, {25, 2, 7, 2, false, 0.900}, {25, 2, 8, 0, false, 0.960},
    {25, 3, 5, 0, false, 0.580}, {25, 3, 6, 1, false, 0.580}, {25, 3, 6, 2, false, 0.645},
    {25, 4, 4, 0, false, 0.390}, {25, 4, 6, 0, false, 0.530}, {25, 5, 4, 0, false, 0.330},
    {25, 6, 4, 0, false, 0.255}, {25, 7, 4, 0, false, 0.250}, {25, 7, 6, 0, false, 0.460},
    {26, 2, 4, 2, false, 0.630}, {26, 2, 4, 2, true, 0.640}, {26, 2, 6, 1, false, 0.610},
    {26, 2, 6, 2, false, 0.780}, {26, 2, 8, 2, false, 0.920}, {26, 3, 4, 2, false, 0.490},
    {26, 3, 5, 0, false, 0.580}, {26, 3, 6, 1, false, 0.550}, {26, 3, 6, 2, false, 0.645},
    {26, 3, 8, 2, false, 0.780}, {26, 4, 6, 0, false, 0.585}, {26, 6, 4, 0, false, 0.250},
    {27, 2, 4, 2, false, 0.580}, {27, 2, 5, 0, false, 0.670}, {27, 2, 6, 1, false, 0.650},
    {27, 2, 6, 2, false, 0.745}, {27, 2, 8, 0, false, 0.900}, {27, 3, 6, 1, false, 0.545},
    {27, 3, 6, 2, false, 0.610}, {27, 4, 4, 0, false, 0.400}, {27, 4, 6, 2, false, 0.530},
    {28, 2, 4, 0, false, 0.550}, {28, 2, 4, 0, true, 0.490}, {28, 2, 5, 0, false, 0.630},
    {28, 2, 6, 0, false, 0.690}, {28, 3, 6, 1, false, 0.560}, {28, 3, 6, 2, false, 0.600},
    {28, 4, 6, 1, false, 0.480},
    {29, 1, 2, 0, false, 0.460}, {29, 1, 4, 0, false, 0.600}, {29, 1, 6, 0, false, 0.770},
    {29, 2, 4, 0, false, 0.570}, {29, 2, 4, 0, true, 0.570}, {29, 2, 5, 0, false, 0.650},
    {29, 2, 6, 0, false, 0.730}, {29, 3, 6, 1, false, 0.540},
    {30, 2, 4, 0, false, 0.600}, {30, 2, 5, 0, false, 0.680}, {30, 2, 6, 0, false, 0.740},
    {30, 2, 8, 0, false, 0.900},
    {39, 3, 6, 0, false, 0.900}, {39, 3, 7, 0, false, 0.960}, {39, 3, 8, 0, false, 1.019},
    {39, 3, 9, 0, false, 1.075},
    {40, 4, 4, 0, false, 0.590}, {40, 4, 5, 0, false, 0.660}, {40, 4, 6, 0, false, 0.720},
    {40, 4, 7, 0, false, 0.780}, {40, 4, 8, 0, false, 0.840}, {40, 4, 9, 0, false, 0.890},
    {41, 3, 6, 0, false, 0.720}, {41, 4, 6, 0, false, 0.680}, {41, 5, 4, 0, false, 0.480},
    {41, 5, 6, 0, false, 0.640}, {41, 5, 7, 0, false, 0.690}, {41, 5, 8, 0, false, 0.740},
    {42, 3, 6, 0, false, 0.690}, {42, 4, 6, 0, false, 0.650}, {42, 5, 4, 0, false, 0.460},
    {42, 5, 6, 0, false, 0.610}, {42, 6, 4, 0, false, 0.410}, {42, 6, 5, 0, false, 0.500},
    {42, 6, 6, 0, false, 0.590}, {42, 6, 7, 0, false, 0.730},
    {43, 4, 6, 0, false, 0.645}, {43, 7, 4, 0, false, 0.370},
    {44, 3, 6, 0, false, 0.680}, {44, 4, 6, 0, false, 0.620}, {44, 5, 6, 0, false, 0.565},
    {44, 7, 4, 0, false, 0.380}, {44, 8, 4, 0, false, 0.360},
    {45, 3, 6, 0, false, 0.665}, {45, 4, 6, 0, false, 0.600},
    {46, 1, 2, 0, false, 0.590}, {46, 2, 4, 0, true, 0.640}, {46, 2, 6, 0, false, 0.860},
    {46, 4, 6, 0, false, 0.615},
    {47, 1, 2, 0, false, 0.670}, {47, 1, 4, 0, false, 1.000}, {47, 1, 4, 0, true, 1.020},
    {47, 1, 6, 0, false, 1.150}, {47, 2, 4, 0, true, 0.790}, {47, 3, 4, 0, true, 0.670},
    {48, 2, 4, 0, false, 0.780}, {48, 2, 6, 0, false, 0.950},
    {72, 4, 4, 0, false, 0.580}, {72, 4, 6, 0, false, 0.710}, {72, 4, 7, 0, false, 0.760},
    {72, 4, 8, 0, false, 0.830},
    {73, 5, 6, 0, false, 0.640}, {73, 5, 7, 0, false, 0.690}, {73, 5, 8, 0, false, 0.740},
    {74, 4, 6, 0, false, 0.660}, {74, 5, 6, 0, false, 0.620}, {74, 6, 4, 0, false, 0.420},
    {74, 6, 5, 0, false, 0.510}, {74, 6, 6, 0, false, 0.600},
    {75, 4, 6, 0, false, 0.630}, {75, 5, 6, 0, false, 0.580}, {75, 6, 6, 0, false, 0.550},
    {75, 7, 4, 0, false, 0.380}, {75, 7, 6, 0, false, 0.530},
    {76, 4, 6, 0, false, 0.630}, {76, 6, 6, 0, false, 0.545}, {76, 8, 4, 0, false, 0.390},
    {77, 3, 6, 0, false, 0.680}, {77, 4, 6, 0, false, 0.625},
    {78, 2, 4, 0, true, 0.600}, {78, 2, 6, 0, false, 0.800}, {78, 4, 6, 0, false, 0.625},
    {79, 3, 4, 0, true, 0.680}, {79, 3, 6, 0, false, 0.850},
    {80, 2, 2, 0, false, 0.690}, {80, 2, 4, 0, false, 0.960}, {80, 2, 6, 0, false, 1.020},
    {80, 2, 8, 0, false, 1.140},
};

// Effective radius of a hard donor beside a Shannon metal radius (Angstrom): the measured metal-donor distance less
// the metal's ionic radius, fitted on the `fit` half of tests/data/metal_complexes.tsv (residuals there). Shannon's
// own anion radii (O2- 1.35-1.40, F- 1.285-1.33, Cl- 1.81) fit the oxides and fluorides; bonds to the heavier
// halides and to neutral N donors are more covalent and shorter than the sums of crystal radii.
constexpr double kDonorN = 1.43;
// N with a pi bond of its own (pyridine, bipyridine, phenanthroline, imines): shorter than amine N on the same
// metal (back-bonding; [Fe(bipy)3]2+ 1.97 A against [Fe(NH3)6]2+-type amines, from memory).
constexpr double kDonorPiN = 1.36;
constexpr double kDonorO = 1.35;
constexpr double kDonorF = 1.25;
constexpr double kDonorCl = 1.69;
constexpr double kDonorBr = 1.84;
constexpr double kDonorI = 2.06;
constexpr double kDonorS = 1.75;
constexpr double kDonorCyanideC = 1.35;
// Change of an ionic radius per unit of oxidation state where the table lacks that state for the ion (Ru(II)):
// Shannon's radii of one metal fall by about 0.06-0.10 A per unit (common practice).
constexpr double kRadiusPerOxidationState = 0.08;
// Change of an ionic radius per step of coordination number where Shannon's table lacks that number for the ion
// (common practice: his radii grow about 0.05-0.08 A per step).
constexpr double kRadiusPerCoordination = 0.06;

// Covalent regime: Pyykko and Atsumi's radii (lib/core/element.cpp) by the written order, with:
// - carbonyl carbon: back-bonding shortens M-CO below the single-bond sum (gas-phase electron diffraction, from
//   memory: Cr(CO)6 1.918, Mo(CO)6 2.063, W(CO)6 2.058, Fe(CO)5 1.81-1.83 A against sums 1.97, 2.13, 2.12, 1.91);
constexpr double kCarbonylShortening = 0.06;
// - hapto ligands: each ring or chain atom sits further from the metal than a sigma bond (ferrocene Fe-C 2.064,
//   bis(benzene)chromium Cr-C 2.14, Zeise's anion Pt-C 2.13 A, from memory, against sums 1.91, 1.97, 1.98).
constexpr double kHaptoLengthening = 0.16;

double donor_radius(const MetalLigandBond& b) {
    switch (b.donor_z) {
        case 7: return b.donor_multiple ? kDonorPiN : kDonorN;
        case 8: return kDonorO;
        case 9: return kDonorF;
        case 17: return kDonorCl;
        case 35: return kDonorBr;
        case 53: return kDonorI;
        case 16: return kDonorS;
        case 6:
            // Cyanide: a carbon with a triple bond and no other neighbour.
            if (b.donor_degree == 1 && b.donor_multiple && b.donor_partner_z == 7) return kDonorCyanideC;
            return 0;
        default: return 0;
    }
}

bool carbonyl(const MetalLigandBond& b) {
    return b.donor_z == 6 && b.donor_degree == 1 && b.donor_multiple && (b.donor_partner_z == 8 || b.donor_partner_z == 16);
}

double covalent_radius(int z, int order) {
    const ElementData& e = element(z);
    if (order >= 3 && e.r_triple > 0) return e.r_triple;
    if (order >= 2 && e.r_double > 0) return e.r_double;
    return e.r_single;
}

// The table's radius for the ion at the coordination number nearest cn (adjusted per step), or 0 without an entry.
double tabulated_radius(int z, int ox, int cn, bool high_spin, bool square_planar) {
    const IonicRadius* best = nullptr;
    int best_gap = 1000;
    for (const IonicRadius& r : kShannon) {
        if (r.z != z || r.ox != ox) continue;
        if (r.spin != 0 && (r.spin == 2) != high_spin) continue;
        const int gap = std::abs(r.cn - cn) * 2 + (r.sp != square_planar ? 1 : 0);
        if (gap < best_gap) best_gap = gap, best = &r;
    }
    return best == nullptr ? 0 : best->r + kRadiusPerCoordination * (cn - best->cn);
}

}  // namespace

double metal_ionic_radius(int z, int ox, int cn, bool high_spin, bool square_planar) {
    const double r = tabulated_radius(z, ox, cn, high_spin, square_planar);
    if (r > 0) return r;
    // Not tabulated (Ru(II)): the next higher oxidation state of the same ion, widened by the step per unit.
    const double higher = tabulated_radius(z, ox + 1, cn, high_spin, square_planar);
    return higher > 0 ? higher + kRadiusPerOxidationState : 0;
}

// Hapto ligands on a centre with more than 18 valence electrons sit further out: the electrons beyond 18 fill
// metal-ring antibonding orbitals (metallocenes, from memory: Fe-C 2.064 in ferrocene (18 electrons), 2.119 in
// cobaltocene (19), 2.196 A in nickelocene (20); Haaland, Acc. Chem. Res. 12 (1979) 415).
constexpr double kHaptoPerElectronAbove18 = 0.065;
// A neutral six-membered ring sits further out than a cyclopentadienyl (bis(benzene)chromium Cr-C 2.150,
// (benzene)Cr(CO)3 2.23 A, against CpMn(CO)3 Mn-C 2.14, from memory).
constexpr double kArene = 0.04;

// The polar-bond correction of Schomaker and Stevenson (J. Am. Chem. Soc. 63 (1941) 37), as for main-group bonds
// (core/bond_length.cpp): 0.10 A per unit of Pauling electronegativity difference when the metal is more
// electropositive than hydrogen.
static double polar_correction(int za, int zb) {
    const double a = element(za).electronegativity, b = element(zb).electronegativity;
    if (a <= 0 || b <= 0 || std::min(a, b) >= element(1).electronegativity) return 0;
    return 0.10 * std::fabs(a - b);
}

double metal_ligand_length(const MetalLigandBond& b) {
    const ElementData& metal = element(b.metal_z);
    if (b.hapto > 0)
        return metal.r_single + element(b.donor_z).r_single + kHaptoLengthening +
               (b.hapto == 6 ? kArene : 0.0) + kHaptoPerElectronAbove18 * std::max(0, b.valence_electrons - 18);
    const int group = element(b.donor_z).group;
    // Chlorides, bromides and iodides of d0 centres are molecular (TiCl4, NbCl5, WCl6 in the gas phase): covalent
    // radii with the polar correction meet them (TiCl4 2.19 against 2.170 A, from memory), where the ionic radii of
    // the small, highly charged ions fall short. Fluorides keep the ionic radii (MoF6 1.84 against 1.820 A).
    if (b.d_electrons == 0 && group == 17 && b.donor_z != 9 && b.order == 1)
        return metal.r_single + element(b.donor_z).r_single - polar_correction(b.metal_z, b.donor_z);
    // The linear molecules of group 12 (HgCl2, ZnCl2, Hg(CH3)2) are covalent too (HgCl2 2.252 A, from memory).
    if (metal.group == 12 && b.coordination_number <= 2)
        return metal.r_single + element(b.donor_z).r_single - polar_correction(b.metal_z, b.donor_z);
    // A lone terminal oxo beside sigma donors (vanadyl, molybdenyl) is a triple bond, sigma and two pi (common
    // practice): Pyykko's triple-bond radii (VO(acac)2 V=O 1.59 against 1.57 A, from memory).
    if (b.yl) return covalent_radius(b.metal_z, 3) + covalent_radius(b.donor_z, 3);
    if (b.oxidation_state > 0) {
        const double donor = donor_radius(b);
        const double ionic = donor > 0 ? metal_ionic_radius(b.metal_z, b.oxidation_state, b.coordination_number,
                                                            b.high_spin, b.square_planar)
                                       : 0;
        if (ionic > 0) return ionic + donor;
    }
    const int order = carbonyl(b) ? 1 : b.order;  // M=C=O, the cumulated form of a carbonyl, is the same bond
    double length = covalent_radius(b.metal_z, order) + covalent_radius(b.donor_z, order);
    if (carbonyl(b)) length -= kCarbonylShortening;
    return length;
}

// Unbridged single metal-metal bonds run beyond the sums of Cordero's radii (Mn2(CO)10 2.904 A against 2.78,
// Re2(CO)10 3.04 against 3.02, from memory): +0.06 A between the two.
constexpr double kMetalMetalSingle = 0.06;

double metal_metal_length(int za, int zb, int order) {
    // Cordero et al., Dalton Trans. (2008) 2832 radii (the perception column), which meet the unbridged single
    // metal-metal bonds of the carbonyl dimers (Co2(CO)8 2.52, Re2(CO)10 3.04 A, from memory) better than the
    // covalent single-bond radii; multiple bonds: Pyykko's double and triple radii.
    if (order >= 2) return covalent_radius(za, order) + covalent_radius(zb, order);
    return element(za).r_perception + element(zb).r_perception + kMetalMetalSingle;
}

}  // namespace repel
