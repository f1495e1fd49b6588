// Fuzz target: the SDF readers. The structure reader of `repel check` (properties in fuzz_structures.hpp;
// coordinates come back within 1e-4 Angstrom, the precision of the SDF writer's coordinate fields), and the SD
// records of `repel build -i FILE.sdf` (input/records.hpp, input/sd_molecule.hpp): only the documented input errors
// escape the record splitter and the molecule reader, and a small molecule read from a record builds and writes
// (fuzz_build.hpp).
#include <sstream>

#include "fuzz_build.hpp"
#include "fuzz_structures.hpp"
#include "input/records.hpp"
#include "input/sd_molecule.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, size_t size) {
    repel::fuzz::check_structures(data, size, repel::InputFormat::sdf, repel::Format::sdf, 1e-4);

    const std::string_view text(reinterpret_cast<const char*>(data), size);
    std::istringstream in{std::string(text)};
    repel::SdfRecordReader records(in);
    for (int k = 0; k < 16; ++k) {  // a few records are enough per input; more only slow the run
        std::optional<repel::SdfRecordText> record;
        if (repel::fuzz::guarded("split SD records", text, [&] { record = records.next(); }) !=
                repel::fuzz::Outcome::ok ||
            !record)
            break;
        if (records.too_long()) continue;
        repel::Molecule m;
        if (repel::fuzz::guarded("SD record to molecule", text,
                                 [&] { m = repel::molecule_from_sd_record(record->text, record->line); }) ==
            repel::fuzz::Outcome::ok)
            repel::fuzz::build_and_write(std::move(m), text);
    }
    return 0;
}
