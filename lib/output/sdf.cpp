// SDF / MOL writer, CTfile formats (Dalby et al., J. Chem. Inf. Comput. Sci. 32 (1992) 244, and the later CTfile
// Formats specification; field layouts from memory): one SD record per structure -- header block, connection table,
// M  END, data items, $$$$. A .mol file gets the same text (a molfile followed by its data items and $$$$).
//
// Choices made here:
//  - V2000 while atoms and bonds both number at most 999 and every coordinate fits the 10.4 fields of the atom
//    block (-9999.9999 .. 99999.9999); V3000 (M  V30 BEGIN CTAB ... END CTAB) otherwise.
//  - Header: line 1 the title (ASCII, cut to 80 characters; a longer title is kept whole in a > <name> data item),
//    line 2 the program field "repel" and the dimension code "3D" with the date field left blank so that the
//    output is byte-identical run to run, line 3 blank.
//  - Charges: the atom-block charge code (V2000: 3/2/1 for +1/+2/+3, 5/6/7 for -1/-2/-3, 0 otherwise) and M  CHG
//    lines, which readers take over the atom block; V3000: CHG=. Radicals from Atom::radical_electrons: 1 unpaired
//    electron is the doublet code 2, 2 the triplet code 3 (M  RAD, V3000 RAD=); the CTfile has no code for more,
//    so such an atom has none and the > <multiplicity> item carries the spin. Isotopes: M  ISO (V3000 MASS=)
//    with the mass number.
//  - Bonds: Bond::order as kekulized, types 1/2/3. CTfile bond type 4 means aromatic, not quadruple, and there is
//    no quadruple type: a structure with a quadruple bond is refused with a message rather than written wrong.
//  - Data items > <charge>, > <multiplicity>, for a member of a conformer ensemble > <conformer> (its rank, 1 the
//    lowest energy), > <conformers> (how many), > <energy> and > <relative_energy> (kcal/mol), > <rmsd_to_first>
//    (Angstrom), and > <warnings> (one warning a line) when there are any.
#include <fmt/compile.h>
#include <fmt/format.h>

#include <cmath>
#include <iterator>
#include <cstdlib>
#include <stdexcept>
#include <vector>

#include "output/formats.hpp"

