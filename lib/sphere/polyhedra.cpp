#include "sphere/polyhedra.hpp"

#include <Eigen/Geometry>
#include <array>
#include <cmath>
#include <cstdint>
#include <mutex>

namespace repel {
namespace {

using Eigen::Vector3d;

Vector3d polar(double theta_deg, double phi_deg) {
    const double t = theta_deg * M_PI / 180.0, p = phi_deg * M_PI / 180.0;
    return {std::sin(t) * std::cos(p), std::sin(t) * std::sin(p), std::cos(t)};
}

// n points on a ring at polar angle theta, starting at azimuth phi0.
void ring(std::vector<Vector3d>& v, int n, double theta, double phi0 = 0) {
    for (int k = 0; k < n; ++k) v.push_back(polar(theta, phi0 + 360.0 * k / n));
}

}  // namespace

std::vector<SymmetryOperation> symmetry_operations(const std::vector<Vector3d>& v, double tol) {
    const int n = static_cast<int>(v.size());
    std::vector<SymmetryOperation> group;
    std::vector<int> identity(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) identity[static_cast<size_t>(i)] = i;
    group.push_back({Eigen::Matrix3d::Identity(), identity});
    if (n < 3) return group;
    // Two reference vertices that are not collinear.
    int p0 = 0, p1 = -1;
    for (int j = 1; j < n; ++j)
        if (v[0].cross(v[static_cast<size_t>(j)]).norm() > 1e-3) { p1 = j; break; }
    if (p1 < 0) return group;
    auto frame = [](const Vector3d& a, const Vector3d& b) {
        Eigen::Matrix3d f;
        Vector3d e0 = a.normalized();
        Vector3d e1 = (b - b.dot(e0) * e0).normalized();
        f.col(0) = e0;
        f.col(1) = e1;
        f.col(2) = e0.cross(e1);
        return f;
    };
    const Eigen::Matrix3d fp = frame(v[static_cast<size_t>(p0)], v[static_cast<size_t>(p1)]);
    const double dot01 = v[static_cast<size_t>(p0)].dot(v[static_cast<size_t>(p1)]);
    for (int q0 = 0; q0 < n; ++q0)
        for (int q1 = 0; q1 < n; ++q1) {
            if (q0 == q1 || std::abs(v[static_cast<size_t>(q0)].dot(v[static_cast<size_t>(q1)]) - dot01) > tol) continue;
            Eigen::Matrix3d fq = frame(v[static_cast<size_t>(q0)], v[static_cast<size_t>(q1)]);
            for (int mirror = 0; mirror < 2; ++mirror) {
                Eigen::Matrix3d fq2 = fq;
                if (mirror) fq2.col(2) = -fq2.col(2);
                Eigen::Matrix3d r = fq2 * fp.transpose();
                std::vector<int> perm(static_cast<size_t>(n), -1);
                bool ok = true;
                for (int i = 0; i < n && ok; ++i) {
                    Vector3d img = r * v[static_cast<size_t>(i)];
                    int found = -1;
                    for (int j = 0; j < n; ++j)
                        if ((img - v[static_cast<size_t>(j)]).norm() < tol) { found = j; break; }
                    ok = found >= 0;
                    perm[static_cast<size_t>(i)] = found;
                }
                if (ok && perm != identity) {
                    bool seen = false;
                    for (const auto& g : group) seen = seen || g.perm == perm;
                    if (!seen) group.push_back({r, perm});
                }
            }
        }
    return group;
}

namespace {

// A small deterministic generator (SplitMix64): the same numbers on every platform and compiler.
struct SplitMix {
    std::uint64_t state;
    double uniform() {
        std::uint64_t z = (state += 0x9E3779B97F4A7C15ull);
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
        z ^= z >> 31;
        return static_cast<double>(z >> 11) * 0x1.0p-53;
    }
};

std::vector<Vector3d> random_points(int n, std::uint64_t seed) {
    SplitMix rng{seed};
    std::vector<Vector3d> v;
    while (static_cast<int>(v.size()) < n) {
        Vector3d p(2 * rng.uniform() - 1, 2 * rng.uniform() - 1, 2 * rng.uniform() - 1);
        double r = p.norm();
        if (r > 0.1 && r <= 1.0) v.push_back(p / r);
    }
    return v;
}

// A generalised spiral (Fibonacci lattice): well spread points for any n.
std::vector<Vector3d> spiral_points(int n) {
    std::vector<Vector3d> v;
    const double golden = M_PI * (3.0 - std::sqrt(5.0));
    for (int k = 0; k < n; ++k) {
        double z = 1.0 - (2.0 * k + 1.0) / n;
        double r = std::sqrt(std::max(0.0, 1.0 - z * z));
        v.emplace_back(r * std::cos(golden * k), r * std::sin(golden * k), z);
    }
    return v;
}

Polyhedron make(const char* name, std::vector<Vector3d> v) {
    for (auto& p : v) p.normalize();
    Polyhedron poly{name, std::move(v), {}};
    for (const SymmetryOperation& op : symmetry_operations(poly.vertices, 1e-6)) poly.symmetry.push_back(op.perm);
    return poly;
}

std::vector<Polyhedron> build(int n) {
    std::vector<Polyhedron> out;
    std::vector<Vector3d> v;
    switch (n) {
        case 2:
            out.push_back(make("linear", {{0, 0, 1}, {0, 0, -1}}));
            break;
        case 3:
            ring(v, 3, 90);
            out.push_back(make("trigonal planar", v));
            break;
        case 4:
            out.push_back(make("tetrahedron", {{1, 1, 1}, {1, -1, -1}, {-1, 1, -1}, {-1, -1, 1}}));
            ring(v, 4, 90);
            out.push_back(make("square", v));
            break;
        case 5:
            v = {{0, 0, 1}, {0, 0, -1}};
            ring(v, 3, 90);
            out.push_back(make("trigonal bipyramid", v));
            v = {{0, 0, 1}};
            ring(v, 4, 104);
            out.push_back(make("square pyramid", v));
            break;
        case 6:
            out.push_back(make("octahedron", {{0, 0, 1}, {0, 0, -1}, {1, 0, 0}, {-1, 0, 0}, {0, 1, 0}, {0, -1, 0}}));
            ring(v, 3, 50);
            ring(v, 3, 130);
            out.push_back(make("trigonal prism", v));
            break;
        case 7:
            v = {{0, 0, 1}, {0, 0, -1}};
            ring(v, 5, 90);
            out.push_back(make("pentagonal bipyramid", v));
            v = {{0, 0, 1}};
            ring(v, 3, 75);
            ring(v, 3, 130, 60);
            out.push_back(make("capped octahedron", v));
            v = {{1, 0, 0}};
            ring(v, 3, 45, 0);
            ring(v, 3, 135, 0);
            out.push_back(make("capped trigonal prism", v));
            break;
        case 8:
            ring(v, 4, 59);
            ring(v, 4, 121, 45);
            out.push_back(make("square antiprism", v));
            // Triangular dodecahedron (D2d), from the hard-sphere angles (common practice).
            v = {polar(36.9, 0), polar(36.9, 180), polar(143.1, 90), polar(143.1, 270),
                 polar(69.5, 90), polar(69.5, 270), polar(110.5, 0), polar(110.5, 180)};
            out.push_back(make("dodecahedron", v));
            out.push_back(make("cube", {{1, 1, 1}, {1, 1, -1}, {1, -1, 1}, {1, -1, -1},
                                        {-1, 1, 1}, {-1, 1, -1}, {-1, -1, 1}, {-1, -1, -1}}));
            v = {{0, 0, 1}, {0, 0, -1}};
            ring(v, 6, 90);
            out.push_back(make("hexagonal bipyramid", v));
            break;
        default:
            break;
    }
    if (n == 12) {
        const double g = (1 + std::sqrt(5.0)) / 2;
        out.push_back(make("icosahedron", {{0, 1, g}, {0, -1, g}, {0, 1, -g}, {0, -1, -g}, {1, g, 0}, {-1, g, 0},
                                           {1, -g, 0}, {-1, -g, 0}, {g, 0, 1}, {-g, 0, 1}, {g, 0, -1}, {-g, 0, -1}}));
    }
    if (n >= 7) {
        // Deterministic extra starts beyond the named polyhedra: a spiral and a few pseudo-random sets.
        out.push_back(make("spiral", spiral_points(n)));
        const int extra = n > 8 ? 12 : 4;
        for (int k = 0; k < extra; ++k) out.push_back(make("random", random_points(n, 1000003ull * (k + 1) + n)));
    }
    return out;
}

}  // namespace

const std::vector<Polyhedron>& starting_polyhedra(int n) {
    static std::array<std::vector<Polyhedron>, 13> table;
    static std::once_flag once;
    std::call_once(once, [] {
        for (int k = 2; k <= 12; ++k) table[static_cast<size_t>(k)] = build(k);
    });
    static const std::vector<Polyhedron> none;
    return (n >= 2 && n <= 12) ? table[static_cast<size_t>(n)] : none;
}

}  // namespace repel
