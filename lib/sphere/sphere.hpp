// Points on a sphere: the directions of a centre's electron domains, relaxed by a weighted repulsion energy.
#pragma once

#include <Eigen/Core>
#include <span>
#include <vector>

namespace repel {

// One domain as the solver sees it: a repulsion weight and the radius of the sphere it lives on (1 for bonding
// domains; lone pairs sit on an inner sphere, held closer to the core).
// The pair exponent is the mean of the two domains' exponents: bonding domains repel each other steeply (ligands
// pack like hard spheres) while a lone pair's repulsion reaches further and softer.
struct SphereDomain {
    double weight = 1.0;
    double radius = 1.0;
    double exponent = 1.0;
    bool operator==(const SphereDomain&) const = default;
};

// Energy: sum over pairs of w_i w_j / d_ij^p_ij, d_ij the distance between r_i u_i and r_j u_j and
// p_ij = (exponent_i + exponent_j) / 2.
double sphere_energy(std::span<const SphereDomain> domains, std::span<const Eigen::Vector3d> directions);

// The global minimum arrangement for these domains: unit vectors, one per domain, in the order given. Found
// deterministically by seeding from the ideal polyhedra for that count with every distinct placement of the
// domain kinds (and deterministic extra starts beyond 8 domains), each relaxed by gradient minimisation.
// The frame is canonical: the first domain along +z, the next not collinear with it in the xz half-plane x > 0.
// The minimum is polished to round-off and the directions rounded to a 2^-30 grid, so the answer does not depend on
// the seed that reached it. Results are cached per weight pattern (per thread), so repeated centres cost a look-up. Bit-identical for
// identical input. Up to 12 domains.
std::vector<Eigen::Vector3d> solve_sphere(std::span<const SphereDomain> domains);

// The same without the cache (for benchmarks and tests of the cache).
std::vector<Eigen::Vector3d> solve_sphere_uncached(std::span<const SphereDomain> domains);

// Two stages, for models whose fine constants would otherwise decide the global arrangement: the `arrangement`
// domains (one per domain, a plain model that gets every shape class right) choose the polyhedron and which site
// each kind of domain takes, by the global solve above; then `domains` relax locally from those sites, trying every
// distinct way of putting them on the sites of their own arrangement kind (so that, for example, fluorine can take
// the axial sites of a trigonal bipyramid and chlorine the equatorial ones), and the lowest minimum is kept.
// Cached and canonical like solve_sphere.
std::vector<Eigen::Vector3d> solve_sphere_staged(std::span<const SphereDomain> arrangement,
                                                 std::span<const SphereDomain> domains);
std::vector<Eigen::Vector3d> solve_sphere_staged_uncached(std::span<const SphereDomain> arrangement,
                                                          std::span<const SphereDomain> domains);

}  // namespace repel
