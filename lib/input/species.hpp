// One species from the command line or a record: SMILES, or a formula of a single-centre species.
#pragma once

#include <string_view>

#include "graph/molecule.hpp"

namespace repel {

enum class Notation { automatic, smiles, formula };

// Reads a species. automatic: SMILES first (OpenSMILES), then a formula (XeF4, SO4 2-); when neither reads, the
// error is the one of the notation the text looks like. Throws InputError with the column.
Molecule read_species(std::string_view text, Notation notation = Notation::automatic);

}  // namespace repel
