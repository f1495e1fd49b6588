// Whole-molecule building: domain frames assembled into Cartesian coordinates, then refined.
#pragma once

#include "core/limits.hpp"
#include "graph/molecule.hpp"

namespace repel {

struct BuildOptions {
    bool refine = true;  // run the whole-molecule refinement after assembly
    // RMS-gradient stop of that refinement. A starting structure needs less than refinement's own default (1e-3):
    // at 3e-3 bonds stay within about 1.5e-3 A and angles within about 0.3 degree of their targets, the G2 and xtb
    // checks give the same figures, and the drug set builds 1.6 times faster (benchmarks/README.md).
    double refine_tolerance = 3e-3;
    // Wall-clock seconds one molecule may take (core/limits.hpp); past it the build fails with a LimitError
    // ("gave up after ..."). 0 or less: no limit. The limit never changes a structure that is built within it.
    double time_limit = kDefaultTimeLimit;
};

// 3D coordinates for a molecule whose hydrogens are explicit (Molecule::make_hydrogens_explicit()).
// Atom order is kept. Charge and multiplicity come from the domain analysis. Throws InputError for a molecule that
// cannot be built (a valence that cannot be satisfied, contradictory stereo), UnsupportedError for what is not
// supported yet. Known weaknesses of the result are listed in Structure::warnings.
Structure build_structure(const Molecule& molecule, const BuildOptions& options = {});

}  // namespace repel
