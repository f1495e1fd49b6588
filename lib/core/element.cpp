#include "core/element.hpp"

#include <array>
#include <stdexcept>

namespace repel {
// Placeholder: a few elements until the full tables land.
namespace {
const std::array<ElementData, 3> kPlaceholder{{
    {1, "H", 1, 1, 1, 2.20, 0.32, 0, 0, 0.31, 1.10, 1.008},
    {6, "C", 2, 14, 4, 2.55, 0.75, 0.67, 0.60, 0.76, 1.70, 12.011},
    {9, "F", 2, 17, 7, 3.98, 0.64, 0.59, 0.53, 0.57, 1.47, 18.998},
}};
}
const ElementData& element(int z) {
    for (const auto& e : kPlaceholder)
        if (e.number == z) return e;
    throw std::out_of_range("element");
}
int element_number(std::string_view s) {
    for (const auto& e : kPlaceholder)
        if (e.symbol == s) return e.number;
    return 0;
}
bool is_transition_metal(int z) { return (z >= 21 && z <= 30) || (z >= 39 && z <= 48) || (z >= 57 && z <= 80); }
}  // namespace repel
