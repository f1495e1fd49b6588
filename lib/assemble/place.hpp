// Small geometry for the assembly: the optimal rotation between two sets of directions (Kabsch), dihedral angles,
// signed volumes, and a centre's bonded directions in its own frame.
#pragma once

#include <Eigen/Core>
#include <span>
#include <vector>

#include "domains/domains.hpp"
#include "graph/molecule.hpp"

namespace repel {

// The proper rotation R minimising sum_i w_i |R a_i - b_i|^2 (Kabsch, Acta Cryst. A32 (1976) 922). With one pair it
// is the smallest rotation taking a_0 onto b_0; with none, the identity. Weights default to 1.
Eigen::Matrix3d kabsch_rotation(std::span<const Eigen::Vector3d> a, std::span<const Eigen::Vector3d> b,
                                std::span<const double> weights = {});

// The smallest rotation taking unit vector `from` onto unit vector `to` (a half turn about a perpendicular axis when
// they are opposite).
Eigen::Matrix3d rotation_between(const Eigen::Vector3d& from, const Eigen::Vector3d& to);

// A unit vector perpendicular to v (deterministic).
Eigen::Vector3d any_perpendicular(const Eigen::Vector3d& v);

// Dihedral angle a-b-c-d in radians, in (-pi, pi].
double dihedral(const Eigen::Vector3d& a, const Eigen::Vector3d& b, const Eigen::Vector3d& c,
                const Eigen::Vector3d& d);

// (a - centre) . ((b - centre) x (c - centre)): the signed volume that ChiralTarget refers to.
double signed_volume(const Eigen::Vector3d& centre, const Eigen::Vector3d& a, const Eigen::Vector3d& b,
                     const Eigen::Vector3d& c);

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
