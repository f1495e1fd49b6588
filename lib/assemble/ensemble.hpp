// Conformer ensembles: several distinct low-energy shapes of one molecule, for docking and for choosing a start.
// Candidates are the default build, its ring systems taken as their other mirror image (the other chair, the other
// envelope), and torsions about rotatable bonds turned to the minima their hybridisation allows; each is refined with
// the build's own terms, ranked by an energy and pruned so that no two kept are closer than an RMSD threshold.
#pragma once

#include <cstdint>
#include <vector>

#include "assemble/build.hpp"
#include "graph/molecule.hpp"
#include "graph/symmetry.hpp"

namespace repel {

struct EnsembleOptions {
    int count = 10;  // at most this many conformers
    // Two conformers whose heavy atoms (hydrogens too when a molecule has fewer than three heavy atoms) lie closer
    // than this RMSD (Angstrom), after the best superposition and with symmetry-equivalent atoms allowed to swap, are
    // one. 0.5 A is common practice for ligand ensembles (a turned side chain moves its atoms 1 A and more).
    double distinct_rmsd = 0.5;
    // Candidates refined (0: automatic, 2 x count, at least 12). More find more of the rare shapes and cost time.
    int tries = 0;
    std::uint64_t seed = 1;  // the same molecule, options and seed give the same ensemble, whatever the thread
};

// A bond turned by the sampler, and the turns it takes (degrees, added to the built torsion).
struct RotatableBond {
    int a = -1, b = -1;       // the bond; the side of b (the smaller one) turns
    std::vector<double> turns;
};

// The bonds the sampler turns: single, in no ring, both ends with other heavy neighbours that are not one symmetric
// set of terminal atoms, neither end linear or a metal, and not the planar link of an amide, ester, thioamide or
// amidine (kept as built, in the form the build prefers). Turns: 120 and 240 degrees between two tetrahedral ends,
// 180 between two planar conjugated ends, 60..300 by 60 otherwise.
std::vector<RotatableBond> rotatable_bonds(const Molecule& molecule, const MoleculeDomains& domains,
                                           const RingInfo& rings);

// The RMSD (Angstrom) between two conformations of one molecule over its heavy atoms (every atom when it has fewer
// than three), after the best superposition (Kabsch), the least over the graph's symmetries (automorphisms of the
// compared atoms, up to kMaxSymmetries; past that the nearest atom of each symmetry class is matched) and, for a
// molecule without stereocentres, over mirror images too (a mirror-image conformation is then the same shape).
class ConformerComparer {
public:
    static constexpr int kMaxSymmetries = 64;
    explicit ConformerComparer(const Molecule& molecule, bool mirror_images_equal);
    // classes: symmetry_classes(molecule), when the caller has them.
    ConformerComparer(const Molecule& molecule, bool mirror_images_equal, const std::vector<int>& classes);
    double rmsd(const std::vector<Eigen::Vector3d>& a, const std::vector<Eigen::Vector3d>& b) const;
    // rmsd(a, b) < threshold, answered without the full minimum: the first matching under the threshold ends it,
    // and a matching whose lower bound is at or above it is not superposed.
    bool closer_than(const std::vector<Eigen::Vector3d>& a, const std::vector<Eigen::Vector3d>& b,
                     double threshold) const;
    int symmetries() const { return static_cast<int>(mappings_.size()); }

private:
    double rmsd_one(const std::vector<Eigen::Vector3d>& a, const std::vector<Eigen::Vector3d>& b) const;
    bool any_closer(const std::vector<Eigen::Vector3d>& a, const std::vector<Eigen::Vector3d>& b,
                    double threshold) const;
    std::vector<int> atoms_;
    std::vector<int> classes_;
    std::vector<std::vector<int>> mappings_;  // images of atoms_, the identity first
    bool capped_ = false;
    bool mirror_ = false;
};

// Whether a molecule can have stereocentres: a tetrahedral atom (steric number 4, three or four bonded) whose bonded
// neighbours all differ in symmetry class, or any written stereo mark. Without them, mirror images are conformers.
bool may_be_chiral(const Molecule& molecule, const MoleculeDomains& domains, const std::vector<int>& classes);

// Up to options.count conformers, lowest energy first; each Structure carries its ConformerInfo. The first is the
// lowest-energy candidate, which is the default build unless a candidate is lower. Throws what build_structure throws
// for the molecule itself; a candidate that fails (overlap, stereochemistry lost) is dropped. The options' time limit
// holds for the whole ensemble.
std::vector<Structure> build_ensemble(const Molecule& molecule, const BuildOptions& build_options,
                                      const EnsembleOptions& options);

}  // namespace repel
