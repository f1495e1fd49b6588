// SMILES reader: the OpenSMILES syntax into a molecular graph, aromatic rings kekulized, stereo marks kept.
#pragma once

#include <string_view>

#include "graph/molecule.hpp"

namespace repel {

// Reads one SMILES string (no name; the caller splits off a name). Implicit hydrogens are left as counts in
// Atom::hydrogens (call Molecule::make_hydrogens_explicit() to add them). Aromatic input is kekulized: every
// aromatic bond gets order 1 or 2 and keeps aromatic=true. Double-bond marks '/' '\' are turned into
// Bond::stereo with reference atoms; chirality marks are kept on the atoms with their neighbour order.
// Throws InputError naming the 1-based column where reading stopped and what was expected.
Molecule read_smiles(std::string_view text);

// Writes a molecular graph back as SMILES (for round trips and messages): not canonical, but reads back to the
// same graph (same atoms in the same order, same bonds, charges, isotopes, hydrogen counts).
std::string write_smiles(const Molecule& molecule);

}  // namespace repel
