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
            ++bytes_;
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

std::optional<SdfRecordText> SdfRecordReader::next() {
    too_long_ = false;
    SdfRecordText rec;
    std::string line;
    bool started = false, content = false;
    while (true) {
        line.clear();
        int c;
        bool any = false;
        while ((c = in_.get()) != EOF) {
            any = true;
            ++bytes_;
            if (c == '\n') break;
            if (line.size() < max_) line.push_back(static_cast<char>(c));
        }
        if (!any) break;
        ++line_;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (!started) {
            // A record starts on the line after a `$$$$` (its title line may be blank).
            started = true;
            rec.line = line_;
            size_t s = line.find_first_not_of(" \t");
            size_t e = line.find_last_not_of(" \t");
            if (s != std::string::npos) rec.title = line.substr(s, e - s + 1);
        }
        if (line.find_first_not_of(" \t") != std::string::npos) content = true;
        const bool end = line.rfind("$$$$", 0) == 0;
        if (!too_long_) {
            if (rec.text.size() + line.size() + 1 > max_) {
                too_long_ = true;
                rec.text.clear();
                rec.text.shrink_to_fit();
            } else {
                rec.text += line;
                rec.text += '\n';
            }
        }
        if (end) return rec;
    }
    if (!content) return std::nullopt;  // nothing but blank lines after the last `$$$$`
    return rec;  // the last record without its `$$$$`
}

}  // namespace repel
