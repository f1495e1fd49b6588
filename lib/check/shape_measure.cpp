// Continuous shape measures (see the header for the method's sources).
//
// The search: with the centres of mass aligned, and for a fixed assignment, the optimal rotation is Kabsch's (Acta
// Cryst. A32 (1976) 922) and the optimal scale is closed-form, so that with centred measured points q_i and centred
// ideal points p_i, M = sum p_i q_i^T and c = max over proper rotations R of sum q_i . R p_i = s1 + s2 + sign(det M) s3
// (the singular values of M), S = 100 (1 - c^2 / (|q|^2 |p|^2)). Minimising S is maximising c over the assignments.
// The assignments are searched exactly by branch and bound: ligands are assigned one at a time (largest |q_i| first);
// a partial assignment is dropped when (a) a proper rotation of the ideal onto itself maps it to a lexicographically
// smaller one (the subtree is a copy of one searched), or (b) the best c it could reach, c of the assigned part plus
// the rearrangement bound sum |q_i| |p_j| of the rest, is below the best found. A first guess (two ligands aligned on
// every vertex pair, the rest matched greedily) makes (b) effective from the start. No recursion (DEVELOPERS.md).
#include "check/shape_measure.hpp"

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <Eigen/SVD>
#include <algorithm>
#include <array>
#include <cmath>
#include <functional>
#include <limits>
#include <numbers>
#include <numeric>
#include <stdexcept>
#include <string>
#include <utility>

