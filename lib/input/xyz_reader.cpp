// XYZ (common practice; the comment line as in the extended-XYZ convention): the atom count, a comment line, then
// one atom a line: an element symbol (any case) or an atomic number, x, y, z in Angstrom; further columns are ignored.
// Frames follow one another; blank lines after the last frame are allowed. From the comment line, `charge=<int>` and
// `multiplicity=<int>` (also `mult=`) are read when present (a malformed value is an error), and `name="..."` is
// taken as the title; otherwise the whole comment is the title.
#include "input/structure_reader.hpp"

#include <fmt/format.h>

#include <cctype>

#include "core/element.hpp"
#include "core/limits.hpp"
#include "input/line_reader.hpp"

namespace repel {
namespace {

using input::fail_at;


std::vector<std::string> split(std::string_view s) {
    std::vector<std::string> out;
    size_t i = 0;
    while (i < s.size()) {
        while (i < s.size() && std::isspace(static_cast<unsigned char>(s[i]))) ++i;
        size_t j = i;
        while (j < s.size() && !std::isspace(static_cast<unsigned char>(s[j]))) ++j;
        if (j > i) out.emplace_back(s.substr(i, j - i));
        i = j;
    }
    return out;
}

// key=value pairs of the comment line; a quoted value may hold spaces.
void read_comment(const std::string& comment, long line, ReadStructure& rec) {
    rec.title = std::string(input::trim(comment));
    size_t i = 0;
    while (i < comment.size()) {
        while (i < comment.size() && std::isspace(static_cast<unsigned char>(comment[i]))) ++i;
        const size_t key_start = i;
        while (i < comment.size() && comment[i] != '=' && !std::isspace(static_cast<unsigned char>(comment[i]))) ++i;
        if (i >= comment.size() || comment[i] != '=') {
            while (i < comment.size() && !std::isspace(static_cast<unsigned char>(comment[i]))) ++i;
            continue;
        }
        std::string key = comment.substr(key_start, i - key_start);
        for (char& c : key) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
        ++i;
        const size_t value_start = i;
        std::string value;
        if (i < comment.size() && comment[i] == '"') {
            ++i;
            while (i < comment.size() && comment[i] != '"') {
                if (comment[i] == '\\' && i + 1 < comment.size()) ++i;
                value += comment[i++];
            }
            ++i;
        } else {
            while (i < comment.size() && !std::isspace(static_cast<unsigned char>(comment[i]))) value += comment[i++];
        }
        if (key == "charge" || key == "multiplicity" || key == "mult") {
            auto v = input::parse_integer(value);
            const bool mult = key != "charge";
            if (!v || (mult && (*v < 1 || *v > 20)) || (!mult && (*v < -20 || *v > 20)))
                fail_at(line, fmt::format("{}= must be {}, found '{}'", key,
                                          mult ? "a whole number from 1 to 20" : "a whole number from -20 to 20", value),
                        comment, static_cast<int>(value_start + 1));
            if (mult) {
                rec.structure.multiplicity = static_cast<int>(*v);
                rec.has_multiplicity = true;
            } else {
                rec.structure.charge = static_cast<int>(*v);
                rec.has_charge = true;
            }
        } else if (key == "name" || key == "title") {
            rec.title = value;
        }
    }
}

}  // namespace

std::vector<ReadStructure> read_xyz(std::istream& in) {
    input::LineReader reader(in);
    std::vector<ReadStructure> out;
    while (true) {
        auto count_line = reader.next();
        if (!count_line) break;
        if (input::trim(*count_line).empty()) {
            // Blank lines may only close the file.
            while (auto more = reader.next()) {
                if (!input::trim(*more).empty())
                    fail_at(reader.line(), "expected the atom count of the next structure (blank lines may only end "
                                           "the file)", *more, 1);
            }
            break;
        }
        const long count_at = reader.line();
        auto tokens = split(*count_line);
        auto count = input::parse_integer(tokens.empty() ? "" : tokens[0]);
        if (count && *count == 0) fail_at(count_at, "a structure of 0 atoms: expected at least one atom", *count_line, 1);
        if (count && tokens.size() == 1 && *count > kMaxAtoms)
            throw LimitError(fmt::format("line {}: a structure of {} atoms: more than {} (the largest structure repel "
                                         "reads)",
                                         count_at, *count, kMaxAtoms),
                             *count_line, 1);
        if (!count || tokens.size() > 1 || *count < 0) {
            const std::string what =
                out.empty() ? "expected the atom count (a whole number) on the first line of an XYZ file"
                            : fmt::format("expected the atom count of structure {} (a whole number); the count on line "
                                          "{} may not match its atoms",
                                          out.size() + 1, out.back().line);
            fail_at(count_at, what, *count_line, 1);
        }
        ReadStructure rec;
        rec.line = count_at;
        auto comment = reader.next();
        if (!comment)
            fail_at(count_at + 1, fmt::format("the file ends before the comment line of the structure of {} atoms "
                                              "announced on line {}", *count, count_at),
                    "");
        read_comment(*comment, reader.line(), rec);
        Molecule& mol = rec.structure.molecule;
        mol.name = rec.title;
        for (long k = 0; k < *count; ++k) {
            auto line = reader.next();
            if (!line)
                fail_at(reader.line() + 1, fmt::format("the file ends after {} of the {} atom lines announced on line {}",
                                                       k, *count, count_at),
                        "");
            auto f = split(*line);
            if (f.empty())
                fail_at(reader.line(), fmt::format("expected atom {} of {} (Element x y z), found a blank line; the count "
                                                   "on line {} may be wrong",
                                                   k + 1, *count, count_at),
                        *line, 1);
            int z = input::element_from_symbol(f[0]);
            if (z == 0) {
                if (auto number = input::parse_integer(f[0]); number && *number >= 1 && *number <= kMaxElement)
                    z = static_cast<int>(*number);
            }
            if (z == 0)
                fail_at(reader.line(), fmt::format("'{}' is not an element symbol (H to Rn) or atomic number", f[0]),
                        *line, static_cast<int>(line->find(f[0]) + 1));
            if (f.size() < 4)
                fail_at(reader.line(), fmt::format("expected the element and three coordinates, found {} field{}",
                                                   f.size(), f.size() == 1 ? "" : "s"),
                        *line, static_cast<int>(line->size() + 1));
            Eigen::Vector3d p;
            size_t search = line->find(f[0]) + f[0].size();
            for (int d = 0; d < 3; ++d) {
                const std::string& field = f[static_cast<size_t>(d + 1)];
                const size_t col = line->find(field, search);
                search = col + field.size();
                std::string why;
                auto v = input::parse_coordinate(field, &why);
                if (!v)
                    fail_at(reader.line(), fmt::format("the {} coordinate '{}' {}", "xyz"[d], field, why),
                            *line, static_cast<int>(col + 1));
                p[d] = *v;
            }
            Atom atom;
            atom.z = z;
            mol.add_atom(atom);
            rec.structure.positions.push_back(p);
        }
        out.push_back(std::move(rec));
    }
    if (out.empty()) fail_at(1, "the file is empty: expected an XYZ atom count", "");
    return out;
}

}  // namespace repel
