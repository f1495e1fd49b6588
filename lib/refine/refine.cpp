#include "refine/refine.hpp"

#include <Eigen/Geometry>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <span>
#include <stdexcept>
#include <string>

#include "core/limits.hpp"
#include "refine/constants.hpp"
#include "refine/contacts.hpp"
#include "refine/lbfgs.hpp"
#include "refine/targets.hpp"
#include "refine/terms.hpp"

namespace repel {

namespace {

using refine::ContactModel;

// The whole energy at x, with the contact pair list brought up to date first; writes the whole gradient into g.
double evaluate(const refine::EnergyTerms& terms, ContactModel& contacts, std::span<const double> x, double* g) {
    contacts.update(x);
    std::fill(g, g + x.size(), 0.0);
    return refine::bonded_energy(terms, x.data(), g) + contacts.energy(x.data(), g);
}

double rms(const double* g, size_t n) {
    double s = 0;
    for (size_t i = 0; i < n; ++i) s += g[i] * g[i];
    return n ? std::sqrt(s / static_cast<double>(n)) : 0.0;
}

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

// The bonds and angles of the final positions beyond the limits of the options, worst first (bonds, then angles).
// One pass over the bond and angle terms: linear in the atoms.
std::vector<GeometryOutlier> find_outliers(const refine::EnergyTerms& terms, const std::vector<Eigen::Vector3d>& x,
                                           const RefineOptions& options) {
    std::vector<GeometryOutlier> bonds, angles;
    if (options.bond_outlier > 0)
        for (const refine::DistanceTerm& t : terms.bonds) {
            const double d = (x[static_cast<size_t>(t.i)] - x[static_cast<size_t>(t.j)]).norm();
            if (std::abs(d - t.target) > options.bond_outlier) bonds.push_back({t.i, t.j, -1, d, t.target});
        }
    if (options.angle_outlier > 0) {
        const double limit = std::cos(options.angle_outlier * std::numbers::pi / 180);
        for (const refine::AngleTerm& t : terms.angles) {
            const Eigen::Vector3d u = x[static_cast<size_t>(t.i)] - x[static_cast<size_t>(t.centre)];
            const Eigen::Vector3d v = x[static_cast<size_t>(t.j)] - x[static_cast<size_t>(t.centre)];
            const double norms = u.norm() * v.norm();
            if (!(norms > 0)) continue;
            const double c = std::clamp(u.dot(v) / norms, -1.0, 1.0);
            // cos(theta - theta0) = cos theta cos theta0 + sin theta sin theta0, sin theta >= 0: no acos unless out.
            const double s = std::sqrt(std::max(0.0, 1 - c * c));
            if (c * t.cos0 + s * t.sin0 >= limit) continue;
            constexpr double kDegree = 180 / std::numbers::pi;
            angles.push_back({t.i, t.centre, t.j, std::acos(c) * kDegree, std::atan2(t.sin0, t.cos0) * kDegree});
        }
    }
    auto worse = [](const GeometryOutlier& p, const GeometryOutlier& q) {
        return std::abs(p.value - p.target) > std::abs(q.value - q.target);
    };
    std::stable_sort(bonds.begin(), bonds.end(), worse);
    std::stable_sort(angles.begin(), angles.end(), worse);
    bonds.insert(bonds.end(), angles.begin(), angles.end());
    return bonds;
}

}  // namespace

struct Refiner::State {
    refine::EnergyTerms terms;
    ContactModel contacts;
    std::vector<ChiralTarget> chiral;
    std::vector<DoubleBondTarget> double_bonds;
    int atoms = 0;
    State(const Molecule& molecule, const MoleculeDomains& domains, const std::vector<ChiralTarget>& c,
          const std::vector<DoubleBondTarget>& d, const RefineOptions& options)
        : terms(refine::build_terms(molecule, domains, c, d, options.ring_graph, &options.restraints, &options)),
          contacts(molecule), chiral(c), double_bonds(d), atoms(molecule.atom_count()) {}
};

Refiner::Refiner(const Molecule& molecule, const MoleculeDomains& domains, const std::vector<ChiralTarget>& chiral,
                 const std::vector<DoubleBondTarget>& double_bonds, const RefineOptions& options)
    : s_(std::make_unique<State>(molecule, domains, chiral, double_bonds, options)) {}

Refiner::~Refiner() = default;

RefineResult refine_structure(const Molecule& molecule, const MoleculeDomains& domains,
                              const std::vector<ChiralTarget>& chiral,
                              const std::vector<DoubleBondTarget>& double_bonds,
                              std::vector<Eigen::Vector3d>& positions, const RefineOptions& options) {
    if (static_cast<int>(positions.size()) != molecule.atom_count())
        throw std::invalid_argument("refine_structure: " + std::to_string(positions.size()) + " positions for " +
                                    std::to_string(molecule.atom_count()) + " atoms");
    Refiner refiner(molecule, domains, chiral, double_bonds, options);
    return refiner.run(positions, options);
}

RefineResult Refiner::run(std::vector<Eigen::Vector3d>& positions, const RefineOptions& options) {
    const int n = s_->atoms;
    if (static_cast<int>(positions.size()) != n)
        throw std::invalid_argument("refine_structure: " + std::to_string(positions.size()) + " positions for " +
                                    std::to_string(n) + " atoms");
    for (int i = 0; i < n; ++i)
        if (!positions[static_cast<size_t>(i)].allFinite())
            throw std::invalid_argument("refine_structure: the position of atom " + std::to_string(i + 1) +
                                        " is not a finite number");
    const refine::EnergyTerms& terms = s_->terms;
    ContactModel& contacts = s_->contacts;
    const std::vector<ChiralTarget>& chiral = s_->chiral;
    const std::vector<DoubleBondTarget>& double_bonds = s_->double_bonds;
    const size_t dim = 3 * static_cast<size_t>(n);
    std::vector<double> x(dim);
    for (int i = 0; i < n; ++i)
        for (int a = 0; a < 3; ++a)
            x[3 * static_cast<size_t>(i) + static_cast<size_t>(a)] = positions[static_cast<size_t>(i)][a];

    RefineResult result;
    std::vector<double> g(dim);
    result.energy_before = evaluate(terms, contacts, x, g.data());
    const double r = rms(g.data(), dim);
    if (n == 0 || r < options.gradient_tolerance) {
        result.converged = true;
        result.energy_after = result.energy_before;
        result.message = "already converged: RMS gradient " + format_double(r);
        report_stereo(chiral, double_bonds, positions, result);
        result.outliers = find_outliers(terms, positions, options);
        return result;
    }

    refine::LbfgsOptions minimiser;
    minimiser.memory = refine::kLbfgsMemory;
    minimiser.gradient_tolerance = options.gradient_tolerance;
    minimiser.max_evaluations = std::max(1, options.max_iterations);
    minimiser.max_step = refine::kMaxStep;
    minimiser.first_step = refine::kFirstStep;
    const refine::LbfgsResult run = refine::minimise_lbfgs(
        [&](std::span<const double> at, std::span<double> gradient) {
            return evaluate(terms, contacts, at, gradient.data());
        },
        x, minimiser);
    check_deadline("refining");  // the minimiser stops early once the molecule's time is up

    for (int i = 0; i < n; ++i)
        positions[static_cast<size_t>(i)] = {x[3 * static_cast<size_t>(i)], x[3 * static_cast<size_t>(i) + 1],
                                             x[3 * static_cast<size_t>(i) + 2]};
    result.converged = run.status == refine::LbfgsStatus::converged;
    result.iterations = run.evaluations;
    result.energy_after = std::min(run.energy, result.energy_before);
    switch (run.status) {
        case refine::LbfgsStatus::converged:
            result.message = "converged: RMS gradient " + format_double(run.rms_gradient) + " after " +
                             std::to_string(run.evaluations) + " energy evaluations";
            break;
        case refine::LbfgsStatus::non_finite:
            result.message = "refinement stopped: the energy became non-finite; kept the best structure found";
            break;
        case refine::LbfgsStatus::budget:
        case refine::LbfgsStatus::no_progress:
            result.message = "RMS gradient " + format_double(run.rms_gradient) + " still above the tolerance " +
                             format_double(options.gradient_tolerance) + " after " +
                             std::to_string(run.evaluations) + " energy evaluations" +
                             (run.status == refine::LbfgsStatus::budget
                                  ? ""
                                  : " (the line search could not lower the energy further)");
            break;
    }
    report_stereo(chiral, double_bonds, positions, result);
    result.outliers = find_outliers(terms, positions, options);
    return result;
}

}  // namespace repel