namespace repel {

namespace {

using Eigen::Matrix3d;
using Eigen::Vector3d;

constexpr int kMinCn = 2;
constexpr int kMaxCn = 9;
constexpr double kDeg = std::numbers::pi / 180.0;

// ---------------------------------------------------------------------------------------------------------------
// The ideal polyhedra.

Vector3d polar(double theta, double phi) {  // radians; theta from +z
    return {std::sin(theta) * std::cos(phi), std::sin(theta) * std::sin(phi), std::cos(theta)};
}

// n points at polar angle theta, azimuths phase + 2 pi k / n.
void ring(std::vector<Vector3d>& out, int n, double theta, double phase) {
    for (int k = 0; k < n; ++k) out.push_back(polar(theta, phase + 2.0 * std::numbers::pi * k / n));
}

// Ligand-ligand repulsion sum 1/d^6 over pairs of unit vectors: Kepert's model with n = 6 (D. L. Kepert, Inorganic
// Stereochemistry, Springer 1982), used to fix the free angles of polyhedra that have no regular form.
double repulsion(const std::vector<Vector3d>& v) {
    double e = 0.0;
    for (size_t i = 0; i < v.size(); ++i)
        for (size_t j = i + 1; j < v.size(); ++j) e += 1.0 / std::pow((v[i] - v[j]).squaredNorm(), 3);
    return e;
}

// Nelder-Mead simplex minimisation (Nelder and Mead, Comput. J. 7 (1965) 308), deterministic, for the few angles of
// a polyhedron's symmetric family; the start is the polyhedron drawn roughly, within its basin.
std::vector<double> nelder_mead(const std::function<double(const std::vector<double>&)>& f, std::vector<double> x0,
                                double step) {
    const size_t n = x0.size();
    std::vector<std::vector<double>> x(n + 1, x0);
    for (size_t i = 0; i < n; ++i) x[i + 1][i] += step;
    std::vector<double> fx(n + 1);
    for (size_t i = 0; i <= n; ++i) fx[i] = f(x[i]);
    auto blend = [n](const std::vector<double>& a, const std::vector<double>& b, double t) {
        std::vector<double> r(n);
        for (size_t i = 0; i < n; ++i) r[i] = a[i] + t * (b[i] - a[i]);
        return r;
    };
    for (int iteration = 0; iteration < 20000; ++iteration) {
        std::vector<size_t> order(n + 1);
        std::iota(order.begin(), order.end(), size_t{0});
        std::stable_sort(order.begin(), order.end(), [&](size_t a, size_t b) { return fx[a] < fx[b]; });
        std::vector<std::vector<double>> xs;
        std::vector<double> fs;
        for (size_t i : order) {
            xs.push_back(x[i]);
            fs.push_back(fx[i]);
        }
        x = xs;
        fx = fs;
        double size = 0.0;
        for (size_t i = 1; i <= n; ++i)
            for (size_t k = 0; k < n; ++k) size = std::max(size, std::abs(x[i][k] - x[0][k]));
        if (size < 1e-12) break;
        std::vector<double> centroid(n, 0.0);
        for (size_t i = 0; i < n; ++i)
            for (size_t k = 0; k < n; ++k) centroid[k] += x[i][k] / static_cast<double>(n);
        const std::vector<double> reflected = blend(centroid, x[n], -1.0);
        const double fr = f(reflected);
        if (fr < fx[0]) {
            const std::vector<double> expanded = blend(centroid, x[n], -2.0);
            const double fe = f(expanded);
            if (fe < fr) {
                x[n] = expanded;
                fx[n] = fe;
            } else {
                x[n] = reflected;
                fx[n] = fr;
            }
        } else if (fr < fx[n - 1]) {
            x[n] = reflected;
            fx[n] = fr;
        } else {
            const std::vector<double> contracted = fr < fx[n] ? blend(centroid, reflected, 0.5)
                                                              : blend(centroid, x[n], 0.5);
            const double fc = f(contracted);
            if (fc < std::min(fr, fx[n])) {
                x[n] = contracted;
                fx[n] = fc;
            } else {
                for (size_t i = 1; i <= n; ++i) {
                    x[i] = blend(x[0], x[i], 0.5);
                    fx[i] = f(x[i]);
                }
            }
        }
    }
    return x[static_cast<size_t>(std::min_element(fx.begin(), fx.end()) - fx.begin())];
}

// The member of a symmetric family (points as a function of a few angles) with the least repulsion.
std::vector<Vector3d> kepert_member(const std::function<std::vector<Vector3d>(const std::vector<double>&)>& family,
                                    const std::vector<double>& start_degrees) {
    std::vector<double> start = start_degrees;
    for (double& a : start) a *= kDeg;
    const auto best = nelder_mead([&](const std::vector<double>& a) { return repulsion(family(a)); }, start, 5 * kDeg);
    return family(best);
}

ReferencePolyhedron shape(std::string_view name, std::string_view symbol, std::vector<Vector3d> points) {
    for (Vector3d& p : points) p.normalize();
    return ReferencePolyhedron{name, symbol, static_cast<int>(points.size()), std::move(points)};
}

// The reference table, the one place where the ideal polyhedra are defined.
// Names and symbols: IUPAC polyhedral symbols (Nomenclature of Inorganic Chemistry, IUPAC Recommendations 2005,
// IR-9.3.2, Table IR-9.2; which shapes that table lists is from memory). Where IUPAC has no symbol, the labels of
// Alvarez et al.'s shape tables (Coord. Chem. Rev. 249 (2005) 1693, from memory): the vacant polyhedra (v...),
// PP-5, PPY-6, HP-6, CSAPR-9, and TCTPR-9 for the tricapped trigonal prism (IUPAC: TPRS-9, from memory).
// Every vertex is a unit vector from the centre. Regular shapes are exact; the choices where a name allows several:
//  - SPY-5: the centre at the centroid of the five vertices, so cos(apical-basal) = -1/4 (104.48 deg); this is,
//    from memory, the "spherical square pyramid" of Alvarez et al.'s reference set; it gives about their TBPY-SPY
//    value (tests/test_shape_measure.cpp). The 90-deg square pyramid is listed too, as vOC-5.
//  - SS-4: the trigonal bipyramid without one equatorial vertex (VSEPR's AX4E, idealised: 180, 120 and 90 deg);
//    Alvarez et al.'s seesaw is instead the cis-divacant octahedron (from memory). TPY-3: the vacant tetrahedron.
//    PPY-6: the pentagonal bipyramid without one apex (centre in the base plane).
//  - TPR-6 and SAPR-8: all edges equal (the regular prism and antiprism).
//  - OCF-7, TPRS-7, DD-8, TCTPR-9, CSAPR-9: the minimum of Kepert's repulsion sum 1/d^6 within the polyhedron's
//    symmetry (families below), as in Kepert's treatment of these coordination numbers. Polar angles found (deg):
//    OCF-7 cap 0, 74.63, 130.25; TPRS-7 cap 0, 79.38 (azimuth +-41.27), 143.30; DD-8 37.33 and 71.39;
//    TCTPR-9 prism 44.69; CSAPR-9 cap 0, 68.86, 126.96.
std::array<std::vector<ReferencePolyhedron>, kMaxCn + 1> build_table() {
    const double pi = std::numbers::pi;
    const double tetrahedral = std::acos(-1.0 / 3.0);  // 109.47 deg
    std::array<std::vector<ReferencePolyhedron>, kMaxCn + 1> t;
    auto pts = [](std::initializer_list<Vector3d> l) { return std::vector<Vector3d>(l); };
    auto rings = [](std::initializer_list<std::array<double, 3>> spec, std::vector<Vector3d> extra = {}) {
        for (const auto& r : spec) ring(extra, static_cast<int>(r[0]), r[1], r[2]);
        return extra;
    };
    const Vector3d x = Vector3d::UnitX(), y = Vector3d::UnitY(), z = Vector3d::UnitZ();

    t[2] = {shape("linear", "L-2", pts({z, -z})),
            shape("bent, 90 deg (tetravacant octahedron)", "vOC-2", pts({x, y})),
            shape("bent, 109.47 deg (divacant tetrahedron)", "vT-2", pts({z, polar(tetrahedral, 0)}))};
    t[3] = {shape("trigonal planar", "TP-3", rings({{3, pi / 2, 0}})),
            shape("T-shaped", "TS-3", pts({x, -x, y})),
            shape("trigonal pyramid (vacant tetrahedron)", "TPY-3", rings({{3, tetrahedral, 0}}))};
    t[4] = {shape("tetrahedron", "T-4", rings({{3, tetrahedral, 0}}, {z})),
            shape("square planar", "SP-4", rings({{4, pi / 2, 0}})),
            // The trigonal bipyramid without one equatorial vertex (the VSEPR AX4E shape, idealised).
            shape("seesaw", "SS-4", pts({z, -z, x, polar(pi / 2, 2 * pi / 3)})),
            shape("trigonal pyramid (axially vacant trigonal bipyramid)", "vTBPY-4", rings({{3, pi / 2, 0}}, {-z}))};
    t[5] = {shape("trigonal bipyramid", "TBPY-5", rings({{3, pi / 2, 0}}, {z, -z})),
            shape("square pyramid", "SPY-5", rings({{4, std::acos(-0.25), 0}}, {z})),
            shape("square pyramid, 90 deg (vacant octahedron)", "vOC-5", rings({{4, pi / 2, 0}}, {z})),
            shape("pentagon", "PP-5", rings({{5, pi / 2, 0}}))};
    // Regular trigonal prism, edge a: triangle circumradius a/sqrt(3), half-height a/2, so cos(theta) = sqrt(3/7).
    const double prism = std::acos(std::sqrt(3.0 / 7.0));
    t[6] = {shape("octahedron", "OC-6", pts({x, -x, y, -y, z, -z})),
            shape("trigonal prism", "TPR-6", rings({{3, prism, 0}, {3, pi - prism, 0}})),
            shape("pentagonal pyramid (vacant pentagonal bipyramid)", "PPY-6", rings({{5, pi / 2, 0}}, {z})),
            shape("hexagon", "HP-6", rings({{6, pi / 2, 0}}))};
    // Capped octahedron (C3v): the cap on the axis, two staggered triangles.
    const auto capped_octahedron = [](const std::vector<double>& a) {
        std::vector<Vector3d> v{Vector3d::UnitZ()};
        ring(v, 3, a[0], 0);
        ring(v, 3, a[1], std::numbers::pi / 3);
        return v;
    };
    // Capped trigonal prism (C2v): the cap on the C2 axis over the square face (x, +-y) / (-x, +-y), the prism's
    // remaining edge (0, +-y) below.
    const auto capped_prism = [](const std::vector<double>& a) {
        const double pi_ = std::numbers::pi;
        return std::vector<Vector3d>{Vector3d::UnitZ(),  polar(a[0], a[1]),      polar(a[0], -a[1]),
                                     polar(a[0], pi_ - a[1]), polar(a[0], pi_ + a[1]), polar(a[2], pi_ / 2),
                                     polar(a[2], -pi_ / 2)};
    };
    t[7] = {shape("pentagonal bipyramid", "PBPY-7", rings({{5, pi / 2, 0}}, {z, -z})),
            shape("capped octahedron", "OCF-7", kepert_member(capped_octahedron, {75, 130})),
            shape("capped trigonal prism", "TPRS-7", kepert_member(capped_prism, {50, 50, 140}))};
    // Regular square antiprism, edge a: square circumradius a/sqrt(2), height h with h^2 + a^2 (1 - cos 45 deg) = a^2,
    // h = a 2^(-1/4), so tan(theta) = (a/sqrt(2)) / (h/2) = 2^(3/4).
    const double antiprism = std::atan(std::pow(2.0, 0.75));
    // Triangular dodecahedron (D2d): two sets of four vertices, each a flattened and an elongated pair.
    const auto dodecahedron = [](const std::vector<double>& a) {
        const double pi_ = std::numbers::pi;
        return std::vector<Vector3d>{polar(a[0], 0),        polar(a[0], pi_),        polar(pi_ - a[0], pi_ / 2),
                                     polar(pi_ - a[0], -pi_ / 2), polar(a[1], pi_ / 2), polar(a[1], -pi_ / 2),
                                     polar(pi_ - a[1], 0),  polar(pi_ - a[1], pi_)};
    };
    const double cube = std::acos(1.0 / std::sqrt(3.0));
    t[8] = {shape("square antiprism", "SAPR-8", rings({{4, antiprism, 0}, {4, pi - antiprism, pi / 4}})),
            shape("triangular dodecahedron", "DD-8", kepert_member(dodecahedron, {37, 70})),
            shape("cube", "CU-8", rings({{4, cube, pi / 4}, {4, pi - cube, pi / 4}})),
            shape("hexagonal bipyramid", "HBPY-8", rings({{6, pi / 2, 0}}, {z, -z}))};
    // Tricapped trigonal prism (D3h): an eclipsed prism and three caps on the equator over its square faces.
    const auto tricapped_prism = [](const std::vector<double>& a) {
        std::vector<Vector3d> v;
        ring(v, 3, a[0], 0);
        ring(v, 3, std::numbers::pi - a[0], 0);
        ring(v, 3, std::numbers::pi / 2, std::numbers::pi / 3);
        return v;
    };
    // Capped square antiprism (C4v): the cap on the axis, two staggered squares.
    const auto capped_antiprism = [](const std::vector<double>& a) {
        std::vector<Vector3d> v{Vector3d::UnitZ()};
        ring(v, 4, a[0], 0);
        ring(v, 4, a[1], std::numbers::pi / 4);
        return v;
    };
    t[9] = {shape("tricapped trigonal prism", "TCTPR-9", kepert_member(tricapped_prism, {45})),
            shape("capped square antiprism", "CSAPR-9", kepert_member(capped_antiprism, {65, 125})),
            shape("heptagonal bipyramid", "HBPY-9", rings({{7, pi / 2, 0}}, {z, -z}))};
    return t;
}

// ---------------------------------------------------------------------------------------------------------------
// The measure.

bool finite(const Vector3d& v) { return std::isfinite(v.x()) && std::isfinite(v.y()) && std::isfinite(v.z()); }

// max over proper rotations R of tr(R M) = s1 + s2 + sign(det M) s3, from the eigenvalues of M M^T (the closed-form
// 3x3 solver, fast); s3 as det M / (s1 s2), which keeps its precision when it is small (planar shapes).
double rotation_overlap_fast(const Matrix3d& m) {
    Eigen::SelfAdjointEigenSolver<Matrix3d> es;
    es.computeDirect(m * m.transpose(), Eigen::EigenvaluesOnly);
    const Vector3d& ev = es.eigenvalues();  // ascending
    const double s1 = std::sqrt(std::max(ev(2), 0.0));
    const double s2 = std::sqrt(std::max(ev(1), 0.0));
    if (s1 * s2 <= 0.0) return s1 + s2;
    const double s3 = std::clamp(m.determinant() / (s1 * s2), -s2, s2);
    return s1 + s2 + s3;
}

// A right-handed orthonormal frame: a along the first axis, b in the plane of the first two (a, b not parallel).
Matrix3d frame(const Vector3d& a, const Vector3d& b) {
    Matrix3d f;
    f.col(0) = a.normalized();
    f.col(1) = (b - f.col(0).dot(b) * f.col(0)).normalized();
    f.col(2) = f.col(0).cross(f.col(1));
    return f;
}

// The rotations about the centre that map the ideal's vertices onto themselves, as vertex permutations (identity
// first). Found by sending a fixed non-collinear pair of vertices onto every pair with the same lengths and angle.
std::vector<std::vector<int>> rotation_symmetries(const std::vector<Vector3d>& v) {
    const int n = static_cast<int>(v.size());
    std::vector<int> identity(static_cast<size_t>(n));
    std::iota(identity.begin(), identity.end(), 0);
    std::vector<std::vector<int>> group{identity};
    double extent = 0.0;
    for (const auto& p : v) extent = std::max(extent, p.norm());
    const double tol = 1e-6 * std::max(extent, 1e-300);
    int u0 = -1, u1 = -1;
    for (int i = 0; i < n && u1 < 0; ++i) {
        if (v[static_cast<size_t>(i)].norm() <= tol) continue;
        if (u0 < 0) {
            u0 = i;
        } else if (v[static_cast<size_t>(u0)].cross(v[static_cast<size_t>(i)]).norm() > tol * extent) {
            u1 = i;
        }
    }
    if (u1 < 0) return group;
    const Vector3d& a0 = v[static_cast<size_t>(u0)];
    const Vector3d& b0 = v[static_cast<size_t>(u1)];
    const Matrix3d source = frame(a0, b0);
    for (int a = 0; a < n; ++a) {
        const Vector3d& va = v[static_cast<size_t>(a)];
        if (std::abs(va.norm() - a0.norm()) > tol) continue;
        for (int b = 0; b < n; ++b) {
            const Vector3d& vb = v[static_cast<size_t>(b)];
            if (b == a || std::abs(vb.norm() - b0.norm()) > tol || std::abs(va.dot(vb) - a0.dot(b0)) > tol * extent)
                continue;
            const Matrix3d r = frame(va, vb) * source.transpose();
            std::vector<int> perm(static_cast<size_t>(n), -1);
            std::vector<bool> hit(static_cast<size_t>(n), false);
            bool ok = true;
            for (int j = 0; j < n && ok; ++j) {
                const Vector3d image = r * v[static_cast<size_t>(j)];
                int match = -1;
                for (int k = 0; k < n; ++k)
                    if ((image - v[static_cast<size_t>(k)]).norm() <= 10 * tol) match = k;
                ok = match >= 0 && !hit[static_cast<size_t>(match)];
                if (ok) {
                    perm[static_cast<size_t>(j)] = match;
                    hit[static_cast<size_t>(match)] = true;
                }
            }
            if (ok && std::find(group.begin(), group.end(), perm) == group.end()) group.push_back(perm);
        }
    }
    return group;
}

// rotation_symmetries for the last polyhedra asked on this thread (a pure function of the points, kept because it
// costs about as much as a whole search near an ideal).
const std::vector<std::vector<int>>& cached_symmetries(const std::vector<Vector3d>& points) {
    thread_local std::vector<std::pair<std::vector<Vector3d>, std::vector<std::vector<int>>>> cache;
    for (const auto& [key, group] : cache)
        if (key == points) return group;
    if (cache.size() >= 64) cache.clear();
    cache.emplace_back(points, rotation_symmetries(points));
    return cache.back().second;
}

}  // namespace

const std::vector<ReferencePolyhedron>& reference_polyhedra(int coordination_number) {
    static const std::array<std::vector<ReferencePolyhedron>, kMaxCn + 1> table = build_table();
    if (coordination_number < kMinCn || coordination_number > kMaxCn)
        throw std::invalid_argument("shape measure: coordination number " + std::to_string(coordination_number) +
                                    " is outside 2..9");
    return table[static_cast<size_t>(coordination_number)];
}

namespace {

// The ligands and the ideal vertices, each set centred with the centre as point n, in the search order: ligands by
// |q| (largest first), ties by index; vertices by |p| for the rearrangement bound.
struct Problem {
    int n = 0;
    std::array<Vector3d, kMaxCn + 1> q, p;
    double qq = 0.0, pp = 0.0;
    std::array<int, kMaxCn> order{}, by_norm{};
    std::array<double, kMaxCn> qnorm{}, pnorm{};
    Matrix3d m_centre;
    const std::vector<std::vector<int>>* symmetries = nullptr;

