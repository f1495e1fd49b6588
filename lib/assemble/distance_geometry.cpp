#include "assemble/distance_geometry.hpp"

#include "core/limits.hpp"

#include <Eigen/Eigenvalues>
#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <limits>

namespace repel {

using Eigen::Vector3d;

namespace {

// Weights of the volume terms against the dimensionless distance terms (chosen so that a chirality or planarity
// violation of 1 A^3 costs about as much as a 30% distance violation; common practice for such error functions).
constexpr double kVolumeWeight = 0.1;
constexpr double kPlanarWeight = 0.1;
// Weight of a torsion-range violation in radians squared (10 degrees cost about a 15% distance violation).
constexpr double kTorsionWeight = 1.0;
constexpr double kUnbounded = 1e6;
// Error-function value below which a point set is taken as it is.
constexpr double kGoodEnough = 1e-7;

// Deterministic pseudo-random numbers in [0, 1) (a 64-bit linear congruential generator, Knuth's MMIX constants).
struct Lcg {
    std::uint64_t state;
    double next() {
        state = state * 6364136223846793005ULL + 1442695040888963407ULL;
        return static_cast<double>(state >> 11) * (1.0 / 9007199254740992.0);
    }
};

struct Pair {
    int i, j;
    double lower2, upper2;
};

struct Problem {
    std::vector<Pair> pairs;
    const std::vector<VolumeCondition>* volumes;
    const std::vector<TorsionCondition>* torsions;
    const std::vector<AreaCondition>* areas;
    std::vector<std::array<double, 2>> torsion_cosines;  // cos(upper), cos(lower) of each torsion condition
};

// Dihedral angle i-j-k-l and, when grad is given, its gradient (Blondel and Karplus, J. Comput. Chem. 17 (1996)
// 1132), with the sign convention of place.hpp's dihedral().
// The vectors of torsion i-j-k-l (f = i-j, g = j-k, h = l-k; a = f x g, b = h x g) and the sine and cosine parts
// of its angle, phi = atan2(sine, cosine).
struct TorsionParts {
    Vector3d f, g, h, a, b;
    double gn, sine, cosine;
};

TorsionParts torsion_parts(const double* x, const TorsionCondition& t) {
    const Vector3d pi(x + 3 * t.i), pj(x + 3 * t.j), pk(x + 3 * t.k), pl(x + 3 * t.l);
    TorsionParts p;
    p.f = pi - pj;
    p.g = pj - pk;
    p.h = pl - pk;
    p.a = p.f.cross(p.g);
    p.b = p.h.cross(p.g);
    p.gn = p.g.norm();
    p.sine = p.b.cross(p.a).dot(p.g) / p.gn;
    p.cosine = p.a.dot(p.b);
    return p;
}

double torsion_of(const double* x, const TorsionCondition& t, Vector3d* grad) {
    const TorsionParts p = torsion_parts(x, t);
    const Vector3d &f = p.f, &g = p.g, &h = p.h, &a = p.a, &b = p.b;
    const double a2 = a.squaredNorm(), b2 = b.squaredNorm(), gn = p.gn;
    const double phi = std::atan2(p.sine, p.cosine);
    if (grad) {
        if (a2 < 1e-12 || b2 < 1e-12 || gn < 1e-9) {
            for (int q = 0; q < 4; ++q) grad[q].setZero();
        } else {
            const Vector3d gi = -gn / a2 * a, gl = gn / b2 * b;
            const double fg = f.dot(g) / (a2 * gn), hg = h.dot(g) / (b2 * gn);
            grad[0] = gi;
            grad[1] = -gi + fg * a - hg * b;
            grad[2] = -gl - fg * a + hg * b;
            grad[3] = gl;
        }
    }
    return phi;
}

// Whether torsion t lies inside its range [lower, upper] (of |phi|) with a margin, tested by the cosine of the angle
// (cos is decreasing on [0, pi]) without the arctangent; false when in doubt, and the caller then takes torsion_of.
// The margin keeps the answer the arctangent's wherever this says true.
bool torsion_surely_inside(const double* x, const TorsionCondition& t, const std::array<double, 2>& cosines) {
    constexpr double kMargin = 1e-9;
    const TorsionParts p = torsion_parts(x, t);
    if (!(p.gn > 1e-9)) return false;
    const double r2 = p.sine * p.sine + p.cosine * p.cosine;
    if (!(r2 > 1e-24)) return false;
    const double c = p.cosine / std::sqrt(r2);
    return c > cosines[0] + kMargin && c < cosines[1] - kMargin;
}

double volume_of(const double* x, const VolumeCondition& v, double* gb, double* gd, double* ge) {
    const Vector3d c(x + 3 * v.centre), b = Vector3d(x + 3 * v.b) - c, d = Vector3d(x + 3 * v.d) - c,
        e = Vector3d(x + 3 * v.e) - c;
    if (gb) {
        const Vector3d g1 = d.cross(e), g2 = e.cross(b), g3 = b.cross(d);
        for (int k = 0; k < 3; ++k) {
            gb[k] = g1[k];
            gd[k] = g2[k];
            ge[k] = g3[k];
        }
    }
    return b.dot(d.cross(e));
}

// The z component of (x[a]-x[c]) x (x[b]-x[c]).
double area_of(const double* x, const AreaCondition& q) {
    const double ax = x[3 * q.a] - x[3 * q.centre], ay = x[3 * q.a + 1] - x[3 * q.centre + 1];
    const double bx = x[3 * q.b] - x[3 * q.centre], by = x[3 * q.b + 1] - x[3 * q.centre + 1];
    return ax * by - ay * bx;
}

double error_function(const Problem& p, const double* x, double* g) {
    double e = 0;
    for (const AreaCondition& q : *p.areas) {
        const double area = area_of(x, q);
        if (q.sign * area >= q.minimum) continue;
        const double t = q.sign * area - q.minimum;
        e += kVolumeWeight * t * t;
        if (g) {
            const double f = 2 * kVolumeWeight * t * q.sign;
            const double ax = x[3 * q.a] - x[3 * q.centre], ay = x[3 * q.a + 1] - x[3 * q.centre + 1];
            const double bx = x[3 * q.b] - x[3 * q.centre], by = x[3 * q.b + 1] - x[3 * q.centre + 1];
            g[3 * q.a] += f * by;
            g[3 * q.a + 1] -= f * bx;
            g[3 * q.b] -= f * ay;
            g[3 * q.b + 1] += f * ax;
            g[3 * q.centre] -= f * (by - ay);
            g[3 * q.centre + 1] -= f * (ax - bx);
        }
    }
    for (const Pair& q : p.pairs) {
        const double dx = x[3 * q.i] - x[3 * q.j], dy = x[3 * q.i + 1] - x[3 * q.j + 1], dz = x[3 * q.i + 2] - x[3 * q.j + 2];
        const double d2 = dx * dx + dy * dy + dz * dz;
        double de_dd2 = 0;
        if (d2 > q.upper2) {
            const double t = d2 / q.upper2 - 1;
            e += t * t;
            de_dd2 = 2 * t / q.upper2;
        } else if (d2 < q.lower2) {
            const double s = q.lower2 + d2;
            const double t = 2 * q.lower2 / s - 1;
            e += t * t;
            de_dd2 = 2 * t * (-2 * q.lower2 / (s * s));
        } else {
            continue;
        }
        if (g) {
            const double f = 2 * de_dd2;
            g[3 * q.i] += f * dx;
            g[3 * q.i + 1] += f * dy;
            g[3 * q.i + 2] += f * dz;
            g[3 * q.j] -= f * dx;
            g[3 * q.j + 1] -= f * dy;
            g[3 * q.j + 2] -= f * dz;
        }
    }
    for (size_t ti = 0; ti < p.torsions->size(); ++ti) {
        const TorsionCondition& t = (*p.torsions)[ti];
        if (torsion_surely_inside(x, t, p.torsion_cosines[ti])) continue;
        const double phi = torsion_of(x, t, nullptr);
        const double a = std::abs(phi);
        double excess = 0;
        if (a < t.lower) excess = a - t.lower;
        else if (a > t.upper) excess = a - t.upper;
        else continue;
        e += kTorsionWeight * excess * excess;
        if (g) {
            // The gradient only for a torsion outside its range (most are inside once the embedding settles).
            Vector3d grad[4];
            torsion_of(x, t, grad);
            const double factor = 2 * kTorsionWeight * excess * (phi < 0 ? -1.0 : 1.0);
            const int idx[4] = {t.i, t.j, t.k, t.l};
            for (int q = 0; q < 4; ++q)
                for (int c = 0; c < 3; ++c) g[3 * idx[q] + c] += factor * grad[q][c];
        }
    }
    for (const VolumeCondition& v : *p.volumes) {
        double gb[3], gd[3], ge[3];
        const double vol = volume_of(x, v, gb, gd, ge);
        double factor = 0;
        if (v.sign == 0) {
            e += kPlanarWeight * vol * vol;
            factor = 2 * kPlanarWeight * vol;
        } else if (v.sign * vol < v.minimum) {
            const double t = v.sign * vol - v.minimum;
            e += kVolumeWeight * t * t;
            factor = 2 * kVolumeWeight * t * v.sign;
        } else {
            continue;
        }
        if (g)
            for (int k = 0; k < 3; ++k) {
                g[3 * v.b + k] += factor * gb[k];
                g[3 * v.d + k] += factor * gd[k];
                g[3 * v.e + k] += factor * ge[k];
                g[3 * v.centre + k] -= factor * (gb[k] + gd[k] + ge[k]);
            }
    }
    return e;
}


Problem make_problem(const DistanceBounds& b, const std::vector<VolumeCondition>& volumes,
                     const std::vector<TorsionCondition>& torsions, const std::vector<AreaCondition>& areas) {
    Problem p;
    p.areas = &areas;
    p.volumes = &volumes;
    p.torsions = &torsions;
    p.torsion_cosines.reserve(torsions.size());
    for (const TorsionCondition& t : torsions) p.torsion_cosines.push_back({std::cos(t.upper), std::cos(t.lower)});
    const int n = b.size();
    for (int i = 0; i < n; ++i)
        for (int j = i + 1; j < n; ++j) {
            const double lo = b.lower(i, j), hi = b.upper(i, j);
            p.pairs.push_back({i, j, lo * lo, hi >= kUnbounded ? std::numeric_limits<double>::infinity() : hi * hi});
        }
    return p;
}

// A small L-BFGS (Liu and Nocedal, Math. Program. 45 (1989) 503) with a backtracking line search (Armijo
// condition): the problems here have a few dozen variables, where a general library's bookkeeping costs more than
// the function. Returns the final error; x is updated in place.
double minimise_lbfgs(const Problem& p, Eigen::VectorXd& x, int max_evaluations, bool planar) {
    constexpr int kMemory = 6;
    constexpr double kArmijo = 1e-4;
    constexpr double kStall = 1e-4;  // stop when an iteration gains less than this fraction of the error
    const Eigen::Index n = x.size();
    Eigen::VectorXd g(n), g_new(n), x_new(n), d(n);
    auto eval = [&](const Eigen::VectorXd& at, Eigen::VectorXd& grad) {
        grad.setZero();
        const double value = error_function(p, at.data(), grad.data());
        if (planar)
            for (Eigen::Index i = 2; i < grad.size(); i += 3) grad(i) = 0;  // stay in the plane z = 0
        return value;
    };
    double f = eval(x, g);
    int evaluations = 1;
    std::vector<Eigen::VectorXd> s_hist, y_hist;
    std::vector<double> rho;
    std::vector<double> alpha(kMemory);
    while (f > kGoodEnough && evaluations < max_evaluations) {
        check_deadline("embedding a ring system");
        // Two-loop recursion for d = -H g.
        d = -g;
        const int m = static_cast<int>(s_hist.size());
        for (int i = m - 1; i >= 0; --i) {
            alpha[static_cast<size_t>(i)] = rho[static_cast<size_t>(i)] * s_hist[static_cast<size_t>(i)].dot(d);
            d -= alpha[static_cast<size_t>(i)] * y_hist[static_cast<size_t>(i)];
        }
        if (m > 0) d *= s_hist.back().dot(y_hist.back()) / y_hist.back().squaredNorm();
        for (int i = 0; i < m; ++i) {
            const double beta = rho[static_cast<size_t>(i)] * y_hist[static_cast<size_t>(i)].dot(d);
            d += (alpha[static_cast<size_t>(i)] - beta) * s_hist[static_cast<size_t>(i)];
        }
        double slope = g.dot(d);
        if (slope >= 0) {  // not a descent direction: restart from steepest descent
            s_hist.clear();
            y_hist.clear();
            rho.clear();
            d = -g;
            slope = -g.squaredNorm();
        }
        // First step of a fresh start: move the largest coordinate by at most 0.2 A.
        double step = m == 0 ? std::min(1.0, 0.2 / std::max(1e-12, d.cwiseAbs().maxCoeff())) : 1.0;
        double f_new = 0;
        bool accepted = false;
        for (int tries = 0; tries < 30 && evaluations < max_evaluations; ++tries) {
            x_new = x + step * d;
            f_new = eval(x_new, g_new);
            ++evaluations;
            if (f_new <= f + kArmijo * step * slope) {
                accepted = true;
                break;
            }
            step *= 0.5;
        }
        if (!accepted) break;
        const Eigen::VectorXd sv = x_new - x, yv = g_new - g;
        const double sy = sv.dot(yv);
        const double previous = f;
        x.swap(x_new);
        g.swap(g_new);
        f = f_new;
        if (sy > 1e-14) {
            if (static_cast<int>(s_hist.size()) == kMemory) {
                s_hist.erase(s_hist.begin());
                y_hist.erase(y_hist.begin());
                rho.erase(rho.begin());
            }
            s_hist.push_back(sv);
            y_hist.push_back(yv);
            rho.push_back(1.0 / sy);
        }
        // Stop when progress stalls: a strained system keeps a residual.
        if (previous - f < kStall * f) break;
    }
    return f;
}

EmbedResult evaluate(const DistanceBounds& b, const std::vector<VolumeCondition>& volumes,
                     const std::vector<TorsionCondition>& torsions, const std::vector<AreaCondition>& areas,
                     std::vector<Vector3d> xyz, double error) {
    EmbedResult r;
    r.error = error;
    const int n = b.size();
    for (int i = 0; i < n; ++i)
        for (int j = i + 1; j < n; ++j) {
            const double d = (xyz[static_cast<size_t>(i)] - xyz[static_cast<size_t>(j)]).norm();
            r.worst_violation = std::max({r.worst_violation, d - b.upper(i, j), b.lower(i, j) - d});
        }
    std::vector<double> flat(3 * xyz.size());
    for (size_t i = 0; i < xyz.size(); ++i)
        for (int k = 0; k < 3; ++k) flat[3 * i + static_cast<size_t>(k)] = xyz[i][k];
    for (const VolumeCondition& v : volumes)
        if (v.sign != 0 && v.sign * volume_of(flat.data(), v, nullptr, nullptr, nullptr) <= 0) r.volumes_met = false;
    for (const AreaCondition& q : areas)
        if (q.sign * area_of(flat.data(), q) <= 0) r.volumes_met = false;
    for (const TorsionCondition& t : torsions) {
        const double a = std::abs(torsion_of(flat.data(), t, nullptr));
        r.worst_torsion = std::max({r.worst_torsion, t.lower - a, a - t.upper});
    }
    r.coordinates = std::move(xyz);
    return r;
}

// The points in their best plane, as z = 0.
std::vector<Vector3d> flatten(const std::vector<Vector3d>& xyz) {
    Vector3d c = Vector3d::Zero();
    for (const auto& p : xyz) c += p;
    c /= static_cast<double>(xyz.size());
    Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
    for (const auto& p : xyz) cov += (p - c) * (p - c).transpose();
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> es(cov);
    std::vector<Vector3d> out;
    for (const auto& p : xyz) out.emplace_back((p - c).dot(es.eigenvectors().col(2)), (p - c).dot(es.eigenvectors().col(1)), 0.0);
    return out;
}

// Mirrors points in the plane (x -> -x) when that meets more of the signed-area conditions.
void mirror_for_areas(const std::vector<AreaCondition>& areas, std::vector<Vector3d>& xyz) {
    if (areas.empty()) return;
    std::vector<double> flat(3 * xyz.size());
    for (size_t i = 0; i < xyz.size(); ++i)
        for (int k = 0; k < 3; ++k) flat[3 * i + static_cast<size_t>(k)] = xyz[i][k];
    int met = 0, wrong = 0;
    for (const AreaCondition& q : areas) (area_of(flat.data(), q) * q.sign > 0 ? met : wrong)++;
    if (wrong > met)
        for (auto& p : xyz) p.x() = -p.x();
}

// Metric-matrix embedding of one set of trial distances.
std::vector<Vector3d> metric_embedding(const Eigen::MatrixXd& d2, int dimensions) {
    const int n = static_cast<int>(d2.rows());
    const double total = d2.sum() / (2.0 * n * n);
    Eigen::VectorXd d0(n);
    for (int i = 0; i < n; ++i) d0(i) = d2.row(i).sum() / n - total;
    Eigen::MatrixXd g(n, n);
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) g(i, j) = 0.5 * (d0(i) + d0(j) - d2(i, j));
    Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es(g);
    std::vector<Vector3d> xyz(static_cast<size_t>(n), Vector3d::Zero());
    for (int k = 0; k < std::min(dimensions, n); ++k) {
        const int col = n - 1 - k;
        const double lambda = std::sqrt(std::max(es.eigenvalues()(col), 1e-6));
        for (int i = 0; i < n; ++i) xyz[static_cast<size_t>(i)][k] = lambda * es.eigenvectors()(i, col);
    }
    return xyz;
}

}  // namespace