namespace repel::output {

namespace {

constexpr int kV2000Limit = 999;         // atoms and bonds in the 3-column counts fields
constexpr size_t kHeaderWidth = 80;      // header lines are at most 80 characters
constexpr size_t kV30Width = 80;         // a V3000 line, continued with '-' past this
constexpr size_t kDataLineWidth = 200;   // data item lines (CTfile: at most 200 characters a line)
constexpr int kEntriesPerMLine = 8;      // M  CHG / RAD / ISO take at most 8 atoms a line

struct Radical {
    int atom;
    int code;
};

// CTfile radical codes: 1 singlet, 2 doublet, 3 triplet; 0 when no code applies.
int radical_code(const Atom& atom) {
    if (atom.radical_electrons == 1) return 2;
    if (atom.radical_electrons == 2) return 3;
    return 0;
}

// V2000 atom-block charge code for -3..+3 (0 for anything else: the M  CHG line carries it).
int charge_code(int charge) {
    switch (charge) {
        case 3: return 1;
        case 2: return 2;
        case 1: return 3;
        case -1: return 5;
        case -2: return 6;
        case -3: return 7;
        default: return 0;
    }
}

int bond_type(const Bond& bond, int index) {
    if (bond.order >= 1 && bond.order <= 3) return bond.order;
    if (bond.order == 4)
        throw std::runtime_error(fmt::format("cannot write SDF: bond {} (atoms {}-{}) is a quadruple bond, which the "
                                             "CTfile bond types cannot state; write XYZ, PDB or JSON instead",
                                             index + 1, bond.a + 1, bond.b + 1));
    throw std::runtime_error(fmt::format("cannot write SDF: bond {} (atoms {}-{}) has order {}; expected 1, 2 or 3",
                                         index + 1, bond.a + 1, bond.b + 1, bond.order));
}

bool fits_v2000(const Structure& s) {
    if (s.molecule.atom_count() > kV2000Limit || s.molecule.bond_count() > kV2000Limit) return false;
    for (const Eigen::Vector3d& p : s.positions)
        for (int k = 0; k < 3; ++k) {
            const double r = tidy(p[k], 4);
            if (r > 99999.9999 || r < -9999.9999) return false;
        }
    return true;
}

std::string header(const std::string& name) {
    std::string title = one_line(name, true);
    if (title.size() > kHeaderWidth) title.resize(kHeaderWidth);
    // Line 2: IIPPPPPPPPMMDDYYHHmmdd -- initials (blank), program (8), date and time (blank), dimension code.
    return title + "\n" + "  repel             3D\n\n";
}

// "M  CHG  2   1   1   4  -1": M-lines of (atom, value) pairs, 8 a line.
std::string m_lines(std::string_view tag, const std::vector<std::pair<int, int>>& entries) {
    std::string out;
    for (size_t start = 0; start < entries.size(); start += kEntriesPerMLine) {
        const size_t count = std::min(entries.size() - start, static_cast<size_t>(kEntriesPerMLine));
        out += fmt::format("M  {}{:3}", tag, count);
        for (size_t k = start; k < start + count; ++k)
            out += fmt::format(" {:3} {:3}", entries[k].first, entries[k].second);
        out += '\n';
    }
    return out;
}

std::string v2000(const Structure& s) {
    const Molecule& m = s.molecule;
    std::string out = fmt::format("{:3}{:3}  0  0  0  0  0  0  0  0999 V2000\n", m.atom_count(), m.bond_count());
    std::vector<std::pair<int, int>> charges, radicals, isotopes;
    for (int i = 0; i < m.atom_count(); ++i) {
        const Atom& a = m.atoms[static_cast<size_t>(i)];
        const Eigen::Vector3d& p = s.positions[static_cast<size_t>(i)];
        append_fixed(out, p.x(), 4, 10);
        append_fixed(out, p.y(), 4, 10);
        append_fixed(out, p.z(), 4, 10);
        fmt::format_to(std::back_inserter(out), FMT_COMPILE(" {:<3} 0{:3}  0  0  0  0  0  0  0  0  0  0\n"),
                       symbol_of(s, i), charge_code(a.charge));
        if (a.charge != 0) charges.emplace_back(i + 1, a.charge);
        if (radical_code(a) != 0) radicals.emplace_back(i + 1, radical_code(a));
        if (a.isotope > 0) isotopes.emplace_back(i + 1, a.isotope);
    }
    for (int b = 0; b < m.bond_count(); ++b) {
        const Bond& bond = m.bonds[static_cast<size_t>(b)];
        fmt::format_to(std::back_inserter(out), FMT_COMPILE("{:3}{:3}{:3}  0  0  0  0\n"), bond.a + 1, bond.b + 1,
                       bond_type(bond, b));
    }
    out += m_lines("CHG", charges) + m_lines("RAD", radicals) + m_lines("ISO", isotopes);
    return out + "M  END\n";
}

// One V3000 line: "M  V30 " and the content, continued on further lines (a '-' at the end of each full one).
std::string v30(const std::string& content) {
    constexpr std::string_view kPrefix = "M  V30 ";
    const size_t room = kV30Width - kPrefix.size() - 1;  // leaves a column for the '-'
    std::string out;
    size_t pos = 0;
    while (content.size() - pos > kV30Width - kPrefix.size()) {
        out += std::string(kPrefix) + content.substr(pos, room) + "-\n";
        pos += room;
    }
    return out + std::string(kPrefix) + content.substr(pos) + "\n";
}

std::string v3000(const Structure& s) {
    const Molecule& m = s.molecule;
    std::string out = "  0  0  0     0  0            999 V3000\n";
    out += v30("BEGIN CTAB");
    out += v30(fmt::format("COUNTS {} {} 0 0 0", m.atom_count(), m.bond_count()));
    out += v30("BEGIN ATOM");
    for (int i = 0; i < m.atom_count(); ++i) {
        const Atom& a = m.atoms[static_cast<size_t>(i)];
        const Eigen::Vector3d& p = s.positions[static_cast<size_t>(i)];
        std::string line = fmt::format("{} {} {:.4f} {:.4f} {:.4f} 0", i + 1, symbol_of(s, i), tidy(p.x(), 4),
                                       tidy(p.y(), 4), tidy(p.z(), 4));
        if (a.charge != 0) line += fmt::format(" CHG={}", a.charge);
        if (radical_code(a) != 0) line += fmt::format(" RAD={}", radical_code(a));
        if (a.isotope > 0) line += fmt::format(" MASS={}", a.isotope);
        out += v30(line);
    }
    out += v30("END ATOM");
    if (m.bond_count() > 0) {
        out += v30("BEGIN BOND");
        for (int b = 0; b < m.bond_count(); ++b) {
            const Bond& bond = m.bonds[static_cast<size_t>(b)];
            out += v30(fmt::format("{} {} {} {}", b + 1, bond_type(bond, b), bond.a + 1, bond.b + 1));
        }
        out += v30("END BOND");
    }
    out += v30("END CTAB");
    return out + "M  END\n";
}

// A data value line: ASCII, never empty (a blank line ends the value) and never "$$$$" (which ends the record).
std::vector<std::string> data_lines(std::string_view text) {
    std::string line = one_line(text, true);
    if (line.rfind("$$$$", 0) == 0) line = " " + line;
    std::vector<std::string> out;
    for (size_t pos = 0; pos < line.size(); pos += kDataLineWidth) out.push_back(line.substr(pos, kDataLineWidth));
    return out;
}

std::string data_items(const Structure& s, const std::string& title) {
    std::string out;
    if (one_line(title, true).size() > kHeaderWidth) {
        // Kept on one line, but never starting with "$$$$": that line would end the record (found by fuzz_sdf).
        std::string name = one_line(title, true);
        if (name.rfind("$$$$", 0) == 0) name = " " + name;
        // Readers refuse lines past 64 KiB (repel's own among them: LineReader::kMaxLine): a longer name is cut
        // there and marked, so that the file still reads back.
        constexpr size_t kLongestName = 65000;
        if (name.size() > kLongestName) name = name.substr(0, kLongestName) + " [cut]";
        out += "> <name>\n" + name + "\n\n";
    }
    out += fmt::format("> <charge>\n{}\n\n> <multiplicity>\n{}\n\n", s.charge, s.multiplicity);
    if (s.conformer)
        out += fmt::format("> <conformer>\n{}\n\n> <conformers>\n{}\n\n> <energy>\n{:.4f}\n\n> <relative_energy>\n{:.4f}"
                           "\n\n> <rmsd_to_first>\n{:.4f}\n\n",
                           s.conformer->rank, s.conformer->count, s.conformer->energy, s.conformer->relative_energy,
                           s.conformer->rmsd_to_first);
    std::string warnings;
    for (const std::string& w : s.warnings)
        for (const std::string& line : data_lines(w))
            if (line.find_first_not_of(' ') != std::string::npos) warnings += line + "\n";
    if (!warnings.empty()) out += "> <warnings>\n" + warnings + "\n";
    return out;
}

}  // namespace

std::string SdfWriter::record(const Structure& structure, const std::string& title) const {
    require_writable(structure, "SDF");
    std::string out = header(title);
    out += fits_v2000(structure) ? v2000(structure) : v3000(structure);
    out += data_items(structure, title);
    return out + "$$$$\n";
}

}  // namespace repel::output