    const Vector3d& qi(int depth) const { return q[static_cast<size_t>(order[static_cast<size_t>(depth)])]; }
    const Vector3d& pj(int vertex) const { return p[static_cast<size_t>(vertex)]; }
};

void check_input(std::span<const Vector3d> ligands, const Vector3d& centre, const ReferencePolyhedron& ideal) {
    const int n = static_cast<int>(ligands.size());
    if (n < kMinCn || n > kMaxCn)
        throw std::invalid_argument("shape measure: " + std::to_string(n) + " ligands, outside 2..9");
    if (ideal.vertices != n || static_cast<int>(ideal.points.size()) != n)
        throw std::invalid_argument("shape measure: " + std::to_string(n) + " ligands against the " +
                                    std::string(ideal.name) + " (" + std::to_string(ideal.points.size()) +
                                    " vertices)");
    if (!finite(centre) || !std::all_of(ligands.begin(), ligands.end(), finite))
        throw std::invalid_argument("shape measure: a coordinate is not finite");
    if (!std::all_of(ideal.points.begin(), ideal.points.end(), finite))
        throw std::invalid_argument("shape measure: the ideal polyhedron has a non-finite point");
}

Problem centred_problem(std::span<const Vector3d> ligands, const Vector3d& centre, const ReferencePolyhedron& ideal) {
    Problem pr;
    pr.n = static_cast<int>(ligands.size());
    const int n = pr.n;
    const size_t un = static_cast<size_t>(n);
    auto& q = pr.q;
    auto& p = pr.p;
    // Centred points; index n is the centre (fixed pair).
    Vector3d qbar = centre, pbar = Vector3d::Zero();
    for (size_t i = 0; i < un; ++i) {
        qbar += ligands[i];
        pbar += ideal.points[i];
    }
    qbar /= static_cast<double>(n + 1);
    pbar /= static_cast<double>(n + 1);
    for (size_t i = 0; i < un; ++i) {
        q[i] = ligands[i] - qbar;
        p[i] = ideal.points[i] - pbar;
        pr.qq += q[i].squaredNorm();
        pr.pp += p[i].squaredNorm();
    }
    q[un] = centre - qbar;
    p[un] = -pbar;
    pr.qq += q[un].squaredNorm();
    pr.pp += p[un].squaredNorm();
    if (!std::isfinite(pr.qq) || !std::isfinite(pr.pp))
        throw std::invalid_argument("shape measure: coordinates too large to square");
    if (!(pr.qq > 0.0) || !(pr.pp > 0.0))
        throw std::invalid_argument(pr.qq > 0.0 ? "shape measure: the ideal polyhedron has no extent"
                                                : "shape measure: the centre and all ligands coincide");

    std::iota(pr.order.begin(), pr.order.begin() + n, 0);
    std::iota(pr.by_norm.begin(), pr.by_norm.begin() + n, 0);
    std::stable_sort(pr.order.begin(), pr.order.begin() + n,
                     [&](int a, int b) { return q[static_cast<size_t>(a)].norm() > q[static_cast<size_t>(b)].norm(); });
    std::stable_sort(pr.by_norm.begin(), pr.by_norm.begin() + n,
                     [&](int a, int b) { return p[static_cast<size_t>(a)].norm() > p[static_cast<size_t>(b)].norm(); });
    for (size_t k = 0; k < un; ++k) pr.qnorm[k] = q[static_cast<size_t>(pr.order[k])].norm();
    for (size_t j = 0; j < un; ++j) pr.pnorm[j] = p[j].norm();
    pr.symmetries = &cached_symmetries(ideal.points);
    pr.m_centre = p[un] * q[un].transpose();
    return pr;
}

// First guess: the two leading ligands (not collinear with each other) aligned on each pair of vertices (the first
// on one vertex per symmetry orbit): the rotation takes the frame of the two vertices onto that of the two ligands,
// the rest are matched greedily. Only a start for the bound: the search is exact without it.
void greedy_start(const Problem& pr, std::array<int, kMaxCn>& best, double& best_c) {
    const int n = pr.n;
    int second = -1;
    for (int k = 1; k < n && second < 0; ++k)
        if (pr.qi(0).cross(pr.qi(k)).norm() > 1e-6 * pr.qnorm[0] * pr.qnorm[static_cast<size_t>(k)]) second = k;
    const Matrix3d ligand_frame = second > 0 ? frame(pr.qi(0), pr.qi(second)) : Matrix3d::Identity();
    for (int a = 0; a < n && second > 0; ++a) {
        bool representative = true;
        for (const auto& g : *pr.symmetries) representative = representative && g[static_cast<size_t>(a)] >= a;
        if (!representative) continue;
        for (int b = 0; b < n; ++b) {
            if (b == a || pr.pj(a).cross(pr.pj(b)).norm() <= 1e-9 * pr.pj(a).norm() * pr.pj(b).norm()) continue;
            const Matrix3d r = ligand_frame * frame(pr.pj(a), pr.pj(b)).transpose();
            std::array<int, kMaxCn> guess{};
            unsigned taken = (1u << a) | (1u << b);
            guess[0] = a;
            guess[static_cast<size_t>(second)] = b;
            for (int k = 1; k < n; ++k) {
                if (k == second) continue;
                const Vector3d target = r.transpose() * pr.qi(k);
                int pick = -1;
                double pick_dot = -std::numeric_limits<double>::infinity();
                for (int v = 0; v < n; ++v) {
                    if (taken & (1u << v)) continue;
                    const double dot = target.dot(pr.pj(v));
                    if (dot > pick_dot) {
                        pick_dot = dot;
                        pick = v;
                    }
                }
                guess[static_cast<size_t>(k)] = pick;
                taken |= 1u << pick;
            }
            Matrix3d full = pr.m_centre;
            for (int k = 0; k < n; ++k) full += pr.pj(guess[static_cast<size_t>(k)]) * pr.qi(k).transpose();
            const double c = rotation_overlap_fast(full);
            if (c > best_c) {
                best_c = c;
                best = guess;
            }
        }
    }
}

// Branch and bound over the assignments, on an explicit stack, improving on `best` (best_c its overlap).
// A branch is dropped only when its bound is below the best by more than the rounding of the fast overlap (whose
// smaller singular values carry an absolute error near sqrt(epsilon) of the largest).
void branch_and_bound(const Problem& pr, std::array<int, kMaxCn>& best, double& best_c) {
    const int n = pr.n;
    const size_t un = static_cast<size_t>(n);
    const std::vector<std::vector<int>>& symmetries = *pr.symmetries;
    const double slack = 1e-7 * std::sqrt(pr.qq * pr.pp);
    std::array<int, kMaxCn> chosen{};  // chosen[k]: the vertex of the ligand at search depth k
    std::array<int, kMaxCn + 1> next{};
    std::array<Matrix3d, kMaxCn + 1> partial;
    partial[0] = pr.m_centre;
    std::array<double, kMaxCn + 1> overlap{};  // c of partial[k]
    overlap[0] = rotation_overlap_fast(pr.m_centre);
    unsigned used = 0;
    int depth = 0;
    next[0] = 0;
    while (depth >= 0) {
        const size_t ud = static_cast<size_t>(depth);
        if (next[ud] >= n) {  // this depth is exhausted: back up, freeing the vertex of the level above
            --depth;
            if (depth >= 0) used &= ~(1u << chosen[static_cast<size_t>(depth)]);
            continue;
        }
        const int v = next[ud]++;
        if (used & (1u << v)) continue;
        chosen[ud] = v;
        bool canonical = true;
        for (size_t g = 1; g < symmetries.size() && canonical; ++g) {
            for (size_t k = 0; k <= ud; ++k) {
                const int image = symmetries[g][static_cast<size_t>(chosen[k])];
                if (image != chosen[k]) {
                    canonical = image > chosen[k];
                    break;
                }
            }
        }
        if (!canonical) continue;
        double rest = 0.0;
        size_t k = ud + 1;
        for (int w : std::span(pr.by_norm.data(), un)) {
            if (w == v || (used & (1u << w))) continue;
            rest += pr.qnorm[k++] * pr.pnorm[static_cast<size_t>(w)];
        }
        // c of this node is at most its parent's plus |q||p| of the new pair: a bound without the eigenvalues.
        if (overlap[ud] + pr.qnorm[ud] * pr.pnorm[static_cast<size_t>(v)] + rest < best_c - slack) continue;
        const Matrix3d m = partial[ud] + pr.pj(v) * pr.qi(depth).transpose();
        const double c = rotation_overlap_fast(m);
        if (depth == n - 1) {
            if (c > best_c) {
                best_c = c;
                best = chosen;
            }
            continue;
        }
        if (c + rest < best_c - slack) continue;
        used |= 1u << v;
        partial[ud + 1] = m;
        overlap[ud + 1] = c;
        ++depth;
        next[ud + 1] = 0;
    }
}

}  // namespace

ShapeFit fit_shape(std::span<const Vector3d> ligands, const Vector3d& centre, const ReferencePolyhedron& ideal) {
    check_input(ligands, centre, ideal);
    const Problem pr = centred_problem(ligands, centre, ideal);
    const size_t un = static_cast<size_t>(pr.n);
    std::array<int, kMaxCn> best{};
    double best_c = -std::numeric_limits<double>::infinity();
    greedy_start(pr, best, best_c);
    branch_and_bound(pr, best, best_c);

    // The optimum again, with a full SVD for the rotation and full precision.
    ShapeFit fit;
    fit.assignment.assign(un, -1);
    Matrix3d m = pr.m_centre;
    for (size_t k = 0; k < un; ++k) {
        fit.assignment[static_cast<size_t>(pr.order[k])] = best[k];
        m += pr.pj(best[k]) * pr.q[static_cast<size_t>(pr.order[k])].transpose();
    }
    Eigen::JacobiSVD<Matrix3d> svd(m, Eigen::ComputeFullU | Eigen::ComputeFullV);
    Matrix3d d = Matrix3d::Identity();
    d(2, 2) = (svd.matrixV() * svd.matrixU().transpose()).determinant() < 0 ? -1.0 : 1.0;
    fit.rotation = svd.matrixV() * d * svd.matrixU().transpose();
    const Vector3d s = svd.singularValues();
    const double c = s(0) + s(1) + d(2, 2) * s(2);
    fit.scale = c / pr.pp;
    fit.measure = std::clamp(100.0 * (1.0 - c * c / (pr.qq * pr.pp)), 0.0, 100.0);
    return fit;
}

double continuous_shape_measure(std::span<const Vector3d> ligands, const Vector3d& centre,
                                const ReferencePolyhedron& ideal) {
    return fit_shape(ligands, centre, ideal).measure;
}

std::vector<ShapeVerdict> shape_measures(std::span<const Vector3d> ligands, const Vector3d& centre) {
    const auto& references = reference_polyhedra(static_cast<int>(ligands.size()));
    std::vector<ShapeVerdict> out;
    for (const auto& ideal : references)
        out.push_back({ideal.name, ideal.symbol, continuous_shape_measure(ligands, centre, ideal)});
    std::stable_sort(out.begin(), out.end(), [](const ShapeVerdict& a, const ShapeVerdict& b) {
        return a.measure < b.measure;
    });
    return out;
}

}  // namespace repel