DistanceBounds::DistanceBounds(int n) : lower(Eigen::MatrixXd::Zero(n, n)), upper(Eigen::MatrixXd::Constant(n, n, kUnbounded)) {
    for (int i = 0; i < n; ++i) upper(i, i) = 0;
}

void DistanceBounds::narrow(int i, int j, double lo, double hi) {
    double l = std::max(lower(i, j), lo), u = std::min(upper(i, j), hi);
    if (l > u) l = u = 0.5 * (l + u);
    lower(i, j) = lower(j, i) = l;
    upper(i, j) = upper(j, i) = u;
}

bool DistanceBounds::smooth() {
    const int n = size();
    bool consistent = true;
    for (int k = 0; k < n; ++k) {
        check_deadline("smoothing the distance bounds of a ring system");
        for (int i = 0; i < n; ++i) {
            if (i == k) continue;
            const double uik = upper(i, k), lik = lower(i, k);
            for (int j = i + 1; j < n; ++j) {
                if (j == k) continue;
                const double ukj = upper(k, j);
                if (upper(i, j) > uik + ukj) upper(i, j) = upper(j, i) = uik + ukj;
                const double lo = std::max(lik - ukj, lower(k, j) - uik);
                if (lower(i, j) < lo) lower(i, j) = lower(j, i) = lo;
                if (lower(i, j) > upper(i, j)) {
                    consistent = false;
                    lower(i, j) = lower(j, i) = upper(i, j);
                }
            }
        }
    }
    return consistent;
}

