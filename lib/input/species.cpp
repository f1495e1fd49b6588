#include "input/species.hpp"

#include <cctype>

#include "core/error.hpp"
#include "core/limits.hpp"
#include "input/formula.hpp"
#include "input/smiles.hpp"

namespace repel {
namespace {

// A formula uses only element symbols, counts, spaces and a charge; SMILES has its own punctuation. Ring-closure
// digits can look like counts ("C1CC"), but a chemist never writes a count of 1 or the same element twice in a row.
bool looks_like_formula(std::string_view text) {
    for (char ch : text) {
        unsigned char c = static_cast<unsigned char>(ch);
        if (!(std::isalnum(c) || c == '+' || c == '-' || c == ' ' || c == '^' || c == '(' || c == ')')) return false;
    }
    bool has_count = false;
    std::string_view previous;
    for (size_t i = 0; i < text.size() && std::isalpha(static_cast<unsigned char>(text[i]));) {
        size_t start = i++;
        if (i < text.size() && std::islower(static_cast<unsigned char>(text[i]))) ++i;
        std::string_view symbol = text.substr(start, i - start);
        size_t digits = i;
        while (i < text.size() && std::isdigit(static_cast<unsigned char>(text[i]))) ++i;
        std::string_view count = text.substr(digits, i - digits);
        if (count == "1" || (!count.empty() && count[0] == '0') || symbol == previous) return false;
        has_count = has_count || !count.empty();
        previous = symbol;
    }
    return has_count;
}

}  // namespace

Molecule read_species(std::string_view text, Notation notation) {
    if (notation == Notation::smiles) return read_smiles(text);
    if (notation == Notation::formula) return read_formula(text);
    try {
        return read_smiles(text);
    } catch (const LimitError&) {
        throw;  // a limit says the text is too large, not that it is no SMILES: no formula either, and no slicing
    } catch (const InputError& smiles_error) {
        try {
            return read_formula(text);
        } catch (const InputError& formula_error) {
            if (looks_like_formula(text))
                throw InputError(std::string("not SMILES, and as a formula: ") + formula_error.what(),
                                 formula_error.text(), formula_error.column());
            throw smiles_error;
        }
    }
}

}  // namespace repel
