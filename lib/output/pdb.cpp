// PDB writer, wwPDB PDB format 3.3 (Atomic Coordinate Entry Format Description, version 3.30, 2008): one complete
// entry per record -- TITLE, one HETATM per atom, CONECT for every bond, END -- every line padded to 80 columns.
//
// Field positions (format 3.3, HETATM): 1-6 "HETATM", 7-11 serial, 13-16 atom name, 17 altLoc, 18-20 resName,
// 22 chainID, 23-26 resSeq, 27 iCode, 31-38 / 39-46 / 47-54 x y z (8.3), 55-60 occupancy (6.2), 61-66 tempFactor
// (6.2), 77-78 element symbol right-justified, 79-80 charge ("1+", "2-"). CONECT: 1-6 "CONECT", 7-11 the atom, then
// up to four bonded atoms in 12-16, 17-21, 22-26, 27-31; more partners continue on further CONECT lines.
// TITLE: 1-6 "TITLE ", 9-10 continuation number (blank on the first line), 11-80 text; continuation lines start the
// text after a blank column 11 (format 3.3, section 1, continuation of String fields; from memory).
//
// Choices made here:
//  - The molecule is one residue: resName UNL (the wwPDB code for an unknown ligand), chain A, resSeq 1, all HETATM.
//  - Atom names are the upper-case element symbol plus a running number per element (C1, C2, H1...), so they are
//    unique within the residue. Format 3.3 aligns the element symbol of the name: a one-letter symbol starts in
//    column 14 (" C1 ", " H12") unless the name has four characters ("H123" starts in column 13); a two-letter symbol
//    starts in column 13 ("CL1 ", "CL12").
//  - Past 99,999 atoms the 5-column serial (and the CONECT fields, which hold serials) use the hybrid-36 encoding:
//    99999 is followed by A0000 ... ZZZZZ, then a0000 ... zzzzz, up to 87,440,031 atoms; numbers below 100,000 are
//    plain decimal, so a file of fewer atoms is ordinary format 3.3. Past the 999th atom of a one-letter element (99th
//    of a two-letter one) the running number in the atom name is hybrid-36 encoded in the same way, in the 3 (2)
//    columns left to it ("C999", then "CA00"...): the name stays unique and 4 columns wide; the element of every atom
//    is in columns 77-78, which is where format 3.3 says to read it. A structure past either range is refused.
//  - Formal charges go to columns 79-80; format 3.3 has no field for the spin multiplicity or for warnings, so those
//    are written only by the XYZ, SDF and JSON writers. Coordinates must fit the 8.3 fields (-999.999 .. 9999.999
//    Angstrom); a structure that does not is refused rather than written with broken columns.
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

// Columns 13-16: the atom name, aligned as format 3.3 aligns element symbols.
std::string atom_name(std::string_view symbol, int number, int atom) {
    const std::string sym = upper(symbol);
    const int width = sym.size() == 1 ? 3 : 2;  // columns left for the number
    std::string digits;
    try {
        digits = hybrid36(width, number);
    } catch (const std::out_of_range&) {
        const int capacity = width == 3 ? 999 + 2 * 26 * 36 * 36 : 99 + 2 * 26 * 36;  // hybrid-36 range
        throw std::runtime_error(fmt::format("cannot write PDB: atom {} is {} atom number {}, past the {} that a "
                                             "4-column atom name can number uniquely; write SDF or XYZ instead",
                                             atom + 1, symbol, number, capacity));
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

}  // namespace

std::string PdbWriter::record(const Structure& structure, const std::string& title) const {
    require_writable(structure, "PDB");
    const Molecule& m = structure.molecule;
    const int n = m.atom_count();

    std::vector<std::string> serials(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) serials[static_cast<size_t>(i)] = serial(i);

    std::string out = title_records(title);
    std::array<int, kMaxElement + 1> per_element{};
    for (int i = 0; i < n; ++i) {
        const Atom& atom = m.atoms[static_cast<size_t>(i)];
        const Eigen::Vector3d& p = structure.positions[static_cast<size_t>(i)];
        const std::string_view symbol = symbol_of(structure, i);
        const std::string name = atom_name(symbol, ++per_element[static_cast<size_t>(atom.z)], i);
        out += fmt::format("HETATM{:>5} {:4} UNL A   1    {:8.3f}{:8.3f}{:8.3f}{:6.2f}{:6.2f}          {:>2}{:2}\n",
                           serials[static_cast<size_t>(i)], name, coordinate(p.x(), i, 'x'),
                           coordinate(p.y(), i, 'y'), coordinate(p.z(), i, 'z'), 1.0, 0.0, upper(symbol),
                           charge_field(atom.charge, i));
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
