// A limited-memory BFGS minimiser (Liu and Nocedal 1989: the two-loop recursion of Nocedal 1980) with a line search
// for the strong Wolfe conditions (Nocedal and Wright, Numerical Optimization, 2nd ed., algorithms 3.5 and 3.6, cubic
// interpolation in the zoom), for the refinement's energy.
//
// Why not NLopt's L-BFGS here (NLopt stays the minimiser of the sphere solver): measured with callgrind on the drug
// set (benchmarks/README.md), NLopt's L-BFGS spent about 52,000 instructions of bookkeeping per energy evaluation
// for these ~150-variable problems (its Fortran-derived vector routines test a bound flag per element, since the
// wrapper always runs the box-constrained variant), more than the energy itself (about 46,000). This one does the
// same iteration with plain (Eigen-vectorised) vector loops, stops on the RMS gradient (which NLopt's L-BFGS has no
// criterion for), and caps the step in Angstrom so that a trial step never throws atoms across the molecule.
#pragma once

#include <cstddef>
#include <functional>
#include <span>

namespace repel::refine {

struct LbfgsOptions {
    int memory = 8;                  // correction pairs kept
    double gradient_tolerance = 1e-3;  // stop at the first point whose RMS gradient is below this
    int max_evaluations = 2000;
    // Longest move of any single coordinate in one trial step (Angstrom); the first step also starts at
    // first_step at most.
    double max_step = 1.0;
    double first_step = 0.1;
};

enum class LbfgsStatus {
    converged,        // RMS gradient below the tolerance
    budget,           // max_evaluations used up
    non_finite,       // the energy or the gradient became NaN or infinite
    no_progress,      // the line search could not lower the energy even along the steepest descent
};

struct LbfgsResult {
    LbfgsStatus status = LbfgsStatus::no_progress;
    int evaluations = 0;
    double energy = 0;        // at the returned x
    double rms_gradient = 0;  // at the returned x
};

// The energy at x; writes the whole gradient into g (g has x.size() entries and need not be cleared first).
using EnergyFunction = std::function<double(std::span<const double> x, std::span<double> g)>;

// Minimises from x; on return x holds the converged point, or else the lowest point evaluated. Deterministic.
LbfgsResult minimise_lbfgs(const EnergyFunction& energy, std::span<double> x, const LbfgsOptions& options = {});

}  // namespace repel::refine
