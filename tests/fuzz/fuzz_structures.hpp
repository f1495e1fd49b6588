// What the three structure-file fuzz targets share. Properties: only InputError escapes the reader (with a line
// number in its message); every structure read has as many finite positions as atoms and bonds between existing
// atoms; the structures written back by the writer of the same format read again to the same elements and positions
// within the precision of the format's coordinate fields (or the writer refuses them as documented); a small
// structure audits (`repel check`) without an undocumented exception.
#pragma once

#include <sstream>

#include "check/audit.hpp"
#include "fuzz_common.hpp"
#include "input/structure_reader.hpp"
#include "output/writer.hpp"

namespace repel::fuzz {

constexpr int kAuditAtomLimit = 40;  // keeps the executions per second up; larger files are in the unit tests

inline std::vector<ReadStructure> read_all(std::string_view text, InputFormat format) {
    std::istringstream in{std::string(text)};
    return read_structures(in, format);
}

inline void check_structures(const std::uint8_t* data, size_t size, InputFormat in_format, Format out_format,
                             double tolerance) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    std::vector<ReadStructure> read;
    if (guarded("read", text, [&] { read = read_all(text, in_format); }) != Outcome::ok) return;
    if (read.empty()) finding("the reader returned no structure and no error", text);
    for (const ReadStructure& r : read) {
        const Structure& s = r.structure;
        if (s.positions.size() != static_cast<size_t>(s.molecule.atom_count()))
            finding("positions and atoms differ in number", text);
        if (!all_finite(s.positions)) finding("a non-finite coordinate was read", text);
        for (const Bond& b : s.molecule.bonds)
            if (b.a < 0 || b.b < 0 || b.a >= s.molecule.atom_count() || b.b >= s.molecule.atom_count() || b.a == b.b)
                finding("a bond with a bad atom index", text);
        for (const Atom& a : s.molecule.atoms)
            if (a.z < 1 || a.z > 86) finding("an atomic number outside H..Rn", text);
    }
    const auto writer = make_writer(out_format);
    std::string written = writer->begin();
    bool refused = false;
    for (size_t k = 0; k < read.size() && !refused; ++k) {
        if (k > 0) written += writer->separator();
        std::string record;
        refused = guarded("write", text, [&] { record = writer->record(read[k].structure, read[k].title); }, true) !=
                  Outcome::ok;
        written += record;
    }
    written += writer->end();
    if (!refused) {
        std::vector<ReadStructure> back;
        try {
            back = read_all(written, in_format);
        } catch (const std::exception& e) {
            finding(std::string("the written file does not read: ") + e.what() + "\n" + written.substr(0, 2000), text);
        }
        if (back.size() != read.size()) finding("the written file has another number of structures", text);
        for (size_t k = 0; k < read.size(); ++k) {
            if (const std::string d = structure_difference(read[k].structure, back[k].structure, tolerance); !d.empty())
                finding("structure " + std::to_string(k + 1) + " changed on writing and reading: " + d, text);
            if (read[k].has_bonds && back[k].structure.molecule.bond_count() != read[k].structure.molecule.bond_count())
                finding("structure " + std::to_string(k + 1) + ": bonds lost on writing and reading", text);
        }
    }
    for (const ReadStructure& r : read)
        if (r.structure.molecule.atom_count() <= kAuditAtomLimit)
            guarded("audit", text, [&] { (void)audit_structure(r); });
}

}  // namespace repel::fuzz
