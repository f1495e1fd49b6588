// Line-by-line reading shared by the structure readers: line numbers, carriage returns, overlong lines, and the
// number parsing every format needs (whole field, finite).
#pragma once

#include <istream>
#include <optional>
#include <string>
#include <string_view>

namespace repel::input {

class LineReader {
public:
    explicit LineReader(std::istream& in) : in_(in) {}
    // The next line without its end of line, or nothing at the end of the stream. Throws InputError for a line
    // longer than kMaxLine (a binary file read by mistake).
    std::optional<std::string> next();
    long line() const { return line_; }  // 1-based number of the line last returned
    static constexpr size_t kMaxLine = 1u << 16;

private:
    std::istream& in_;
    long line_ = 0;
};

// "line 7: message" as an InputError with the text of the line and the column.
[[noreturn]] void fail_at(long line, const std::string& message, const std::string& text, int column = 0);

// Parses a whole field (surrounding blanks allowed) as a finite number; nothing when it is not one.
std::optional<double> parse_real(std::string_view field);
std::optional<long> parse_integer(std::string_view field);
// Coordinates (Angstrom) beyond this magnitude are refused: no molecule spans a millimetre (1e7 A; a 1,000,000-atom chain
// stretched straight is 1.3e6 A long), and numbers near the
// limits of a double make every distance infinite downstream (common practice: a guard, not chemistry).
constexpr double kMaxCoordinate = 1e7;
// A coordinate: parse_real within +-kMaxCoordinate. On failure *why says what is wrong ("is not a finite number",
// "is beyond +-10000000 Angstrom").
std::optional<double> parse_coordinate(std::string_view field, std::string* why);
std::string_view trim(std::string_view s);
// Columns from..to (1-based, inclusive) of a fixed-column line, empty past its end.
std::string_view columns(std::string_view line, size_t from, size_t to);
// Atomic number for an element symbol in any case ("CL", "cl", "Cl"), or 0.
int element_from_symbol(std::string_view symbol);

}  // namespace repel::input
