#include "assemble/build.hpp"

#include "core/error.hpp"

namespace repel {
// Placeholder until assembly lands.
Structure build_structure(const Molecule&, const BuildOptions&) { throw UnsupportedError("not implemented"); }
}  // namespace repel
