// Hostile input: a table of inputs built to break a reader or the builder (deep nesting, huge molecules, reused
// ring-closure digits, thousands of components, absurd numbers, binary bytes, NUL bytes, truncated files, NaN and
// infinite coordinates, a time limit of nothing). Each must end with a clear message (an InputError or
// UnsupportedError with text, and for the expected refusals the words that say why) or with a valid structure
// (finite coordinates, every writer writes it, a SMILES writes back to the same graph), and never crash or hang.
// The bound per input is a hang guard, not a speed claim: it is set far above the time the input takes (five to
// twenty times what a sanitizer build needs on the busy 2-core development machine), and an input past it stops the whole test
// executable with the input's name. CI runs this table under the sanitizer build too (scripts/test.sh).
#include <gtest/gtest.h>

#include <cctype>
#include <chrono>
#include <limits>
#include <map>
#include <set>
#include <cstdio>
#include <functional>
#include <future>
#include <sstream>
#include <string>
#include <vector>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "check/audit.hpp"
#include "core/limits.hpp"
#include "fuzz/fuzz_common.hpp"
#include "input/formula.hpp"
#include "input/records.hpp"
#include "input/smiles.hpp"
#include "input/species.hpp"
#include "input/structure_reader.hpp"
#include "output/writer.hpp"

using namespace repel;

