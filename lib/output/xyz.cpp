// XYZ writer: the atom count, one comment line of key=value pairs, then one `El x y z` line per atom (Angstrom).
//
// The comment line follows the extended-XYZ convention (key=value pairs separated by spaces; a value in double quotes
// may hold spaces, with \" and \\ escaping a quote and a backslash; common practice), so that readers of plain XYZ
// keep it as a comment and readers of extended XYZ get name, charge, multiplicity and warnings as typed values
// (and a conformer's rank, count, energies in kcal/mol and RMSD to the first in Angstrom).
// No Properties key is written: its default (species, then 3 position columns) is what the atom lines hold.
#include <fmt/format.h>

#include <iterator>

#include "output/formats.hpp"

namespace repel::output {

namespace {

// A value for the comment line: always double-quoted, with backslash and quote escaped and control characters
// (which would end the line) made spaces.
std::string quoted(std::string_view text) {
    std::string out = "\"";
    for (char c : one_line(text, false)) {
        if (c == '"' || c == '\\') out += '\\';
        out += c;
    }
    out += '"';
    return out;
}

std::string comment_line(const Structure& structure, const std::string& title) {
    std::string line;
    if (!title.empty()) line += "name=" + quoted(title) + " ";
    line += fmt::format("charge={} multiplicity={}", structure.charge, structure.multiplicity);
    if (const auto& c = structure.conformer)
        line += fmt::format(" conformer={} conformers={} energy={:.4f} relative_energy={:.4f} rmsd_to_first={:.4f}",
                            c->rank, c->count, c->energy, c->relative_energy, c->rmsd_to_first);
    std::string warnings;
    for (const std::string& w : structure.warnings) {
        if (w.empty()) continue;
        if (!warnings.empty()) warnings += "; ";
        warnings += w;
    }
    if (!warnings.empty()) line += " warnings=" + quoted(warnings);
    return line;
}

}  // namespace

std::string XyzWriter::record(const Structure& structure, const std::string& title) const {
    require_writable(structure, "XYZ");
    const int n = structure.molecule.atom_count();
    std::string out = fmt::format("{}\n{}\n", n, comment_line(structure, title));
    for (int i = 0; i < n; ++i) {
        const Eigen::Vector3d& p = structure.positions[static_cast<size_t>(i)];
        const std::string_view symbol = symbol_of(structure, i);
        out += symbol;
        if (symbol.size() < 2) out.push_back(' ');
        for (int k = 0; k < 3; ++k) {
            out.push_back(' ');
            append_fixed(out, p[k], 6, 12);
        }
        out.push_back('\n');
    }
    return out;
}

}  // namespace repel::output
