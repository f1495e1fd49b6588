#include "input/records.hpp"

namespace repel {

std::optional<SmiRecord> SmiReader::next() {
    std::string buf;
    while (true) {
        too_long_ = false;
        buf.clear();
        int c;
        bool any = false;
        bool over = false;
        while ((c = in_.get()) != EOF) {
            any = true;
            if (c == '\n') break;
            if (buf.size() < max_) buf.push_back(static_cast<char>(c));
            else over = true;
        }
        if (!any) return std::nullopt;
        ++line_;
        if (!buf.empty() && buf.back() == '\r') buf.pop_back();
        if (over) {
            too_long_ = true;
            return SmiRecord{line_, {}, {}};
        }
        size_t start = buf.find_first_not_of(" \t");
        if (start == std::string::npos || buf[start] == '#') continue;
        size_t end = buf.find_first_of(" \t", start);
        SmiRecord rec;
        rec.line = line_;
        rec.text = buf.substr(start, end == std::string::npos ? std::string::npos : end - start);
        if (end != std::string::npos) {
            size_t ns = buf.find_first_not_of(" \t", end);
            if (ns != std::string::npos) {
                size_t ne = buf.find_last_not_of(" \t");
                rec.name = buf.substr(ns, ne - ns + 1);
            }
        }
        return rec;
    }
}

}  // namespace repel