namespace {

// What reads the input: the SMILES reader (then writes and reads back), the species reader (SMILES, then formula),
// the formula reader, a .smi file, a structure file, the whole build (read, build, write every format), the
// audit of `repel check` (read the file, audit every structure), a conformer ensemble (`repel build --conformers 5`:
// every conformer finite and written).
enum class Step { smiles, species, formula, smi_file, xyz, pdb, sdf, build, check_xyz, ensemble };
// valid: must read (build) to a valid result: finite coordinates, every writer writes it, a SMILES writes back to the
// same graph (see run()); refused: must end with a message containing `words`. Every row states one of the two.
enum class Want { valid, refused };

struct Case {
    std::string name;
    Step step;
    std::function<std::string()> input;
    Want want;
    std::string words;     // part of the message of a refusal (every refusal row names it)
    double bound = 60;     // seconds: hang guard
    double time_limit = kDefaultTimeLimit;  // BuildOptions::time_limit for Step::build
};

std::string repeat(const std::string& s, int n) {
    std::string out;
    out.reserve(s.size() * static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) out += s;
    return out;
}

std::function<std::string()> text(std::string s) {
    return [s] { return s; };
}

std::string xyz_of(int n, const std::function<std::string(int)>& line, const std::string& count = "") {
    std::string out = (count.empty() ? std::to_string(n) : count) + "\nhostile\n";
    for (int i = 0; i < n; ++i) out += line(i) + "\n";
    return out;
}

std::string pdb_atom(int serial, double x, double y, double z, const std::string& element) {
    char buf[128];
    std::snprintf(buf, sizeof buf, "HETATM%5d %-4s UNL A   1    %8.3f%8.3f%8.3f  1.00  0.00          %2s\n", serial,
                  element.c_str(), x, y, z, element.c_str());
    return buf;
}

const std::string kWaterXyz = "3\nwater\nO 0.000 0.000 0.117\nH 0.000 0.757 -0.469\nH 0.000 -0.757 -0.469\n";
const std::string kFormaldehydeSdf =
    "formaldehyde\n  invented lab\n\n  4  3  0  0  0  0  0  0  0  0999 V2000\n"
    "    0.0000    0.0000    0.0000 C   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "    1.2050    0.0000    0.0000 O   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "   -0.5900    0.9400    0.0000 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "   -0.5900   -0.9400    0.0000 H   0  0  0  0  0  0  0  0  0  0  0  0\n"
    "  1  2  2  0\n  1  3  1  0\n  1  4  1  0\nM  END\n$$$$\n";

std::string replaced(std::string s, const std::string& from, const std::string& to) {
    const size_t at = s.find(from);
    if (at != std::string::npos) s.replace(at, from.size(), to);
    return s;
}

// A linear chain of n units of `unit` joined by ring bonds that reuse one digit: C1CC1C1CC1...
std::string reused_digit_chain(const std::string& digit, int n) { return repeat("C" + digit + "CC" + digit, n); }

std::vector<Case> cases() {
    std::vector<Case> c;
    auto add = [&](std::string name, Step step, std::function<std::string()> input, Want want, std::string words = "",
                   double bound = 60) {
        c.push_back({std::move(name), step, std::move(input), want, std::move(words), bound});
    };
    const auto S = Step::smiles;
    const auto R = Want::refused;
    const auto V = Want::valid;

    // --- SMILES: nesting, size, chains (recursion depth must not follow the input)
    add("open_parentheses_100k", S, [] { return repeat("(", 100000); }, R, "must follow an atom");
    add("atom_then_open_parentheses_100k", S, [] { return "C" + repeat("(", 100000); }, R, "expected an atom, a bond or '.' after");
    add("close_parentheses_100k", S, [] { return "C" + repeat(")", 100000); }, R, "')' has no matching");
    add("nested_branches_100k", S, [] { return repeat("C(", 100000) + "C" + repeat(")", 100000); }, V, "", 120);
    add("nested_branches_unclosed", S, [] { return repeat("C(", 50000) + "C"; }, R, "'(' at column 100000 is never closed");
    add("chain_100k", S, [] { return repeat("C", 100000); }, V, "", 120);
    add("chain_1m_atoms", S, [] { return repeat("C", kMaxAtoms); }, V, "", 600);
    add("chain_over_atom_limit", S, [] { return repeat("C", kMaxAtoms + 1); }, R, "more than 1000000 atoms", 300);
    // Read (OpenSMILES: no implicit hydrogens above every normal valence), refused by the domain analysis.
    add("hub_with_100k_branches", Step::build, [] { return "C" + repeat("(C)", 100000); }, R, "valence electrons", 120);
    add("xenon_with_10k_fluorines", S, [] { return "[Xe]" + repeat("(F)", 10000); }, V, "", 60);  // builds fail
    add("bracket_chain_50k", S, [] { return repeat("[CH2]", 50000); }, V, "", 120);
    add("double_bond_chain_20k", S, [] { return repeat("C=C", 10000); }, Want::valid, "", 60);
    add("cumulene_2k", S, [] { return "C" + repeat("=C", 2000); }, Want::valid, "", 60);
    add("polyyne_10k", S, [] { return "C" + repeat("#CC", 5000) + "#C"; }, Want::valid, "", 60);
    // --- SMILES: ring-closure digits reused thousands of times, many open rings
    add("digit_1_reused_10k", S, [] { return reused_digit_chain("1", 10000); }, V, "", 120);
    add("digit_%99_reused_10k", S, [] { return reused_digit_chain("%99", 10000); }, V, "", 120);
    add("digit_reused_across_dots_10k", S, [] { return repeat("C1CC1.", 10000) + "C"; }, V, "", 120);
    add("all_100_ring_numbers_open", S,
        [] {
            std::string s = "C";
            for (int i = 0; i < 100; ++i) s += "%" + std::string(i < 10 ? "0" : "") + std::to_string(i);
            return s;
        },
        R, "ring 0 opened at column 2 is never closed", 30);
    add("ring_never_closed", S, text("C1CCC"), R, "ring");
    add("ring_bond_to_itself", S, text("C11"), R, "itself");
    add("ring_bond_twice", S, text("C12CCC12"), R, "second time");
    add("ring_bond_conflicting_orders", S, text("C=1CCC-1"), R, "ring bond 1 is written '=' at column 2 and '-");
    add("percent_without_digits", S, text("C%"), R, "'%' must be followed by two digits (ring bonds");
    add("percent_one_digit", S, text("C%1CC%1"), R, "'%' must be followed by two digits (ring bonds");
    add("ring_closure_after_dot", S, text("C1.C1"), V);
    add("big_ring_5000", S, [] { return "C1" + repeat("C", 4998) + "C1"; }, V, "", 60);
    add("aromatic_ring_10000", S, [] { return "c1" + repeat("c", 9998) + "c1"; }, V, "", 60);
    add("aromatic_ring_odd_10001", S, [] { return "c1" + repeat("c", 9999) + "c1"; }, R, "cannot kekulize the aromatic system: the", 60);
    add("polyphenylene_2000", S, [] { return repeat("c1ccc(cc1)", 2000) + "C"; }, V, "", 120);
    add("fused_aromatic_ladder_500", S,
        [] {
            // naphthalene-like ladder: rings sharing an edge, built with two alternating digits
            std::string s = "c1ccc2";
            for (int i = 0; i < 501; ++i) s += (i % 2 == 0) ? "cc3ccccc3cc2" : "";  // an odd count closes ring 2
            return s + "c1";
        },
        Want::valid, "", 60);
    // --- SMILES: components
    add("dots_10k_methane", S, [] { return repeat("C.", 10000) + "C"; }, V, "", 60);
    add("dots_100k_ions", S, [] { return repeat("[Na+].[Cl-].", 50000) + "O"; }, V, "", 120);
    add("only_dots", S, [] { return repeat(".", 10000); }, R, "'.' must follow an atom");
    add("leading_dot", S, text(".C"), R, "'.' must follow an atom");
    add("trailing_dot", S, text("C."), R, "the SMILES ends after '.': expected an atom");
    add("two_dots", S, text("C..C"), R, "two dots");
    // --- SMILES: absurd numbers in brackets
    add("charge_99999", S, text("[C+99999]"), R, "charge +99 is out of range (at most 15)");
    add("charge_16", S, text("[C+16]"), R, "out of range");
    add("charge_minus_16", S, text("[C-16]"), R, "out of range");
    add("charge_17_pluses", S, [] { return "[C" + repeat("+", 17) + "]"; }, R, "malformed charge: write a charge as +, ++ or +n");
    add("charge_15_valid_read", S, text("[C+15]"), Want::valid);
    add("isotope_9999", S, text("[9999C]"), R, "digits");
    add("isotope_999", S, text("[999C]"), V);
    add("isotope_huge", S, text("[99999999999999999999C]"), R, "isotope '99999999' has more than 3 digits");
    add("hydrogen_count_99", S, text("[CH99]"), R, "unexpected '9' in the bracket atom: expected");
    add("atom_class_9_digits", S, text("[CH4:999999999]"), V);
    add("atom_class_10_digits", S, text("[CH4:9999999999]"), R, "digits");
    add("unknown_element", S, text("[Xx]"), R, "unknown element 'Xx");
    add("element_beyond_radon", S, text("[Og]"), R, "element 'Og' lies beyond radon: repel handles H");
    add("chiral_index_out_of_range", S, text("F[C@TB21](Cl)(Br)(I)C"), R, "'@TB21' is out of range: @TB takes 1 to 20");
    add("chiral_class_OH31", S, text("F[S@OH31](F)(F)(F)(F)F"), R, "'@OH31' is out of range: @OH takes 1 to 30");
    add("tetrahedral_with_five_neighbours", S, text("F[C@TH1](Cl)(Br)(I)C"), R, "chirality mark '@' needs 4 (or 3 and a lone");
    add("shorthand_mark_with_seven_neighbours", S, text("F[C@](Cl)(Br)(I)(C)(C)C"), R, "chirality mark '@' needs 4 (or 3 and a lone");
    add("shorthand_mark_with_six_neighbours_is_octahedral", S, text("F[C@](Cl)(Br)(I)(C)C"), V);
    add("conflicting_double_bond_marks", S, text("F/C=C(/F)/F"), R, "contradictory '/' '\\' marks: the marks at");
    add("direction_mark_spam", S, text("C/////C"), R, "two bond symbols in a row: '/' then '/");
    add("quadruple_bond_twice", S, text("C$$C"), R, "two bond symbols in a row: '$' then '$");
    add("marks_on_10k_double_bonds", S, [] { return "F" + repeat("/C=C", 5000) + "/F"; }, Want::valid, "", 60);
    add("chiral_chain_10k", S, [] { return repeat("[C@@H](F)", 10000); }, V, "", 120);
    // --- SMILES: bytes that are not SMILES
    add("empty", S, text(""), R, "empty");
    add("blank", S, text("   "), R, "empty SMILES: expected an atom");
    add("nul_byte_inside", S, [] { return std::string("C\0C", 3); }, R, "unexpected byte 0x00: expected an atom, a bond");
    add("nul_byte_only", S, [] { return std::string(1, '\0'); }, R, "unexpected byte 0x00: expected an atom, a bond");
    add("invalid_utf8", S, text("C\xff\xfe"), R, "unexpected byte 0xFF: expected an atom, a bond");
    add("utf8_letter", S, text("C\xc3\xa9"), R, "unexpected byte 0xC3: expected an atom, a bond");
    add("control_character", S, text("C\x01" "C"), R, "unexpected byte 0x01: expected an atom, a bond");
    add("binary_header", S, text("\x7f" "ELF\x02\x01\x01"), R, "unexpected byte 0x7F: expected an atom, a bond");
    add("bracket_unclosed", S, text("[C"), R, "the bracket atom opened at column 1 is never");
    add("bracket_empty", S, text("[]"), R, "expected an element symbol in the bracket atom");
    add("long_bracket_junk", S, [] { return "[" + repeat("C", 100000) + "]"; }, R, "unexpected 'C' in the bracket atom: expected", 30);
    add("wildcard_atoms", S, text("*C*"), R, "the wildcard atom '*' stands for an unknown atom");

    // --- species and formulas
    add("formula_absurd_count", Step::formula, text("XeF99999999999"), R, "more than 12 ligands: a formula is read only");
    add("formula_charge_99", Step::formula, text("SO4 99-"), R, "a charge of 99 is not a species' charge (at");
    add("formula_1000_elements", Step::formula, [] { return repeat("Cl", 1000); }, R, "more than 12 ligands: a formula is read only", 30);
    add("formula_long_digits", Step::formula, [] { return "C" + repeat("9", 10000); }, R, "more than 12 ligands: a formula is read only", 30);
    add("formula_binary", Step::formula, text("\x01\x02\x03"), R, "unexpected byte 0x01: expected an element");
    add("formula_empty", Step::formula, text(""), R, "empty formula: expected element symbols such as");
    add("formula_valid", Step::formula, text("XeF4"), V);
    add("species_deep_parentheses", Step::species, [] { return repeat("(", 50000) + "F" + repeat(")", 50000); }, R, "a branch '(' must follow an atom", 30);
    add("species_long_formula_like", Step::species, [] { return repeat("H2O", 30000); }, R, "not SMILES, and as a formula: more than 12", 30);

    // --- .smi files: overlong lines and binary content cost only their own record
    add("smi_line_over_limit_then_valid", Step::smi_file,
        [] { return repeat("C", (1 << 20) + 10) + " huge\nCCO ethanol\n"; }, V, "", 60);
    add("smi_binary_lines", Step::smi_file, [] { return std::string("\x00\x01\xff\n\x7f\n", 6) + "CCO ethanol\n"; }, V);
    add("smi_very_long_name", Step::smi_file, [] { return "CCO " + repeat("n", 500000) + "\n"; }, V);
    add("smi_crlf_and_no_final_newline", Step::smi_file, text("CCO ethanol\r\nC methane"), V);

    // --- XYZ
    const auto X = Step::xyz;
    add("xyz_empty", X, text(""), R, "the file is empty: expected an XYZ atom count");
    add("xyz_count_huge", X, text("999999999999\nx\n"), R, "a structure of 999999999999 atoms: more than");
    add("xyz_count_over_limit", X, text("1000001\nx\nH 0 0 0\n"), R, "more than 1000000");
    add("xyz_count_negative", X, text("-1\nx\n"), R, "expected the atom count (a whole number) on the");
    add("xyz_count_not_integer", X, text("1e3\nx\n"), R, "expected the atom count (a whole number) on the");
    add("xyz_count_more_than_atoms", X, text("5\nx\nH 0 0 0\n"), R, "ends after 1 of the 5");
    add("xyz_count_fewer_than_atoms", X, text("1\nx\nH 0 0 0\nH 0 0 1\n"), R, "expected the atom count of structure 2 (a whole");
    add("xyz_nan", X, text("1\nx\nH nan 0 0\n"), R, "not a finite number");
    add("xyz_inf", X, text("1\nx\nH 0 inf 0\n"), R, "not a finite number");
    add("xyz_minus_infinity", X, text("1\nx\nH 0 0 -Infinity\n"), R, "not a finite number");
    add("xyz_1e308", X, text("1\nx\nH 1e308 0 0\n"), R, "beyond");
    add("xyz_1e400", X, text("1\nx\nH 1e400 0 0\n"), R, "the x coordinate '1e400' is not a finite number");
    add("xyz_hex_float", X, text("1\nx\nH 0x1p3 0 0\n"), R, "the x coordinate '0x1p3' is not a finite number");
    add("xyz_denormal", X, text("1\nx\nH 1e-320 0 0\n"), V);
    add("xyz_unknown_element", X, text("1\nx\nXx 0 0 0\n"), R, "element");
    add("xyz_element_number_0", X, text("1\nx\n0 0 0 0\n"), R, "'0' is not an element symbol (H to Rn) or");
    add("xyz_element_number_200", X, text("1\nx\n200 0 0 0\n"), R, "'200' is not an element symbol (H to Rn) or");
    add("xyz_two_fields", X, text("1\nx\nH 0\n"), R, "three coordinates");
    add("xyz_charge_absurd", X, text("1\ncharge=99999999999999999999\nH 0 0 0\n"), R, "charge");
    add("xyz_multiplicity_0", X, text("1\nmultiplicity=0\nH 0 0 0\n"), R, "multiplicity= must be a whole number from 1 to");
    add("xyz_nul_bytes", X, [] { return std::string("1\nx\nH\0 0 0 0\n", 14); }, R, "'H\\x00' is not an element symbol");
    add("xyz_binary", X, [] { return std::string("\x7f" "ELF\x00\x00\xff\xfe\n\x01\x02", 12); }, R, "expected the atom count (a whole number) on the");
    add("xyz_line_over_64k", X, [] { return "1\n" + repeat("x", 1 << 17) + "\nH 0 0 0\n"; }, R, "longer than");
    add("xyz_no_newline_100MB_like", X, [] { return repeat("1", 1 << 20); }, R, "a line longer than 65536 characters (is this a", 30);
    add("xyz_100k_atoms", X, [] { return xyz_of(100000, [](int i) { return "C " + std::to_string(1.5 * i) + " 0 0"; }); },
        V, "", 120);
    add("xyz_crlf", X, text("1\r\nx\r\nH 0 0 0\r\n"), V);
    add("xyz_truncated_after_count", X, text("3\n"), R, "the file ends before the comment line of the");
    add("xyz_blank_atom_line", X, text("2\nx\nH 0 0 0\n\n"), R, "blank");

    // --- PDB
    const auto P = Step::pdb;
    add("pdb_empty", P, text(""), R, "no ATOM or HETATM record in the file");
    add("pdb_only_end", P, text("END\n"), R, "no ATOM or HETATM record in the file");
    add("pdb_nan", P, [] { return replaced(pdb_atom(1, 0, 0, 0, "O"), "   0.000   0.000   0.000", "     nan   0.000   0.000"); }, R, "not a finite");
    add("pdb_stars", P, [] { return replaced(pdb_atom(1, 0, 0, 0, "O"), "   0.000   0.000   0.000", "********   0.000   0.000"); }, R, "the x coordinate (columns 31-38) '********' is");
    add("pdb_short_atom_line", P, text("ATOM      1  O   HOH A   1       0.0\n"), R, "columns 31-54");
    add("pdb_conect_unknown", P, [] { return pdb_atom(1, 0, 0, 0, "O") + "CONECT    1   99\n"; }, R, "serial 99");
    add("pdb_conect_to_itself", P, [] { return pdb_atom(1, 0, 0, 0, "O") + "CONECT    1    1\n"; }, V);
    add("pdb_unknown_element", P, [] { return pdb_atom(1, 0, 0, 0, "Xx"); }, R, "'Xx' in columns 77-78 is not an element symbol");
    add("pdb_nul_bytes", P, [] { std::string s = pdb_atom(1, 0, 0, 0, "O"); s[40] = '\0'; return s; }, R, "the y coordinate (columns 39-46)");
    add("pdb_binary", P, [] { return std::string("\x89PNG\r\n\x1a\n\x00\x00", 10); }, R, "no ATOM or HETATM record in the file");
    add("pdb_100k_atoms", P,
        [] {
            std::string s;
            for (int i = 0; i < 100000; ++i) s += pdb_atom(i % 99999 + 1, (i % 100) * 1.5, (i / 100 % 100) * 1.5, (i / 10000) * 1.5, "C");
            return s;
        },
        V, "", 120);
    add("pdb_conect_flood", P,
        [] {
            std::string s = pdb_atom(1, 0, 0, 0, "C") + pdb_atom(2, 1.5, 0, 0, "C");
            for (int i = 0; i < 100000; ++i) s += "CONECT    1    2\n";
            return s;
        },
        V, "", 60);
    add("pdb_models_unclosed", P, [] { return "MODEL        1\n" + pdb_atom(1, 0, 0, 0, "O") + "MODEL        2\n" + pdb_atom(1, 0, 0, 0, "O"); }, Want::valid);

    // --- SDF / MOL
    const auto D = Step::sdf;
    add("sdf_empty", D, text(""), R, "the file is empty: expected a molfile header");
    add("sdf_only_terminator", D, text("$$$$\n"), R, "the file ends inside the header of the record");
    add("sdf_truncated_header", D, text("title\n"), R, "the file ends inside the header of the record");
    add("sdf_counts_more_atoms", D, [] { return replaced(kFormaldehydeSdf, "  4  3  0", "  9  3  0"); }, R, "the x coordinate of atom 5 (columns 1-10) is");
    add("sdf_counts_letters", D, [] { return replaced(kFormaldehydeSdf, "  4  3  0", "abcdef  0"); }, R, "counts");
    add("sdf_nan", D, [] { return replaced(kFormaldehydeSdf, "    1.2050    0.0000", "       nan    0.0000"); }, R, "not a finite");
    add("sdf_1e300", D, [] { return replaced(kFormaldehydeSdf, "    1.2050    0.0000", "    1e+300    0.0000"); }, R, "beyond");
    add("sdf_bond_to_atom_0", D, [] { return replaced(kFormaldehydeSdf, "  1  2  2  0", "  0  2  2  0"); }, R, "a bond between atoms 0 and 2: expected two");
    add("sdf_bond_to_atom_99", D, [] { return replaced(kFormaldehydeSdf, "  1  2  2  0", "  1 99  2  0"); }, R, "a bond between atoms 1 and 99: expected two");
    add("sdf_bond_type_8", D, [] { return replaced(kFormaldehydeSdf, "  1  2  2  0", "  1  2  8  0"); }, R, "bond type 8");
    // Type 9 is the CTfile's coordination bond: read as a bond (between C and O here: the file is still read).
    add("sdf_bond_type_9_coordination", D, [] { return replaced(kFormaldehydeSdf, "  1  2  2  0", "  1  2  9  0"); }, V, "");
    add("sdf_chg_count_99", D, [] { return replaced(kFormaldehydeSdf, "M  END", "M  CHG 99   1   1\nM  END"); }, R, "expected an entry count from 1 to 8 in columns");
    add("sdf_chg_99", D, [] { return replaced(kFormaldehydeSdf, "M  END", "M  CHG  1   1  99\nM  END"); }, R, "charge");
    add("sdf_no_m_end", D, [] { return replaced(kFormaldehydeSdf, "M  END\n", ""); }, R, "the record ends without 'M  END");
    add("sdf_v3000_counts_over_limit", D,
        text("x\n\n\n  0  0  0     0  0            999 V3000\nM  V30 BEGIN CTAB\nM  V30 COUNTS 2000000 0 0 0 0\n"),
        R, "more than");
    add("sdf_v3000_charge_huge", D,
        text("x\n\n\n  0  0  0     0  0            999 V3000\nM  V30 BEGIN CTAB\nM  V30 COUNTS 1 0 0 0 0\n"
             "M  V30 BEGIN ATOM\nM  V30 1 C 0 0 0 0 CHG=99999999999\nM  V30 END ATOM\nM  V30 END CTAB\nM  END\n$$$$\n"),
        R, "charge");
    add("sdf_v3000_endless_continuation", D,
        [] {
            return "x\n\n\n  0  0  0     0  0            999 V3000\nM  V30 BEGIN CTAB\nM  V30 COUNTS 1 0 0 0 0\n"
                   "M  V30 BEGIN ATOM\n" + repeat("M  V30 1 -\n", 100000);
        },
        R, "the file ends where the continuation of a V3000", 60);
    add("sdf_binary", D, [] { return std::string("\x00\x01\x02\x03\n\xff\xfe\n\n\n", 10); }, R, "expected the counts line: atoms in columns 1-3");
    add("sdf_nul_in_counts", D, [] { std::string s = kFormaldehydeSdf; s[s.find("  4  3") + 2] = '\0'; return s; }, R, "expected the counts line: atoms in columns 1-3");

    // --- the whole build: sizes, components, rings, the time limit
    const auto B = Step::build;
    add("build_chain_20k", B, [] { return repeat("C", 20000); }, V, "", 600);
    // 20,000 took 58 s under the sanitizers on the busy machine, near the default time limit: 10,000 keep clear.
    add("build_dots_10000", B, [] { return repeat("C.", 9999) + "C"; }, V, "", 600);
    add("build_salt_5000_pairs", B, [] { return repeat("[Na+].[Cl-].", 4999) + "[Na+].[Cl-]"; }, V, "", 300);
    add("build_reused_digit_2000", B, [] { return reused_digit_chain("1", 2000); }, V, "", 600);
    add("build_ring_over_embedding_limit", B, [] { return "C1" + repeat("C", 2999) + "C1"; }, R, "ring system", 120);
    add("build_deep_branches_5k", B, [] { return repeat("C(", 5000) + "C" + repeat(")", 5000); }, V, "", 600);
    add("build_charge_15", B, text("[C+15]"), R, "atom 1 (C15+) has bonds of total order 0, more");
    add("build_xenon_with_10k_fluorines", B, [] { return "[Xe]" + repeat("(F)", 10000); }, R, "valence", 60);
    add("build_hub_with_30_methyls", B, [] { return "[C]" + repeat("(C)", 30); }, R, "atom 1 (C) has bonds of total order 30, more", 60);
    add("build_isolated_atoms", B, text("[Xe].[Rn].[He]"), Want::valid);
    add("build_hydrogen_only", B, text("[H]"), V);
    c.push_back({"build_time_limit_tiny", B, [] { return repeat("C", 3000); }, R, "gave up after", 120, 1e-9});

    // --- conformer ensembles (--conformers 5): long chains, many components, symmetric cages and rotors (the
    // comparison's symmetry search is bounded), metals, and the time limit holding for the whole ensemble.
    const auto E = Step::ensemble;
    add("ensemble_chain_200", E, [] { return repeat("C", 200); }, V, "", 300);
    add("ensemble_dots_1000", E, [] { return repeat("CC.", 999) + "CC"; }, V, "", 300);
    add("ensemble_cubane", E, text("C12C3C4C1C5C2C3C45"), V);
    add("ensemble_tetra_tert_butylmethane", E, text("CC(C)(C)C(C(C)(C)C)(C(C)(C)C)C(C)(C)C"), V);
    add("ensemble_polyalanine_20", E, [] { return repeat("N[C@@H](C)C(=O)", 20) + "O"; }, V, "", 300);
    add("ensemble_metal_chain_100", E, [] { return "[Cu]" + repeat("[Cu]", 99); }, V, "", 120);
    add("ensemble_ferrocene_chain", E, text("CCCC[C-]1C=CC=C1.[CH-]1C=CC=C1.[Fe+2]"), V);
    add("ensemble_bad_smiles", E, text("CC(C"), R, "is never closed");
    c.push_back({"ensemble_time_limit_tiny", E, [] { return repeat("C", 3000); }, R, "gave up after", 120, 1e-9});

    // --- metal centres: every coordination number the model knows, and beyond; impossible electron counts; f block
    add("build_metal_13_ligands", B, text("[W]" + repeat("([C-]#[O+])", 13)), R, "sites", 60);
    add("build_metal_12_ligands", B, text("[W-6]" + repeat("([H])", 12)), V, "", 60);
    add("build_metal_oxidation_beyond_group", B, text("F[Ti](F)(F)(F)F"), R, "oxidation state", 60);
    add("build_metal_d_count_beyond_ten", B, text("[Zn-3]"), R, "d electrons", 60);
    add("build_lanthanide", B, text("F[Gd](F)F"), R, "f-block", 60);
    add("build_metal_hub_10k_carbonyls", B, [] { return "[W]" + repeat("([C-]#[O+])", 10000); }, R, "atom 1 (W) has 10000 coordination sites; at", 60);
    add("build_metal_chain_500", B, [] { return "[Cu]" + repeat("[Cu]", 499); }, V, "", 120);
    add("build_metal_1000_sandwich_ions", B, [] { return repeat("[cH-]1cccc1.", 2000) + repeat("[Fe+2].", 999) + "[Fe+2]"; },
        V, "", 300);
    add("build_metal_bonded_to_every_atom_of_a_chain", B, text("C1=C2C3=C4.[Fe]1234"), V, "", 60);
    add("build_metal_mark_of_the_wrong_class", B, text("F[Pt@OH5](F)(F)F"), R, "needs 6", 60);
    add("build_metal_mark_on_a_tetrahedral_metal", B, text("F[Zn@SP1-2](F)(F)F"), V, "", 60);

    // --- `repel check` on hostile coordinates
    add("check_1000_atoms_on_one_point", Step::check_xyz, [] { return xyz_of(1000, [](int) { return "C 0 0 0"; }); },
        Want::valid, "", 120);
    add("check_dense_cluster_2000", Step::check_xyz,
        [] {
            unsigned long long state = 12345;  // a fixed linear congruential sequence: the same cloud every run
            auto next = [&] {
                state = state * 6364136223846793005ULL + 1442695040888963407ULL;
                return static_cast<double>(state >> 11) / static_cast<double>(1ULL << 53);
            };
            return xyz_of(2000, [&](int) {
                const double x = 12 * next(), y = 12 * next(), z = 12 * next();
                return "C " + std::to_string(x) + " " + std::to_string(y) + " " + std::to_string(z);
            });
        },
        Want::valid, "", 300);
    add("check_far_apart_atoms", Step::check_xyz, text("2\nx\nH 999999 0 0\nH -999999 0 0\n"), Want::valid);
    add("check_water", Step::check_xyz, text(kWaterXyz), V);
    // 40,000 bare carbons in a line: every one short of its valence. The audit's fallback valence assignment was
    // quadratic (20,000 took 9 s, 40,000 would have taken about 40); it takes 0.5 s for 40,000 now (measured).
    add("check_chain_40k", Step::check_xyz,
        [] { return xyz_of(40000, [](int i) { return "C " + std::to_string(1.54 * i) + " 0 0"; }); }, Want::valid, "", 300);
    return c;
}

// Runs one case: an empty string when the outcome is what the table wants, else what went wrong.
std::string run(const Case& k) {
    const std::string input = k.input();
    std::string refusal;  // the message of a documented refusal
    try {
        switch (k.step) {
        case Step::smiles: {
            const Molecule m = read_smiles(input);
            std::string written;
            try {
                written = write_smiles(m);
            } catch (const UnsupportedError&) {
                break;  // documented: a graph the writer cannot state
            }
            const Molecule back = read_smiles(written);
            if (const std::string d = fuzz::graph_difference(m, back); !d.empty()) return "round trip changed: " + d;
            break;
        }
        case Step::species: (void)read_species(input); break;
        case Step::formula: (void)read_formula(input); break;
        case Step::smi_file: {
            std::istringstream in(input);
            SmiReader reader(in);
            int good = 0;
            while (auto rec = reader.next()) {
                if (reader.too_long()) continue;
                try {
                    (void)read_species(rec->text);
                    ++good;
                } catch (const InputError&) {
                }
            }
            if (good == 0) return "no record of the file read";
            break;
        }
        case Step::xyz:
        case Step::pdb:
        case Step::sdf: {
            std::istringstream in(input);
            const auto format = k.step == Step::xyz ? InputFormat::xyz : k.step == Step::pdb ? InputFormat::pdb : InputFormat::sdf;
            for (const ReadStructure& r : read_structures(in, format))
                if (!fuzz::all_finite(r.structure.positions)) return "a non-finite coordinate was read";
            break;
        }
        case Step::check_xyz: {
            std::istringstream in(input);
            for (const ReadStructure& r : read_xyz(in)) (void)audit_structure(r);
            break;
        }
        case Step::ensemble: {
            ConformerSettings five;
            five.count = 5;
            const std::vector<Structure> e = build_conformers(input, {.time_limit = k.time_limit}, five);
            if (e.empty() || e.size() > 5) return "an ensemble of " + std::to_string(e.size()) + " conformers";
            for (const Structure& s : e) {
                if (!fuzz::all_finite(s.positions)) return "a non-finite coordinate in a conformer";
                if (!s.conformer || s.conformer->count != static_cast<int>(e.size())) return "a conformer unnumbered";
                for (Format f : {Format::xyz, Format::sdf, Format::json}) (void)make_writer(f)->record(s, "hostile");
            }
            break;
        }
        case Step::build: {
            const Structure s = build(input, {.time_limit = k.time_limit});
            if (!fuzz::all_finite(s.positions)) return "a non-finite coordinate was built";
            for (Format f : {Format::xyz, Format::pdb, Format::sdf, Format::json}) {
                try {
                    (void)make_writer(f)->record(s, "hostile");
                } catch (const std::runtime_error& e) {
                    // PDB's fixed columns refuse very large structures; anything else must write.
                    if (f != Format::pdb) return std::string("writer refused: ") + e.what();
                }
            }
            break;
        }
        }
    } catch (const InputError& e) {
        refusal = e.describe();
    } catch (const UnsupportedError& e) {
        refusal = e.what();
    } catch (const std::exception& e) {
        return std::string("undocumented exception: ") + e.what();
    }
    if (refusal.empty()) return k.want == Want::refused ? "read (built) without complaint; a refusal was expected" : "";
    if (k.want == Want::valid) return "refused: " + refusal.substr(0, 400);
    if (refusal.find_first_not_of(" \n") == std::string::npos) return "refused without a message";
    if (!k.words.empty() && refusal.find(k.words) == std::string::npos)
        return "refused, but the message does not say '" + k.words + "': " + refusal.substr(0, 400);
    return "";
}

// gtest prints a parameter that fails; the name says which input it was.
void PrintTo(const Case& k, std::ostream* os) { *os << k.name; }

std::string test_name(const testing::TestParamInfo<Case>& info) {
    std::string s = info.param.name;
    for (char& ch : s)
        if (!std::isalnum(static_cast<unsigned char>(ch))) ch = '_';
    return s;
}

class Hostile : public testing::TestWithParam<Case> {};

TEST_P(Hostile, EndsWithAMessageOrAValidStructure) {
    const Case& k = GetParam();
    // The hang guard: the case runs on its own thread; past the bound the executable stops with the case's name
    // (a hung thread cannot be joined, so there is no clean way on).
    auto result = std::async(std::launch::async, [&k] { return run(k); });
    if (result.wait_for(std::chrono::duration<double>(k.bound)) != std::future_status::ready) {
        std::fprintf(stderr, "HANG: hostile input '%s' did not finish within its bound of %g s\n", k.name.c_str(), k.bound);
        std::fflush(stderr);
        std::_Exit(1);
    }
    const std::string problem = result.get();
    EXPECT_TRUE(problem.empty()) << k.name << ": " << problem;
}

INSTANTIATE_TEST_SUITE_P(Table, Hostile, testing::ValuesIn(cases()), test_name);

// The table itself: more than 100 inputs, each with a name of its own, every reading step covered by both outcomes
// where both exist, and every refusal row naming the words its message must carry.
TEST(HostileTable, StatesOneOutcomePerInputAndCoversEveryStep) {
    const std::vector<Case> table = cases();
    EXPECT_GE(table.size(), 100u);
    std::set<std::string> names;
    std::map<Step, std::set<Want>> outcomes;
    for (const Case& k : table) {
        EXPECT_TRUE(names.insert(k.name).second) << "two rows named " << k.name;
        outcomes[k.step].insert(k.want);
        if (k.want == Want::refused) {
            EXPECT_GE(k.words.size(), 4u) << k.name << ": a refusal names its message";
        }
    }
    for (Step step : {Step::smiles, Step::species, Step::formula, Step::smi_file, Step::xyz, Step::pdb, Step::sdf,
                      Step::build, Step::check_xyz, Step::ensemble})
        EXPECT_FALSE(outcomes[step].empty()) << "no row reads with step " << static_cast<int>(step);
    for (Step step : {Step::smiles, Step::xyz, Step::pdb, Step::sdf, Step::build, Step::ensemble})
        EXPECT_EQ(outcomes[step].size(), 2u) << "step " << static_cast<int>(step) << " lacks a valid or a refused row";
}

// --- numerical safety of the writers: a non-finite coordinate never reaches a file, and warnings reach every format
// that has a place for them.

Structure water_structure() {
    std::istringstream in(kWaterXyz);
    Structure s = read_xyz(in).at(0).structure;
    s.molecule.add_bond(0, 1);
    s.molecule.add_bond(0, 2);
    return s;
}

TEST(WriterSafety, EveryWriterRefusesNonFiniteCoordinates) {
    for (double bad : {std::numeric_limits<double>::quiet_NaN(), std::numeric_limits<double>::infinity(),
                       -std::numeric_limits<double>::infinity()}) {
        for (Format f : {Format::xyz, Format::pdb, Format::sdf, Format::json}) {
            Structure s = water_structure();
            s.positions[1].y() = bad;
            EXPECT_THROW((void)make_writer(f)->record(s, "bad"), std::runtime_error) << "format " << static_cast<int>(f);
        }
    }
}

TEST(WriterSafety, WarningsReachXyzSdfAndJson) {
    Structure s = water_structure();
    s.warnings.push_back("refinement not converged after 2000 iterations: stopped by the budget");
    for (Format f : {Format::xyz, Format::sdf, Format::json}) {
        const std::string out = make_writer(f)->record(s, "water");
        EXPECT_NE(out.find("refinement not converged after 2000 iterations"), std::string::npos)
            << "format " << static_cast<int>(f) << ":\n" << out;
    }
}

TEST(Limits, TimeLimitFailsTheMoleculeWithAClearMessage) {
    Molecule m = read_smiles(repeat("C", 300));
    m.make_hydrogens_explicit();
    BuildOptions options;
    options.time_limit = 1e-9;
    try {
        (void)build_structure(m, options);
        FAIL() << "built despite a time limit of 1e-9 s";
    } catch (const LimitError& e) {
        EXPECT_NE(std::string(e.what()).find("gave up after"), std::string::npos) << e.what();
    }
}

TEST(Limits, TimeLimitNeverChangesAResult) {
    Molecule m = read_smiles("CC(=O)Nc1ccc(O)cc1");
    m.make_hydrogens_explicit();
    BuildOptions no_limit;
    no_limit.time_limit = 0;
    BuildOptions limit;
    limit.time_limit = 3600;
    const Structure a = build_structure(m, no_limit);
    const Structure b = build_structure(m, limit);
    ASSERT_EQ(a.positions.size(), b.positions.size());
    for (size_t i = 0; i < a.positions.size(); ++i) EXPECT_EQ(a.positions[i], b.positions[i]);
}

}  // namespace

