// A molecule to build from an SD record: connectivity, bond orders, formal charges and radicals as the file states
// them, hydrogens the file leaves out added at the normal valences, and the stereochemistry the file's coordinates
// show turned into the molecule's stereo marks (tetrahedral centres from 3D coordinates, double bonds from 2D or 3D),
// so that the builder keeps it. The file's coordinates themselves are not kept.
#pragma once

#include <string>

#include "graph/molecule.hpp"

namespace repel {

// text: one SD record (header to `$$$$`); first_line: its 1-based line in the file, so that messages name the file's
// line. Throws InputError for a malformed record and for aromatic bonds that cannot be given orders.
Molecule molecule_from_sd_record(const std::string& text, long first_line);

}  // namespace repel
