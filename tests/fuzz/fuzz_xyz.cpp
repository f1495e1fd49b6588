// Fuzz target: the XYZ reader (properties in fuzz_structures.hpp). Coordinates come back within 1e-6 Angstrom:
// the precision of the XYZ writer's coordinate fields.
#include "fuzz_structures.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, size_t size) {
    repel::fuzz::check_structures(data, size, repel::InputFormat::xyz, repel::Format::xyz, 1e-6);
    return 0;
}
