// Formula reader: a single-centre species written as a formula (XeF4, SF6, ClO4-, SO4 2-, NH4+) into a Lewis
// structure with the least formal charge.
#pragma once

#include <string_view>

#include "graph/molecule.hpp"

namespace repel {

// Reads a formula of a species with one central atom and terminal ligands. The centre is the least electronegative
// non-hydrogen atom that occurs once; hydrogen is never central. Bond orders and formal charges are chosen to
// minimise the formal charges (octet expansion only from period 3 on). The result has the centre as atom 1 and the
// ligands in the order written, all explicit (no implicit hydrogens). Throws InputError for text that is not such a
// formula, and for an ambiguous one (two candidate centres, a chain), saying to give SMILES instead.
Molecule read_formula(std::string_view text);

}  // namespace repel
