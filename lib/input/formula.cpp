// Formula reader: a single-centre species written as a formula into a Lewis structure with the least formal charge.
//
// Grammar (whitespace allowed before and after; columns are 1-based bytes of the text as given):
//   formula := body [spaces] [charge]
//   body    := (Symbol [count])+        Symbol: an upper-case letter and an optional lower-case one (Xe, F, Cl)
//   count   := 1..12 without leading zeros
//   charge  := sign | sign sign... | digits sign | sign digits       "-", "--", "2-", "-2", "+", "3+"
//            | "^" charge | "^{" charge "}" | "(" charge ")"        "SO4^2-", "SO4^{2-}", "SO4(2-)"
// So "ClO4-", "SO4 2-", "SO4^2-", "SO4(2-)", "SO4-2", "SO4--", "NH4+" and "PO4 3-" are read alike. A charge number
// written straight after a count ("SO42-") cannot be told from the count; the count error then says to write it
// apart ("SO4 2-").
#include "input/formula.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "core/element.hpp"
#include "core/error.hpp"

namespace repel {
namespace {

// A species with more terminal ligands than this is not a single-centre species anyone writes as a formula
// (IF7 has 7, XeF8 2- has 8; the sphere solver goes to 12 domains). Common practice.
constexpr int kMaxLigands = 12;
// Charges beyond this are typing errors, not species (PO4 3-, SiF6 2-, AlF6 3- are the usual range). Common practice.
constexpr int kMaxChargeMagnitude = 9;

const char* const kGiveSmiles = "give the species as SMILES instead";

bool is_upper(char c) { return c >= 'A' && c <= 'Z'; }
bool is_lower(char c) { return c >= 'a' && c <= 'z'; }
bool is_digit(char c) { return c >= '0' && c <= '9'; }
bool is_space(char c) { return c == ' ' || c == '\t'; }

// An element symbol with its count, as written.
struct Term {
    int z = 0;
    int count = 1;
    int column = 0;  // 1-based column of the symbol
};

struct Parsed {
    std::vector<Term> terms;
    int charge = 0;
};

class Scanner {
public:
    explicit Scanner(std::string_view text) : text_(text), line_(text) {}

    Parsed parse() {
        Parsed out;
        skip_spaces();
        if (at_end()) fail("empty formula: expected element symbols such as XeF4 or SO4 2-", line_, 1);
        int atoms = 0;
        while (!at_end() && (is_upper(peek()) || is_lower(peek()) || is_digit(peek()))) {
            Term term = read_term();
            atoms += term.count;
            if (atoms - 1 > kMaxLigands) too_many_ligands(term);
            out.terms.push_back(term);
        }
        if (out.terms.empty())
            stray("an element symbol such as Xe or F to start the formula");
        skip_spaces();
        if (!at_end()) out.charge = read_charge();
        skip_spaces();
        if (!at_end()) stray("nothing more after the charge");
        return out;
    }

private:
    std::string_view text_;
    std::string line_;
    size_t pos_ = 0;
    // Column and value of the last count read, for the message about a charge glued to a count.
    int last_count_column_ = 0;

    bool at_end() const { return pos_ >= text_.size(); }
    char peek(size_t ahead = 0) const { return pos_ + ahead < text_.size() ? text_[pos_ + ahead] : '\0'; }
    int column() const { return static_cast<int>(pos_) + 1; }
    void skip_spaces() {
        while (!at_end() && is_space(peek())) ++pos_;
    }

    [[noreturn]] void stray(const std::string& expected) const {
        const unsigned char c = static_cast<unsigned char>(peek());
        std::string shown = at_end()                  ? std::string("end of formula")
                            : c >= 0x20 && c < 0x7f ? fmt::format("'{}'", static_cast<char>(c))
                                                    : fmt::format("byte 0x{:02x}", c);
        fail(fmt::format("unexpected {}: expected {}", shown, expected), line_, column());
    }

    Term read_term() {
        Term term;
        term.column = column();
        if (is_lower(peek()))
            fail(fmt::format("element symbols start with an upper-case letter ('{}' is lower case)", peek()), line_,
                 column());
        if (is_digit(peek())) fail("a count follows an element symbol; a formula starts with a symbol", line_, column());
        std::string symbol(1, peek());
        ++pos_;
        if (is_lower(peek())) {
            symbol += peek();
            ++pos_;
        }
        term.z = element_number(symbol);
        if (term.z == 0)
            fail(fmt::format("unknown element '{}' (the elements known are H to Rn)", symbol), line_, term.column);
        if (is_digit(peek())) term.count = read_count();
        return term;
    }

