#include "input/formula.hpp"

#include "core/error.hpp"

namespace repel {
// Placeholder until the reader lands.
Molecule read_formula(std::string_view text) { fail("formula reader not implemented", std::string(text), 1); }
}  // namespace repel
