// PDB writer, wwPDB PDB format 3.3 (Atomic Coordinate Entry Format Description, version 3.30, 2008): one complete
// entry per record -- TITLE, REMARK 6 (charge, multiplicity, warnings), one HETATM per atom, CONECT for every bond,
// END -- every line padded to 80 columns.
//
// Field positions (format 3.3, HETATM): 1-6 "HETATM", 7-11 serial, 13-16 atom name, 17 altLoc, 18-20 resName,
// 22 chainID, 23-26 resSeq, 27 iCode, 31-38 / 39-46 / 47-54 x y z (8.3), 55-60 occupancy (6.2), 61-66 tempFactor
// (6.2), 77-78 element symbol right-justified, 79-80 charge ("1+", "2-"). CONECT: 1-6 "CONECT", 7-11 the atom, then
// up to four bonded atoms in 12-16, 17-21, 22-26, 27-31; more partners continue on further CONECT lines.
// TITLE: 1-6 "TITLE ", 9-10 continuation number (blank on the first line), 11-80 text; continuation lines start the
// text after a blank column 11 (format 3.3, section 1, continuation of String fields; from memory).
//
// Choices made here:
//  - Each molecule or ion of the record (each connected piece: the cation and the anion of a salt, each water of a
//    hydrate) is a residue of its own, numbered 1, 2, ... in resSeq, all HETATM, chain A. resName LIG: one of the
//    codes the wwPDB keeps for new ligands and never gives to a component of the archive (wwPDB announcement on
//    Chemical Component Dictionary codes, 2023), so a reader never mistakes the molecule for an archive component.
//    A residue holds at most 1,971 atoms (the most a 4-column name can number after a two-letter symbol, below), so
//    a larger piece is cut into consecutive residues of that size; when pieces' atoms are not consecutive in the
//    record, the whole record is cut so (a residue's atoms are consecutive). Past 9,999 residues resSeq is written in
//    hybrid-36 as the serials are.
//  - Atom names are the upper-case element symbol plus the atom's position in its residue (water: O1, H2, H3), so
//    a name says which atom of the input it is, as the numbers in `repel check` and `repel shape` do, and names are
//    unique within the residue. Format 3.3 aligns the element symbol of the name: a one-letter symbol starts in
//    column 14 (" C1 ", " H12") unless the name has four characters ("H123" starts in column 13); a two-letter symbol
//    starts in column 13 ("CL1 ", "CL12").
//  - Past 99,999 atoms the 5-column serial (and the CONECT fields, which hold serials) use the hybrid-36 encoding:
//    99999 is followed by A0000 ... ZZZZZ, then a0000 ... zzzzz, up to 87,440,031 atoms; numbers below 100,000 are
//    plain decimal, so a file of fewer atoms is ordinary format 3.3. Past the 999th atom of a one-letter element (99th
//    of a two-letter one) the running number in the atom name is hybrid-36 encoded in the same way, in the 3 (2)
//    columns left to it ("C999", then "CA00"...): the name stays unique and 4 columns wide; the element of every atom
//    is in columns 77-78, which is where format 3.3 says to read it. A structure past either range is refused.
//  - Formal charges go to columns 79-80. What format 3.3 has no field for goes to free-text REMARK 6 records
//    (remarks 5-99 are free text in the format, from memory): "REMARK   6 CHARGE -1 MULTIPLICITY 1" always, then
//    one "REMARK   6 WARNING ..." per warning, folded over further REMARK 6 lines at 69 columns of text.
//    Coordinates must fit the 8.3 fields (-999.999 .. 9999.999 Angstrom); a structure that does not is refused
//    rather than written with broken columns.
#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <cstdlib>
#include <stdexcept>
#include <vector>

#include "core/element.hpp"
#include "output/formats.hpp"

