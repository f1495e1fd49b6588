// The energy conformers are ranked by (kcal/mol): torsion potentials chosen by hybridisation and non-bonded van der
// Waals and electrostatic terms, in the functional forms of the DREIDING force field (Mayo, Olafson, Goddard, J. Phys.
// Chem. 94 (1990) 8897), with Gasteiger-Marsili partial charges (Tetrahedron 36 (1980) 3219). Conformers of one
// molecule, each relaxed by the refinement, differ mostly in these terms (bonds and angles stay near their targets),
// so bond and angle terms are left out. The energy is evaluated at the refinement's positions, not minimised, so the
// van der Waals wall is cut flat where the refinement's own contacts stop (0.8 R0). energy(x, g, scale) gives the
// analytic gradient for a caller that minimises it.
#pragma once

#include <Eigen/Core>
#include <vector>

#include "domains/domains.hpp"
#include "graph/molecule.hpp"
#include "refine/contacts.hpp"

namespace repel {

struct ConformerEnergyParts {
    double total = 0;
    double torsion = 0;
    double van_der_waals = 0;
    double electrostatic = 0;
};

class ConformerEnergy {
public:
    // m: hydrogens explicit; d: its domain analysis (the hybridisation of each centre from its steric number).
    ConformerEnergy(const Molecule& m, const MoleculeDomains& d);
    ConformerEnergyParts energy(const std::vector<Eigen::Vector3d>& positions) const;
    // The total at flat coordinates x (x, y, z per atom); adds scale times its gradient (kcal/mol/A) into g when g is
    // not null, and returns scale times the total.
    double energy(const double* x, double* g, double scale) const;
    const std::vector<double>& charges() const { return charges_; }

private:
    struct Torsion {
        int a, b, c, d;
        double barrier;  // V, kcal/mol, already divided over the torsions about the bond
        int periodicity;
        double cos_phase;  // cos(n phi0): +1 or -1
    };
    struct Pair {
        int i, j;
        double r0, d0;   // van der Waals minimum distance (A) and depth (kcal/mol)
        double qq;       // 332.0637 q_i q_j, kcal A/mol
        double scale;    // for atoms three bonds apart kOneFourScale, 1 beyond
    };
    std::vector<Torsion> torsions_;
    std::vector<double> charges_;
    std::vector<double> r0_, d0_;  // per atom
    std::vector<Pair> pairs_;      // every non-bonded pair, for molecules up to kAllPairs atoms
    struct Fast {
        int i, j;
        double r0_squared, depth, coulomb;  // R0^2; scale D0; scale 332.0637 q_i q_j / 4
    };
    std::vector<Fast> fast_;       // pairs_ with the constants folded, for the inner loop
    refine::BondNeighbourhood neighbourhood_;
    int atoms_ = 0;
    Pair pair(int i, int j, int apart) const;
    double evaluate(const double* x, double* g, double scale, ConformerEnergyParts* parts) const;
};

}  // namespace repel
