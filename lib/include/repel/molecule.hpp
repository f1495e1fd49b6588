// In the source tree, <repel/molecule.hpp> is lib/graph/molecule.hpp (installed under this name): Molecule, Atom,
// Bond, Structure.
#pragma once
#include "../../graph/molecule.hpp"
