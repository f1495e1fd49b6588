#include "input/line_reader.hpp"

#include <fmt/format.h>

#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdlib>

#include "core/element.hpp"
#include "core/error.hpp"

namespace repel::input {

std::optional<std::string> LineReader::next() {
    std::string s;
    bool any = false;
    int c;
    while ((c = in_.get()) != std::char_traits<char>::eof()) {
        any = true;
        if (c == '\n') break;
        if (s.size() >= kMaxLine)
            fail_at(line_ + 1, fmt::format("a line longer than {} characters (is this a text file?)", kMaxLine),
                    s.substr(0, 80));
        s += static_cast<char>(c);
    }
    if (!any) return std::nullopt;
    if (!s.empty() && s.back() == '\r') s.pop_back();
    ++line_;
    return s;
}

void fail_at(long line, const std::string& message, const std::string& text, int column) {
    throw InputError(fmt::format("line {}: {}", line, message), text, column);
}

std::string_view trim(std::string_view s) {
    size_t a = 0, b = s.size();
    while (a < b && std::isspace(static_cast<unsigned char>(s[a]))) ++a;
    while (b > a && std::isspace(static_cast<unsigned char>(s[b - 1]))) --b;
    return s.substr(a, b - a);
}

std::optional<double> parse_real(std::string_view field) {
    field = trim(field);
    if (field.empty() || field.size() > 64) return std::nullopt;
    const std::string text(field);
    char* end = nullptr;
    const double v = std::strtod(text.c_str(), &end);
    if (end != text.c_str() + text.size() || !std::isfinite(v)) return std::nullopt;
    // strtod reads "nan", "inf" and hexadecimal; only decimal numbers are coordinates.
    for (char c : text)
        if (!(std::isdigit(static_cast<unsigned char>(c)) || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E'))
            return std::nullopt;
    return v;
}

std::optional<double> parse_coordinate(std::string_view field, std::string* why) {
    auto v = parse_real(field);
    if (!v) {
        *why = "is not a finite number";
        return std::nullopt;
    }
    if (std::abs(*v) > kMaxCoordinate) {
        *why = fmt::format("is beyond +-{:.0f} Angstrom", kMaxCoordinate);
        return std::nullopt;
    }
    return v;
}

std::optional<long> parse_integer(std::string_view field) {
    field = trim(field);
    if (!field.empty() && field[0] == '+') field.remove_prefix(1);
    long v = 0;
    auto [p, ec] = std::from_chars(field.data(), field.data() + field.size(), v);
    if (field.empty() || ec != std::errc() || p != field.data() + field.size()) return std::nullopt;
    return v;
}

std::string_view columns(std::string_view line, size_t from, size_t to) {
    if (from > line.size()) return {};
    return line.substr(from - 1, std::min(to, line.size()) - (from - 1));
}

int element_from_symbol(std::string_view symbol) {
    symbol = trim(symbol);
    if (symbol.empty() || symbol.size() > 3) return 0;
    std::string s(symbol);
    for (size_t i = 0; i < s.size(); ++i)
        s[i] = static_cast<char>(i == 0 ? std::toupper(static_cast<unsigned char>(s[i]))
                                        : std::tolower(static_cast<unsigned char>(s[i])));
    // Deuterium and tritium are hydrogen.
    if (s == "D" || s == "T") return 1;
    return element_number(s);
}

}  // namespace repel::input
