#include "core/error.hpp"

#include <fmt/format.h>

#include <algorithm>

namespace repel {

std::string InputError::describe() const {
    std::string out;
    if (column_ > 0)
        out = fmt::format("column {}: {}", column_, what());
    else
        out = what();
    if (!text_.empty() && text_.size() <= 200) {
        out += "\n  " + text_;
        if (column_ > 0) out += "\n  " + std::string(std::min(static_cast<size_t>(column_ - 1), text_.size()), ' ') + "^";
    } else if (!text_.empty() && column_ > 0) {
        // A long line: show a window around the column.
        size_t c = std::min(static_cast<size_t>(column_ - 1), text_.size());  // a column past the end: at the end
        size_t from = c > 40 ? c - 40 : 0;
        std::string window = text_.substr(from, 80);
        out += "\n  " + std::string(from > 0 ? "..." : "") + window;
        out += "\n  " + std::string((from > 0 ? 3 : 0) + (c - from), ' ') + "^";
    }
    return out;
}

void fail(const std::string& message, const std::string& text, int column) { throw InputError(message, text, column); }

}  // namespace repel
