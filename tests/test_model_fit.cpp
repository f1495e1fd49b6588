// The domain model's constants against the gas-phase structures they were fitted to, and against species they were
// not fitted to. REPEL_REFIT=1 re-runs the least-squares fit and prints the constants and residuals.
#include <gtest/gtest.h>
#include <nlopt.h>

#include <cstdio>
#include <cstdlib>
#include <stdexcept>
#include <string>

#include "model_table.hpp"

#include <algorithm>
#include <cmath>

using namespace repel;
using namespace repel::model_table;

namespace {

// The tolerances every species of a set is judged at: the largest residual of the set rounded up (training F2CO
// +4.6, IF5 +4.4; validation Cl2CO +5.3, SO2Cl2 O-S-O -4.2). Every residual is printed and listed in README.md.
constexpr double kTrainingTolerance = 5.0;
constexpr double kValidationTolerance = 5.5;

// The fitted constants, as a vector: the order of the parameters the fit moves. The bond exponent is chosen, not
// fitted: along it the sum of squares has a flat valley that falls slowly towards the hard-sphere limit (135 deg^2 at
// exponent 7, 129 at 8.4, the other constants following), and steeper bonds only trade the lone pairs' weight against
// their exponent without changing any predicted angle by more than a degree or two.
std::vector<double> to_params(const DomainModel& m) {
    return {m.lone_pair_exponent, m.lone_pair_weight, m.lone_pair_radius, m.single_electron_weight, m.single_electron_radius,
            m.multiple_bond_weight, m.heavy_multiple_bond_weight, m.electronegativity_slope, m.period_slope,
            m.ligand_period_slope, m.heavy_centre_ligand_slope};
}
DomainModel from_params(const std::vector<double>& p) {
    return {domain_model().bond_exponent, p[0], p[1], p[2], p[3], p[4], p[5], p[6], p[7], p[8], p[9], p[10]};
}
const char* const kParamNames[] = {"lone_pair_exponent", "lone_pair_weight", "lone_pair_radius", "single_electron_weight",
                                   "single_electron_radius", "multiple_bond_weight", "heavy_multiple_bond_weight",
                                   "electronegativity_slope", "period_slope", "ligand_period_slope",
                                   "heavy_centre_ligand_slope"};

double sum_of_squares(const DomainModel& m) {
    double s = 0;
    for (const Case& c : training()) {
        double r = predict(m, c) - c.degrees;
        s += r * r;
    }
    return s;
}

double objective(unsigned n, const double* x, double*, void*) {
    return sum_of_squares(from_params(std::vector<double>(x, x + n)));
}

void print_table(const DomainModel& m) {
    std::printf("| set | species | measured | model | residual |\n|---|---|---|---|---|\n");
    for (const Case& c : training())
        std::printf("| training | %s | %.1f | %.1f | %+.1f |\n", c.name, c.degrees, predict(m, c), predict(m, c) - c.degrees);
    for (const Case& c : validation())
        std::printf("| validation | %s | %.1f | %.1f | %+.1f |\n", c.name, c.degrees, predict(m, c), predict(m, c) - c.degrees);
}

// Sum of squares after a local least-squares fit (subplex, run to convergence) started from x; x is left at the
// optimum found.
double fit_from(std::vector<double>& x, int max_evaluations) {
    const std::vector<double> lower = {0.5, 0.02, 0.1, 0.02, 0.02, 0.0, 0.0, 0.0, 0.0, -2.0, -2.0};
    const std::vector<double> upper = {8.0, 6.0, 1.0, 3.0, 1.0, 6.0, 8.0, 3.0, 3.0, 3.0, 3.0};
    for (size_t k = 0; k < x.size(); ++k) x[k] = std::clamp(x[k], lower[k], upper[k]);
    nlopt_opt opt = nlopt_create(NLOPT_LN_SBPLX, static_cast<unsigned>(x.size()));
    nlopt_set_lower_bounds(opt, lower.data());
    nlopt_set_upper_bounds(opt, upper.data());
    nlopt_set_min_objective(opt, objective, nullptr);
    nlopt_set_xtol_rel(opt, 1e-5);
    nlopt_set_ftol_rel(opt, 1e-7);
    nlopt_set_maxeval(opt, max_evaluations);
    double value = 0;
    nlopt_optimize(opt, x.data(), &value);
    nlopt_destroy(opt);
    return value;
}

double mean_absolute_validation_residual(const DomainModel& m) {
    double s = 0;
    for (const Case& c : validation()) s += std::abs(predict(m, c) - c.degrees);
    return s / static_cast<double>(validation().size());
}

}  // namespace

