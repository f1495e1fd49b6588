#include "refine/refine.hpp"

#include <nlopt.h>

#include "core/limits.hpp"

#include <Eigen/Geometry>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <memory>
#include <span>
#include <stdexcept>
#include <string>
#include <type_traits>

#include "refine/constants.hpp"
#include "refine/contacts.hpp"
#include "refine/targets.hpp"
#include "refine/terms.hpp"

namespace repel {

namespace {

using refine::ContactModel;
using refine::EnergyTerms;

// The energy as NLopt sees it, with the bookkeeping for stopping on the gradient: NLopt's L-BFGS has no gradient
// criterion of its own, so the objective stops it (nlopt_force_stop) at the first point whose RMS gradient is below
// the tolerance, and remembers that point and the lowest one seen.
struct Objective {
    const EnergyTerms& terms;
    ContactModel& contacts;
    double tolerance;
    nlopt_opt optimiser = nullptr;
    std::vector<double> scratch;  // gradient buffer when NLopt asks for none
    int evaluations = 0;
    bool converged = false;
    bool non_finite = false;
    double best_energy = std::numeric_limits<double>::infinity();
    double best_rms = std::numeric_limits<double>::infinity();
    std::vector<double> best_x;

    double evaluate(std::span<const double> x, double* g) {
        contacts.update(x);
        std::fill(g, g + x.size(), 0.0);
        return refine::bonded_energy(terms, x.data(), g) + contacts.energy(x.data(), g);
    }
};

double rms(const double* g, size_t n) {
    double s = 0;
    for (size_t i = 0; i < n; ++i) s += g[i] * g[i];
    return n ? std::sqrt(s / static_cast<double>(n)) : 0.0;
}

double objective(unsigned n, const double* x, double* grad, void* data) {
    auto& o = *static_cast<Objective*>(data);
    if (!grad) {
        o.scratch.resize(n);
        grad = o.scratch.data();
    }
    const double e = o.evaluate({x, n}, grad);
    ++o.evaluations;
    const double r = rms(grad, n);
    if (!std::isfinite(e) || !std::isfinite(r)) {
        // Cannot happen with finite input (every term is guarded); stop rather than let NaN spread.
        o.non_finite = true;
        nlopt_force_stop(o.optimiser);
        return std::numeric_limits<double>::max();
    }
    if (o.converged) return e;  // NLopt may evaluate again before it notices the stop
    if (deadline_passed()) nlopt_force_stop(o.optimiser);  // the molecule's time is up: refine_structure throws
    if (e < o.best_energy || (r < o.tolerance && !o.converged)) {
        o.best_energy = e;
        o.best_rms = r;
        o.best_x.assign(x, x + n);
    }
    if (r < o.tolerance) {
        o.converged = true;
        nlopt_force_stop(o.optimiser);
    }
    return e;
}

struct OptimiserDeleter {
    void operator()(nlopt_opt o) const { nlopt_destroy(o); }
};

// The stereochemistry asked for, checked on the result, so that a target the minimiser could not reach (a double
// bond built exactly on the wrong side sits on a saddle of its term) is reported instead of left silent.
std::string stereo_violations(const std::vector<ChiralTarget>& chiral,
                              const std::vector<DoubleBondTarget>& double_bonds,
                              const std::vector<Eigen::Vector3d>& p) {
    std::string out;
    for (const ChiralTarget& c : chiral) {
        const Eigen::Vector3d o = p[static_cast<size_t>(c.centre)];
        const double v = (p[static_cast<size_t>(c.n1)] - o)
                             .dot((p[static_cast<size_t>(c.n2)] - o).cross(p[static_cast<size_t>(c.n3)] - o));
        if (!(c.sign * v > 0)) out += "; the stereocentre at atom " + std::to_string(c.centre + 1) + " is not as asked";
    }
    for (const DoubleBondTarget& d : double_bonds) {
        const Eigen::Vector3d b2 = p[static_cast<size_t>(d.c)] - p[static_cast<size_t>(d.b)];
        const Eigen::Vector3d m = (p[static_cast<size_t>(d.b)] - p[static_cast<size_t>(d.a)]).cross(b2);
        const Eigen::Vector3d n = b2.cross(p[static_cast<size_t>(d.d)] - p[static_cast<size_t>(d.c)]);
        const double cosine = m.dot(n);
        if (!(d.cis ? cosine > 0 : cosine < 0))
            out += "; the double bond " + std::to_string(d.b + 1) + "=" + std::to_string(d.c + 1) + " is not " +
                   (d.cis ? "cis" : "trans") + " as asked";
    }
    return out;
}

void report_stereo(const std::vector<ChiralTarget>& chiral, const std::vector<DoubleBondTarget>& double_bonds,
                   const std::vector<Eigen::Vector3d>& positions, RefineResult& result) {
    const std::string stereo = stereo_violations(chiral, double_bonds, positions);
    if (stereo.empty()) return;
    result.converged = false;
    result.message += stereo;
}

std::string format_double(double v) {
    char buffer[32];
    std::snprintf(buffer, sizeof buffer, "%.3g", v);
    return buffer;
}

}  // namespace

RefineResult refine_structure(const Molecule& molecule, const MoleculeDomains& domains,
                              const std::vector<ChiralTarget>& chiral,
                              const std::vector<DoubleBondTarget>& double_bonds,
                              std::vector<Eigen::Vector3d>& positions, const RefineOptions& options) {
    const int n = molecule.atom_count();
    if (static_cast<int>(positions.size()) != n)
        throw std::invalid_argument("refine_structure: " + std::to_string(positions.size()) + " positions for " +
                                    std::to_string(n) + " atoms");
    for (int i = 0; i < n; ++i)
        if (!positions[static_cast<size_t>(i)].allFinite())
            throw std::invalid_argument("refine_structure: the position of atom " + std::to_string(i + 1) +
                                        " is not a finite number");

    const EnergyTerms terms = refine::build_terms(molecule, domains, chiral, double_bonds);
    ContactModel contacts(molecule);
    const size_t dim = 3 * static_cast<size_t>(n);
    std::vector<double> x(dim);
    for (int i = 0; i < n; ++i)
        for (int a = 0; a < 3; ++a)
            x[3 * static_cast<size_t>(i) + static_cast<size_t>(a)] = positions[static_cast<size_t>(i)][a];

    Objective o{terms,
                contacts,
                options.gradient_tolerance,
                nullptr,
                {},
                0,
                false,
                false,
                std::numeric_limits<double>::infinity(),
                std::numeric_limits<double>::infinity(),
                {}};
    RefineResult result;
    std::vector<double> g(dim);
    result.energy_before = o.evaluate(x, g.data());
    double r = rms(g.data(), dim);
    if (n == 0 || r < options.gradient_tolerance) {
        result.converged = true;
        result.energy_after = result.energy_before;
        result.message = "already converged: RMS gradient " + format_double(r);
        report_stereo(chiral, double_bonds, positions, result);
        return result;
    }

    std::unique_ptr<std::remove_pointer_t<nlopt_opt>, OptimiserDeleter> optimiser(
        nlopt_create(NLOPT_LD_LBFGS, static_cast<unsigned>(dim)));
    if (!optimiser) throw std::runtime_error("refine_structure: could not create the L-BFGS optimiser");
    o.optimiser = optimiser.get();
    nlopt_set_min_objective(o.optimiser, objective, &o);
    nlopt_set_vector_storage(o.optimiser, refine::kLbfgsMemory);
    o.best_energy = result.energy_before;
    o.best_rms = r;
    o.best_x = x;

    const int budget = std::max(1, options.max_iterations);
    nlopt_result status = NLOPT_SUCCESS;
    for (int run = 0; run <= refine::kMaxRestarts; ++run) {
        nlopt_set_maxeval(o.optimiser, budget - o.evaluations);
        const double start = o.best_energy;
        x = o.best_x;
        double f = 0;
        status = nlopt_optimize(o.optimiser, x.data(), &f);
        check_deadline("refining");  // after NLopt returns: no exception is thrown through its C frames
        if (o.converged || o.non_finite || o.evaluations >= budget) break;
        // L-BFGS gave up early (a line search that round-off defeated): start afresh from the best point, as long
        // as the last run still made progress.
        if (!(o.best_energy < start)) break;
    }

    x = o.best_x;
    for (int i = 0; i < n; ++i)
        positions[static_cast<size_t>(i)] = {x[3 * static_cast<size_t>(i)], x[3 * static_cast<size_t>(i) + 1],
                                             x[3 * static_cast<size_t>(i) + 2]};
    result.converged = o.converged;
    result.iterations = o.evaluations;
    result.energy_after = o.best_energy;
    if (o.converged) {
        result.message = "converged: RMS gradient " + format_double(o.best_rms) + " after " +
                         std::to_string(o.evaluations) + " energy evaluations";
    } else if (o.non_finite) {
        result.message = "refinement stopped: the energy became non-finite; kept the best structure found";
    } else {
        result.message =
            "RMS gradient " + format_double(o.best_rms) + " still above the tolerance " +
            format_double(options.gradient_tolerance) + " after " + std::to_string(o.evaluations) +
            " energy evaluations" +
            (o.evaluations >= budget ? "" : " (L-BFGS stopped early, status " + std::to_string(status) + ")");
    }
    report_stereo(chiral, double_bonds, positions, result);
    return result;
}

}  // namespace repel