namespace repel::output {

std::string hybrid36(int width, long long value) {
    static constexpr char kUpper[] = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ";
    static constexpr char kLower[] = "0123456789abcdefghijklmnopqrstuvwxyz";
    if (width < 1 || width > 9 || value < 0) throw std::out_of_range("hybrid36: width 1..9 and a value >= 0");
    long long decimal_limit = 1;  // 10^width
    long long block = 26;         // 26 * 36^(width-1): numbers in each letter range
    long long offset = 10;        // 10 * 36^(width-1): the first base-36 number whose leading digit is a letter
    for (int k = 0; k < width; ++k) decimal_limit *= 10;
    for (int k = 1; k < width; ++k) {
        block *= 36;
        offset *= 36;
    }
    if (value < decimal_limit) return fmt::format("{:>{}}", value, width);
    value -= decimal_limit;
    const char* digits = kUpper;
    if (value >= block) {
        value -= block;
        digits = kLower;
    }
    if (value >= block) throw std::out_of_range(fmt::format("hybrid36: the number does not fit {} columns", width));
    value += offset;
    std::string out(static_cast<size_t>(width), '0');
    for (int k = width - 1; k >= 0; --k) {
        out[static_cast<size_t>(k)] = digits[value % 36];
        value /= 36;
    }
    return out;
}

namespace {

constexpr int kLineWidth = 80;       // every PDB record is 80 columns
constexpr int kTitleFirst = 70;      // TITLE text columns 11-80 on the first line
constexpr int kTitleNext = 69;       // columns 12-80 on continuation lines
constexpr int kMaxTitleLines = 99;   // the continuation number has two columns
constexpr int kPartnersPerConect = 4;
constexpr int kRemarkText = 69;      // REMARK text in columns 12-80
constexpr int kMaxResidueAtoms = 99 + 2 * 26 * 36;  // names after a two-letter symbol: 99, then hybrid-36 in 2 columns

std::string padded(std::string line) {
    if (line.size() < kLineWidth) line.append(kLineWidth - line.size(), ' ');
    return line + "\n";
}

std::string upper(std::string_view text) {
    std::string out(text);
    for (char& c : out) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
    return out;
}

std::string title_records(const std::string& title) {
    const std::string text = one_line(title, true);
    std::string out;
    size_t pos = 0;
    for (int line = 1; pos < text.size() && line <= kMaxTitleLines; ++line) {
        if (line == 1) {
            out += padded("TITLE     " + text.substr(0, kTitleFirst));
            pos = kTitleFirst;
        } else {
            out += padded(fmt::format("TITLE   {:>2} {}", line, text.substr(pos, kTitleNext)));
            pos += kTitleNext;
        }
    }
    return out;
}

// REMARK 6 lines: the record's charge and multiplicity, then each warning folded at kRemarkText columns.
std::string remark_records(const Structure& structure) {
    std::string out = padded(fmt::format("REMARK   6 CHARGE {} MULTIPLICITY {}", structure.charge,
                                         structure.multiplicity));
    if (const auto& c = structure.conformer)
        out += padded(fmt::format("REMARK   6 CONFORMER {} OF {} ENERGY {:.4f} RELATIVE {:.4f} RMSD {:.4f}", c->rank,
                                  c->count, c->energy, c->relative_energy, c->rmsd_to_first));
    for (const std::string& warning : structure.warnings) {
        const std::string text = "WARNING " + one_line(warning, true);
        for (size_t pos = 0; pos < text.size(); pos += kRemarkText)
            out += padded("REMARK   6 " + text.substr(pos, kRemarkText));
    }
    return out;
}

// The residue (1-based) of every atom: one per connected piece when each piece's atoms are consecutive, else one
// for the whole record; either cut into residues of at most kMaxResidueAtoms atoms.
std::vector<int> residues(const Molecule& m) {
    const int n = m.atom_count();
    std::vector<int> root(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) root[static_cast<size_t>(i)] = i;
    auto find = [&](int i) {
        while (root[static_cast<size_t>(i)] != i) {
            root[static_cast<size_t>(i)] = root[static_cast<size_t>(root[static_cast<size_t>(i)])];
            i = root[static_cast<size_t>(i)];
        }
        return i;
    };
    for (const Bond& b : m.bonds) {
        const int x = find(b.a), y = find(b.b);
        if (x != y) root[static_cast<size_t>(std::max(x, y))] = std::min(x, y);
    }
    std::vector<int> piece(static_cast<size_t>(n));
    std::vector<char> seen(static_cast<size_t>(n), 0);
    bool consecutive = true;
    for (int i = 0; i < n; ++i) {
        piece[static_cast<size_t>(i)] = find(i);
        if (i > 0 && piece[static_cast<size_t>(i)] == piece[static_cast<size_t>(i - 1)]) continue;
        consecutive = consecutive && !seen[static_cast<size_t>(piece[static_cast<size_t>(i)])];
        seen[static_cast<size_t>(piece[static_cast<size_t>(i)])] = 1;
    }
    std::vector<int> residue(static_cast<size_t>(n));
    int current = 0, size = 0;
    for (int i = 0; i < n; ++i) {
        const bool new_piece = i == 0 || (consecutive && piece[static_cast<size_t>(i)] != piece[static_cast<size_t>(i - 1)]);
        if (new_piece || size == kMaxResidueAtoms) {
            ++current;
            size = 0;
        }
        ++size;
        residue[static_cast<size_t>(i)] = current;
    }
    return residue;
}

// Columns 13-16: the atom name, aligned as format 3.3 aligns element symbols.
std::string atom_name(std::string_view symbol, int number, int atom) {
    const std::string sym = upper(symbol);
    const int width = sym.size() == 1 ? 3 : 2;  // columns left for the number
    std::string digits;
    try {
        digits = hybrid36(width, number);
    } catch (const std::out_of_range&) {
        const int capacity = width == 3 ? 999 + 2 * 26 * 36 * 36 : 99 + 2 * 26 * 36;  // hybrid-36 range
        throw std::runtime_error(fmt::format("cannot write PDB: atom {} ({}) is atom {} of its residue, past the {} "
                                             "that a 4-column atom name can number after a {}-letter symbol; write "
                                             "SDF or XYZ instead",
                                             atom + 1, symbol, number, capacity, sym.size()));
    }
    digits.erase(0, digits.find_first_not_of(' '));
    const std::string name = sym + digits;
    if (sym.size() == 1 && name.size() < 4) return fmt::format(" {:<3}", name);
    return fmt::format("{:<4}", name);
}

// Columns 79-80: "1+", "2-", or blank for a neutral atom.
std::string charge_field(int charge, int atom) {
    if (charge == 0) return "  ";
    if (std::abs(charge) > 9)
        throw std::runtime_error(fmt::format("cannot write PDB: atom {} has formal charge {}, which does not fit the "
                                             "2-column charge field (-9..+9)",
                                             atom + 1, charge));
    return fmt::format("{}{}", std::abs(charge), charge > 0 ? '+' : '-');
}

double coordinate(double v, int atom, char axis) {
    const double r = tidy(v, 3);
    if (r > 9999.999 || r < -999.999)
        throw std::runtime_error(fmt::format("cannot write PDB: atom {} has {} = {:.3f} Angstrom, outside the "
                                             "8-column coordinate field (-999.999 to 9999.999); write XYZ or SDF "
                                             "instead",
                                             atom + 1, axis, v));
    return r;
}

std::string serial(int atom) {
    try {
        return hybrid36(5, atom + 1LL);
    } catch (const std::out_of_range&) {
        throw std::runtime_error(fmt::format("cannot write PDB: {} atoms are more than the 87,440,031 that hybrid-36 "
                                             "serial numbers can number; write SDF or XYZ instead",
                                             atom + 1));
    }
}

// Columns 23-26: resSeq, hybrid-36 past 9,999 (up to 2,436,111 residues).
std::string residue_number(int residue) {
    try {
        return hybrid36(4, residue);
    } catch (const std::out_of_range&) {
        throw std::runtime_error(fmt::format("cannot write PDB: {} residues are more than the 2,436,111 that hybrid-36 "
                                             "residue numbers can number; write SDF or XYZ instead",
                                             residue));
    }
}

}  // namespace

std::string PdbWriter::record(const Structure& structure, const std::string& title) const {
    require_writable(structure, "PDB");
    const Molecule& m = structure.molecule;
    const int n = m.atom_count();

    std::vector<std::string> serials(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) serials[static_cast<size_t>(i)] = serial(i);

    std::string out = title_records(title) + remark_records(structure);
    const std::vector<int> residue = residues(m);
    int in_residue = 0;
    for (int i = 0; i < n; ++i) {
        const Atom& atom = m.atoms[static_cast<size_t>(i)];
        const Eigen::Vector3d& p = structure.positions[static_cast<size_t>(i)];
        const std::string_view symbol = symbol_of(structure, i);
        in_residue = i > 0 && residue[static_cast<size_t>(i)] == residue[static_cast<size_t>(i - 1)] ? in_residue + 1 : 1;
        const std::string name = atom_name(symbol, in_residue, i);
        out += fmt::format("HETATM{:>5} {:4} LIG A{:>4}    {:8.3f}{:8.3f}{:8.3f}{:6.2f}{:6.2f}          {:>2}{:2}\n",
                           serials[static_cast<size_t>(i)], name, residue_number(residue[static_cast<size_t>(i)]),
                           coordinate(p.x(), i, 'x'), coordinate(p.y(), i, 'y'), coordinate(p.z(), i, 'z'), 1.0, 0.0,
                           upper(symbol), charge_field(atom.charge, i));
    }

    std::vector<std::vector<int>> partners(static_cast<size_t>(n));
    for (const Bond& b : m.bonds) {
        partners[static_cast<size_t>(b.a)].push_back(b.b);
        partners[static_cast<size_t>(b.b)].push_back(b.a);
    }
    for (int i = 0; i < n; ++i) {
        std::vector<int>& list = partners[static_cast<size_t>(i)];
        std::sort(list.begin(), list.end());
        list.erase(std::unique(list.begin(), list.end()), list.end());
        for (size_t start = 0; start < list.size(); start += kPartnersPerConect) {
            std::string line = "CONECT" + serials[static_cast<size_t>(i)];
            for (size_t k = start; k < list.size() && k < start + kPartnersPerConect; ++k)
                line += serials[static_cast<size_t>(list[k])];
            out += padded(std::move(line));
        }
    }
    out += padded("END");
    return out;
}

}  // namespace repel::output
