// SDF/MOL (CTfile formats specification, V2000 and V3000). A record: three header lines (the first is the title),
// the counts line (atoms in columns 1-3, bonds in 4-6, the version V2000/V3000 in 35-39), then
//  V2000: atom lines (x 1-10, y 11-20, z 21-30, symbol 32-34, charge code 37-39: 1..3 = +3..+1, 4 = doublet
//         radical, 5..7 = -1..-3), bond lines (atoms 1-3 and 4-6, type 7-9: 1, 2, 3, 4 = aromatic), a property block
//         where `M  CHG` and `M  RAD` lines (count, then atom/value pairs of 4-column fields) supersede the atom
//         lines' charge codes, ended by `M  END`;
//  V3000: `M  V30` lines between BEGIN/END CTAB: COUNTS, the ATOM block (index, symbol, x, y, z, map, then CHG= and
//         RAD= keywords) and the BOND block (index, type, atom 1, atom 2); a line ending in '-' continues.
// Data items may follow `M  END` until `$$$$`. RAD: 1 singlet (two electrons unpaired-free, counted as none), 2
// doublet (one unpaired electron), 3 triplet (two).
#include "input/structure_reader.hpp"

#include <fmt/format.h>

#include <cctype>
#include <sstream>

#include "core/element.hpp"
#include "core/limits.hpp"
#include "input/line_reader.hpp"