double distance_geometry_error(const DistanceBounds& bounds, const std::vector<VolumeCondition>& volumes,
                               const std::vector<TorsionCondition>& torsions, const double* x, double* g,
                               const std::vector<AreaCondition>& areas) {
    const Problem p = make_problem(bounds, volumes, torsions, areas);
    if (g) std::fill(g, g + 3 * bounds.size(), 0.0);
    return error_function(p, x, g);
}

EmbedResult refine_points(const DistanceBounds& bounds, const std::vector<VolumeCondition>& volumes,
                          const std::vector<TorsionCondition>& torsions, std::vector<Vector3d> coordinates,
                          int max_evaluations, bool planar, const std::vector<AreaCondition>& areas) {
    const Problem p = make_problem(bounds, volumes, torsions, areas);
    const size_t dim = 3 * coordinates.size();
    Eigen::VectorXd x(static_cast<Eigen::Index>(dim));
    for (size_t i = 0; i < coordinates.size(); ++i)
        for (int k = 0; k < 3; ++k) x(static_cast<Eigen::Index>(3 * i) + k) = coordinates[i][k];
    const double e = minimise_lbfgs(p, x, max_evaluations, planar);
    for (size_t i = 0; i < coordinates.size(); ++i)
        coordinates[i] = x.segment<3>(static_cast<Eigen::Index>(3 * i));
    return evaluate(bounds, volumes, torsions, areas, std::move(coordinates), e);
}

