// The writers behind make_writer(), one per file format, and the few checks and text helpers they share. Private to
// lib/output (and its tests): the rest of the program goes through writer.hpp.
#pragma once

#include <string>
#include <string_view>

#include "output/writer.hpp"

namespace repel::output {

// Extended XYZ (xyz.cpp): atom count, a key=value comment line, `El x y z` in Angstrom with 6 decimals.
class XyzWriter : public StructureWriter {
public:
    std::string record(const Structure& structure, const std::string& title) const override;
};

// wwPDB PDB format 3.3 (pdb.cpp): TITLE, HETATM, CONECT, END; one complete entry per record.
class PdbWriter : public StructureWriter {
public:
    std::string record(const Structure& structure, const std::string& title) const override;
};

// CTfile MOL/SDF (sdf.cpp): V2000 up to 999 atoms and 999 bonds, V3000 beyond; data items; $$$$.
class SdfWriter : public StructureWriter {
public:
    std::string record(const Structure& structure, const std::string& title) const override;
};

// JSON (json.cpp): one object per record; begin()/separator()/end() make an array of several.
class JsonWriter : public StructureWriter {
public:
    std::string record(const Structure& structure, const std::string& title) const override;
    std::string begin() const override { return "[\n"; }
    std::string separator() const override { return ",\n"; }
    std::string end() const override { return "]\n"; }
};

// Throws std::runtime_error, naming the format and the atom, unless the structure can be written: one position per
// atom, every coordinate finite, every atomic number one with a symbol, every bond between two of its atoms.
void require_writable(const Structure& structure, std::string_view format);

// The element symbol of atom `atom` (0-based), as the periodic table writes it ("C", "Cl").
std::string_view symbol_of(const Structure& structure, int atom);

// The text on one line: control characters (newlines, tabs...) become spaces and bytes that are not valid UTF-8
// become '?'; with ascii_only, every non-ASCII character becomes one '?' too (PDB and CTfile are ASCII formats).
std::string one_line(std::string_view text, bool ascii_only);

// one_line(text, false) escaped for XML and HTML text and attribute values (&, <, >, ", '). The apostrophe's escape
// is the caller's: SVG (XML) writes "&apos;", the check report's HTML "&#39;".
std::string escape_markup(std::string_view text, std::string_view apostrophe = "&apos;");

// v rounded to `decimals` places, with a negative zero made positive so that "-0.000000" is never written.
double tidy(double v, int decimals);

// Appends tidy(v, decimals) with exactly `decimals` places, right-aligned in `width` characters: the same text as
// fmt's "{:width.decimalsf}" of tidy(v, decimals), written from one integer instead of a general float formatting
// (the writers spent more instructions in float formatting than the rest of a record). decimals is 1..9.
void append_fixed(std::string& out, double v, int decimals, int width);

// Hybrid-36 encoding of a non-negative integer in exactly `width` characters (Grosse-Kunstleve and Adams, the cctbx
// "hybrid-36: PDB serial and sequence numbers" reference implementation, 2007): decimal below 10^width (right-justified
// in the field), then upper-case base 36 from "A000..", then lower-case base 36 from "a000..". For width 5 that numbers
// 99999 + 2*26*36^4 = 87440031 atoms. Throws std::out_of_range past the lower-case range.
std::string hybrid36(int width, long long value);

}  // namespace repel::output