namespace repel {
namespace {

using input::columns;
using input::fail_at;
using input::trim;

constexpr long kMaxCount = 4L * kMaxAtoms;  // bonds: a generous multiple of the atom limit

std::vector<std::string> split(std::string_view s) {
    std::vector<std::string> out;
    std::istringstream in{std::string(s)};
    std::string t;
    while (in >> t) out.push_back(t);
    return out;
}

int radical_electrons(long rad) { return rad == 2 ? 1 : rad == 3 ? 2 : 0; }

std::string next_line(input::LineReader& r, const std::string& expected, long record_line) {
    auto line = r.next();
    if (!line)
        fail_at(r.line() + 1, fmt::format("the file ends where {} was expected (record starting on line {})", expected,
                                          record_line),
                "");
    return *line;
}

void add_checked_bond(ReadStructure& rec, long a, long b, long type, long line, const std::string& text, int column) {
    Molecule& m = rec.structure.molecule;
    const long n = m.atom_count();
    if (a < 1 || a > n || b < 1 || b > n || a == b)
        fail_at(line, fmt::format("a bond between atoms {} and {}: expected two different atoms from 1 to {}", a, b, n),
                text, column);
    // Type 9 is the CTfile's coordination bond (a donor to a metal): read as a single bond, whose electron count
    // the metal analysis decides (lib/domains/metal.hpp).
    if (type == 9) type = 1;
    if (type < 1 || type > 4)
        fail_at(line, fmt::format("bond type {}: expected 1, 2, 3 (single, double, triple), 4 (aromatic) or 9 "
                                  "(coordination)", type),
                text, column);
    if (m.bond_between(static_cast<int>(a - 1), static_cast<int>(b - 1)) >= 0)
        fail_at(line, fmt::format("atoms {} and {} are bonded twice", a, b), text, column);
    const int index = m.add_bond(static_cast<int>(a - 1), static_cast<int>(b - 1), type == 4 ? 1 : static_cast<int>(type),
                                 type == 4);
    if (type == 4) rec.needs_orders.push_back(index);
}

void read_v2000(input::LineReader& r, ReadStructure& rec, long natoms, long nbonds) {
    Molecule& m = rec.structure.molecule;
    for (long i = 0; i < natoms; ++i) {
        const std::string line = next_line(r, fmt::format("atom line {} of {}", i + 1, natoms), rec.line);
        Eigen::Vector3d p;
        for (int d = 0; d < 3; ++d) {
            const size_t from = 1 + 10 * static_cast<size_t>(d);
            std::string why;
            auto v = input::parse_coordinate(columns(line, from, from + 9), &why);
            if (!v)
                fail_at(r.line(), fmt::format("the {} coordinate of atom {} (columns {}-{}) {}", "xyz"[d], i + 1,
                                              from, from + 9, why),
                        line, static_cast<int>(from));
            p[d] = *v;
        }
        const std::string_view symbol = trim(columns(line, 32, 34));
        const int z = input::element_from_symbol(symbol);
        if (z == 0)
            fail_at(r.line(), fmt::format("'{}' in columns 32-34 is not an element symbol (H to Rn)", std::string(symbol)),
                    line, 32);
        Atom atom;
        atom.z = z;
        const std::string_view code_field = trim(columns(line, 37, 39));
        if (!code_field.empty()) {
            auto code = input::parse_integer(code_field);
            if (!code || *code < 0 || *code > 7)
                fail_at(r.line(), "the charge code in columns 37-39 must be 0 to 7", line, 37);
            if (*code == 4) atom.radical_electrons = 1;
            else if (*code > 0) atom.charge = 4 - static_cast<int>(*code);
        }
        m.add_atom(atom);
        rec.structure.positions.push_back(p);
    }
    for (long i = 0; i < nbonds; ++i) {
        const std::string line = next_line(r, fmt::format("bond line {} of {}", i + 1, nbonds), rec.line);
        auto a = input::parse_integer(columns(line, 1, 3));
        auto b = input::parse_integer(columns(line, 4, 6));
        auto t = input::parse_integer(columns(line, 7, 9));
        if (!a || !b || !t)
            fail_at(r.line(), fmt::format("bond line {} of {}: expected two atom numbers (columns 1-3, 4-6) and a bond "
                                          "type (7-9)",
                                          i + 1, nbonds),
                    line, !a ? 1 : !b ? 4 : 7);
        add_checked_bond(rec, *a, *b, *t, r.line(), line, 1);
        // Columns 10-12: the bond's stereo (CTfile formats specification); anything else there is read as none.
        const auto stereo = line.size() >= 12 ? input::parse_integer(columns(line, 10, 12)) : std::nullopt;
        rec.bond_stereo.push_back(stereo ? static_cast<int>(*stereo) : 0);
    }
    bool charges_reset = false;
    while (true) {
        const std::string line = next_line(r, "the property block's 'M  END'", rec.line);
        if (line.rfind("M  END", 0) == 0) break;
        if (line.rfind("$$$$", 0) == 0) fail_at(r.line(), "the record ends without 'M  END'", line, 1);
        const bool chg = line.rfind("M  CHG", 0) == 0, rad = line.rfind("M  RAD", 0) == 0;
        if (!chg && !rad) continue;
        if (chg && !charges_reset) {
            for (Atom& a : m.atoms) a.charge = 0;  // M  CHG supersedes the atom block's charge codes
            charges_reset = true;
        }
        auto count = input::parse_integer(columns(line, 7, 9));
        if (!count || *count < 1 || *count > 8)
            fail_at(r.line(), "expected an entry count from 1 to 8 in columns 7-9", line, 7);
        for (long k = 0; k < *count; ++k) {
            const size_t from = 11 + 8 * static_cast<size_t>(k);
            auto atom = input::parse_integer(columns(line, from, from + 2));
            auto value = input::parse_integer(columns(line, from + 4, from + 6));
            if (!atom || !value || *atom < 1 || *atom > natoms)
                fail_at(r.line(), fmt::format("entry {}: expected an atom number from 1 to {} and a value", k + 1, natoms),
                        line, static_cast<int>(from));
            Atom& a = m.atoms[static_cast<size_t>(*atom - 1)];
            if (chg) {
                if (*value < -15 || *value > 15) fail_at(r.line(), "a charge outside -15..15", line, static_cast<int>(from + 4));
                a.charge = static_cast<int>(*value);
            } else {
                a.radical_electrons = radical_electrons(*value);
            }
        }
    }
}

// V3000: the logical lines of the CTAB (continuations joined), each with its first line number.
void read_v3000(input::LineReader& r, ReadStructure& rec) {
    Molecule& m = rec.structure.molecule;
    enum class Block { none, atom, bond, other } block = Block::none;
    long natoms = -1, nbonds = -1;
    while (true) {
        std::string line = next_line(r, "'M  END'", rec.line);
        const long at = r.line();
        if (line.rfind("M  END", 0) == 0) break;
        if (line.rfind("$$$$", 0) == 0) fail_at(at, "the record ends without 'M  END'", line, 1);
        if (line.rfind("M  V30 ", 0) != 0) continue;
        std::string body = line.substr(7);
        while (!body.empty() && body.back() == '-') {
            body.pop_back();
            const std::string more = next_line(r, "the continuation of a V3000 line", rec.line);
            if (more.rfind("M  V30 ", 0) != 0) fail_at(r.line(), "expected 'M  V30 ' continuing the line before", more, 1);
            body += more.substr(7);
        }
        auto f = split(body);
        if (f.empty()) continue;
        if (f[0] == "BEGIN" && f.size() > 1) {
            block = f[1] == "ATOM" ? Block::atom : f[1] == "BOND" ? Block::bond : Block::other;
            continue;
        }
        if (f[0] == "END") {
            if (block == Block::atom && natoms >= 0 && m.atom_count() != natoms)
                fail_at(at, fmt::format("the ATOM block has {} atoms; COUNTS announced {}", m.atom_count(), natoms), line);
            if (block == Block::bond && nbonds >= 0 && m.bond_count() != nbonds)
                fail_at(at, fmt::format("the BOND block has {} bonds; COUNTS announced {}", m.bond_count(), nbonds), line);
            block = Block::none;
            continue;
        }
        if (f[0] == "COUNTS") {
            auto a = f.size() > 1 ? input::parse_integer(f[1]) : std::nullopt;
            auto b = f.size() > 2 ? input::parse_integer(f[2]) : std::nullopt;
            if (!a || !b || *a < 0 || *b < 0)
                fail_at(at, "COUNTS needs the atom and bond counts", line, 8);
            if (*a > kMaxAtoms || *b > kMaxCount)
                throw LimitError(fmt::format("line {}: COUNTS {} {}: more than {} atoms or {} bonds (the largest "
                                             "structure repel reads)",
                                             at, *a, *b, kMaxAtoms, kMaxCount),
                                 line, 8);
            natoms = *a;
            nbonds = *b;
            continue;
        }
        if (block == Block::atom) {
            if (f.size() < 5) fail_at(at, "an atom needs an index, a symbol and x y z", line, 8);
            const int z = input::element_from_symbol(f[1]);
            if (z == 0) fail_at(at, fmt::format("'{}' is not an element symbol (H to Rn)", f[1]), line, 8);
            Eigen::Vector3d p;
            for (int d = 0; d < 3; ++d) {
                std::string why;
                auto v = input::parse_coordinate(f[static_cast<size_t>(2 + d)], &why);
                if (!v)
                    fail_at(at, fmt::format("the {} coordinate '{}' {}", "xyz"[d], f[static_cast<size_t>(2 + d)], why),
                            line, static_cast<int>(line.find(f[static_cast<size_t>(2 + d)]) + 1));
                p[d] = *v;
            }
            Atom atom;
            atom.z = z;
            for (size_t k = 6; k < f.size(); ++k) {
                const size_t eq = f[k].find('=');
                if (eq == std::string::npos) continue;
                const std::string key = f[k].substr(0, eq);
                if (key != "CHG" && key != "RAD") continue;
                auto v = input::parse_integer(f[k].substr(eq + 1));
                if (!v) fail_at(at, fmt::format("'{}': expected a whole number", f[k]), line);
                if (key == "CHG" && (*v < -15 || *v > 15)) fail_at(at, fmt::format("'{}': a charge outside -15..15", f[k]), line);
                if (key == "CHG") atom.charge = static_cast<int>(*v);
                else atom.radical_electrons = radical_electrons(*v);
            }
            if (m.atom_count() >= kMaxAtoms)
                throw LimitError(fmt::format("line {}: more than {} atoms in one structure (the largest structure "
                                             "repel reads)",
                                             at, kMaxAtoms),
                                 line, 1);
            m.add_atom(atom);
            rec.structure.positions.push_back(p);
        } else if (block == Block::bond) {
            if (f.size() < 4) fail_at(at, "a bond needs an index, a type and two atoms", line, 8);
            auto t = input::parse_integer(f[1]);
            auto a = input::parse_integer(f[2]);
            auto b = input::parse_integer(f[3]);
            if (!t || !a || !b) fail_at(at, "a bond needs an index, a type and two atom numbers", line, 8);
            add_checked_bond(rec, *a, *b, *t, at, line, 8);
            // CFG=1 wedge, 3 hash, 2 either (CTfile formats specification), as V2000's 1, 6, 4.
            int stereo = 0;
            for (size_t k = 4; k < f.size(); ++k)
                if (f[k].rfind("CFG=", 0) == 0) {
                    const auto cfg = input::parse_integer(f[k].substr(4));
                    stereo = !cfg ? 0 : *cfg == 1 ? 1 : *cfg == 3 ? 6 : *cfg == 2 ? 4 : 0;
                }
            rec.bond_stereo.push_back(stereo);
        }
    }
    if (natoms < 0) fail_at(r.line(), "a V3000 record without 'M  V30 COUNTS'", "");
}

}  // namespace

std::vector<ReadStructure> read_sdf(std::istream& in) {
    input::LineReader r(in);
    std::vector<ReadStructure> out;
    while (true) {
        // The three header lines and the counts line; blank lines after the last record end the file.
        std::vector<std::string> head;
        long start = 0;
        bool blank = true;
        while (head.size() < 4) {
            auto line = r.next();
            if (!line) break;
            if (head.empty()) start = r.line();
            blank = blank && trim(*line).empty();
            head.push_back(*line);
        }
        if (head.empty() || (head.size() < 4 && blank)) break;
        if (head.size() < 4)
            fail_at(r.line() + 1, fmt::format("the file ends inside the header of the record starting on line {}: "
                                              "expected three header lines and the counts line",
                                              start),
                    "");
        ReadStructure rec;
        rec.line = start;
        rec.title = std::string(trim(head[0]));
        rec.structure.molecule.name = rec.title;
        const std::string& counts = head[3];
        const std::string_view version = trim(columns(counts, 35, 39));
        if (version == "V3000") {
            read_v3000(r, rec);
        } else {
            auto natoms = input::parse_integer(columns(counts, 1, 3));
            auto nbonds = input::parse_integer(columns(counts, 4, 6));
            if (!natoms || !nbonds || *natoms < 0 || *nbonds < 0)
                fail_at(r.line(), "expected the counts line: atoms in columns 1-3, bonds in columns 4-6", counts,
                        !natoms ? 1 : 4);
            if (!version.empty() && version != "V2000")
                fail_at(r.line(), fmt::format("version '{}' in columns 35-39: expected V2000 or V3000",
                                              std::string(version)),
                        counts, 35);
            read_v2000(r, rec, *natoms, *nbonds);
        }
        if (rec.structure.molecule.atom_count() == 0)
            fail_at(rec.line, "a record of 0 atoms: expected at least one atom", head[0]);
        // Data items until $$$$ (or the end of a .mol file).
        while (auto line = r.next())
            if (line->rfind("$$$$", 0) == 0) break;
        rec.has_bonds = true;
        rec.has_orders = true;
        rec.has_charge = true;
        rec.structure.charge = rec.structure.molecule.total_charge();
        int unpaired = 0;
        for (const Atom& a : rec.structure.molecule.atoms) unpaired += std::max(0, a.radical_electrons);
        rec.structure.multiplicity = unpaired + 1;
        rec.has_multiplicity = unpaired > 0;
        out.push_back(std::move(rec));
    }
    if (out.empty()) fail_at(1, "the file is empty: expected a molfile header", "");
    return out;
}

}  // namespace repel