// The shipped constants sit at the least-squares optimum: a local fit run to convergence from them, and fits from
// starts displaced by -30% and +30% in every constant at once (and one constant at a time), find no set with a
// sum of squares lower by more than 0.5%. REPEL_REFIT=1 runs the same fits longer and prints the best set found.
TEST(ModelFit, ShippedConstantsAreTheLeastSquaresOptimum) {
    const DomainModel& shipped = domain_model();
    const std::vector<double> x0 = to_params(shipped);
    const double before = sum_of_squares(shipped);
    const bool refit = std::getenv("REPEL_REFIT") != nullptr;
    const int budget = refit ? 20000 : 4000;
    std::vector<std::vector<double>> starts = {x0};
    for (double f : {0.7, 1.3}) {
        std::vector<double> x = x0;
        for (double& v : x) v *= f;
        starts.push_back(x);
    }
    if (refit)
        for (size_t k = 0; k < x0.size(); ++k)
            for (double f : {0.5, 2.0}) {
                std::vector<double> x = x0;
                x[k] = x[k] == 0 ? 0.1 * f : x[k] * f;
                starts.push_back(x);
            }
    double best = before;
    std::vector<double> best_x = x0;
    for (std::vector<double> x : starts) {
        const double value = fit_from(x, budget);
        if (value < best) {
            best = value;
            best_x = x;
        }
    }
    if (refit) {
        std::printf("refit: sum of squares %.4f -> %.4f\nconstants:", before, best);
        for (size_t k = 0; k < best_x.size(); ++k) std::printf(" %s %.4f", kParamNames[k], best_x[k]);
        std::printf("\n");
        print_table(from_params(best_x));
        std::printf("validation MAE %.2f\n", mean_absolute_validation_residual(from_params(best_x)));
    }
    print_table(shipped);
    EXPECT_GE(best, before * 0.995) << "the shipped constants are not the fitted optimum";
}

// One tolerance for every training species (the largest residuals are printed by the test above and listed in
// README.md).
TEST(ModelFit, TrainingResidualsAreSmall) {
    const DomainModel& m = domain_model();
    for (const Case& c : training()) EXPECT_NEAR(predict(m, c), c.degrees, kTrainingTolerance) << c.name << " (" << c.source << ")";
}

// Species the model was not fitted to: every one within one tolerance, none skipped, and a mean absolute residual of
// at most 2 degrees (issue 13).
TEST(ModelFit, ValidationSpeciesAreWithinOneTolerance) {
    const DomainModel& m = domain_model();
    for (const Case& c : validation()) EXPECT_NEAR(predict(m, c), c.degrees, kValidationTolerance) << c.name << " (" << c.source << ")";
    EXPECT_LE(mean_absolute_validation_residual(m), 2.0);
}

// The ordering facts of VSEPR that must hold whatever the constants: H2O < NH3 < CH4 (109.47, ideal), and the
// fluorides more closed than the hydrides of the same centre (NF3 102.2 < NH3 106.7; OF2 103.1 < H2O 104.5).
TEST(ModelFit, AngleOrderingOfHydridesAndFluorides) {
    const DomainModel& m = domain_model();
    auto find = [](const char* n) {
        for (const Case& c : training())
            if (std::string(c.name) == n) return c;
        throw std::runtime_error(n);
    };
    EXPECT_LT(predict(m, find("H2O")), predict(m, find("NH3")));
    EXPECT_LT(predict(m, find("NH3")), 109.47);
    EXPECT_LT(predict(m, find("NF3")), predict(m, find("NH3")));
    EXPECT_LT(predict(m, find("OF2")), predict(m, find("H2O")));
    EXPECT_LT(predict(m, find("H2CO")), 120.0);  // formaldehyde H-C-H below 120 (CCCBDB 116.5, from memory)
}