    int read_count() {
        const int start = column();
        last_count_column_ = start;
        if (peek() == '0') fail("a count is a whole number from 1, without leading zeros", line_, start);
        int value = 0;
        while (is_digit(peek())) {
            value = std::min(value * 10 + (peek() - '0'), 100000);
            ++pos_;
        }
        return value;
    }

    [[noreturn]] void too_many_ligands(const Term& term) const {
        const int at = term.count > 1 ? last_count_column_ : term.column;
        std::string message = fmt::format(
            "more than {} ligands: a formula is read only for one centre with terminal ligands", kMaxLigands);
        if (term.count >= 10 && (peek() == '+' || peek() == '-'))
            message += "; if the last digit is the charge, write it apart from the count, as in 'SO4 2-' or 'SO4^2-'";
        fail(message, line_, at);
    }

    // A charge in any of the forms of the grammar above; returns it with its sign.
    int read_charge() {
        if (peek() == '^') {
            ++pos_;
            if (peek() == '{') {
                ++pos_;
                int q = read_charge_value();
                if (peek() != '}') stray("'}' to close the charge");
                ++pos_;
                return q;
            }
            return read_charge_value();
        }
        if (peek() == '(') {
            const char inside = peek(1);
            if (!is_digit(inside) && inside != '+' && inside != '-')
                stray("a charge such as (2-); groups in parentheses are not read, " + std::string(kGiveSmiles));
            ++pos_;
            int q = read_charge_value();
            if (peek() != ')') stray("')' to close the charge");
            ++pos_;
            return q;
        }
        if (is_upper(peek()) || is_lower(peek()))
            stray("a charge after the space (write the element symbols together, as in XeOF4)");
        return read_charge_value();
    }

    int read_charge_value() {
        const int start = column();
        int magnitude = 0;
        char sign = 0;
        if (is_digit(peek())) {
            magnitude = read_charge_digits();
            if (peek() != '+' && peek() != '-') stray("'+' or '-' after the charge number, as in 2-");
            sign = peek();
            ++pos_;
        } else if (peek() == '+' || peek() == '-') {
            sign = peek();
            while (peek() == sign) {
                ++magnitude;
                ++pos_;
            }
            if (is_digit(peek())) {
                if (magnitude > 1) stray("one sign before a charge number, as in -2");
                magnitude = read_charge_digits();
            } else if (peek() == '+' || peek() == '-') {
                stray("one kind of sign in a charge");
            }
        } else {
            stray("a charge such as -, 2- or 3+");
        }
        if (magnitude == 0) fail("a charge of 0 is written by leaving the charge out", line_, start);
        if (magnitude > kMaxChargeMagnitude)
            fail(fmt::format("a charge of {} is not a species' charge (at most {})", magnitude, kMaxChargeMagnitude),
                 line_, start);
        return sign == '-' ? -magnitude : magnitude;
    }

