#include "refine/lbfgs.hpp"

#include <Eigen/Core>

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include "core/limits.hpp"

namespace repel::refine {

namespace {

// Sufficient decrease and curvature constants of the strong Wolfe conditions: the values Nocedal and Wright give for
// quasi-Newton methods (c1 = 1e-4, c2 = 0.9).
constexpr double kSufficientDecrease = 1e-4;
constexpr double kCurvature = 0.9;
// Trial points one line search may evaluate before it gives up (then the memory is dropped and the steepest descent
// tried); a search that needs more than a few is rare (common practice).
constexpr int kMaxLineEvaluations = 20;
// A correction pair enters the memory only with s.y > this * |s| |y| (positive curvature, not round-off).
constexpr double kMinCurvature = 1e-10;

// a.b over n entries. Eigen's vectorised reduction: a fixed order of partial sums, so deterministic.
double dot(const double* a, const double* b, size_t n) {
    const auto len = static_cast<Eigen::Index>(n);
    return Eigen::Map<const Eigen::VectorXd>(a, len).dot(Eigen::Map<const Eigen::VectorXd>(b, len));
}

double dot(const std::vector<double>& a, const std::vector<double>& b) { return dot(a.data(), b.data(), a.size()); }

// y += c x over n entries.
void add_scaled(double* y, double c, const double* x, size_t n) {
    const auto len = static_cast<Eigen::Index>(n);
    Eigen::Map<Eigen::VectorXd>(y, len) += c * Eigen::Map<const Eigen::VectorXd>(x, len);
}

double max_abs(const std::vector<double>& a) {
    double m = 0;
    for (double v : a) m = std::max(m, std::abs(v));
    return m;
}

double rms(const std::vector<double>& g) { return g.empty() ? 0.0 : std::sqrt(dot(g, g) / static_cast<double>(g.size())); }

// The minimiser of the cubic through (a, fa, da) and (b, fb, db), kept at least a tenth of the interval from either
// end (else the midpoint).
double cubic_step(double a, double fa, double da, double b, double fb, double db) {
    const double lo = std::min(a, b), hi = std::max(a, b), margin = 0.1 * (hi - lo);
    const double d1 = da + db - 3.0 * (fa - fb) / (a - b);
    const double disc = d1 * d1 - da * db;
    double t = 0.5 * (lo + hi);
    if (disc >= 0) {
        const double d2 = std::copysign(std::sqrt(disc), b - a);
        const double denominator = db - da + 2.0 * d2;
        if (denominator != 0) {
            const double c = b - (b - a) * (db + d2 - d1) / denominator;
            if (std::isfinite(c) && c >= lo + margin && c <= hi - margin) t = c;
        }
    }
    return t;
}

class Minimiser {
public:
    Minimiser(const EnergyFunction& energy, size_t n, const LbfgsOptions& options)
        : energy_(energy), options_(options), n_(n), memory_(static_cast<size_t>(std::max(1, options.memory))),
          x_(n), g_(n), d_(n), xt_(n), gt_(n), xl_(n), gl_(n), s_(memory_ * n), y_(memory_ * n), rho_(memory_),
          a_(memory_) {}

    LbfgsResult run(std::span<double> x) {
        std::copy(x.begin(), x.end(), x_.begin());
        f_ = evaluate(x_, g_);
        while (!stopped()) {
            const bool steepest = pairs_ == 0;
            direction();
            double slope = dot(g_, d_);
            if (!(slope < 0)) {  // not a descent direction (round-off in the memory): start over
                pairs_ = 0;
                direction();
                slope = dot(g_, d_);
            }
            const double longest = max_abs(d_);
            if (!(slope < 0) || !(longest > 0)) break;  // zero gradient without convergence: nothing to follow
            const double alpha_max = options_.max_step / longest;
            const double alpha = pairs_ == 0 ? std::min(1.0, options_.first_step / longest) : 1.0;
            if (!line_search(std::min(alpha, alpha_max), alpha_max, slope)) {
                if (stopped()) break;
                if (steepest || pairs_ == 0) break;  // even the steepest descent made no progress
                pairs_ = 0;                          // drop the memory and try the steepest descent
                continue;
            }
            if (stopped()) break;
            remember();
        }
        LbfgsResult result;
        result.evaluations = evaluations_;
        result.status = converged_    ? LbfgsStatus::converged
                        : non_finite_ ? LbfgsStatus::non_finite
                        : evaluations_ >= options_.max_evaluations ? LbfgsStatus::budget
                                                                    : LbfgsStatus::no_progress;
        result.energy = best_f_;
        result.rms_gradient = best_rms_;
        if (!best_x_.empty()) std::copy(best_x_.begin(), best_x_.end(), x.begin());
        return result;
    }

private:
    // The molecule's time limit (core/limits.hpp) also stops the run; refine_structure then throws the LimitError.
    bool stopped() const {
        return converged_ || non_finite_ || evaluations_ >= options_.max_evaluations || deadline_passed();
    }

    double evaluate(const std::vector<double>& x, std::vector<double>& g) {
        const double f = energy_(x, g);
        ++evaluations_;
        const double r = rms(g);
        if (!std::isfinite(f) || !std::isfinite(r)) {
            non_finite_ = true;
            return f;
        }
        if (r < options_.gradient_tolerance || f < best_f_) {
            best_f_ = f;
            best_rms_ = r;
            best_x_ = x;
            converged_ = r < options_.gradient_tolerance;
        }
        return f;
    }

