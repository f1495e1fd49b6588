#include "core/bond_length.hpp"

#include "core/element.hpp"

namespace repel {
// Placeholder until the tables land.
double bond_length(int za, int zb, int, bool) { return element(za).r_single + element(zb).r_single; }
double bond_length_fractional(int za, int zb, double) { return bond_length(za, zb, 1); }
}  // namespace repel
