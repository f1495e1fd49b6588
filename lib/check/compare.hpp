// Comparison of a checked structure with the molecule it was meant to be (a reference SMILES): the atoms, the
// connectivity (a graph match by element), and the handedness of every stereocentre and double bond written.
#pragma once

#include <Eigen/Core>
#include <vector>

#include "check/audit.hpp"
#include "graph/molecule.hpp"

namespace repel {

// Findings ("formula", "connectivity", "stereocentre", "double bond") of the structure (its perceived graph and
// positions) against the reference (hydrogens made explicit here). Atom numbers are the structure's (1-based).
// Among the matchings of equivalent atoms, the one with the fewest stereo differences is used.
std::vector<Finding> compare_with_reference(const Molecule& structure, const std::vector<Eigen::Vector3d>& positions,
                                            Molecule reference);

}  // namespace repel
