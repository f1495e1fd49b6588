#include "core/error.hpp"

#include <fmt/format.h>

#include <algorithm>

namespace repel {

namespace {
// The input line as shown under a message: a control byte becomes '?', one character for one byte, so that the caret
// below stays under its column.
std::string shown(std::string text) {
    for (char& ch : text)
        if (static_cast<unsigned char>(ch) < 0x20 || static_cast<unsigned char>(ch) == 0x7f) ch = '?';
    return text;
}
}  // namespace

std::string InputError::printable(const std::string& s) {
    std::string out;
    out.reserve(s.size());
    for (const char ch : s) {
        const auto byte = static_cast<unsigned char>(ch);
        if ((byte < 0x20 && ch != '\n' && ch != '\t') || byte == 0x7f)
            out += fmt::format("\\x{:02X}", static_cast<unsigned>(byte));
        else
            out += ch;
    }
    return out;
}

std::string InputError::describe() const {
    std::string out;
    if (column_ > 0)
        out = fmt::format("column {}: {}", column_, what());
    else
        out = what();
    if (!text_.empty() && text_.size() <= 200) {
        out += "\n  ";
        out += shown(text_);
        if (column_ > 0) {
            out += "\n  ";
            out.append(std::min(static_cast<size_t>(column_ - 1), text_.size()), ' ');
            out += '^';
        }
    } else if (!text_.empty() && column_ > 0) {
        // A long line: show a window around the column.
        size_t c = std::min(static_cast<size_t>(column_ - 1), text_.size());  // a column past the end: at the end
        size_t from = c > 40 ? c - 40 : 0;
        std::string window = shown(text_.substr(from, 80));
        out += from > 0 ? "\n  ..." : "\n  ";
        out += window;
        out += "\n  ";
        out.append((from > 0 ? 3 : 0) + (c - from), ' ');
        out += '^';
    }
    return out;
}

void fail(const std::string& message, const std::string& text, int column) { throw InputError(message, text, column); }

}  // namespace repel
