// Cleaning a checked structure: the whole-molecule refinement started from the given coordinates, keeping the
// structure's own stereochemistry (the handedness of every centre and the configuration of every double bond).
#pragma once

#include <string>

#include "check/audit.hpp"

namespace repel {

struct CleanResult {
    Structure structure;  // same atoms in the same order, refined positions
    bool refined = false;
    double rms_shift = 0;  // Angstrom, RMS movement of the atoms
    std::string summary;   // one line for the user
};

// Refines the audited structure (its perceived bonds, orders and charges). A structure with an overlap, neighbour,
// radical, charge or multiplicity finding cannot be cleaned by relaxation: it is returned unrefined (refined false)
// with the reason in the summary. A structure without findings is returned unchanged (refined true, shift 0).
CleanResult clean_structure(const Audit& audit);

}  // namespace repel
