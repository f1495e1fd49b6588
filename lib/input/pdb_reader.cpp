// PDB (wwPDB PDB format 3.3): fixed columns. ATOM/HETATM: serial 7-11, name 13-16, altLoc 17, x 31-38, y 39-46,
// z 47-54, element 77-78, charge 79-80 ("1+", "2-"). The element columns are required: guessing an element from an
// atom name is ambiguous (CA is calcium or an alpha carbon), so a record without them is an error. Of alternate
// locations only the blank one and the first letter seen are kept. CONECT (serial 7-11, bonded serials 12-16, 17-21,
// 22-26, 27-31) gives connectivity without bond orders; a bond listed twice is one bond. Structures are separated by
// MODEL/ENDMDL or by END; TITLE/COMPND give the title. Other records are ignored.
#include "input/structure_reader.hpp"

#include <fmt/format.h>

#include <unordered_map>

#include "core/limits.hpp"
#include "input/line_reader.hpp"

namespace repel {
namespace {

using input::columns;
using input::fail_at;
using input::trim;

std::string_view record_name(const std::string& line) { return trim(columns(line, 1, 6)); }

struct Pending {
    ReadStructure rec;
    std::unordered_map<long, int> serial_to_atom;
    std::vector<std::tuple<long, long, long, std::string>> bonds;  // line, serial a, serial b, text
    char alt = 0;
    bool any = false;
};

using BondList = std::vector<std::tuple<long, long, long, std::string>>;

void add_bonds(ReadStructure& rec, const std::unordered_map<long, int>& serial_to_atom, const BondList& bonds) {
    Molecule& m = rec.structure.molecule;
    for (const auto& [line, a, b, text] : bonds) {
        auto ia = serial_to_atom.find(a);
        auto ib = serial_to_atom.find(b);
        if (ia == serial_to_atom.end() || ib == serial_to_atom.end())
            fail_at(line, fmt::format("CONECT names atom serial {}, which no ATOM/HETATM record of this structure has",
                                      ia == serial_to_atom.end() ? a : b),
                    text, 7);
        if (ia->second == ib->second) continue;
        if (m.bond_between(ia->second, ib->second) < 0) m.add_bond(ia->second, ib->second, 1);
        rec.has_bonds = true;
    }
}

// CONECT records after the last END/ENDMDL (the usual place in a multi-model file) apply to every model.
void finish(Pending& p, std::vector<ReadStructure>& out, std::vector<std::unordered_map<long, int>>& maps,
            BondList& trailing) {
    if (!p.any) {
        trailing.insert(trailing.end(), p.bonds.begin(), p.bonds.end());
        p = Pending{};
        return;
    }
    add_bonds(p.rec, p.serial_to_atom, p.bonds);
    Molecule& m = p.rec.structure.molecule;
    for (const Atom& a : m.atoms)
        if (a.charge != 0) p.rec.has_charge = true;
    p.rec.structure.charge = m.total_charge();
    out.push_back(std::move(p.rec));
    maps.push_back(std::move(p.serial_to_atom));
    p = Pending{};
}

}  // namespace

std::vector<ReadStructure> read_pdb(std::istream& in) {
    input::LineReader reader(in);
    std::vector<ReadStructure> out;
    Pending p;
    std::string title;
    std::vector<std::unordered_map<long, int>> maps;
    BondList trailing;
    while (auto got = reader.next()) {
        const std::string& line = *got;
        const long n = reader.line();
        const std::string_view rec = record_name(line);
        if (rec == "TITLE" || (rec == "COMPND" && title.empty())) {
            std::string t(trim(columns(line, 11, 80)));
            if (!t.empty()) title = title.empty() || rec == "COMPND" ? t : title + " " + t;
        } else if (rec == "ATOM" || rec == "HETATM") {
            if (!p.any) {
                p.rec.line = n;
                p.rec.title = title;
                p.any = true;
            }
            const char alt = line.size() >= 17 ? line[16] : ' ';
            if (alt != ' ') {
                if (p.alt == 0) p.alt = alt;
                if (alt != p.alt) continue;
            }
            if (line.size() < 54)
                fail_at(n, fmt::format("an {} record needs coordinates in columns 31-54; the line has {} characters",
                                       std::string(rec), line.size()),
                        line, static_cast<int>(line.size() + 1));
            Eigen::Vector3d pos;
            for (int d = 0; d < 3; ++d) {
                const size_t from = 31 + 8 * static_cast<size_t>(d);
                std::string why;
                auto v = input::parse_coordinate(columns(line, from, from + 7), &why);
                if (!v)
                    fail_at(n, fmt::format("the {} coordinate (columns {}-{}) '{}' {}", "xyz"[d], from, from + 7,
                                           std::string(trim(columns(line, from, from + 7))), why),
                            line, static_cast<int>(from));
                pos[d] = *v;
            }
            const std::string_view symbol = trim(columns(line, 77, 78));
            if (symbol.empty())
                fail_at(n, "no element symbol in columns 77-78 (repel does not guess elements from atom names)", line,
                        77);
            const int z = input::element_from_symbol(symbol);
            if (z == 0)
                fail_at(n, fmt::format("'{}' in columns 77-78 is not an element symbol (H to Rn)", std::string(symbol)),
                        line, 77);
            Atom atom;
            atom.z = z;
            const std::string_view charge = trim(columns(line, 79, 80));
            if (!charge.empty()) {
                const bool ok = charge.size() == 2 && charge[0] >= '0' && charge[0] <= '9' &&
                                (charge[1] == '+' || charge[1] == '-');
                if (!ok)
                    fail_at(n, fmt::format("the charge in columns 79-80 '{}' is not of the form 1+ or 2-",
                                           std::string(charge)),
                            line, 79);
                atom.charge = (charge[0] - '0') * (charge[1] == '+' ? 1 : -1);
            }
            if (p.rec.structure.molecule.atom_count() >= kMaxAtoms)
                throw LimitError(fmt::format("line {}: more than {} atoms in one structure (the largest structure "
                                             "repel reads)",
                                             n, kMaxAtoms),
                                 line, 1);
            const int index = p.rec.structure.molecule.add_atom(atom);
            p.rec.structure.positions.push_back(pos);
            if (auto serial = input::parse_integer(columns(line, 7, 11)))
                p.serial_to_atom.emplace(*serial, index);
        } else if (rec == "CONECT") {
            auto from = input::parse_integer(columns(line, 7, 11));
            if (!from) fail_at(n, "CONECT needs an atom serial number in columns 7-11", line, 7);
            for (size_t c = 12; c + 4 <= 31 && c <= line.size(); c += 5) {
                const std::string_view field = trim(columns(line, c, c + 4));
                if (field.empty()) continue;
                auto to = input::parse_integer(field);
                if (!to)
                    fail_at(n, fmt::format("CONECT columns {}-{} '{}' are not an atom serial number", c, c + 4,
                                           std::string(field)),
                            line, static_cast<int>(c));
                p.bonds.emplace_back(n, *from, *to, line);
            }
        } else if (rec == "ENDMDL" || rec == "END") {
            finish(p, out, maps, trailing);
        }
    }
    finish(p, out, maps, trailing);
    if (out.empty()) fail_at(reader.line() + 1, "no ATOM or HETATM record in the file", "");
    if (!trailing.empty())
        for (size_t i = 0; i < out.size(); ++i)
            if (!out[i].has_bonds) add_bonds(out[i], maps[i], trailing);
    return out;
}

}  // namespace repel
