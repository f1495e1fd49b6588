// Plain geometry shared by every stage: the optimal rotation between two sets of directions (Kabsch), the smallest
// rotation between two directions, dihedral angles and signed volumes.
#pragma once

#include <Eigen/Core>
#include <span>

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

}  // namespace repel
