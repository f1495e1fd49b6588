#include "input/structure_reader.hpp"

#include <algorithm>
#include <cctype>
#include <string>

#include "core/error.hpp"

namespace repel {

InputFormat input_format_from_path(std::string_view path) {
    const size_t slash = path.find_last_of("/\\");
    const std::string_view base = slash == std::string_view::npos ? path : path.substr(slash + 1);
    const size_t dot = base.find_last_of('.');
    std::string ext = dot == std::string_view::npos ? std::string() : std::string(base.substr(dot + 1));
    std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return std::tolower(c); });
    if (ext == "xyz") return InputFormat::xyz;
    if (ext == "pdb" || ext == "ent") return InputFormat::pdb;
    if (ext == "sdf" || ext == "mol" || ext == "sd") return InputFormat::sdf;
    fail("cannot tell the format of '" + std::string(path) + "' from its extension: expected .xyz, .pdb, .sdf or .mol");
}

std::vector<ReadStructure> read_structures(std::istream& in, InputFormat format) {
    switch (format) {
        case InputFormat::xyz: return read_xyz(in);
        case InputFormat::pdb: return read_pdb(in);
        case InputFormat::sdf: return read_sdf(in);
    }
    return {};
}

}  // namespace repel
