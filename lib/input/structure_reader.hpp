// Readers of structures with coordinates (XYZ, PDB, SDF/MOL), one file format each behind one interface, chosen by
// the file's extension. What the checker reads: atoms, positions, and whatever bonds and charges the file states.
#pragma once

#include <istream>
#include <string>
#include <string_view>
#include <vector>

#include "graph/molecule.hpp"

namespace repel {

enum class InputFormat { xyz, pdb, sdf };

// By extension (any case): .xyz, .pdb (.ent), .sdf, .mol (.sd). Throws InputError listing them for anything else.
InputFormat input_format_from_path(std::string_view path);

// The readers' record is the installed StructureRecord (graph/molecule.hpp): one definition for both.
using ReadStructure = StructureRecord;

// The readers. Each reads every record of the stream and throws InputError for malformed input: the message names
// the 1-based line ("line 7: ...") and what was expected, InputError::text() holds that line, InputError::column()
// the column where reading stopped when there is one. A stream with no record at all is an error too.
std::vector<ReadStructure> read_xyz(std::istream& in);
std::vector<ReadStructure> read_pdb(std::istream& in);
std::vector<ReadStructure> read_sdf(std::istream& in);

// The reader for a format.
std::vector<ReadStructure> read_structures(std::istream& in, InputFormat format);

}  // namespace repel