    int read_charge_digits() {
        int value = 0;
        while (is_digit(peek())) {
            value = std::min(value * 10 + (peek() - '0'), 1000);
            ++pos_;
        }
        return value;
    }
};

// --- The centre ------------------------------------------------------------------------------------------------

int total_count(const Parsed& p, int z) {
    int n = 0;
    for (const Term& t : p.terms)
        if (t.z == z) n += t.count;
    return n;
}

const Term& first_term(const Parsed& p, int z) {
    for (const Term& t : p.terms)
        if (t.z == z) return t;
    return p.terms.front();
}

// Halogens (and hydrogen) are univalent as terminal atoms, so several of them never make a chain of their own
// (Cl2O is Cl-O-Cl although Cl is less electronegative than O). Common practice.
bool univalent_terminal(const ElementData& e) { return e.number == 1 || e.group == 17; }

// The index into p.terms of the centre's first term. Refuses, saying why, when the formula does not name one
// centre: no candidate, a tie, or a repeated element that would be central too (a chain).
size_t choose_centre(const Parsed& p, const std::string& line) {
    for (const Term& t : p.terms)
        if (is_transition_metal(t.z))
            throw UnsupportedError(fmt::format(
                "column {}: {} is a transition metal; metal centres are not handled yet, and a formula cannot say "
                "how its ligands bind",
                t.column, element(t.z).symbol));

    // Distinct elements in order of first appearance.
    std::vector<int> elements;
    for (const Term& t : p.terms)
        if (std::find(elements.begin(), elements.end(), t.z) == elements.end()) elements.push_back(t.z);

    if (elements.size() > 1)
        for (int z : elements)
            if (element(z).electronegativity <= 0)
                fail(fmt::format("no electronegativity is tabulated for {}, so the centre cannot be chosen; {}",
                                 element(z).symbol, kGiveSmiles),
                     line, first_term(p, z).column);

    int centre = 0;
    for (int z : elements)
        if (z != 1 && total_count(p, z) == 1 &&
            (centre == 0 || element(z).electronegativity < element(centre).electronegativity))
            centre = z;
    for (int z : elements)
        if (centre != 0 && z != centre && z != 1 && total_count(p, z) == 1 &&
            std::abs(element(z).electronegativity - element(centre).electronegativity) < 1e-9) {
            const bool later = first_term(p, z).column > first_term(p, centre).column;
            const int first = later ? centre : z, second = later ? z : centre;
            fail(fmt::format("two candidate centres: {} and {} each occur once with the same electronegativity "
                             "({:.2f}); {}",
                             element(first).symbol, element(second).symbol, element(z).electronegativity,
                             kGiveSmiles),
                 line, first_term(p, second).column);
        }
    if (centre == 0) {
        if (elements.size() == 1 && elements.front() == 1)
            fail(std::string("no centre: hydrogen is never central; ") + kGiveSmiles, line, p.terms.front().column);
        const Term& first_heavy = *std::find_if(p.terms.begin(), p.terms.end(), [](const Term& t) { return t.z != 1; });
        fail(fmt::format("no centre: no element other than hydrogen occurs exactly once ({} occurs {} times), so the "
                         "species has a chain or a ring; {}",
                         element(first_heavy.z).symbol, total_count(p, first_heavy.z), kGiveSmiles),
             line, first_heavy.column);
    }

    const ElementData& c = element(centre);
    for (int z : elements) {
        if (z == centre || total_count(p, z) == 1) continue;
        const ElementData& e = element(z);
        if (!univalent_terminal(e) && e.electronegativity < c.electronegativity)
            fail(fmt::format("the formula needs a chain: {} occurs {} times and is less electronegative than {} "
                             "({:.2f} < {:.2f}), so it would be central too; {}",
                             e.symbol, total_count(p, z), c.symbol, e.electronegativity, c.electronegativity,
                             kGiveSmiles),
                 line, first_term(p, z).column);
    }

    // In oxoacids (HNO3, H2SO4, HOCl, H3PO4) the hydrogens sit on oxygen, not on the centre: a chain. A carbon-group
    // centre keeps its hydrogens (H2CO, formaldehyde). Common practice.
    if (total_count(p, 1) > 0 && c.group != 14)
        for (int z : elements)
            if (z != centre && element(z).group == 16)
                fail(fmt::format("hydrogen and {} are both ligands of {}: in such acids the hydrogens sit on the {} "
                                 "(a chain), which a formula cannot say; {}",
                                 element(z).symbol, c.symbol, element(z).symbol, kGiveSmiles),
                     line, first_term(p, 1).column);

    for (size_t i = 0; i < p.terms.size(); ++i)
        if (p.terms[i].z == centre) return i;
    return 0;
}

// --- The Lewis structure ---------------------------------------------------------------------------------------

// Groups 1, 2 and 13 are electron-poor: as a centre they may stay below the octet (BF3, BeCl2, AlCl3), as a
// ligand they carry no octet either. Common practice.
bool electron_poor(const ElementData& e) { return e.group == 1 || e.group == 2 || e.group == 13; }

// The electrons a centre holds at most: the duet in period 1, the octet in period 2 (no d orbitals to expand
// into); from period 3 on no limit short of what the ligands allow. Common practice (Gillespie and Hargittai 1991).
int centre_electron_limit(const ElementData& e) { return e.period == 1 ? 2 : e.period == 2 ? 8 : 1000; }

// The octet the centre aims at before formal charges are weighed (the duet in period 1).
int centre_electron_target(const ElementData& e) { return e.period == 1 ? 2 : 8; }

// One way a terminal ligand can be bound: its bond order and its non-bonding electrons.
struct LigandOption {
    int order = 1;
    int nonbonding = 0;
};

// Bond orders a terminal atom takes, by group: hydrogen, the halogens and the noble gases 1; the chalcogens (O, S,
// Se, Te) 1-2, and 3 as well, which only the centre's octet ever asks for (C#O, [N#O]+, [HC#O]+: a triple bond
// puts +1 on the chalcogen); the pnictogens (N, P, ...) and the carbon group 1-3. Each with the octet completed by
// lone pairs (hydrogen: the duet). Electron-poor ligands (groups 1, 2, 13) bind once and may hold fewer than eight.
// Common practice.
std::vector<LigandOption> ligand_options(const ElementData& e) {
    if (e.number == 1) return {{1, 0}};
    if (electron_poor(e)) return {{1, 6}, {1, 4}, {1, 2}, {1, 0}};
    int max_order = 1;
    if (e.group == 14 || e.group == 15 || e.group == 16) max_order = 3;
    std::vector<LigandOption> options;
    for (int order = max_order; order >= 1; --order) options.push_back({order, 8 - 2 * order});
    return options;
}

struct Lewis {
    std::vector<int> orders;      // per ligand
    std::vector<int> nonbonding;  // per ligand
    std::vector<int> charges;     // per ligand
    int centre_nonbonding = 0;
    int centre_charge = 0;
};

// What the choice minimises, compared in this order (common practice, after Gillespie and Hargittai 1991):
//   1. the centre's shortfall from its octet (duet), for centres outside the electron-poor groups: :C#O: and
//      [N#O]+ keep the octet although a sextet would carry less formal charge;
//   2. the sum of |formal charge|;
//   3. sum of formal charge x electronegativity: negative charge on the more electronegative atoms (SO4 2- is
//      S(=O)2(O-)2 rather than [S-](=O)3O-);
//   4. the fewer bonds of order > 1 (the less expanded centre);
//   5. the first ligands written take the higher orders, then the fuller octets (deterministic among resonance
//      forms: NO2 gives O=N-O).
struct Score {
    int octet_shortfall = 0;
    int charge_sum = 0;
    double charge_electronegativity = 0;
    int multiple_bonds = 0;

