// SMILES reader. One pass over the characters builds atoms and bonds (a loop with an explicit branch stack, so the
// depth of nesting and the length of chains are bounded only by memory); then the semantic passes: implicit
// hydrogens and valences, kekulization of aromatic input, double-bond configurations from '/' '\', and the
// neighbour order of each chirality mark. Syntax follows the OpenSMILES specification (opensmiles.org, v1.0).
#include "input/smiles.hpp"

#include <array>
#include <cstring>
#include <fmt/format.h>
#include <string>
#include <utility>

#include "core/element.hpp"
#include "core/error.hpp"
#include "core/limits.hpp"
#include "input/kekulize.hpp"
#include "graph/valence.hpp"
#include "input/smiles_stereo.hpp"

namespace repel {
namespace {

constexpr int kRingNumbers = 100;  // 0-9 and %00-%99
constexpr int kUnfilled = -2;      // a ring-closure place in a neighbour order, filled when the ring closes
constexpr int kMaxCharge = 15;     // OpenSMILES: readers must accept charges -15..+15
constexpr int kMaxIsotopeDigits = 3;
constexpr int kMaxClassDigits = 9;  // keeps the class inside an int

// Aromatic symbols accepted in brackets: the OpenSMILES list (b c n o p s se as) and the other main-group elements
// of groups 13-16, periods 2-5, that form aromatic rings (si, ge, sb, te).
constexpr std::array<std::string_view, 6> kTwoLetterAromatic{"se", "as", "te", "si", "ge", "sb"};

// Symbols of the elements after radon (periodic table, common practice): valid in OpenSMILES, outside what repel
// handles, and worth a clearer message than "unknown element".
constexpr std::array<std::string_view, 32> kBeyondRadon{"Fr", "Ra", "Ac", "Th", "Pa", "U",  "Np", "Pu",
                                                        "Am", "Cm", "Bk", "Cf", "Es", "Fm", "Md", "No",
                                                        "Lr", "Rf", "Db", "Sg", "Bh", "Hs", "Mt", "Ds",
                                                        "Rg", "Cn", "Nh", "Fl", "Mc", "Lv", "Ts", "Og"};

std::string unknown_element(std::string_view symbol) {
    for (std::string_view s : kBeyondRadon)
        if (s == symbol) return fmt::format("element '{}' lies beyond radon: repel handles H to Rn", symbol);
    return fmt::format("unknown element '{}'", symbol);
}

struct RingOpen {
    int atom = -1;     // the atom the ring bond starts from; -1 while the number is free
    char bond = 0;     // bond symbol written before the digit, 0 for none
    int bond_column = 0;
    int column = 0;    // column of the ring number
    int slot = -1;     // place in the neighbour-order events, filled when the ring closes
};

struct Event {
    int atom;
    int neighbor;  // kImplicitHydrogen for a bracket hydrogen count
};

struct AtomState {
    int order_sum = 0;          // sum of bond orders, an aromatic bond counting 1
    bool pi_satisfied = false;  // an explicit '=' to another aromatic atom already gives it its double bond
    bool preceded = false;      // joined to the atom before it in the chain (not first, not after '.')
    bool chiral_shorthand = false;  // marked '@' or '@@' (no class written)
};

// Reused between calls: a batch of millions of SMILES should not allocate per molecule for the reader's own state.
struct Workspace {
    std::vector<int> branch_atoms, branch_columns;
    std::array<RingOpen, kRingNumbers> rings;
    std::vector<int> bond_columns;  // column of each bond's symbol, 0 when none was written
    std::vector<Event> events;      // neighbour order of every atom, in text order (only when there is a '@')
    std::vector<AtomState> atoms;
    std::vector<unsigned char> needs_double;
    std::vector<int> event_start, event_list;
};
thread_local Workspace ws;

bool is_digit(char c) { return c >= '0' && c <= '9'; }
bool is_upper(char c) { return c >= 'A' && c <= 'Z'; }
bool is_lower(char c) { return c >= 'a' && c <= 'z'; }
bool is_space(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }

std::string quoted(char c) {
    if (c == ' ') return "a space";
    if (c == '\t') return "a tab";
    if (c == '\n' || c == '\r') return "a line break";
    const auto u = static_cast<unsigned char>(c);
    if (u < 0x20 || u >= 0x7f) return fmt::format("byte 0x{:02X}", u);
    return fmt::format("'{}'", c);
}

std::string atom_name(const Atom& a) {
    std::string name;
    if (const OrganicElement* e = organic_element(a.z); e && !a.bracket) name = std::string(e->name);
    else name = std::string(element(a.z).symbol);
    return a.aromatic ? "aromatic " + name : name;
}

std::string capitalized(std::string_view lower) {
    std::string s(lower);
    s[0] = static_cast<char>(s[0] - 'a' + 'A');
    return s;
}

class Reader {
public:
    explicit Reader(std::string_view text) : text_(text) {}

    Molecule read();

private:
    [[noreturn]] void error(const std::string& message, int column) const {
        fail(message, std::string(text_), column);
    }

    // syntax
    size_t organic_atom(size_t i);
    size_t bracket_atom(size_t i);
    size_t bracket_isotope(size_t i, Atom& atom);
    size_t bracket_symbol(size_t i, Atom& atom);
    size_t bracket_charge(size_t i, Atom& atom);
    size_t bracket_class(size_t i, Atom& atom);
    size_t chirality(size_t i, Atom& atom);
    size_t ring_number(size_t i);
    void add_atom(Atom& atom, int hydrogen_event);
    int connect(int a, int b, char symbol, int symbol_column, int direction_sign);
    void bond_symbol(char c, int column);
    void open_branch(int column);
    void close_branch(int column);
    void dot(int column);
    void ring_bond(int number, int column);
    [[noreturn]] void unexpected(size_t i) const;
    void finish();
    std::string expected_here() const;

