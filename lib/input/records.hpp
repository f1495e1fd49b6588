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
    // Bytes of the stream consumed so far (for progress against a file's size).
    unsigned long long bytes() const { return bytes_; }

private:
    std::istream& in_;
    size_t max_;
    long line_ = 0;
    bool too_long_ = false;
    unsigned long long bytes_ = 0;
};

// Records of an SD file, as text: each record is the lines from its header up to and including its `$$$$` line (or the
// end of the file), handed on unparsed so that the parsing can run where the building runs. A record longer than
// max_record_bytes is returned with text empty and too_long() set, and skipped up to its `$$$$` without being held.
struct SdfRecordText {
    long line = 0;       // 1-based line of the record's first (title) line
    std::string text;    // the whole record, lines ending in '\n'
    std::string title;   // its first line, trimmed
};

class SdfRecordReader {
public:
    explicit SdfRecordReader(std::istream& in, size_t max_record_bytes = 16u << 20) : in_(in), max_(max_record_bytes) {}
    std::optional<SdfRecordText> next();
    bool too_long() const { return too_long_; }
    unsigned long long bytes() const { return bytes_; }

private:
    std::istream& in_;
    size_t max_;
    long line_ = 0;
    bool too_long_ = false;
    unsigned long long bytes_ = 0;
};

}  // namespace repel
