// Records of a .smi file: one molecule a line, SMILES then optional whitespace and a name; blank lines and lines
// starting with '#' are skipped but counted.
#pragma once

#include <istream>
#include <optional>
#include <string>

namespace repel {

struct SmiRecord {
    long line = 0;       // 1-based line number in the file
    std::string text;    // the SMILES (or formula)
    std::string name;    // the rest of the line after the first run of whitespace, trimmed; may be empty
};

// Reads the next record, or nothing at the end. Lines longer than max_line_length are returned with text empty and
// name holding a message (the caller reports them as failed records) and are skipped without being held in memory.
class SmiReader {
public:
    explicit SmiReader(std::istream& in, size_t max_line_length = 1u << 20) : in_(in), max_(max_line_length) {}
    std::optional<SmiRecord> next();
    // The record just returned was a line too long to read.
    bool too_long() const { return too_long_; }

private:
    std::istream& in_;
    size_t max_;
    long line_ = 0;
    bool too_long_ = false;
};

}  // namespace repel
