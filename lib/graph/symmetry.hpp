// Atoms that the graph cannot tell apart.
#pragma once

#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// Per atom a class number that equal atoms share: element, charge and neighbours refined over the graph
// (Morgan-like, Morgan J. Chem. Doc. 5 (1965) 107), to a fixed point.
std::vector<int> symmetry_classes(const Molecule& molecule);

}  // namespace repel
