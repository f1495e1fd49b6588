#include "refine/refine.hpp"

namespace repel {
// Placeholder until refinement lands.
RefineResult refine_structure(const Molecule&, const MoleculeDomains&, const std::vector<ChiralTarget>&,
                              const std::vector<DoubleBondTarget>&, std::vector<Eigen::Vector3d>&,
                              const RefineOptions&) {
    return {};
}
}  // namespace repel
