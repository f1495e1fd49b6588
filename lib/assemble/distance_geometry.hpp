// Distance geometry for small point sets (one ring system at a time): bounds on pair distances, triangle-inequality
// smoothing, metric-matrix embedding in three dimensions, and an error-function refinement that also keeps signed
// volumes (chirality and planarity). Crippen and Havel, Distance Geometry and Molecular Conformation (1988).
#pragma once

#include <Eigen/Core>
#include <cstdint>
#include <vector>

namespace repel {

// A signed-volume condition: (x[b]-x[c]) . ((x[d]-x[c]) x (x[e]-x[c])) at least `minimum` times `sign`, or zero when
// sign is 0 (a planar centre).
struct VolumeCondition {
    int centre = -1, b = -1, d = -1, e = -1;
    int sign = 0;
    double minimum = 0;  // Angstrom^3, for sign != 0
};

// A torsion condition: the absolute dihedral angle i-j-k-l (radians) between lower and upper. Distances alone hold a
// torsion only loosely when the angles have some freedom, and ring shapes (chair, not boat) hang on torsions.
struct TorsionCondition {
    int i = -1, j = -1, k = -1, l = -1;
    double lower = 0, upper = 0;
};

// A signed-area condition for embeddings in the plane z = 0: the z component of (x[a]-x[c]) x (x[b]-x[c]) at least
// `minimum` times `sign`. It is the handedness in the plane of a centre with three neighbours: distances alone let a
// flat ring fold over to the wrong side of its neighbours (a pyrrole of a porphyrin turned inside out), and those
// mirror-image minima are about as deep as the right one.
struct AreaCondition {
    int centre = -1, a = -1, b = -1;
    int sign = 1;
    double minimum = 0;  // Angstrom^2
};

struct DistanceBounds {
    explicit DistanceBounds(int n);
    int size() const { return static_cast<int>(lower.rows()); }
    // Narrows the bounds of pair (i, j) to [lo, hi] (intersection with what is there; if they do not meet, the
    // middle of the two ranges is used).
    void narrow(int i, int j, double lo, double hi);
    // Floyd-style triangle smoothing: upper bounds by shortest paths, lower bounds by the inverse triangle inequality.
    // Returns false when some lower bound ends above its upper bound (inconsistent bounds; both are then set equal).
    bool smooth();

    Eigen::MatrixXd lower, upper;
};

struct EmbedResult {
    std::vector<Eigen::Vector3d> coordinates;
    double worst_violation = 0;  // largest bound violation, Angstrom
    double worst_torsion = 0;    // largest torsion-range violation, radians
    bool volumes_met = true;     // every signed volume with sign != 0 has its sign, every signed area its sign
    double error = 0;            // final error-function value
};

// Embeds the points: `attempts` deterministic tries (pseudo-random distances between the smoothed bounds, metric
// matrix, refinement), stopping at the first that meets every bound within `tolerance` and every volume sign; else
// the best. `start`, when not empty, is tried first instead of a metric-matrix embedding. `planar` embeds and refines
// in the plane z = 0 (flat ring systems: there cis and trans are distances); `areas` are then the handedness in the
// plane of the centres with three neighbours (a start, or an embedding, meeting fewer than half of them is mirrored).
// `seed` varies the pseudo-random distances (0: the build's own; other values give other embeddings of a flexible
// system, for conformer sampling).
EmbedResult embed_points(DistanceBounds bounds, const std::vector<VolumeCondition>& volumes,
                         const std::vector<TorsionCondition>& torsions, int attempts, double tolerance,
                         const std::vector<Eigen::Vector3d>& start = {}, bool planar = false,
                         const std::vector<AreaCondition>& areas = {}, std::uint64_t seed = 0);

// Refines coordinates against the bounds and volumes (the same error function as embed_points).
EmbedResult refine_points(const DistanceBounds& bounds, const std::vector<VolumeCondition>& volumes,
                          const std::vector<TorsionCondition>& torsions, std::vector<Eigen::Vector3d> coordinates,
                          int max_evaluations, bool planar = false, const std::vector<AreaCondition>& areas = {});

// The error function and its gradient (g may be null) at flat coordinates x (3 per point); for tests.
double distance_geometry_error(const DistanceBounds& bounds, const std::vector<VolumeCondition>& volumes,
                               const std::vector<TorsionCondition>& torsions, const double* x, double* g,
                               const std::vector<AreaCondition>& areas = {});

}  // namespace repel
