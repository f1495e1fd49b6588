// Writers: one file format each behind one interface, chosen by name or by a file's extension.
#pragma once

#include <memory>
#include <string>
#include <string_view>

#include "graph/molecule.hpp"

namespace repel {

enum class Format { xyz, pdb, sdf, json };

// "xyz", "pdb", "sdf"/"mol", "json" (any case); throws InputError, listing the accepted names, for anything else.
Format format_from_name(std::string_view name);
// By extension (any case): .xyz, .pdb, .sdf, .mol, .json; throws InputError, listing them, for an unknown or missing
// extension. A .mol file is written as an SD record (a molfile, its data items and $$$$).
Format format_from_path(std::string_view path);

// How a caller writes a file (the same for every format):
//  - one molecule (a SMILES on the command line): record() alone. For JSON that is one object, a whole document.
//  - a batch (a file of molecules): begin(), then the records with separator() between two of them, then end(),
//    even when the batch built one structure or none. For JSON that is one array of objects ("[]" when empty), so a
//    batch's output has the same shape whatever its size; for XYZ, PDB and SDF begin/separator/end are empty and the
//    file is the concatenation of records: XYZ frames, PDB entries each closed by END, SD records each closed by $$$$.
// record() either returns the whole record or throws (std::runtime_error, with the format, the atom and the reason:
// a non-finite coordinate, a value that does not fit a fixed-width field, a bond type the format cannot state), so
// nothing is ever written half. The formats and their choices are described at the top of xyz.cpp, pdb.cpp, sdf.cpp
// and json.cpp.
class StructureWriter {
public:
    virtual ~StructureWriter() = default;
    // One whole record as text, ending with a newline. title: the name or the SMILES.
    virtual std::string record(const Structure& structure, const std::string& title) const = 0;
    // Text before the first record, between two records, and after the last record of a batch (JSON: "[", ",",
    // "]"); empty for the other formats.
    virtual std::string begin() const { return {}; }
    virtual std::string separator() const { return {}; }
    virtual std::string end() const { return {}; }
};

std::unique_ptr<StructureWriter> make_writer(Format format);

}  // namespace repel
