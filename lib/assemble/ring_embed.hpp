// Coordinates for one ring system in its own frame: templates for single rings (regular polygons for planar and
// small rings, the chair for saturated six-membered rings, the envelope for five-membered ones) and a
// distance-geometry embedding for fused, bridged, spiro and caged systems and macrocycles.
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "graph/rings.hpp"
#include "domains/domains.hpp"
#include "graph/molecule.hpp"
#include "refine/refine.hpp"

namespace repel {

struct RingSystemEmbedding {
    std::vector<Eigen::Vector3d> coordinates;  // one per atom of the system, in RingInfo::systems order
    double worst_angle_strain = 0;  // largest deviation (degrees) of a ring angle from its centre's domain angle
    bool satisfied = true;          // the stereo and distance constraints were met
    bool met = true;                // ... within the embedding's acceptance (distance geometry only)
    double error = 0;               // the embedding's final error function (distance geometry only)
    std::string method;             // "polygon", "chair", "envelope", "distance geometry"
};

// Embeds ring system `system`. Stereocentres in `chiral` whose neighbours lie (three or more) in the system, and marked
// double bonds inside it, are constraints of the embedding.
RingSystemEmbedding embed_ring_system(const Molecule& molecule, const MoleculeDomains& domains, const RingInfo& rings,
                                      int system, const std::vector<ChiralTarget>& chiral);

}  // namespace repel
