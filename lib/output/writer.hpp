// Writers: one file format each behind one interface, chosen by name or by a file's extension.
#pragma once

#include <memory>
#include <string>
#include <string_view>

#include "graph/molecule.hpp"

namespace repel {

enum class Format { xyz, pdb, sdf, json };

// "xyz", "pdb", "sdf"/"mol", "json"; throws InputError for anything else.
Format format_from_name(std::string_view name);
// By extension: .xyz, .pdb, .sdf, .mol, .json; throws InputError for an unknown extension.
Format format_from_path(std::string_view path);

class StructureWriter {
public:
    virtual ~StructureWriter() = default;
    // One whole record as text. title: the name or the SMILES. Multi-record files are the concatenation of
    // records (XYZ frames, SDF records with $$$$, PDB models), except JSON, see begin()/end().
    virtual std::string record(const Structure& structure, const std::string& title) const = 0;
    // Text before the first record and after the last (JSON wraps records in an array); empty for most formats.
    virtual std::string begin() const { return {}; }
    virtual std::string separator() const { return {}; }
    virtual std::string end() const { return {}; }
};

std::unique_ptr<StructureWriter> make_writer(Format format);

}  // namespace repel