    // semantics
    void hydrogens_and_valences();
    void kekulize_aromatic();
    bool dative_metal_bonds(bool heteroatoms_only);
    void double_bond_configurations();
    void chirality_orders();

    std::string_view text_;
    size_t end_ = 0;  // length without trailing whitespace
    Molecule mol_;
    bool track_order_ = false;  // a '@' occurs: record every atom's neighbour order
    bool any_aromatic_ = false;
    bool any_direction_ = false;
    bool any_chiral_ = false;
    bool shorthand_ = false;  // the bracket atom being read has a '@' or '@@' without a class

    int prev_ = -1;           // the atom the next atom, bond or ring number attaches to
    char bond_ = 0;           // pending bond symbol
    int bond_column_ = 0;
    bool digits_allowed_ = false;  // ring numbers may follow: right after an atom or its ring numbers
    char need_ = 0;           // '(' or '.': an atom must come next (a bond may come first after '(')
    int need_column_ = 0;
    int open_rings_ = 0;
};

Molecule Reader::read() {
    ws.branch_atoms.clear();
    ws.branch_columns.clear();
    for (RingOpen& r : ws.rings) r.atom = -1;
    ws.bond_columns.clear();
    ws.events.clear();
    ws.atoms.clear();

    const char* s = text_.data();
    end_ = text_.size();
    while (end_ > 0 && is_space(s[end_ - 1])) --end_;  // a line end is not part of the SMILES
    if (end_ == 0) error("empty SMILES: expected an atom", 1);
    track_order_ = std::memchr(s, '@', end_) != nullptr;
    mol_.atoms.reserve(end_);
    mol_.bonds.reserve(end_);

    size_t i = 0;
    while (i < end_) {
        const char c = s[i];
        const int column = static_cast<int>(i) + 1;
        switch (c) {
        case 'B': case 'C': case 'N': case 'O': case 'P': case 'S': case 'F': case 'I':
        case 'b': case 'c': case 'n': case 'o': case 'p': case 's':
            i = organic_atom(i);
            break;
        case '[': i = bracket_atom(i); break;
        case '-': case '=': case '#': case '$': case ':': case '/': case '\\':
            bond_symbol(c, column);
            ++i;
            break;
        case '(': open_branch(column); ++i; break;
        case ')': close_branch(column); ++i; break;
        case '.': dot(column); ++i; break;
        case '%':
        case '0': case '1': case '2': case '3': case '4': case '5': case '6': case '7': case '8': case '9':
            i = ring_number(i);
            break;
        default: unexpected(i);
        }
    }
    finish();
    hydrogens_and_valences();
    if (any_aromatic_) kekulize_aromatic();
    if (any_direction_) double_bond_configurations();
    if (any_chiral_) chirality_orders();
    return std::move(mol_);
}

// What may come at the current place, for messages about an unexpected character.
std::string Reader::expected_here() const {
    if (bond_) return fmt::format("an atom or a ring-closure digit after bond '{}'", bond_);
    if (need_ == '(') return "an atom, a bond or '.' after '('";
    if (need_ == '.') return "an atom after '.'";
    if (digits_allowed_) return "an atom, a bond, a branch, a ring-closure digit or '.'";
    return "an atom, a bond, a branch or '.'";
}

size_t Reader::organic_atom(size_t i) {
    const char* s = text_.data();
    Atom atom;
    atom.column = static_cast<int>(i) + 1;
    size_t length = 1;
    const char next = i + 1 < end_ ? s[i + 1] : '\0';
    switch (s[i]) {
    case 'B':
        if (next == 'r') { atom.z = 35; length = 2; }
        else atom.z = 5;
        break;
    case 'C':
        if (next == 'l') { atom.z = 17; length = 2; }
        else atom.z = 6;
        break;
    case 'N': atom.z = 7; break;
    case 'O': atom.z = 8; break;
    case 'P': atom.z = 15; break;
    case 'S': atom.z = 16; break;
    case 'F': atom.z = 9; break;
    case 'I': atom.z = 53; break;
    case 'b': atom.z = 5; atom.aromatic = true; break;
    case 'c': atom.z = 6; atom.aromatic = true; break;
    case 'n': atom.z = 7; atom.aromatic = true; break;
    case 'o': atom.z = 8; atom.aromatic = true; break;
    case 'p': atom.z = 15; atom.aromatic = true; break;
    case 's': atom.z = 16; atom.aromatic = true; break;
    default: break;
    }
    add_atom(atom, 0);
    return i + length;
}

// The mass number of a bracket atom, from its first digit at i; returns the index after it.
size_t Reader::bracket_isotope(size_t i, Atom& atom) {
    const char* s = text_.data();
    const size_t start = i;
    int value = 0;
    while (i < end_ && is_digit(s[i])) {
        if (i - start >= static_cast<size_t>(kMaxIsotopeDigits))
            error(fmt::format("isotope '{}' has more than {} digits",
                              std::string_view(s + start, std::min(end_, start + 8) - start), kMaxIsotopeDigits),
                  static_cast<int>(start) + 1);
        value = value * 10 + (s[i] - '0');
        ++i;
    }
    atom.isotope = value;
    return i;
}

// The element symbol of a bracket atom at i (aromatic in lower case); returns the index after it.
size_t Reader::bracket_symbol(size_t i, Atom& atom) {
    const char* s = text_.data();
    const int symbol_column = static_cast<int>(i) + 1;
    if (s[i] == '*')
        error("the wildcard atom '*' stands for an unknown atom, which cannot be built: write a real element",
              symbol_column);
    if (is_upper(s[i])) {
        if (i + 1 < end_ && is_lower(s[i + 1])) {
            const std::string_view symbol(s + i, 2);
            atom.z = element_number(symbol);
            if (atom.z == 0) error(unknown_element(symbol), symbol_column);
            i += 2;
        } else {
            const std::string_view symbol(s + i, 1);
            atom.z = element_number(symbol);
            if (atom.z == 0) error(unknown_element(symbol), symbol_column);
            i += 1;
        }
    } else if (is_lower(s[i])) {
        atom.aromatic = true;
        std::string_view symbol;
        if (i + 1 < end_ && is_lower(s[i + 1])) {
            const std::string_view two(s + i, 2);
            for (std::string_view a : kTwoLetterAromatic)
                if (a == two) symbol = two;
        }
        if (symbol.empty()) {
            const char c = s[i];
            if (c == 'b' || c == 'c' || c == 'n' || c == 'o' || c == 'p' || c == 's') symbol = std::string_view(s + i, 1);
        }
        if (symbol.empty()) {
            const size_t length = i + 1 < end_ && is_lower(s[i + 1]) ? 2 : 1;
            error(fmt::format("'{}' is not an aromatic element symbol (aromatic: b c n o p s se as te si ge sb)",
                              std::string_view(s + i, length)),
                  symbol_column);
        }
        atom.z = element_number(capitalized(symbol));
        if (atom.z == 0) error(unknown_element(symbol), symbol_column);
        i += symbol.size();
    } else {
        error(fmt::format("expected an element symbol in the bracket atom, found {}", quoted(s[i])), symbol_column);
    }
    return i;
}

// The charge of a bracket atom from its sign at i (+, ++, +n); returns the index after it.
size_t Reader::bracket_charge(size_t i, Atom& atom) {
    const char* s = text_.data();
    const char sign_char = s[i];
    const int sign = sign_char == '+' ? 1 : -1;
    const int charge_column = static_cast<int>(i) + 1;
    ++i;
    int magnitude = 1;
    if (i < end_ && s[i] == sign_char) {
        magnitude = 2;
        ++i;
        if (i < end_ && (s[i] == sign_char || is_digit(s[i])))
            error(fmt::format("malformed charge: write a charge as {0}, {0}{0} or {0}n with a number n",
                              sign_char),
                  charge_column);
    } else if (i < end_ && is_digit(s[i])) {
        magnitude = s[i] - '0';
        ++i;
        if (i < end_ && is_digit(s[i])) {
            magnitude = magnitude * 10 + (s[i] - '0');
            ++i;
        }
        if (magnitude > kMaxCharge)
            error(fmt::format("charge {}{} is out of range (at most {})", sign_char, magnitude, kMaxCharge),
                  charge_column);
    }
    if (i < end_ && (s[i] == '+' || s[i] == '-'))
        error(fmt::format("malformed charge: {} after the charge", quoted(s[i])), static_cast<int>(i) + 1);
    atom.charge = sign * magnitude;
    return i;
}

// The atom class of a bracket atom from its ':' at i; returns the index after it.
size_t Reader::bracket_class(size_t i, Atom& atom) {
    const char* s = text_.data();
    const int class_column = static_cast<int>(i) + 1;
    ++i;
    if (i >= end_ || !is_digit(s[i]))
        error("expected the atom class number after ':'", i >= end_ ? class_column : static_cast<int>(i) + 1);
    const size_t start = i;
    int value = 0;
    while (i < end_ && is_digit(s[i])) {
        if (i - start >= static_cast<size_t>(kMaxClassDigits))
            error(fmt::format("atom class has more than {} digits", kMaxClassDigits), class_column + 1);
        value = value * 10 + (s[i] - '0');
        ++i;
    }
    atom.atom_class = value;
    return i;
}

size_t Reader::bracket_atom(size_t i) {
    const char* s = text_.data();
    const int open_column = static_cast<int>(i) + 1;
    auto at_end = [&](size_t j) {
        if (j >= end_)
            error(fmt::format("the bracket atom opened at column {} is never closed: expected ']'", open_column),
                  open_column);
    };
    Atom atom;
    atom.bracket = true;
    atom.column = open_column;
    ++i;

    // isotope
    at_end(i);
    const bool has_isotope = is_digit(s[i]);
    if (has_isotope) {
        i = bracket_isotope(i, atom);
        at_end(i);
    }

    // element symbol
    i = bracket_symbol(i, atom);
    if (atom.isotope > 0 && atom.isotope < atom.z)
        error(fmt::format("mass number {} is smaller than the atomic number of {} ({})", atom.isotope,
                          element(atom.z).symbol, atom.z),
              open_column + 1);
    if (has_isotope && atom.isotope == 0)
        error(fmt::format("mass number 0 is not an isotope of {}", element(atom.z).symbol), open_column + 1);

    // chirality
    at_end(i);
    if (s[i] == '@') {
        i = chirality(i, atom);
        at_end(i);
    }

    // hydrogen count
    int hydrogen_event = 0;
    if (s[i] == 'H') {
        const int h_column = static_cast<int>(i) + 1;
        ++i;
        int count = 1;
        if (i < end_ && is_digit(s[i])) {
            count = s[i] - '0';
            ++i;
        }
        if (atom.z == 1)
            error("a hydrogen atom cannot carry a hydrogen count: write bonded hydrogens as atoms, [H][H]", h_column);
        atom.hydrogens = count;
        hydrogen_event = count;
        at_end(i);
    }

    // charge
    if (s[i] == '+' || s[i] == '-') {
        i = bracket_charge(i, atom);
        at_end(i);
    }

    // atom class
    if (s[i] == ':') {
        i = bracket_class(i, atom);
        at_end(i);
    }

    if (s[i] != ']') {
        const int column = static_cast<int>(i) + 1;
        const char c = s[i];
        if (c == '@') error("chirality must come right after the element symbol, before the hydrogen count", column);
        if (c == 'H') error("the hydrogen count must come before the charge", column);
        if (c == '[') error(fmt::format("'[' inside the bracket atom opened at column {}: expected ']'", open_column), column);
        error(fmt::format("unexpected {} in the bracket atom: expected chirality, a hydrogen count, a charge, "
                          "an atom class or ']'",
                          quoted(c)),
              column);
    }
    add_atom(atom, hydrogen_event);
    return i + 1;
}

size_t Reader::chirality(size_t i, Atom& atom) {
    const char* s = text_.data();
    const int column = static_cast<int>(i) + 1;
    ++i;
    if (i < end_ && s[i] == '@') {
        ++i;
        if (i < end_ && s[i] == '@') error("'@@@' is not a chirality mark: use '@' or '@@'", column);
        atom.chiral_class = ChiralClass::TH;
        atom.chiral_index = 2;
        shorthand_ = true;
    } else if (i + 1 < end_ && is_upper(s[i]) && is_upper(s[i + 1]) && s[i] != 'H') {
        struct ClassName {
            std::string_view name;
            ChiralClass value;
            int max;
        };
        static constexpr std::array<ClassName, 5> kClasses{{{"TH", ChiralClass::TH, 2},
                                                             {"AL", ChiralClass::AL, 2},
                                                             {"SP", ChiralClass::SP, 3},
                                                             {"TB", ChiralClass::TB, 20},
                                                             {"OH", ChiralClass::OH, 30}}};
        const std::string_view name(s + i, 2);
        const ClassName* found = nullptr;
        for (const ClassName& k : kClasses)
            if (k.name == name) found = &k;
        if (!found) error(fmt::format("unknown chirality class '@{}': expected @TH, @AL, @SP, @TB or @OH", name), column);
        i += 2;
        if (i >= end_ || !is_digit(s[i]))
            error(fmt::format("expected a number after '@{}' (1 to {})", name, found->max), column);
        int value = s[i] - '0';
        ++i;
        if (found->max >= 10 && i < end_ && is_digit(s[i])) {
            value = value * 10 + (s[i] - '0');
            ++i;
        }
        if (value < 1 || value > found->max)
            error(fmt::format("'@{}{}' is out of range: @{} takes 1 to {}", name, value, name, found->max), column);
        atom.chiral_class = found->value;
        atom.chiral_index = value;
    } else {
        atom.chiral_class = ChiralClass::TH;
        atom.chiral_index = 1;
        shorthand_ = true;
    }
    any_chiral_ = true;
    return i;
}

void Reader::add_atom(Atom& atom, int hydrogen_event) {
    if (mol_.atom_count() >= kMaxAtoms)
        throw LimitError(fmt::format("more than {} atoms (the largest molecule repel reads)", kMaxAtoms),
                         std::string(text_), atom.column);
    if (atom.aromatic) any_aromatic_ = true;
    const int v = mol_.add_atom(atom);
    ws.atoms.emplace_back();
    ws.atoms.back().chiral_shorthand = std::exchange(shorthand_, false);
    if (prev_ >= 0) {
        connect(prev_, v, bond_, bond_column_, 1);
        ws.atoms[static_cast<size_t>(v)].preceded = true;
        if (track_order_) {
            ws.events.push_back({v, prev_});
            ws.events.push_back({prev_, v});
        }
    }
    if (track_order_ && hydrogen_event > 0) ws.events.push_back({v, kImplicitHydrogen});
    prev_ = v;
    bond_ = 0;
    digits_allowed_ = true;
    need_ = 0;
}

// Adds the bond a-b for the symbol written (0: none). direction_sign is -1 when a '/' or '\' was written from b
// towards a (a mark on the closing digit of a ring bond).
int Reader::connect(int a, int b, char symbol, int symbol_column, int direction_sign) {
    int order = 1;
    bool aromatic = false;
    int direction = 0;
    switch (symbol) {
    case 0:
        aromatic = mol_.atoms[static_cast<size_t>(a)].aromatic && mol_.atoms[static_cast<size_t>(b)].aromatic;
        break;
    case '=': order = 2; break;
    case '#': order = 3; break;
    case '$': order = 4; break;
    case ':': aromatic = true; break;
    case '/': direction = direction_sign; break;
    case '\\': direction = -direction_sign; break;
    default: break;
    }
    const int k = mol_.add_bond(a, b, order, aromatic);
    if (direction != 0) {
        mol_.bonds[static_cast<size_t>(k)].direction = direction;
        any_direction_ = true;
    }
    if (aromatic) any_aromatic_ = true;
    ws.bond_columns.push_back(symbol_column);
    const int weight = aromatic ? 1 : order;
    AtomState& sa = ws.atoms[static_cast<size_t>(a)];
    AtomState& sb = ws.atoms[static_cast<size_t>(b)];
    sa.order_sum += weight;
    sb.order_sum += weight;
    if (order == 2 && !aromatic && mol_.atoms[static_cast<size_t>(a)].aromatic &&
        mol_.atoms[static_cast<size_t>(b)].aromatic)
        sa.pi_satisfied = sb.pi_satisfied = true;
    return k;
}

void Reader::bond_symbol(char c, int column) {
    if (prev_ < 0) {
        if (need_ == '.') error(fmt::format("expected an atom after '.', found bond '{}'", c), column);
        error(fmt::format("bond '{}' has no atom before it", c), column);
    }
    if (bond_) error(fmt::format("two bond symbols in a row: '{}' then '{}'", bond_, c), column);
    bond_ = c;
    bond_column_ = column;
}

void Reader::open_branch(int column) {
    if (bond_)
        error(fmt::format("expected an atom or a ring-closure digit after bond '{}', found '('; a branch's bond goes "
                          "inside the parentheses",
                          bond_),
              column);
    if (need_ == '(') error("expected an atom, a bond or '.' after '(', found '('", column);
    if (prev_ < 0) {
        if (need_ == '.') error("expected an atom after '.', found '('", column);
        error("a branch '(' must follow an atom", column);
    }
    ws.branch_atoms.push_back(prev_);
    ws.branch_columns.push_back(column);
    need_ = '(';
    need_column_ = column;
    digits_allowed_ = false;
}

void Reader::close_branch(int column) {
    if (bond_) error(fmt::format("bond '{}' at column {} is not followed by an atom", bond_, bond_column_), bond_column_);
    if (need_ == '(') error("empty branch: expected an atom, a bond or '.' after '('", column);
    if (need_ == '.') error("expected an atom after '.', found ')'", column);
    if (ws.branch_atoms.empty()) error("')' has no matching '('", column);
    prev_ = ws.branch_atoms.back();
    ws.branch_atoms.pop_back();
    ws.branch_columns.pop_back();
    digits_allowed_ = false;
}

void Reader::dot(int column) {
    if (bond_) error(fmt::format("bond '{}' at column {} is not followed by an atom", bond_, bond_column_), bond_column_);
    if (prev_ < 0) {
        if (need_ == '.') error("two dots in a row: expected an atom after '.'", column);
        error("'.' must follow an atom", column);
    }
    prev_ = -1;
    need_ = '.';
    need_column_ = column;
    digits_allowed_ = false;
}

size_t Reader::ring_number(size_t i) {
    const char* s = text_.data();
    const int column = static_cast<int>(i) + 1;
    int number = 0;
    if (s[i] == '%') {
        if (i + 2 >= end_ || !is_digit(s[i + 1]) || !is_digit(s[i + 2]))
            error("'%' must be followed by two digits (ring bonds 10 to 99 are written %10 to %99)", column);
        number = (s[i + 1] - '0') * 10 + (s[i + 2] - '0');
        i += 3;
    } else {
        number = s[i] - '0';
        i += 1;
    }
    ring_bond(number, column);
    return i;
}

// A ring number opens a ring bond at the atom before it, or closes the open one with that number. A bond symbol may
// stand before either digit; written on both, the two must agree (OpenSMILES). A '/' or '\' is read from the atom
// it follows towards the partner the digit stands for, as in a chain ("C/1...C1" is "C/partner"). On both digits a
// mark would be read in opposite directions from the two ends, which the specification itself notes has no
// consistent meaning (its cyclooctatetraene example), so it is refused as ambiguous (choice).
void Reader::ring_bond(int number, int column) {
    if (prev_ < 0) {
        if (need_ == '.') error(fmt::format("expected an atom after '.', found ring-closure digit {}", number), column);
        error(fmt::format("ring-closure digit {} has no atom before it", number), column);
    }
    if (!digits_allowed_) {
        if (need_ == '(') error(fmt::format("expected an atom, a bond or '.' after '(', found ring-closure digit {}", number), column);
        error(fmt::format("ring-closure digit {} after a branch: ring closures come right after their atom, before "
                          "any branch",
                          number),
              column);
    }
    RingOpen& r = ws.rings[static_cast<size_t>(number)];
    if (r.atom < 0) {
        r.atom = prev_;
        r.bond = bond_;
        r.bond_column = bond_column_;
        r.column = column;
        r.slot = -1;
        if (track_order_) {
            r.slot = static_cast<int>(ws.events.size());
            ws.events.push_back({prev_, kUnfilled});
        }
        ++open_rings_;
    } else {
        const int a = r.atom;
        const int a_column = mol_.atoms[static_cast<size_t>(a)].column;
        if (a == prev_)
            error(fmt::format("ring bond {} opened at column {} would bond an atom to itself", number, r.column),
                  column);
        if (mol_.bond_between(a, prev_) >= 0)
            error(fmt::format("ring bond {} would bond the atoms at columns {} and {} a second time", number,
                              a_column, mol_.atoms[static_cast<size_t>(prev_)].column),
                  column);
        char symbol = r.bond;
        int symbol_column = r.bond_column;
        int sign = 1;
        if (bond_) {
            const auto directional = [](char c) { return c == '/' || c == '\\'; };
            if (symbol && directional(symbol) && directional(bond_))
                error(fmt::format("ring bond {} carries '{}' at column {} and '{}' here: write a '/' or '\\' mark "
                                  "on one end of a ring bond only",
                                  number, symbol, symbol_column, bond_),
                      bond_column_);
            if (symbol && symbol != bond_ && !(symbol == '-' && directional(bond_)) &&
                !(bond_ == '-' && directional(symbol)))
                error(fmt::format("ring bond {} is written '{}' at column {} and '{}' here; the two ends must agree",
                                  number, symbol, symbol_column, bond_),
                      bond_column_);
            if (!symbol || directional(bond_)) {
                symbol = bond_;
                symbol_column = bond_column_;
                sign = -1;  // a mark at the closing digit is written from this atom towards the opening one
            }
        }
        connect(a, prev_, symbol, symbol_column, sign);
        if (track_order_) {
            ws.events[static_cast<size_t>(r.slot)].neighbor = prev_;
            ws.events.push_back({prev_, a});
        }
        r.atom = -1;
        --open_rings_;
    }
    bond_ = 0;
}

void Reader::unexpected(size_t i) const {
    const char* s = text_.data();
    const char c = s[i];
    const int column = static_cast<int>(i) + 1;
    const bool lower_next = i + 1 < end_ && is_lower(s[i + 1]);
    if (c == '*')
        error("the wildcard atom '*' stands for an unknown atom, which cannot be built: write a real element", column);
    if (c == 'H')
        error("'H' outside brackets: hydrogens are implicit in SMILES; write a hydrogen atom as [H] or a count as "
              "[CH4]",
              column);
    if (is_upper(c)) {
        if (lower_next && element_number(std::string_view(s + i, 2)) != 0)
            error(fmt::format("element '{0}' is not in the organic subset: write it in brackets, [{0}]",
                              std::string_view(s + i, 2)),
                  column);
        if (element_number(std::string_view(s + i, 1)) != 0)
            error(fmt::format("element '{0}' is not in the organic subset: write it in brackets, [{0}]", c), column);
        error(unknown_element(std::string_view(s + i, lower_next ? 2 : 1)), column);
    }
    if (is_lower(c) && i > 0 && is_upper(s[i - 1]) && element_number(std::string_view(s + i - 1, 2)) != 0)
        error(fmt::format("element '{0}' is not in the organic subset: write it in brackets, [{0}]",
                          std::string_view(s + i - 1, 2)),
              column - 1);
    if (c == ']') error("']' has no matching '['", column);
    if (is_space(c))
        error(fmt::format("found {} inside the SMILES (a name must be split off before reading)", quoted(c)),
              column);
    error(fmt::format("unexpected {}: expected {}", quoted(c), expected_here()), column);
}

void Reader::finish() {
    if (bond_) error(fmt::format("bond '{}' at column {} is not followed by an atom", bond_, bond_column_), bond_column_);
    if (need_ == '.') error("the SMILES ends after '.': expected an atom", need_column_);
    if (!ws.branch_atoms.empty())
        error(fmt::format("'(' at column {} is never closed", ws.branch_columns.back()), ws.branch_columns.back());
    if (open_rings_ > 0) {
        int first = -1;
        for (int k = 0; k < kRingNumbers; ++k) {
            const RingOpen& r = ws.rings[static_cast<size_t>(k)];
            if (r.atom >= 0 && (first < 0 || r.column < ws.rings[static_cast<size_t>(first)].column)) first = k;
        }
        const RingOpen& r = ws.rings[static_cast<size_t>(first)];
        error(fmt::format("ring {} opened at column {} is never closed", first, r.column), r.column);
    }
}

// Implicit hydrogens of the organic subset (OpenSMILES: the lowest normal valence at least the bond-order sum, none
// above every normal valence), and which aromatic atoms need a double bond. An aromatic atom whose bond-order sum (aromatic bonds
// counting 1) already equals a normal valence gives its lone pair to the ring (pyrrole-type n, furan o, thiophene s,
// a c with an exocyclic '=O'); otherwise one unit of the next valence is its double bond and the rest hydrogens.
void Reader::hydrogens_and_valences() {
    const int n = mol_.atom_count();
    if (any_aromatic_) ws.needs_double.assign(static_cast<size_t>(n), 0);
    for (int v = 0; v < n; ++v) {
        Atom& a = mol_.atoms[static_cast<size_t>(v)];
        const AtomState& st = ws.atoms[static_cast<size_t>(v)];
        if (a.bracket) {
            if (!a.aromatic || st.pi_satisfied) continue;
            std::array<int, 4> valences{};
            const int count = isoelectronic_valences(a.z, a.charge, valences);
            const int sum = st.order_sum + a.hydrogens;
            for (int k = 0; k < count; ++k) {
                if (valences[static_cast<size_t>(k)] == sum) break;
                if (valences[static_cast<size_t>(k)] > sum) {
                    ws.needs_double[static_cast<size_t>(v)] = 1;
                    break;
                }
            }
            continue;
        }
        const OrganicElement& e = *organic_element(a.z);
        const int sum = st.order_sum;
        const int valence = e.lowest_valence_at_least(sum);
        if (valence < 0) {
            // Above every normal valence: no implicit hydrogens and no ring double bond (OpenSMILES, "Organic
            // Subset"; see organic_implicit_hydrogens). The domain analysis refuses what no Lewis structure allows.
            a.hydrogens = 0;
            continue;
        }
        if (!a.aromatic || st.pi_satisfied || e.is_valence(sum)) {
            a.hydrogens = valence - sum;
            continue;
        }
        // valence > sum: one unit for the ring's double bond
        a.hydrogens = valence - sum - 1;
        ws.needs_double[static_cast<size_t>(v)] = 1;
    }
}

// An aromatic atom bonded to a d-block metal: the bond counts as written for its hydrogens (OpenSMILES), but when the
// ring does not kekulize that way the bond is a dative one that leaves the ring's pi system alone (a pyridine-type
// n donating its lone pair, a cyclopentadienide [cH-] bonded to the metal through the ring). The atoms' double-bond
// needs are worked out again with their metal bonds left out (for heteroatoms only, or every aromatic atom).
// Returns false when no atom changes.
bool Reader::dative_metal_bonds(bool heteroatoms_only) {
    bool changed = false;
    for (int v = 0; v < mol_.atom_count(); ++v) {
        Atom& a = mol_.atoms[static_cast<size_t>(v)];
        const AtomState& st = ws.atoms[static_cast<size_t>(v)];
        if (!a.aromatic || st.pi_satisfied) continue;
        if (heteroatoms_only && a.z == 6) continue;
        int metal = 0;
        for (const Neighbor& nb : mol_.neighbors(v)) {
            const int z = mol_.atoms[static_cast<size_t>(nb.atom)].z;
            if (is_transition_metal(z)) metal += mol_.bonds[static_cast<size_t>(nb.bond)].order;
        }
        if (metal == 0) continue;
        const int sum = st.order_sum - metal + a.hydrogens;
        bool need = false;
        if (a.bracket) {
            std::array<int, 4> valences{};
            const int count = isoelectronic_valences(a.z, a.charge, valences);
            for (int k = 0; k < count; ++k)
                if (valences[static_cast<size_t>(k)] >= sum) {
                    need = valences[static_cast<size_t>(k)] > sum;
                    break;
                }
        } else if (const OrganicElement* e = organic_element(a.z)) {
            const int valence = e->lowest_valence_at_least(sum);
            need = valence > sum && !e->is_valence(sum);
        }
        if (need != static_cast<bool>(ws.needs_double[static_cast<size_t>(v)])) {
            ws.needs_double[static_cast<size_t>(v)] = need ? 1 : 0;
            changed = true;
        }
    }
    return changed;
}

void Reader::kekulize_aromatic() {
    // A heteroatom (n, p, o, s) bonded to a metal is first taken as a dative donor (pyridine, bipyridine,
    // phenanthroline: its ring keeps its pi system), then as written; carbon (an aryl) as written first.
    const std::vector<unsigned char> as_written = ws.needs_double;
    const bool dative = dative_metal_bonds(true);
    int failed = kekulize(mol_, ws.needs_double);
    if (failed >= 0 && dative) {
        ws.needs_double = as_written;
        failed = kekulize(mol_, ws.needs_double);
    }
    if (failed >= 0 && dative_metal_bonds(false)) failed = kekulize(mol_, ws.needs_double);
    if (failed < 0) return;
    const Atom& a = mol_.atoms[static_cast<size_t>(failed)];
    bool in_ring = false;
    for (const Neighbor& nb : mol_.neighbors(failed))
        in_ring = in_ring || mol_.bonds[static_cast<size_t>(nb.bond)].aromatic;
    if (!in_ring)
        error(fmt::format("cannot kekulize: the {} at column {} is in no aromatic ring, so it gets no double bond "
                          "(write it in upper case, or close its ring)",
                          atom_name(a), a.column),
              a.column);
    std::string hint;
    if (a.z == 7 && !a.bracket) hint = "; a pyrrole-type nitrogen is written [nH]";
    error(fmt::format("cannot kekulize the aromatic system: the {} at column {} is left without a double bond{}",
                      atom_name(a), a.column, hint),
          a.column);
}

// OpenSMILES: '/' and '\' say whether the neighbour lies above or below its double-bond atom, read from the atom
// written first to the one written second; "F/C=C/F" is trans. Every double bond with a marked neighbour at both
// ends gets a configuration; two marks at one end that put both neighbours on the same side are an error.
void Reader::double_bond_configurations() {
    for (int k = 0; k < mol_.bond_count(); ++k) {
        Bond& d = mol_.bonds[static_cast<size_t>(k)];
        if (d.order != 2 || d.aromatic) continue;
        int ref[2] = {-1, -1};
        int side[2] = {0, 0};
        int ref_bond[2] = {-1, -1};
        for (int end = 0; end < 2; ++end) {
            const int x = end == 0 ? d.a : d.b;
            for (const Neighbor& nb : mol_.neighbors(x)) {
                if (nb.bond == k) continue;
                const Bond& single = mol_.bonds[static_cast<size_t>(nb.bond)];
                if (single.direction == 0) continue;
                // above (+1) or below (-1) x: '/' from x to the neighbour goes up, '/' from the neighbour to x down
                const int s = single.a == x ? single.direction : -single.direction;
                if (ref[end] < 0) {
                    ref[end] = nb.atom;
                    side[end] = s;
                    ref_bond[end] = nb.bond;
                } else if (s == side[end]) {
                    const int c1 = ws.bond_columns[static_cast<size_t>(ref_bond[end])];
                    const int c2 = ws.bond_columns[static_cast<size_t>(nb.bond)];
                    error(fmt::format("contradictory '/' '\\' marks: the marks at columns {} and {} put both "
                                      "neighbours of the atom at column {} on the same side of its double bond",
                                      std::min(c1, c2), std::max(c1, c2), mol_.atoms[static_cast<size_t>(x)].column),
                          std::max(c1, c2));
                }
            }
        }
        if (ref[0] >= 0 && ref[1] >= 0) {
            d.stereo = side[0] == side[1] ? BondStereo::cis : BondStereo::trans;
            d.ref_a = ref[0];
            d.ref_b = ref[1];
        }
    }
}

// Neighbour order of every chirality mark, from the events recorded in text order: the preceding atom, the bracket
// hydrogen, ring closures in the order their digits are written, then branches and the next atom. A mark on the
// middle atom of an allene becomes @AL and refers to the substituents of the two ends (OpenSMILES "Tetrahedral
// Allene-like Systems"): the first end's two, then the second end's two, hydrogens of an end standing as
// kImplicitHydrogen in that end's half of the list. A tetrahedral mark with three neighbours keeps the three; its
// lone pair stands where an implicit hydrogen would (see with_lone_pair() in smiles_stereo.hpp).
void Reader::chirality_orders() {
    const int n = mol_.atom_count();
    ws.event_start.assign(static_cast<size_t>(n) + 1, 0);
    for (const Event& e : ws.events) ++ws.event_start[static_cast<size_t>(e.atom) + 1];
    for (int v = 0; v < n; ++v) ws.event_start[static_cast<size_t>(v) + 1] += ws.event_start[static_cast<size_t>(v)];
    ws.event_list.resize(ws.events.size());
    {
        std::vector<int> cursor(ws.event_start.begin(), ws.event_start.end() - 1);
        for (const Event& e : ws.events)
            ws.event_list[static_cast<size_t>(cursor[static_cast<size_t>(e.atom)]++)] = e.neighbor;
    }
    auto order_of = [&](int v) {
        return std::vector<int>(ws.event_list.begin() + ws.event_start[static_cast<size_t>(v)],
                                ws.event_list.begin() + ws.event_start[static_cast<size_t>(v) + 1]);
    };
    auto mark_text = [](const Atom& a) {
        if (a.chiral_class == ChiralClass::TH) return std::string(a.chiral_index == 1 ? "@" : "@@");
        static constexpr std::array<std::string_view, 6> kNames{"", "TH", "AL", "SP", "TB", "OH"};
        return fmt::format("@{}{}", kNames[static_cast<size_t>(a.chiral_class)], a.chiral_index);
    };

    for (int v = 0; v < n; ++v) {
        Atom& a = mol_.atoms[static_cast<size_t>(v)];
        if (a.chiral_class == ChiralClass::none) continue;
        if (a.hydrogens > 1)
            error(fmt::format("chirality mark '{}' on an atom with {} hydrogens: write the hydrogens as [H] atoms",
                              mark_text(a), a.hydrogens),
                  a.column);
        const bool allene = is_allene_centre(mol_, v);
        if (a.chiral_class == ChiralClass::TH && allene) a.chiral_class = ChiralClass::AL;
        if (a.chiral_class == ChiralClass::AL) {
            AlleneEnds ends;
            if (!find_allene_ends(mol_, v, ends))
                error(fmt::format("'{}' as an allene mark needs the middle atom of a chain of two (or an even "
                                  "number of) cumulated double bonds",
                                  mark_text(a)),
                      a.column);
            std::vector<int> list;
            list.reserve(4);
            for (int side = 0; side < 2; ++side) {
                const int end = side == 0 ? ends.first : ends.second;
                const int inner = side == 0 ? ends.first_inner : ends.second_inner;
                std::vector<int> written;
                for (int x : order_of(end))
                    if (x != kImplicitHydrogen) written.push_back(x);
                const size_t before = list.size();
                append_allene_end_order(list, written, ws.atoms[static_cast<size_t>(end)].preceded,
                                        mol_.atoms[static_cast<size_t>(end)].hydrogens, inner);
                if (list.size() - before != 2)
                    error(fmt::format("allene mark '{}': the end atom at column {} needs exactly two substituents "
                                      "(atoms or hydrogens), it has {}",
                                      mark_text(a), mol_.atoms[static_cast<size_t>(end)].column,
                                      list.size() - before),
                          a.column);
            }
            a.stereo_neighbors = std::move(list);
            continue;
        }
        std::vector<int> list = order_of(v);
        const int count = static_cast<int>(list.size());
        // '@' and '@@' on five or six neighbours are @TB1/@TB2 and @OH1/@OH2 (OpenSMILES, "Octahedral Centers":
        // its equivalent forms include C[Co@](F)(Cl)(Br)(I)S; TB1/TB2 read the same way, from the first neighbour
        // towards the last). Not so for four: @SP has no shorthand ("Square Planar Centers").
        if (a.chiral_class == ChiralClass::TH && ws.atoms[static_cast<size_t>(v)].chiral_shorthand) {
            if (count == 5) a.chiral_class = ChiralClass::TB;
            else if (count == 6) a.chiral_class = ChiralClass::OH;
        }
        int lowest = 0, highest = 0;
        switch (a.chiral_class) {
        case ChiralClass::TH: lowest = 3; highest = 4; break;
        case ChiralClass::SP: lowest = highest = 4; break;
        case ChiralClass::TB: lowest = highest = 5; break;
        case ChiralClass::OH: lowest = highest = 6; break;
        default: break;
        }
        if (count < lowest || count > highest) {
            const std::string needed = lowest == highest ? fmt::format("{}", lowest)
                                                         : fmt::format("{} (or {} and a lone pair)", highest, lowest);
            const bool shorthand = ws.atoms[static_cast<size_t>(v)].chiral_shorthand;
            error(fmt::format("chirality mark '{}' needs {} neighbours{}; this atom has {}", mark_text(a), needed,
                              shorthand ? " (5 or 6 as the trigonal bipyramidal or octahedral mark)" : "", count),
                  a.column);
        }
        a.stereo_neighbors = std::move(list);
    }
}

}  // namespace

Molecule read_smiles(std::string_view text) { return Reader(text).read(); }

}  // namespace repel
