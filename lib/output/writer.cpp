#include "output/writer.hpp"

#include "core/error.hpp"

namespace repel {
// Placeholder until the writers land.
Format format_from_name(std::string_view) { return Format::xyz; }
Format format_from_path(std::string_view) { return Format::xyz; }
std::unique_ptr<StructureWriter> make_writer(Format) { return nullptr; }
}  // namespace repel
