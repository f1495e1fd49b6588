#include "input/smiles.hpp"

#include "core/error.hpp"

namespace repel {
// Placeholder until the reader lands.
Molecule read_smiles(std::string_view text) { fail("SMILES reader not implemented", std::string(text), 1); }
std::string write_smiles(const Molecule&) { return {}; }
}  // namespace repel
