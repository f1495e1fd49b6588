// The walk that turns local frames into whole-molecule coordinates: each atom's unplaced neighbours are placed from
// its domain frame, aligned (Kabsch) to the neighbours already placed; ring systems are placed as rigid units.
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "graph/rings.hpp"
#include "domains/domains.hpp"
#include "graph/molecule.hpp"
#include "refine/refine.hpp"

namespace repel {

// Coordinates of one ring system in its own frame, one per atom of RingInfo::systems[s], in that order.
using RingSystemCoordinates = std::vector<Eigen::Vector3d>;

// Coordinates for every atom. Each connected component is built on its own from a root (its largest ring system,
// else its best-connected atom) at the origin; separating the components is left to pack_components(). Torsions:
// heavy atoms anti (which staggers sp3-sp3 bonds and keeps conjugated chains planar and amides trans), the written
// configuration of marked double bonds, and the next staggered or planar choice when the preferred one would clash.
// Stereocentres get the written handedness by mirroring the centre's frame where the frame decides it.
std::vector<Eigen::Vector3d> assemble_positions(const Molecule& molecule, const MoleculeDomains& domains,
                                                const RingInfo& rings,
                                                const std::vector<RingSystemCoordinates>& ring_coordinates,
                                                const std::vector<ChiralTarget>& chiral);

}  // namespace repel
