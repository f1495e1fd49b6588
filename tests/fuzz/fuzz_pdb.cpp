// Fuzz target: the PDB reader (properties in fuzz_structures.hpp). Coordinates come back within 1e-3 Angstrom:
// the precision of the PDB writer's coordinate fields.
#include "fuzz_structures.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, size_t size) {
    repel::fuzz::check_structures(data, size, repel::InputFormat::pdb, repel::Format::pdb, 1e-3);
    return 0;
}