namespace {

// The --smiles comparison matched the reference atom by atom with one call frame per atom: a 90,000-atom reference
// (a 30,000-carbon chain with its hydrogens) went 90,000 frames deep. It keeps its own stack now; this structure
// must match its own SMILES without a finding about atoms or connectivity (stack overflow before the change).
TEST(Limits, SmilesComparisonOfA90000AtomChainDoesNotRecurse) {
    const std::string smiles = repeat("C", 30000);
    const Structure built = build(smiles, {.notation = TextNotation::smiles});
    std::string xyz = make_writer(Format::xyz)->record(built, "chain");
    std::istringstream in(xyz);
    const std::vector<ReadStructure> read = read_xyz(in);
    ASSERT_EQ(read.size(), 1u);
    AuditOptions options;
    options.reference_smiles = smiles;
    auto result = std::async(std::launch::async, [&] { return audit_structure(read[0], options); });
    ASSERT_EQ(result.wait_for(std::chrono::seconds(600)), std::future_status::ready) << "hang guard";
    const Audit audit = result.get();
    for (const auto& f : audit.findings) {
        EXPECT_NE(f.kind, "connectivity") << f.message;
        EXPECT_NE(f.kind, "formula") << f.message;
    }
}

}  // namespace

namespace {

// A refinement that cannot reach its stop criterion (a gradient tolerance of 1e-30 is below round-off) runs out of
// its budget: the structure is still written, and says so in every format that has a place for warnings.
TEST(WriterSafety, UnconvergedRefinementIsAWarningInTheOutput) {
    Molecule m = read_smiles("CCO");
    m.make_hydrogens_explicit();
    BuildOptions options;
    options.refine_tolerance = 1e-30;
    const Structure s = build_structure(m, options);
    std::string warning;
    for (const std::string& w : s.warnings)
        if (w.rfind("refinement not converged", 0) == 0) warning = w;
    ASSERT_FALSE(warning.empty()) << "no warning about the refinement";
    for (Format f : {Format::xyz, Format::sdf, Format::json}) {
        const std::string out = make_writer(f)->record(s, "ethanol");
        EXPECT_NE(out.find("refinement not converged"), std::string::npos) << out;
    }
    EXPECT_TRUE(fuzz::all_finite(s.positions));
}

}  // namespace

namespace {

// Found by fuzz_sdf: a title over 80 characters starting with "$$$$" went whole into the > <name> data item, and
// that line ended the record. Such a title must write a record that reads back as one record with all its atoms.
TEST(WriterSafety, SdfNameItemNeverEndsTheRecord) {
    const Structure s = water_structure();
    const std::string title = repeat("$", 90) + " name";
    const std::string out = make_writer(Format::sdf)->record(s, title);
    std::istringstream in(out);
    const std::vector<ReadStructure> back = read_sdf(in);
    ASSERT_EQ(back.size(), 1u) << out;
    EXPECT_EQ(back[0].structure.molecule.atom_count(), 3);
}

}  // namespace
