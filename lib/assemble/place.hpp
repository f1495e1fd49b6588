// A centre's bonded directions in its own frame, for the assembly (the plain geometry it uses, Kabsch rotations,
// dihedral angles and signed volumes, is in core/geometry.hpp).
#pragma once

#include <Eigen/Core>
#include <vector>

#include "core/geometry.hpp"
#include "domains/domains.hpp"
#include "graph/molecule.hpp"

namespace repel {

// The directions of a centre's bonded neighbours in its own frame, one per entry of Molecule::neighbors(centre), in
// that order. From the sphere solution when there is one; otherwise (one domain, or an analysis without directions)
// from the ideal polyhedron of the steric number. An aromatic centre with three neighbours is given the ideal trigonal
// frame (its ring bonds are equivalent and a pyrrole-type lone pair is part of the pi system; common practice). `mirrored` reflects the frame through the
// yz plane, which turns a stereocentre into its mirror image.
std::vector<Eigen::Vector3d> bonded_directions(const Molecule& molecule, const CentreDomains& centre, int atom,
                                               bool mirrored = false);

// True when the centre's bonded directions lie in one plane through it (sp2-like: AX3, AX2E1; and aromatic centres).
bool planar_centre(const Molecule& molecule, const CentreDomains& centre, int atom);

}  // namespace repel