EmbedResult embed_points(DistanceBounds bounds, const std::vector<VolumeCondition>& volumes,
                         const std::vector<TorsionCondition>& torsions, int attempts, double tolerance,
                         const std::vector<Vector3d>& start, bool planar, const std::vector<AreaCondition>& areas,
                         std::uint64_t seed) {
    bounds.smooth();
    const int n = bounds.size();
    constexpr int kEvaluations = 300;
    constexpr double kAcceptedTorsion = 5 * M_PI / 180;  // a torsion range missed by up to 5 degrees is accepted
    constexpr double kFairViolation = 0.3;               // Angstrom: what a strained fused ring may leave
    EmbedResult best;
    bool have = false;
    auto better = [](const EmbedResult& a, const EmbedResult& b) {
        if (a.volumes_met != b.volumes_met) return a.volumes_met;
        return a.error < b.error;
    };
    for (int attempt = -1; attempt < attempts; ++attempt) {
        std::vector<Vector3d> xyz;
        if (attempt < 0) {
            if (start.empty()) continue;
            xyz = start;
            if (planar) xyz = flatten(xyz);
            mirror_for_areas(areas, xyz);
        } else {
            Lcg rng{(0x9E3779B97F4A7C15ULL + seed * 0x94D049BB133111EBULL) ^
                    static_cast<std::uint64_t>(attempt + 1) * 0xBF58476D1CE4E5B9ULL};
            Eigen::MatrixXd d2 = Eigen::MatrixXd::Zero(n, n);
            for (int i = 0; i < n; ++i)
                for (int j = i + 1; j < n; ++j) {
                    const double lo = bounds.lower(i, j), hi = std::min(bounds.upper(i, j), lo + 20.0);
                    const double d = lo + rng.next() * (hi - lo);
                    d2(i, j) = d2(j, i) = d * d;
                }
            xyz = metric_embedding(d2, planar ? 2 : 3);
            // Take the mirror image when it meets more of the chirality conditions.
            std::vector<double> flat(3 * xyz.size());
            for (size_t i = 0; i < xyz.size(); ++i)
                for (int k = 0; k < 3; ++k) flat[3 * i + static_cast<size_t>(k)] = xyz[i][k];
            int met = 0, wrong = 0;
            for (const VolumeCondition& v : volumes) {
                if (v.sign == 0) continue;
                const double vol = volume_of(flat.data(), v, nullptr, nullptr, nullptr);
                (vol * v.sign > 0 ? met : wrong)++;
            }
            if (wrong > met)
                for (auto& p : xyz) p.x() = -p.x();
            mirror_for_areas(areas, xyz);
        }
        EmbedResult r = refine_points(bounds, volumes, torsions, std::move(xyz), kEvaluations, planar, areas);
        if (!have || better(r, best)) {
            best = std::move(r);
            have = true;
        }
        if (best.volumes_met && best.worst_violation <= tolerance && best.worst_torsion <= kAcceptedTorsion) break;
        // A start that meets the signs and nearly the bounds is better than what random embeddings usually find.
        if (attempt < 0 && best.volumes_met && best.worst_violation <= kFairViolation &&
            best.worst_torsion <= 2 * kAcceptedTorsion)
            break;
    }
    return best;
}

}  // namespace repel
