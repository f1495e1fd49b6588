// Fuzz target: the SDF reader (properties in fuzz_structures.hpp). Coordinates come back within 1e-4 Angstrom:
// the precision of the SDF writer's coordinate fields.
#include "fuzz_structures.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, size_t size) {
    repel::fuzz::check_structures(data, size, repel::InputFormat::sdf, repel::Format::sdf, 1e-4);
    return 0;
}