    // d = -H g by the two-loop recursion over the stored pairs (newest first, then oldest first), with the initial
    // matrix scaled by s.y / y.y of the newest pair; the steepest descent when no pair is stored.
    void direction() {
        d_ = g_;
        const size_t k = pairs_;
        for (size_t i = 0; i < k; ++i) {
            const size_t slot = (newest_ + memory_ - i) % memory_;
            const double* s = &s_[slot * n_];
            const double* y = &y_[slot * n_];
            a_[slot] = rho_[slot] * dot(s, d_.data(), n_);
            add_scaled(d_.data(), -a_[slot], y, n_);
        }
        if (k > 0)
            for (double& v : d_) v *= gamma_;
        for (size_t i = k; i-- > 0;) {
            const size_t slot = (newest_ + memory_ - i) % memory_;
            const double* s = &s_[slot * n_];
            const double* y = &y_[slot * n_];
            add_scaled(d_.data(), a_[slot] - rho_[slot] * dot(y, d_.data(), n_), s, n_);
        }
        for (double& v : d_) v = -v;
    }

    // x_, g_ move to the accepted trial point (xt_, gt_); the step and the change of gradient become the newest pair.
    void remember() {
        const size_t slot = pairs_ == 0 ? 0 : (newest_ + 1) % memory_;
        double* s = &s_[slot * n_];
        double* y = &y_[slot * n_];
        for (size_t j = 0; j < n_; ++j) {
            s[j] = xt_[j] - x_[j];
            y[j] = gt_[j] - g_[j];
        }
        const double sy = dot(s, y, n_), ss = dot(s, s, n_), yy = dot(y, y, n_);
        x_.swap(xt_);
        g_.swap(gt_);
        f_ = ft_;
        if (!(sy > kMinCurvature * std::sqrt(ss * yy))) return;  // no positive curvature: keep the old pairs
        rho_[slot] = 1.0 / sy;
        gamma_ = sy / yy;  // the scale of the initial matrix, s.y / y.y of the newest pair
        newest_ = slot;
        pairs_ = std::min(pairs_ + 1, memory_);
    }

    void trial(double alpha) {
        for (size_t j = 0; j < n_; ++j) xt_[j] = x_[j] + alpha * d_[j];
        ft_ = evaluate(xt_, gt_);
    }

    // Finds a step along d_ meeting the strong Wolfe conditions (or, capped at alpha_max, sufficient decrease) and
    // leaves that point in xt_, gt_, ft_. False when none was found within kMaxLineEvaluations or the run stopped.
    bool line_search(double alpha, double alpha_max, double slope) {
        double lo = 0, f_lo = f_, d_lo = slope;  // the best point of the bracket so far
        bool lo_stored = false;                  // whether xl_, gl_ hold the point at lo (lo > 0)
        double hi = 0, f_hi = 0, d_hi = 0;
        bool bracketed = false;
        for (int trials = 0; trials < kMaxLineEvaluations; ++trials) {
            if (bracketed) alpha = cubic_step(lo, f_lo, d_lo, hi, f_hi, d_hi);
            trial(alpha);
            if (stopped()) return false;
            const double d = dot(gt_, d_);
            if (ft_ > f_ + kSufficientDecrease * alpha * slope || ft_ >= f_lo) {
                hi = alpha, f_hi = ft_, d_hi = d;  // too far: the step lies below alpha
                bracketed = true;
            } else {
                if (std::abs(d) <= -kCurvature * slope) return true;
                if (bracketed && d * (hi - lo) >= 0) {  // the minimum lies between lo and alpha
                    hi = lo, f_hi = f_lo, d_hi = d_lo;
                } else if (!bracketed && d >= 0) {  // passed the minimum: it lies between lo and alpha
                    hi = lo, f_hi = f_lo, d_hi = d_lo;
                    bracketed = true;
                }
                lo = alpha, f_lo = ft_, d_lo = d;
                xl_ = xt_;
                gl_ = gt_;
                lo_stored = true;
                if (!bracketed) {
                    if (alpha >= alpha_max) break;  // capped: take the longest step allowed
                    alpha = std::min(4.0 * alpha, alpha_max);
                }
            }
            if (bracketed && std::abs(hi - lo) <= 1e-12 * std::max(1.0, std::abs(lo))) break;
        }
        if (!lo_stored) return false;
        // No point met the curvature condition in time: settle for the lowest point with sufficient decrease.
        xt_.swap(xl_);
        gt_.swap(gl_);
        ft_ = f_lo;
        return true;
    }

    const EnergyFunction& energy_;
    const LbfgsOptions& options_;
    size_t n_, memory_;
    std::vector<double> x_, g_, d_, xt_, gt_, xl_, gl_;
    double f_ = 0, ft_ = 0;
    std::vector<double> s_, y_, rho_, a_;  // pairs: slot i holds s at s_[i n, (i+1) n), likewise y
    size_t pairs_ = 0, newest_ = 0;
    double gamma_ = 1;
    int evaluations_ = 0;
    bool converged_ = false, non_finite_ = false;
    double best_f_ = std::numeric_limits<double>::infinity();
    double best_rms_ = std::numeric_limits<double>::infinity();
    std::vector<double> best_x_;
};

}  // namespace

LbfgsResult minimise_lbfgs(const EnergyFunction& energy, std::span<double> x, const LbfgsOptions& options) {
    Minimiser m(energy, x.size(), options);
    return m.run(x);
}

}  // namespace repel::refine
