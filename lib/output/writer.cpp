// The writer factory, the choice of format by name or by extension, and the checks every writer makes first.
#include "output/writer.hpp"

#include <fmt/format.h>

#include <cctype>
#include <cmath>
#include <iterator>
#include <stdexcept>

#include "core/element.hpp"
#include "core/error.hpp"
#include "output/formats.hpp"

namespace repel {

namespace {

constexpr std::string_view kAcceptedNames = "xyz, pdb, sdf, mol, json";
constexpr std::string_view kAcceptedExtensions = ".xyz, .pdb, .sdf, .mol, .json";

std::string lower(std::string_view text) {
    std::string out(text);
    for (char& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return out;
}

// The format for a lower-case name or extension without its dot; false when there is none.
bool lookup(const std::string& key, Format& format) {
    if (key == "xyz") format = Format::xyz;
    else if (key == "pdb") format = Format::pdb;
    else if (key == "sdf" || key == "mol") format = Format::sdf;
    else if (key == "json") format = Format::json;
    else return false;
    return true;
}

}  // namespace

Format format_from_name(std::string_view name) {
    Format format{};
    if (!lookup(lower(name), format))
        fail(fmt::format("unknown output format '{}': expected one of {}", output::one_line(name, false),
                         kAcceptedNames));
    return format;
}

Format format_from_path(std::string_view path) {
    const size_t slash = path.find_last_of("/\\");
    const std::string_view file = slash == std::string_view::npos ? path : path.substr(slash + 1);
    const size_t dot = file.rfind('.');
    if (dot == std::string_view::npos || dot == 0 || dot + 1 == file.size())
        fail(fmt::format("cannot tell the output format of '{}': the file name has no extension; expected one of {}",
                         output::one_line(path, false), kAcceptedExtensions));
    Format format{};
    if (!lookup(lower(file.substr(dot + 1)), format))
        fail(fmt::format("cannot tell the output format of '{}': unknown extension '{}'; expected one of {}",
                         output::one_line(path, false), output::one_line(file.substr(dot), false),
                         kAcceptedExtensions));
    return format;
}

std::unique_ptr<StructureWriter> make_writer(Format format) {
    switch (format) {
        case Format::xyz: return std::make_unique<output::XyzWriter>();
        case Format::pdb: return std::make_unique<output::PdbWriter>();
        case Format::sdf: return std::make_unique<output::SdfWriter>();
        case Format::json: return std::make_unique<output::JsonWriter>();
    }
    throw std::logic_error("make_writer: unknown Format value");
}

namespace output {

void require_writable(const Structure& structure, std::string_view format) {
    const Molecule& m = structure.molecule;
    if (structure.positions.size() != m.atoms.size())
        throw std::runtime_error(fmt::format("cannot write {}: the structure has {} atoms but {} positions", format,
                                             m.atoms.size(), structure.positions.size()));
    static constexpr char kAxis[] = {'x', 'y', 'z'};
    for (size_t i = 0; i < m.atoms.size(); ++i) {
        const int z = m.atoms[i].z;
        if (z < 1 || z > kMaxElement)
            throw std::runtime_error(fmt::format("cannot write {}: atom {} has atomic number {}, which names no "
                                                 "element H..Rn",
                                                 format, i + 1, z));
        for (int k = 0; k < 3; ++k) {
            const double v = structure.positions[i][k];
            if (!std::isfinite(v))
                throw std::runtime_error(fmt::format("cannot write {}: atom {} ({}) has a non-finite {} coordinate "
                                                     "({}); nothing was written",
                                                     format, i + 1, element(z).symbol, kAxis[k], v));
        }
    }
    for (size_t b = 0; b < m.bonds.size(); ++b) {
        const Bond& bond = m.bonds[b];
        const int n = m.atom_count();
        if (bond.a < 0 || bond.a >= n || bond.b < 0 || bond.b >= n || bond.a == bond.b)
            throw std::runtime_error(fmt::format("cannot write {}: bond {} joins atoms {} and {}, not two of the {} "
                                                 "atoms",
                                                 format, b + 1, bond.a + 1, bond.b + 1, n));
    }
}

std::string_view symbol_of(const Structure& structure, int atom) {
    return element(structure.molecule.atoms[static_cast<size_t>(atom)].z).symbol;
}

std::string one_line(std::string_view text, bool ascii_only) {
    std::string out;
    out.reserve(text.size());
    size_t i = 0;
    while (i < text.size()) {
        const auto c = static_cast<unsigned char>(text[i]);
        if (c < 0x80) {
            out += (c < 0x20 || c == 0x7f) ? ' ' : static_cast<char>(c);
            ++i;
            continue;
        }
        // Length of a well-formed UTF-8 sequence starting here (RFC 3629), 0 when the bytes are not one.
        size_t len = c >= 0xc2 && c <= 0xdf ? 2 : c >= 0xe0 && c <= 0xef ? 3 : c >= 0xf0 && c <= 0xf4 ? 4 : 0;
        if (len != 0 && i + len <= text.size()) {
            for (size_t k = 1; k < len; ++k)
                if ((static_cast<unsigned char>(text[i + k]) & 0xc0) != 0x80) len = 0;
            if (len == 3) {
                const auto c1 = static_cast<unsigned char>(text[i + 1]);
                if ((c == 0xe0 && c1 < 0xa0) || (c == 0xed && c1 > 0x9f)) len = 0;  // overlong, surrogate
            } else if (len == 4) {
                const auto c1 = static_cast<unsigned char>(text[i + 1]);
                if ((c == 0xf0 && c1 < 0x90) || (c == 0xf4 && c1 > 0x8f)) len = 0;  // overlong, past U+10FFFF
            }
        } else {
            len = 0;
        }
        if (len == 0) {
            out += '?';
            ++i;
        } else {
            if (ascii_only) out += '?';
            else out.append(text.substr(i, len));
            i += len;
        }
    }
    return out;
}

std::string escape_markup(std::string_view text, std::string_view apostrophe) {
    const std::string clean = one_line(text, false);
    std::string out;
    out.reserve(clean.size());
    for (char c : clean) {
        switch (c) {
            case '&': out += "&amp;"; break;
            case '<': out += "&lt;"; break;
            case '>': out += "&gt;"; break;
            case '"': out += "&quot;"; break;
            case '\'': out += apostrophe; break;
            default: out += c;
        }
    }
    return out;
}

namespace {
constexpr double kPowersOfTen[] = {1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9};
}  // namespace

double tidy(double v, int decimals) {
    const double scale = decimals >= 0 && decimals <= 9 ? kPowersOfTen[decimals] : std::pow(10.0, decimals);
    const double r = std::round(v * scale) / scale;
    return r == 0.0 ? 0.0 : r;
}

void append_fixed(std::string& out, double v, int decimals, int width) {
    // round(v 10^d) is the integer whose digits fmt writes for tidy(v, d) (tidy divides it by 10^d again).
    const double scaled = decimals >= 1 && decimals <= 9 ? std::round(v * kPowersOfTen[decimals]) : 0.0;
    // Past 2^53 / 10 the integer is no longer exact: general formatting then (never for coordinates, which the
    // readers and the build keep within 1e7 A).
    if (!(decimals >= 1 && decimals <= 9) || !std::isfinite(scaled) || std::fabs(scaled) > 9.0e14) {
        fmt::format_to(std::back_inserter(out), "{:{}.{}f}", tidy(v, decimals), width, decimals);
        return;
    }
    long long k = std::llround(scaled);
    const bool negative = k < 0;
    if (negative) k = -k;
    char digits[32];
    int n = 0;
    for (int d = 0; d < decimals; ++d, k /= 10) digits[n++] = static_cast<char>('0' + k % 10);
    digits[n++] = '.';
    do {
        digits[n++] = static_cast<char>('0' + k % 10);
        k /= 10;
    } while (k > 0);
    if (negative) digits[n++] = '-';
    for (int pad = width - n; pad > 0; --pad) out.push_back(' ');
    while (n > 0) out.push_back(digits[--n]);
}

}  // namespace output

}  // namespace repel
