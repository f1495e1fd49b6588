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

// One structure as a file states it, with what the file said and did not say.
struct ReadStructure {
    Structure structure;        // atoms (z, formal charges, SDF radicals), bonds when stated, positions
    std::string title;          // the name, comment or title line; may be empty
    long line = 0;              // 1-based line where the record starts
    bool has_bonds = false;     // the file states connectivity (SDF bonds, PDB CONECT)
    bool has_orders = false;    // ... and bond orders (SDF; aromatic SDF bonds still need orders, see needs_orders)
    bool has_charge = false;    // the total charge was stated (XYZ charge=, SDF or PDB formal charges)
    bool has_multiplicity = false;  // XYZ multiplicity=
    std::vector<int> needs_orders;  // bonds stated aromatic (SDF type 4) whose orders are still to be assigned
    // SDF: each bond's drawn stereo, in V2000's numbers (1 wedge, 6 hash, 4 either, 0 none; V3000's CFG=1, 3, 2 are
    // given as 1, 6, 4), one per bond; the first atom of a bond is its narrow end. Empty for other formats.
    std::vector<int> bond_stereo;
};

// The readers. Each reads every record of the stream and throws InputError for malformed input: the message names
// the 1-based line ("line 7: ...") and what was expected, InputError::text() holds that line, InputError::column()
// the column where reading stopped when there is one. A stream with no record at all is an error too.
std::vector<ReadStructure> read_xyz(std::istream& in);
std::vector<ReadStructure> read_pdb(std::istream& in);
std::vector<ReadStructure> read_sdf(std::istream& in);

// The reader for a format.
std::vector<ReadStructure> read_structures(std::istream& in, InputFormat format);

}  // namespace repel