    // -1 when a is better, +1 when b is better, 0 on a tie so far.
    static int compare(const Score& a, const Score& b) {
        if (a.octet_shortfall != b.octet_shortfall) return a.octet_shortfall < b.octet_shortfall ? -1 : 1;
        if (a.charge_sum != b.charge_sum) return a.charge_sum < b.charge_sum ? -1 : 1;
        if (std::abs(a.charge_electronegativity - b.charge_electronegativity) > 1e-9)
            return a.charge_electronegativity < b.charge_electronegativity ? -1 : 1;
        if (a.multiple_bonds != b.multiple_bonds) return a.multiple_bonds < b.multiple_bonds ? -1 : 1;
        return 0;
    }
};

// The best Lewis structure for the centre and its ligands with the total charge, or false when none exists.
// Every combination of ligand options is tried, up to permutations among equal ligands (twelve oxygens: 91).
bool best_lewis(const ElementData& centre, const std::vector<const ElementData*>& ligands, int charge, Lewis& best) {
    const size_t n = ligands.size();
    std::vector<std::vector<LigandOption>> options(n);
    int electrons = centre.valence_electrons - charge;
    for (size_t i = 0; i < n; ++i) {
        options[i] = ligand_options(*ligands[i]);
        electrons += ligands[i]->valence_electrons;
    }
    if (electrons < 0) return false;

    const int limit = centre_electron_limit(centre);
    const int target = electron_poor(centre) ? 0 : centre_electron_target(centre);
    std::vector<size_t> pick(n, 0);
    bool found = false;
    Score best_score;
    Lewis trial;
    trial.orders.resize(n);
    trial.nonbonding.resize(n);
    trial.charges.resize(n);
    while (true) {
        int bond_sum = 0, ligand_nonbonding = 0;
        for (size_t i = 0; i < n; ++i) {
            const LigandOption& o = options[i][pick[i]];
            trial.orders[i] = o.order;
            trial.nonbonding[i] = o.nonbonding;
            bond_sum += o.order;
            ligand_nonbonding += o.nonbonding;
        }
        const int centre_nonbonding = electrons - ligand_nonbonding - 2 * bond_sum;
        const int centre_electrons = centre_nonbonding + 2 * bond_sum;
        if (centre_nonbonding >= 0 && centre_electrons <= limit) {
            trial.centre_nonbonding = centre_nonbonding;
            trial.centre_charge = centre.valence_electrons - centre_nonbonding - bond_sum;
            Score s;
            s.octet_shortfall = std::max(0, target - centre_electrons);
            s.charge_sum = std::abs(trial.centre_charge);
            s.charge_electronegativity = trial.centre_charge * centre.electronegativity;
            for (size_t i = 0; i < n; ++i) {
                trial.charges[i] = ligands[i]->valence_electrons - trial.nonbonding[i] - trial.orders[i];
                s.charge_sum += std::abs(trial.charges[i]);
                s.charge_electronegativity += trial.charges[i] * ligands[i]->electronegativity;
                if (trial.orders[i] > 1) ++s.multiple_bonds;
            }
            // Options are listed from the highest order (fullest octet) down, and the odometer runs with the
            // first ligand slowest, so the first structure met among equals is the one rule 5 wants.
            if (!found || Score::compare(s, best_score) < 0) {
                best = trial;
                best_score = s;
                found = true;
            }
        }
        // Next combination. Within a run of the same element only non-increasing orders are tried: a permutation
        // of a run scores the same, and the sorted one is the one rule 5 keeps.
        size_t k = n;
        while (true) {
            if (k == 0) return found;
            --k;
            if (++pick[k] < options[k].size()) break;
        }
        for (size_t j = k + 1; j < n; ++j) pick[j] = ligands[j] == ligands[j - 1] ? pick[j - 1] : 0;
    }
}

// Says why no Lewis structure exists, as plainly as the numbers allow.
[[noreturn]] void no_lewis(const ElementData& centre, const std::vector<const ElementData*>& ligands, int charge,
                           const std::string& line, int column) {
    int electrons = centre.valence_electrons - charge;
    int needed = 0;      // with single bonds and the fewest ligand electrons
    int ligand_nb = 0;   // with single bonds and complete ligand octets
    for (const ElementData* l : ligands) {
        electrons += l->valence_electrons;
        const std::vector<LigandOption> options = ligand_options(*l);
        int fewest = options.back().nonbonding;
        needed += 2 + fewest;
        ligand_nb += fewest;
    }
    const int count = static_cast<int>(ligands.size());
    std::string why;
    if (electrons < needed)
        why = fmt::format("the species has {} valence electrons, fewer than the {} that {} single bonds and the "
                          "ligands' octets need",
                          electrons, needed, count);
    else if (electrons - ligand_nb > centre_electron_limit(centre))
        why = fmt::format("{} would hold {} electrons even with single bonds, and a period-{} centre holds at most {} "
                          "(octet expansion only from period 3 on)",
                          centre.symbol, electrons - ligand_nb, centre.period, centre_electron_limit(centre));
    else
        why = fmt::format("no bond orders give every ligand its octet around {}", centre.symbol);
    fail(fmt::format("no Lewis structure: {}; if the species is not one centre with terminal ligands, {}", why,
                     kGiveSmiles),
         line, column);
}

}  // namespace

Molecule read_formula(std::string_view text) {
    const std::string line(text);
    const Parsed parsed = Scanner(text).parse();
    const size_t centre_term = choose_centre(parsed, line);
    const Term& c = parsed.terms[centre_term];
    const ElementData& centre = element(c.z);

    // Ligands in the order written, each term expanded by its count; the centre's own term is skipped.
    std::vector<const ElementData*> ligands;
    std::vector<int> columns;
    for (size_t t = 0; t < parsed.terms.size(); ++t) {
        if (t == centre_term) continue;
        for (int k = 0; k < parsed.terms[t].count; ++k) {
            ligands.push_back(&element(parsed.terms[t].z));
            columns.push_back(parsed.terms[t].column);
        }
    }

    Lewis lewis;
    if (!best_lewis(centre, ligands, parsed.charge, lewis)) no_lewis(centre, ligands, parsed.charge, line, c.column);

    Molecule m;
    // Every atom states its charge and its (zero) hydrogen count, as a SMILES bracket atom does.
    Atom a;
    a.z = c.z;
    a.charge = lewis.centre_charge;
    a.bracket = true;
    a.column = c.column;
    m.add_atom(a);
    for (size_t i = 0; i < ligands.size(); ++i) {
        Atom l;
        l.z = ligands[i]->number;
        l.charge = lewis.charges[i];
        l.bracket = true;
        l.column = columns[i];
        const int index = m.add_atom(l);
        m.add_bond(0, index, lewis.orders[i]);
    }
    return m;
}

}  // namespace repel
