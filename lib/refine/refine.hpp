// Refinement of a whole molecule: one smooth energy over all coordinates (bonds, the angles each centre's domains
// ask for, planarity, torsion preferences, kept stereochemistry, soft contacts), minimised with L-BFGS.
#pragma once

#include <Eigen/Core>
#include <memory>
#include <string>
#include <vector>

#include "domains/domains.hpp"
#include "graph/molecule.hpp"
#include "graph/stereo.hpp"

namespace repel {

// A distance held near a target besides the bonds (the frame of a metal centre with hapto ligands, whose domains have
// no angle terms of their own): energy weight * kBond * (d - length)^2.
struct DistanceRestraint {
    int a = -1, b = -1;
    double length = 0;
    double weight = 1;
};

struct RefineOptions {
    int max_iterations = 2000;
    // Stop when the RMS gradient (energy units per Angstrom) falls below this. 1e-3 keeps bonds within about
    // 5e-4 A, angles within 0.1 degree and torsions within 1.5 degrees of their targets (measured on the drug set):
    // plenty for a starting structure, and a third of the evaluations that 1e-4 needs.
    double gradient_tolerance = 1e-3;
    // The final self-check: bonds further than this from their target length (Angstrom) and angles further than
    // `angle_outlier` (degrees) from their target are listed in RefineResult::outliers (0: no check). Targets are
    // the refinement's own: the domain analysis' lengths and angles, the angles fitted to small and flat rings.
    double bond_outlier = 0;
    double angle_outlier = 0;
    // The graph whose rings force ring angles (targets.cpp), when it differs from the molecule refined: a complex's
    // hapto ligands are bonded to the metal through every atom, and those bonds make no ring angles.
    const Molecule* ring_graph = nullptr;
    std::vector<DistanceRestraint> restraints;
    // Centres held as they are: every angle at a held centre takes its angle in `held_positions` as its target
    // instead of the analysis' (or a ring's), all or none, so that a centre's targets stay consistent;
    // `repel check --fix` keeps what it found sound as it was. Per atom, nonzero for held; empty: none.
    std::vector<char> held_centres;
    std::vector<Eigen::Vector3d> held_positions;
};

// A bond a-b (c = -1) or an angle a-b-c (centre b) of the refined structure far from its target.
struct GeometryOutlier {
    int a = -1, b = -1, c = -1;
    double value = 0, target = 0;  // Angstrom for a bond, degrees for an angle
};

struct RefineResult {
    bool converged = false;
    int iterations = 0;
    double energy_before = 0;
    double energy_after = 0;
    std::string message;  // why it stopped, for warnings
    std::vector<GeometryOutlier> outliers;  // see RefineOptions::bond_outlier, worst first within bonds and angles
};

// The terms of one molecule kept for several refinements from different positions (a conformer ensemble): the
// terms are built once, the contact pair list carried from one run to the next (rebuilt where atoms moved). Not for
// use by two threads at once. The options' ring_graph and restraints are read when it is made; run() reads the rest.
class Refiner {
public:
    Refiner(const Molecule& molecule, const MoleculeDomains& domains, const std::vector<ChiralTarget>& chiral,
            const std::vector<DoubleBondTarget>& double_bonds, const RefineOptions& options);
    ~Refiner();
    Refiner(const Refiner&) = delete;
    Refiner& operator=(const Refiner&) = delete;
    RefineResult run(std::vector<Eigen::Vector3d>& positions, const RefineOptions& options);

private:
    struct State;
    std::unique_ptr<State> s_;
};

// Refines positions in place. `domains` is the analysis of the same molecule (with solved directions), which gives
// each centre's ideal angles and which centres are planar.
RefineResult refine_structure(const Molecule& molecule, const MoleculeDomains& domains,
                              const std::vector<ChiralTarget>& chiral, const std::vector<DoubleBondTarget>& double_bonds,
                              std::vector<Eigen::Vector3d>& positions, const RefineOptions& options = {});

}  // namespace repel
