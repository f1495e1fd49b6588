// A molecule to build from an SD record: connectivity, bond orders, formal charges and radicals as the file states
// them, hydrogens the file leaves out added at the normal valences, aromatic rings of a Kekule structure marked
// aromatic, and the stereochemistry the file shows turned into the molecule's stereo marks so that the builder keeps
// it: tetrahedral centres from 3D coordinates or from the wedge and hash bonds of a flat V2000 drawing, double bonds
// from 2D or 3D coordinates. The file's coordinates themselves are not kept.
#pragma once

#include <string>

#include "graph/molecule.hpp"

namespace repel {

// text: one SD record (header to `$$$$`); first_line: its 1-based line in the file, so that messages name the file's
// line. Throws InputError for a malformed record and for aromatic bonds that cannot be given orders.
Molecule molecule_from_sd_record(const std::string& text, long first_line);

// Marks the rings of 5 to 7 atoms (and pairs of them fused) whose pi electrons count 4n + 2 in the molecule's Kekule
// orders aromatic (atoms and bonds), as a SMILES in lower case would have them; the orders are kept. Also used by
// `repel check` on perceived orders, so that a ring is judged and cleaned as aromatic (bonds of order 1.5).
void perceive_aromatic_rings(Molecule& molecule);

}  // namespace repel
