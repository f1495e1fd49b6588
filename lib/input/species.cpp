#include "input/species.hpp"

#include <cctype>

#include "core/error.hpp"
#include "input/formula.hpp"
#include "input/smiles.hpp"

namespace repel {
namespace {

// A formula uses only element symbols, counts, spaces and a charge; SMILES has its own punctuation.
bool looks_like_formula(std::string_view text) {
    for (char ch : text) {
        unsigned char c = static_cast<unsigned char>(ch);
        if (!(std::isalnum(c) || c == '+' || c == '-' || c == ' ' || c == '^' || c == '(' || c == ')')) return false;
    }
    // A formula has a digit after a letter (SF4) or a space/charge; SMILES like "CCO" has neither.
    for (size_t i = 1; i < text.size(); ++i)
        if (std::isdigit(static_cast<unsigned char>(text[i])) && std::isalpha(static_cast<unsigned char>(text[i - 1])))
            return true;
    return false;
}

}  // namespace

Molecule read_species(std::string_view text, Notation notation) {
    if (notation == Notation::smiles) return read_smiles(text);
    if (notation == Notation::formula) return read_formula(text);
    try {
        return read_smiles(text);
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
