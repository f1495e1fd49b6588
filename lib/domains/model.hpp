// The constants of the domain repulsion model, named once. Their values are fitted by least squares to a
// training table of gas-phase structures (tests/test_model_fit.cpp); README.md reports the fit.
#pragma once

#include <cstdint>
#include <vector>

#include "graph/conjugation.hpp"
#include "graph/molecule.hpp"
#include "sphere/sphere.hpp"

namespace repel {

enum class DomainKind : std::uint8_t { bond, lone_pair, single_electron };

struct DomainModel {
    double bond_exponent;           // steepness of a bonding domain's repulsion (pair exponent: the mean of the two)
    double lone_pair_exponent;      // steepness of a lone pair's or single electron's repulsion
    double lone_pair_weight;        // weight of a lone pair
    double lone_pair_radius;        // radius of the inner sphere lone pairs sit on (bonding domains: 1)
    double single_electron_weight;  // weight of a single-electron domain
    double single_electron_radius;  // its radius
    double multiple_bond_weight;    // at a period-2 centre a bonding domain's weight grows by this factor per bond
                                    // order above 1 (a pi bond beside the sigma bond: C=C, C=O, N=O)
    double heavy_multiple_bond_weight;  // the same at a centre of period 3 or later (S=O, P=O, Cl=O, Xe=O: bonds
                                        // of strong ionic character, drawn double)
    double electronegativity_slope; // Bent's rule: weight factor exp(-slope * (chi_ligand - chi_centre))
    double period_slope;            // larger centres: bonding weight factor exp(-slope * (period - 2)) for period > 2
    // Stage 2 of the fit: two or more p-block ligand atoms of period 3 or later (Cl, S, P, Si, Br, ...) at a centre
    // with lone pairs and no multiple bond: their bonding weight factor exp(heavy_ligand_slope x lone pairs).
    double heavy_ligand_slope;
    // Stage 3: a centre of period 3 or later with a bond of order above 1 and no lone pair or single electron (S(VI)
    // and P(V) with S=O and P=O: SO2F2, POF3, sulfones, sulfonamides, phosphates). Its multiple bonds' factor per
    // order above 1 and its Bent's-rule slope, in place of heavy_multiple_bond_weight and electronegativity_slope.
    double hypervalent_multiple_bond_weight;
    double hypervalent_electronegativity_slope;
    // Stage 4: the lone pair left at an oxygen between heavy atoms whose other pair is delocalised towards a polar
    // p-block neighbour (domains.cpp, delocalised_lone_pair): its weight factor exp(-slope x bridge_polarity).
    double bridge_lone_pair_slope;
};

// The fitted model.
const DomainModel& domain_model();

// What a bonding domain's weight depends on beyond the atoms of its bond.
struct CentreKind {
    bool multiple_bond = false;  // a bond of order above 1
    int lone_pairs = 0;          // lone pairs and single electrons
    int heavy_ligands = 0;       // ligand atoms of the p block of period 3 or later (Cl, S, P, Si, Br, ...)
};
// A ligand atom CentreKind::heavy_ligands counts.
bool is_heavy_ligand(int z);
// Of an oxygen with the given neighbours: the sum of (chi_O - chi) over its polar-bridge neighbours (0 if none).
double bridge_polarity(const std::vector<int>& neighbour_z);
// The weight factor of the lone pair left at such an oxygen.
double bridge_lone_pair_factor(const DomainModel& model, double polarity);
// The sphere domain for a bond from centre to ligand of the given order (fractional for aromatic and
// resonance-equivalent bonds: 1.5 in benzene, 1.5 for the S-O bonds of sulfate), under a model.
SphereDomain bonding_domain(const DomainModel& model, int centre_z, int ligand_z, double order, CentreKind kind);
SphereDomain lone_pair_domain(const DomainModel& model, int centre_z);
SphereDomain single_electron_domain(const DomainModel& model, int centre_z);

// The arrangement stage (sphere.hpp, solve_sphere_staged): plain domains that give every VSEPR class its polyhedron
// and its sites. Measured before the model was designed (shared notes on the repulsion model): all weights 1,
// exponent 2, lone pairs on an inner sphere of radius 0.7 make AX4E2 square planar, AX3E2 T-shaped, AX4E1 a seesaw,
// where one sphere for all domains puts AX4E2's lone pairs cis for every exponent and weight tried.
// A bond of order above 1 (a written multiple bond, aromatic 1.5, a resonance-shared order) is a kind of its own there,
// larger than a single bond and smaller than a lone pair (Gillespie and Hargittai 1991): without it the fitted weights
// alone chose its site, and a five-domain centre put its double bond at the apex of a square pyramid.
SphereDomain arrangement_domain(DomainKind kind, double order = 1.0);

}  // namespace repel
