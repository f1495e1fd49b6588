#include "sphere/sphere.hpp"

#include <nlopt.h>

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>
#include <cstring>
#include <numeric>
#include <stdexcept>
#include <string>
#include <unordered_map>

#include "sphere/polyhedra.hpp"

namespace repel {
namespace {

using Eigen::Vector3d;

// Seeds beyond this many (after symmetry reduction) are screened by their unrelaxed energy and only the best are
// relaxed: it bounds the cost of centres with many different ligands, and the ranking before relaxation is a good
// guide because relaxation only moves domains a few degrees from a seed's vertices.
constexpr int kMaxRelaxedSeeds = 24;
// Labellings enumerated per polyhedron at most (only reached by 8+ domains of many different kinds).
constexpr int kMaxLabellings = 5000;
// Seeds are nudged off exact symmetry by this much so that the minimiser can leave a symmetric saddle point.
constexpr double kSeedNudge = 1e-3;
// Two arrangement sites count as images under a symmetry operation within this distance: soft modes leave the
// arrangement solve symmetric only to about 1e-3 (measured on the pentagonal bipyramid); a genuinely unsymmetric
// arrangement misses by much more.
constexpr double kSymmetryTolerance = 2e-3;
// The staged relaxation keeps every bonding domain (radius 1) within this angle of its arrangement site, so that the
// fitted weights refine the angles of the class the arrangement chose and never change the class: without it SOF4's
// heavy S=O domain pushed the axial fluorines through a Berry pseudorotation to a square pyramid (axial 140 deg,
// measured 164.6, from memory). The bonding domains of the training table move at most 9.8 deg (SF4, IF5; measured
// with the fitted model), so the fit does not see it. Beyond it a stiff quadratic in the cosine (a choice).
const double kTetherCos = std::cos(12.0 * M_PI / 180.0);
constexpr double kTetherStiffness = 1e7;

struct Problem {
    const SphereDomain* domains;
    int n;
    // When set, the relaxation stays within the symmetry of the domain pattern: coordinates are projected onto the
    // subspace these operations leave invariant (rotation * x_i = x_perm[i]) before every evaluation.
    const std::vector<SymmetryOperation>* symmetry = nullptr;
    // When set (staged relaxation), each bonding domain's arrangement site (see kTetherCos).
    const std::vector<Vector3d>* anchors = nullptr;
};

// x -> the average of its images under the operations: the orthogonal projection onto the symmetric subspace.
void symmetrize(const std::vector<SymmetryOperation>& ops, int n, const double* x, double* out) {
    std::vector<Vector3d> acc(static_cast<size_t>(n), Vector3d::Zero());
    for (const SymmetryOperation& op : ops)
        for (int i = 0; i < n; ++i)
            acc[static_cast<size_t>(op.perm[static_cast<size_t>(i)])] +=
                op.rotation * Vector3d(x[3 * i], x[3 * i + 1], x[3 * i + 2]);
    const double inv = 1.0 / static_cast<double>(ops.size());
    for (int i = 0; i < n; ++i)
        for (int c = 0; c < 3; ++c) out[3 * i + c] = acc[static_cast<size_t>(i)][c] * inv;
}

// Energy and gradient in unconstrained coordinates x_i (u_i = x_i / |x_i|).
double energy_and_gradient(const Problem& pb, const double* x, double* grad) {
    const int n = pb.n;
    Vector3d u[12];
    double inv_len[12];
    for (int i = 0; i < n; ++i) {
        Vector3d xi(x[3 * i], x[3 * i + 1], x[3 * i + 2]);
        double len = xi.norm();
        if (len < 1e-12) len = 1e-12;
        inv_len[i] = 1.0 / len;
        u[i] = xi * inv_len[i];
    }
    Vector3d g[12];
    for (int i = 0; i < n; ++i) g[i].setZero();
    double e = 0;
    for (int i = 0; i < n; ++i) {
        const double ri = pb.domains[i].radius, wi = pb.domains[i].weight;
        for (int j = i + 1; j < n; ++j) {
            const double rj = pb.domains[j].radius, wj = pb.domains[j].weight;
            const double p = 0.5 * (pb.domains[i].exponent + pb.domains[j].exponent);
            Vector3d d = ri * u[i] - rj * u[j];
            double d2 = std::max(d.squaredNorm(), 1e-24);
            double dist = std::sqrt(d2);
            double term = wi * wj * std::pow(dist, -p);
            e += term;
            if (grad) {
                // dE/dd = -p * term / d2 * d
                Vector3d f = (-p * term / d2) * d;
                g[i] += ri * f;
                g[j] -= rj * f;
            }
        }
    }
    if (pb.anchors) {
        for (int i = 0; i < n; ++i) {
            if (pb.domains[i].radius != 1.0) continue;
            const Vector3d& a = (*pb.anchors)[static_cast<size_t>(i)];
            const double c = u[i].dot(a);
            if (c >= kTetherCos) continue;
            e += kTetherStiffness * (kTetherCos - c) * (kTetherCos - c);
            if (grad) g[i] -= 2.0 * kTetherStiffness * (kTetherCos - c) * a;
        }
    }
    if (grad) {
        for (int i = 0; i < n; ++i) {
            // Project onto the tangent plane and scale: d u / d x = (I - u u^T) / |x|.
            Vector3d gi = (g[i] - u[i] * u[i].dot(g[i])) * inv_len[i];
            grad[3 * i] = gi.x();
            grad[3 * i + 1] = gi.y();
            grad[3 * i + 2] = gi.z();
        }
    }
    return e;
}

double nlopt_objective(unsigned, const double* x, double* grad, void* data) {
    const Problem& pb = *static_cast<const Problem*>(data);
    if (!pb.symmetry) return energy_and_gradient(pb, x, grad);
    // E(S x): the gradient is S^T grad E(S x) = S grad E(S x), S being an orthogonal projection (a group average).
    double sx[36], g[36];
    symmetrize(*pb.symmetry, pb.n, x, sx);
    double e = energy_and_gradient(pb, sx, grad ? g : nullptr);
    if (grad) symmetrize(*pb.symmetry, pb.n, g, grad);
    return e;
}

// Relaxes points in place; returns the energy.
double relax(const Problem& pb, std::vector<Vector3d>& points) {
    const int n = pb.n;
    std::vector<double> x(static_cast<size_t>(3 * n));
    for (int i = 0; i < n; ++i)
        for (int k = 0; k < 3; ++k) x[static_cast<size_t>(3 * i + k)] = points[static_cast<size_t>(i)][k];
    nlopt_opt opt = nlopt_create(NLOPT_LD_LBFGS, static_cast<unsigned>(3 * n));
    if (!opt) throw std::runtime_error("sphere solver: NLopt could not create an optimiser");
    nlopt_set_min_objective(opt, nlopt_objective, const_cast<Problem*>(&pb));
    nlopt_set_ftol_rel(opt, 1e-14);
    nlopt_set_xtol_rel(opt, 1e-11);
    nlopt_set_maxeval(opt, 3000);
    // Ten correction pairs (a usual L-BFGS memory): left unset, NLopt sizes and clears a work array for far more,
    // which cost more instructions than the solve on a cold cache (callgrind, the drug set: 28 of 48 million).
    nlopt_set_vector_storage(opt, 10);
    double f = 0;
    nlopt_optimize(opt, x.data(), &f);  // a stop for round-off near the minimum is fine: x is the best point seen
    nlopt_destroy(opt);
    if (pb.symmetry) {
        std::vector<double> sx(x.size());
        symmetrize(*pb.symmetry, n, x.data(), sx.data());
        x = sx;
    }
    for (int i = 0; i < n; ++i)
        points[static_cast<size_t>(i)] =
            Vector3d(x[static_cast<size_t>(3 * i)], x[static_cast<size_t>(3 * i + 1)], x[static_cast<size_t>(3 * i + 2)])
                .normalized();
    return energy_and_gradient(pb, x.data(), nullptr);
}

// Newton steps on the gradient after the minimiser: its stops are on the energy (ftol, xtol), and near a minimum the
// energy changes only quadratically, so it ends about 1e-8 from the minimum at a point that depends on where it
// started. Two seeds of the same basin (the staged solve starts from different arrangement sites when an arrangement
// kind is added) then gave directions 1e-8 apart, which the assembly amplified to 0.01-0.07 A (strychnine; measured).
// The gradient is accurate to round-off, so a few Newton steps bring every start to the same point within about
// 1e-14. The Hessian is taken by central differences of the analytic gradient (its error only slows convergence).
constexpr double kPolishStep = 1e-5;         // finite-difference step in the coordinates x (a choice)
// Eigenvalues of the null modes (rotations, |x| and, under symmetry, the directions it removes) are of the order of
// the gradient's norm and of round-off, of either sign: below this fraction of the largest plus this multiple of the
// gradient's norm a mode is not inverted, and only a more negative one stops the polish (a saddle).
constexpr double kPolishEigenFloor = 1e-9;
constexpr double kPolishNullFactor = 100.0;
constexpr double kPolishMaxMove = 1e-4;      // a Newton step longer than this is not a polish: left as it is
constexpr int kPolishIterations = 6;
// The directions returned are rounded to this grid (2^-30, about 1e-9) after the polish, so that results agreeing to
// the polish's precision are bit-identical, whatever seed or path led to them.
constexpr double kDirectionGrid = 1.0 / 1073741824.0;

struct Seed {
    std::vector<Vector3d> points;  // in the problem's domain order
    double energy;
    std::vector<SymmetryOperation> symmetry;  // operations the relaxation keeps (staged solve only); empty: none
    std::vector<Vector3d> anchors;            // the arrangement sites (staged solve only); empty: none
};

double gradient_norm(const std::vector<double>& g) {
    double s = 0;
    for (double v : g) s += v * v;
    return std::sqrt(s);
}

// Polishes a relaxed minimum in place (see kPolishStep); stops at the first step that would not be a small move to
// a lower gradient at no higher energy (a saddle, or a minimum already at round-off).
void polish(const Problem& pb, std::vector<Vector3d>& points) {
    const int m = 3 * pb.n;
    std::vector<double> x(static_cast<size_t>(m)), g(static_cast<size_t>(m)), xp(static_cast<size_t>(m)),
        gp(static_cast<size_t>(m)), gm(static_cast<size_t>(m));
    for (int i = 0; i < pb.n; ++i)
        for (int c = 0; c < 3; ++c) x[static_cast<size_t>(3 * i + c)] = points[static_cast<size_t>(i)][c];
    double e = nlopt_objective(0, x.data(), g.data(), const_cast<Problem*>(&pb));
    double gnorm = gradient_norm(g);
    Eigen::MatrixXd h(m, m);
    for (int it = 0; it < kPolishIterations && gnorm > 0; ++it) {
        for (int k = 0; k < m; ++k) {
            xp = x;
            xp[static_cast<size_t>(k)] += kPolishStep;
            nlopt_objective(0, xp.data(), gp.data(), const_cast<Problem*>(&pb));
            xp[static_cast<size_t>(k)] -= 2 * kPolishStep;
            nlopt_objective(0, xp.data(), gm.data(), const_cast<Problem*>(&pb));
            for (int r = 0; r < m; ++r)
                h(r, k) = (gp[static_cast<size_t>(r)] - gm[static_cast<size_t>(r)]) / (2 * kPolishStep);
        }
        const Eigen::MatrixXd hs = 0.5 * (h + h.transpose());
        Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(hs);
        if (eig.info() != Eigen::Success) break;
        const Eigen::VectorXd& lambda = eig.eigenvalues();
        const double floor = kPolishEigenFloor * lambda.cwiseAbs().maxCoeff() + kPolishNullFactor * gnorm;
        if (lambda.minCoeff() < -floor) break;  // not a minimum in every direction: leave it to the minimiser
        const Eigen::Map<const Eigen::VectorXd> gv(g.data(), m);
        Eigen::VectorXd step = Eigen::VectorXd::Zero(m);
        for (int k = 0; k < m; ++k)
            if (lambda[k] > floor) step -= (eig.eigenvectors().col(k).dot(gv) / lambda[k]) * eig.eigenvectors().col(k);
        if (!(step.norm() <= kPolishMaxMove)) break;
        for (int k = 0; k < m; ++k) xp[static_cast<size_t>(k)] = x[static_cast<size_t>(k)] + step[k];
        for (int i = 0; i < pb.n; ++i) {  // back onto the unit sphere, where the gradient was taken
            Vector3d v(xp[static_cast<size_t>(3 * i)], xp[static_cast<size_t>(3 * i + 1)], xp[static_cast<size_t>(3 * i + 2)]);
            v.normalize();
            for (int c = 0; c < 3; ++c) xp[static_cast<size_t>(3 * i + c)] = v[c];
        }
        const double ep = nlopt_objective(0, xp.data(), gp.data(), const_cast<Problem*>(&pb));
        const double gpn = gradient_norm(gp);
        if (!(gpn < gnorm) || ep > e + 1e-12 * std::abs(e)) break;
        const bool converging = gpn < 0.5 * gnorm;  // else at round-off: further steps only cost
        x = xp;
        g = gp;
        e = ep;
        gnorm = gpn;
        if (!converging) break;
    }
    if (pb.symmetry) {
        std::vector<double> sx(x.size());
        symmetrize(*pb.symmetry, pb.n, x.data(), sx.data());
        x = sx;
    }
    for (int i = 0; i < pb.n; ++i)
        points[static_cast<size_t>(i)] =
            Vector3d(x[static_cast<size_t>(3 * i)], x[static_cast<size_t>(3 * i + 1)], x[static_cast<size_t>(3 * i + 2)])
                .normalized();
}

// Every distinct placement of the domain kinds on the vertices of each starting polyhedron.
std::vector<Seed> seeds_for(const std::vector<SphereDomain>& sorted, const std::vector<int>& kind) {
    const int n = static_cast<int>(sorted.size());
    std::vector<Seed> seeds;
    Problem pb{sorted.data(), n};
    for (const Polyhedron& poly : starting_polyhedra(n)) {
        std::vector<int> labels = kind;  // sorted ascending: next_permutation walks every multiset permutation
        int count = 0;
        do {
            // Keep a labelling only if no symmetry of the polyhedron maps it to a lexicographically smaller one.
            bool canonical = true;
            std::vector<int> image(static_cast<size_t>(n));
            for (size_t g = 1; g < poly.symmetry.size() && canonical; ++g) {
                for (int v = 0; v < n; ++v)
                    image[static_cast<size_t>(poly.symmetry[g][static_cast<size_t>(v)])] = labels[static_cast<size_t>(v)];
                if (std::lexicographical_compare(image.begin(), image.end(), labels.begin(), labels.end()))
                    canonical = false;
            }
            if (!canonical) continue;
            // Vertex v gets the next unplaced domain of kind labels[v].
            std::vector<Vector3d> pts(static_cast<size_t>(n));
            std::vector<int> next(static_cast<size_t>(n), 0);
            for (int v = 0; v < n; ++v) {
                int k = labels[static_cast<size_t>(v)];
                int seen = 0;
                for (int d = 0; d < n; ++d)
                    if (kind[static_cast<size_t>(d)] == k && seen++ == next[static_cast<size_t>(k)]) {
                        Vector3d nudge(kSeedNudge * std::sin(1.0 + 3 * v), kSeedNudge * std::cos(2.0 + 5 * v),
                                       kSeedNudge * std::sin(3.0 + 7 * v));
                        pts[static_cast<size_t>(d)] = (poly.vertices[static_cast<size_t>(v)] + nudge).normalized();
                        break;
                    }
                ++next[static_cast<size_t>(k)];
            }
            std::vector<double> x(static_cast<size_t>(3 * n));
            for (int i = 0; i < n; ++i)
                for (int c = 0; c < 3; ++c) x[static_cast<size_t>(3 * i + c)] = pts[static_cast<size_t>(i)][c];
            seeds.push_back({std::move(pts), energy_and_gradient(pb, x.data(), nullptr), {}, {}});
        } while (++count < kMaxLabellings && std::next_permutation(labels.begin(), labels.end()));
    }
    return seeds;
}

// Rotates the points so that the first lies along +z and the next one not collinear with it in the xz half-plane x > 0.
void canonical_frame(std::vector<Vector3d>& pts) {
    if (pts.empty()) return;
    Eigen::Quaterniond q = Eigen::Quaterniond::FromTwoVectors(pts[0], Vector3d::UnitZ());
    if (pts[0].dot(Vector3d::UnitZ()) < -1 + 1e-12) q = Eigen::Quaterniond(Eigen::AngleAxisd(M_PI, Vector3d::UnitX()));
    Eigen::Matrix3d r = q.toRotationMatrix();
    for (auto& p : pts) p = r * p;
    pts[0] = Vector3d::UnitZ();
    for (size_t j = 1; j < pts.size(); ++j) {
        double rho = std::hypot(pts[j].x(), pts[j].y());
        if (rho > 1e-6) {
            double phi = std::atan2(pts[j].y(), pts[j].x());
            Eigen::Matrix3d rz = Eigen::AngleAxisd(-phi, Vector3d::UnitZ()).toRotationMatrix();
            for (auto& p : pts) p = rz * p;
            break;
        }
    }
}

bool domain_less(const SphereDomain& a, const SphereDomain& b) {
    if (a.radius != b.radius) return a.radius < b.radius;
    if (a.exponent != b.exponent) return a.exponent < b.exponent;
    return a.weight > b.weight;
}

// Sorts the domains into a canonical order (by the arrangement domains when given, then by the domains: radius,
// exponent, then weight, larger first) so that equal patterns share a cache entry and equal domains lie together.
std::vector<int> canonical_order(std::span<const SphereDomain> arrangement, std::span<const SphereDomain> domains) {
    std::vector<int> order(domains.size());
    std::iota(order.begin(), order.end(), 0);
    std::stable_sort(order.begin(), order.end(), [&](int a, int b) {
        const size_t ia = static_cast<size_t>(a), ib = static_cast<size_t>(b);
        if (!arrangement.empty()) {
            if (domain_less(arrangement[ia], arrangement[ib])) return true;
            if (domain_less(arrangement[ib], arrangement[ia])) return false;
        }
        return domain_less(domains[ia], domains[ib]);
    });
    return order;
}

// Labels runs of equal domains in a sorted list 0, 1, 2, ...
std::vector<int> kinds_of(const std::vector<SphereDomain>& sorted) {
    std::vector<int> kind(sorted.size(), 0);
    for (size_t i = 1; i < sorted.size(); ++i) kind[i] = kind[i - 1] + (sorted[i] == sorted[i - 1] ? 0 : 1);
    return kind;
}

// Relaxes the best seeds (all of them when there are few) and returns the lowest minimum found.
std::vector<Vector3d> best_of(const std::vector<SphereDomain>& sorted, std::vector<Seed> seeds) {
    if (static_cast<int>(seeds.size()) > kMaxRelaxedSeeds) {
        std::stable_sort(seeds.begin(), seeds.end(), [](const Seed& a, const Seed& b) { return a.energy < b.energy; });
        seeds.resize(kMaxRelaxedSeeds);
    }
    const Seed* best = nullptr;
    double best_e = INFINITY;
    auto problem = [&](const Seed& s) {
        return Problem{sorted.data(), static_cast<int>(sorted.size()), s.symmetry.empty() ? nullptr : &s.symmetry,
                       s.anchors.empty() ? nullptr : &s.anchors};
    };
    for (Seed& s : seeds) {
        double e = relax(problem(s), s.points);
        if (e < best_e * (1 - 1e-12)) {
            best_e = e;
            best = &s;
        }
    }
    if (!best) return {};
    std::vector<Vector3d> points = best->points;
    polish(problem(*best), points);
    return points;
}

// The global solve in canonical domain order; the result is what the cache keeps.
std::vector<Vector3d> solve_sorted(const std::vector<SphereDomain>& sorted) {
    const int n = static_cast<int>(sorted.size());
    if (n == 0) return {};
    if (n == 1) return {Vector3d::UnitZ()};
    if (n == 2) return {Vector3d::UnitZ(), -Vector3d::UnitZ()};
    return best_of(sorted, seeds_for(sorted, kinds_of(sorted)));
}

void append_key(std::string& key, const std::vector<SphereDomain>& sorted);

// Two stages: the arrangement domains fix which polyhedron and which of its sites each kind of domain takes (their
// global minimum); then the domains themselves, placed on those sites in every distinct way that keeps each domain on
// a site of its own arrangement kind, relax locally to their angles.
std::vector<Vector3d> solve_staged_sorted(const std::vector<SphereDomain>& arrangement_sorted,
                                          const std::vector<SphereDomain>& sorted) {
    const int n = static_cast<int>(sorted.size());
    if (n <= 2) return solve_sorted(sorted);
    // The arrangement depends only on the arrangement pattern (a few kinds: bonds, lone pairs, single electron), so
    // its solve is kept per thread and shared by every model pattern with the same arrangement.
    thread_local std::unordered_map<std::string, std::vector<Vector3d>> arrangement_cache;
    std::string arrangement_key;
    append_key(arrangement_key, arrangement_sorted);
    auto found = arrangement_cache.find(arrangement_key);
    if (found == arrangement_cache.end())
        found = arrangement_cache.emplace(std::move(arrangement_key), solve_sorted(arrangement_sorted)).first;
    const std::vector<Vector3d>& sites = found->second;
    const std::vector<int> site_kind = kinds_of(arrangement_sorted);
    // Runs of equal arrangement kind [begin, end), and within each the domain kinds (ascending: sorted order).
    std::vector<std::pair<int, int>> runs;
    for (int i = 0; i < n; ++i)
        if (i == 0 || site_kind[static_cast<size_t>(i)] != site_kind[static_cast<size_t>(i - 1)]) runs.push_back({i, i + 1});
        else runs.back().second = i + 1;
    const std::vector<int> kind = kinds_of(sorted);
    std::vector<std::vector<int>> labels;
    for (auto [b, e] : runs) labels.emplace_back(kind.begin() + b, kind.begin() + e);

    Problem pb{sorted.data(), n};
    std::vector<Seed> seeds;
    std::vector<double> x(static_cast<size_t>(3 * n));
    // Symmetry of the sites, with a tolerance above the arrangement solve's convergence.
    const std::vector<SymmetryOperation> site_symmetry = symmetry_operations(sites, kSymmetryTolerance);
    std::vector<int> domain_at(static_cast<size_t>(n), -1);
    auto site_of = [&](const Vector3d& p) {
        for (int s = 0; s < n; ++s)
            if (sites[static_cast<size_t>(s)] == p) return s;
        return 0;
    };
    // Site symmetries that keep every site's arrangement kind: placements they map onto each other are the same
    // placement, so only the lexicographically smallest of each set is relaxed.
    std::vector<const SymmetryOperation*> kind_preserving;
    for (const SymmetryOperation& op : site_symmetry) {
        bool ok = true;
        for (int site = 0; site < n && ok; ++site)
            ok = site_kind[static_cast<size_t>(op.perm[static_cast<size_t>(site)])] == site_kind[static_cast<size_t>(site)];
        if (ok) kind_preserving.push_back(&op);
    }
    std::vector<int> full(static_cast<size_t>(n)), image(static_cast<size_t>(n));
    for (int count = 0; count < kMaxLabellings; ++count) {
        for (size_t r = 0; r < runs.size(); ++r)
            std::copy(labels[r].begin(), labels[r].end(), full.begin() + runs[r].first);
        bool canonical = true;
        for (const SymmetryOperation* op : kind_preserving) {
            for (int site = 0; site < n; ++site)
                image[static_cast<size_t>(op->perm[static_cast<size_t>(site)])] = full[static_cast<size_t>(site)];
            if (std::lexicographical_compare(image.begin(), image.end(), full.begin(), full.end())) {
                canonical = false;
                break;
            }
        }
        if (!canonical) {
            size_t r = runs.size();
            while (r > 0 && !std::next_permutation(labels[r - 1].begin(), labels[r - 1].end())) --r;
            if (r == 0) break;
            continue;
        }
        // Site s of run r takes the next unplaced domain of kind labels[r][s - begin] in that run.
        std::vector<Vector3d> pts(static_cast<size_t>(n));
        for (size_t r = 0; r < runs.size(); ++r) {
            auto [b, e] = runs[r];
            std::vector<bool> used(static_cast<size_t>(e - b), false);
            for (int site = b; site < e; ++site) {
                int want = labels[r][static_cast<size_t>(site - b)];
                for (int d = b; d < e; ++d)
                    if (!used[static_cast<size_t>(d - b)] && kind[static_cast<size_t>(d)] == want) {
                        used[static_cast<size_t>(d - b)] = true;
                        pts[static_cast<size_t>(d)] = sites[static_cast<size_t>(site)];
                        domain_at[static_cast<size_t>(site)] = d;
                        break;
                    }
            }
        }
        for (int i = 0; i < n; ++i)
            for (int c = 0; c < 3; ++c) x[static_cast<size_t>(3 * i + c)] = pts[static_cast<size_t>(i)][c];
        // The operations of the sites that map every domain onto a domain of its own kind: the relaxation keeps
        // them, so a symmetric pattern keeps its symmetric shape (IF7 stays a pentagonal bipyramid) instead of
        // sliding off a saddle point that symmetry would otherwise leave it on only by round-off.
        std::vector<SymmetryOperation> keep;
        for (const SymmetryOperation& op : site_symmetry) {
            std::vector<int> dperm(static_cast<size_t>(n));
            bool ok = true;
            for (int d = 0; d < n && ok; ++d) {
                // domain d sits at pts[d]; its image sits at the site op maps that site to.
                int site = site_of(pts[static_cast<size_t>(d)]);
                int target_site = op.perm[static_cast<size_t>(site)];
                int moved = domain_at[static_cast<size_t>(target_site)];
                ok = kind[static_cast<size_t>(moved)] == kind[static_cast<size_t>(d)];
                dperm[static_cast<size_t>(d)] = moved;
            }
            if (ok) keep.push_back({op.rotation, dperm});
        }
        std::vector<Vector3d> anchors = pts;
        seeds.push_back({std::move(pts), energy_and_gradient(pb, x.data(), nullptr), std::move(keep), std::move(anchors)});
        // Next combination: an odometer over the runs' permutations.
        size_t r = runs.size();
        while (r > 0 && !std::next_permutation(labels[r - 1].begin(), labels[r - 1].end())) --r;
        if (r == 0) break;
    }
    return best_of(sorted, std::move(seeds));
}

void check(std::span<const SphereDomain> domains) {
    if (domains.size() > 12) throw std::invalid_argument("sphere solver: at most 12 domains");
    for (const auto& d : domains)
        if (!(d.weight > 0) || !(d.radius > 0) || !(d.exponent > 0) || !std::isfinite(d.weight) ||
            !std::isfinite(d.radius) || !std::isfinite(d.exponent))
            throw std::invalid_argument("sphere solver: weights, radii and exponents must be positive and finite");
}

void append_key(std::string& key, const std::vector<SphereDomain>& sorted) {
    for (const SphereDomain& d : sorted) {
        const double v[3] = {d.weight, d.radius, d.exponent};
        key.append(reinterpret_cast<const char*>(v), sizeof(v));
    }
}

std::vector<Vector3d> solve(std::span<const SphereDomain> arrangement, std::span<const SphereDomain> domains,
                            bool use_cache) {
    check(domains);
    check(arrangement);
    if (!arrangement.empty() && arrangement.size() != domains.size())
        throw std::invalid_argument("sphere solver: one arrangement domain per domain");
    const std::vector<int> order = canonical_order(arrangement, domains);
    std::vector<SphereDomain> sorted, arrangement_sorted;
    sorted.reserve(domains.size());
    for (int i : order) {
        sorted.push_back(domains[static_cast<size_t>(i)]);
        if (!arrangement.empty()) arrangement_sorted.push_back(arrangement[static_cast<size_t>(i)]);
    }
    auto compute = [&] {
        return arrangement.empty() ? solve_sorted(sorted) : solve_staged_sorted(arrangement_sorted, sorted);
    };
    const std::vector<Vector3d>* solution = nullptr;
    std::vector<Vector3d> fresh;
    if (use_cache) {
        // Key: the sorted patterns as raw bytes (exact: equal inputs, equal keys).
        thread_local std::unordered_map<std::string, std::vector<Vector3d>> cache;
        std::string key;
        key.reserve(48 * sorted.size() + 1);
        append_key(key, sorted);
        key.push_back(arrangement.empty() ? 'g' : 's');
        append_key(key, arrangement_sorted);
        auto it = cache.find(key);
        if (it == cache.end()) it = cache.emplace(std::move(key), compute()).first;
        solution = &it->second;
    } else {
        fresh = compute();
        solution = &fresh;
    }
    std::vector<Vector3d> out(domains.size());
    for (size_t k = 0; k < order.size(); ++k) out[static_cast<size_t>(order[k])] = (*solution)[k];
    canonical_frame(out);
    for (Vector3d& p : out) p = ((p / kDirectionGrid).array().round() * kDirectionGrid).matrix().normalized();
    return out;
}

}  // namespace

double sphere_energy(std::span<const SphereDomain> domains, std::span<const Vector3d> directions) {
    std::vector<double> x;
    for (const auto& d : directions) x.insert(x.end(), {d.x(), d.y(), d.z()});
    Problem pb{domains.data(), static_cast<int>(domains.size())};
    return energy_and_gradient(pb, x.data(), nullptr);
}

std::vector<Vector3d> solve_sphere(std::span<const SphereDomain> domains) { return solve({}, domains, true); }

std::vector<Vector3d> solve_sphere_uncached(std::span<const SphereDomain> domains) { return solve({}, domains, false); }

std::vector<Vector3d> solve_sphere_staged(std::span<const SphereDomain> arrangement,
                                          std::span<const SphereDomain> domains) {
    return solve(arrangement, domains, true);
}

std::vector<Vector3d> solve_sphere_staged_uncached(std::span<const SphereDomain> arrangement,
                                                   std::span<const SphereDomain> domains) {
    return solve(arrangement, domains, false);
}

}  // namespace repel
