// Ideal polyhedra used as starting arrangements for the sphere solver, and their symmetry groups.
#pragma once

#include <Eigen/Core>
#include <vector>

namespace repel {

struct Polyhedron {
    const char* name;
    std::vector<Eigen::Vector3d> vertices;  // unit vectors
    // Vertex permutations of every rotation and reflection that maps the vertex set onto itself (identity first).
    std::vector<std::vector<int>> symmetry;
};

// One orthogonal map (rotation or reflection) that maps a point set onto itself: rotation * p[i] = p[perm[i]].
struct SymmetryOperation {
    Eigen::Matrix3d rotation;
    std::vector<int> perm;
};

// Every orthogonal map that permutes the points (within tolerance), identity first.
std::vector<SymmetryOperation> symmetry_operations(const std::vector<Eigen::Vector3d>& points, double tolerance);

// The starting polyhedra for n points (n = 2..12): the ideal VSEPR polyhedron first, then the competing ones
// (square pyramid for 5, trigonal prism for 6, capped forms for 7, ...), then, for n > 8, deterministic
// pseudo-random and spiral arrangements. The same list every call.
const std::vector<Polyhedron>& starting_polyhedra(int n);

}  // namespace repel
