// Continuous shape measures (CShM) of a coordination polyhedron against the ideal polyhedra of its coordination
// number: Zabrodsky, Peleg and Avnir, J. Am. Chem. Soc. 114 (1992) 7843; Pinsky and Avnir, Inorg. Chem. 37 (1998)
// 5575 (the 0..100 scale); shape maps: Alvarez et al., Coord. Chem. Rev. 249 (2005) 1693.
// Self-contained: Eigen and the standard library only.
#pragma once

#include <Eigen/Core>
#include <span>
#include <string_view>
#include <vector>

namespace repel {

// An ideal polyhedron: `points` are the directions of its vertices from the centre (unit vectors), the centre
// itself is implied at the origin. `symbol` is the IUPAC polyhedral symbol where one exists (see the table).
struct ReferencePolyhedron {
    std::string_view name;
    std::string_view symbol;
    int vertices = 0;
    std::vector<Eigen::Vector3d> points;
};

// The ideal polyhedra for a coordination number 2..9 (std::invalid_argument otherwise), in a fixed order.
// The storage is static: the reference stays valid for the life of the program.
const std::vector<ReferencePolyhedron>& reference_polyhedra(int coordination_number);

// The best superposition of an ideal polyhedron on a measured centre and its ligands.
struct ShapeFit {
    double measure = 0.0;          // CShM, 0 (the ideal shape) .. 100
    std::vector<int> assignment;   // assignment[i]: the ideal vertex (index into points) matched to ligand i
    Eigen::Matrix3d rotation = Eigen::Matrix3d::Identity();  // proper rotation applied to the ideal
    double scale = 1.0;                                        // uniform scale applied to the ideal
};
// The fitted position of ligand i is q_bar + scale * rotation * (points[assignment[i]] - p_bar), and of the centre
// q_bar - scale * rotation * p_bar, where q_bar is the centroid of the centre and ligands and p_bar = sum points /
// (N + 1) that of the ideal with its centre.

// CShM of the N + 1 points (centre and N ligands; the centre maps to the ideal's centre) against the ideal,
// minimised over the assignment of ligands to vertices, proper rotation, translation and uniform scale:
// S = 100 min sum |q_i - p_i|^2 / sum |q_i - q_0|^2, q_0 the centroid of the measured points (Pinsky and Avnir).
// Exact for every N up to rounding (branch and bound over all assignments, see the .cpp); deterministic. Throws std::invalid_argument when
// N != ideal.vertices, N is outside 2..9, a coordinate is not finite, or all points coincide.
double continuous_shape_measure(std::span<const Eigen::Vector3d> ligands, const Eigen::Vector3d& centre,
                                const ReferencePolyhedron& ideal);
// The same, with the assignment, rotation and scale of the optimum.
ShapeFit fit_shape(std::span<const Eigen::Vector3d> ligands, const Eigen::Vector3d& centre,
                   const ReferencePolyhedron& ideal);

struct ShapeVerdict {
    std::string_view name;
    std::string_view symbol;
    double measure = 0.0;
};

// The CShM against every ideal polyhedron of the coordination number ligands.size(), best (smallest) first; ties
// keep the table order. Throws std::invalid_argument for N outside 2..9 or non-finite input.
std::vector<ShapeVerdict> shape_measures(std::span<const Eigen::Vector3d> ligands, const Eigen::Vector3d& centre);

}  // namespace repel
