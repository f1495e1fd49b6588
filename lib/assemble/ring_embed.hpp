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
    // The system has no handedness of its own and is not flat, so that its mirror image is another conformation of
    // the same molecule (a cyclohexane's other chair, an envelope's flap on the other side).
    bool mirrorable = false;
    // The system holds a ring of seven or more atoms that is not flat, or a five- or six-membered ring of three or
    // more sp3 atoms: other embeddings (variant > 0) give other ring shapes (other puckers of the small rings).
    bool flexible = false;
    bool large = false;  // flexible by a ring of seven or more atoms (medium, macro), whose shapes are many

};

// Embeds ring system `system`. Stereocentres in `chiral` whose neighbours lie (three or more) in the system, and marked
// double bonds inside it, are constraints of the embedding. Of a mirrorable system's two mirror images the one that
// puts substituents equatorial is taken, or the other one when `other_mirror` is set (conformer sampling). A
// flexible system embedded with variant > 0 starts from a metric-matrix embedding of that seed instead of the fused
// templates: another ring shape (conformer sampling).
RingSystemEmbedding embed_ring_system(const Molecule& molecule, const MoleculeDomains& domains, const RingInfo& rings,
                                      int system, const std::vector<ChiralTarget>& chiral, bool other_mirror = false,
                                      int variant = 0);

}  // namespace repel
