// Whole-molecule building: domain frames assembled into Cartesian coordinates, then refined.
#pragma once

#include <map>
#include <memory>
#include <optional>
#include <vector>

#include "core/limits.hpp"
#include "domains/metal.hpp"
#include "domains/domains.hpp"
#include "graph/molecule.hpp"
#include "graph/rings.hpp"
#include "assemble/ring_embed.hpp"
#include "refine/refine.hpp"

namespace repel {

struct BuildOptions {
    bool refine = true;  // run the whole-molecule refinement after assembly
    // RMS-gradient stop of that refinement. A starting structure needs less than refinement's own default (1e-3):
    // at 3e-3 bonds stay within about 1.5e-3 A and angles within about 0.3 degree of their targets, the G2 and xtb
    // checks give the same figures, and the drug set builds 1.6 times faster (benchmarks/README.md).
    double refine_tolerance = 3e-3;
    // Wall-clock seconds one molecule may take (core/limits.hpp); past it the build fails with a LimitError
    // ("gave up after ..."). 0 or less: no limit. The limit never changes a structure that is built within it.
    double time_limit = kDefaultTimeLimit;
    // The final self-check of the refined structure (common practice for validating built structures: flag what lies
    // far outside the spread of good structures, not what is merely imperfect); each outlier is named in a
    // "distorted geometry" warning. 0: no check of that kind. Not run with refine = false.
    // A bond further than this (Angstrom) from its target length: the refinement holds bonds within about 0.002 A of
    // their targets, a real bond between one pair of elements moves by 0.05-0.1 A with its surroundings
    // (conjugation, strain), while one bond order apart is 0.15-0.2 A (C-C 1.54, C=C 1.34; from memory): past 0.15 A
    // the structure no longer shows the bond it was asked for. Drug set (benchmarks/drug_like.smi) worst 0.085 A, G2
    // worst 0.076 A (measured).
    double bond_outlier = 0.15;
    // An angle further than this (degrees) from its target (the domain angle, or what a small or flat ring forces
    // there). Angles at the atoms of a ring system already warned about as strained are left out. Drug set worst
    // 17.1 (diazepam's seven-membered ring; 15-17 in the other benzodiazepines), G2 worst 11.3 outside warned systems
    // (measured): 25 keeps a margin of half that, and the porphine this check was written for had 29.
    double angle_outlier = 25.0;
    // The total charge the caller states: it must equal the sum of the written formal charges (an InputError
    // otherwise; the charges belong on the atoms). Unset: not checked.
    std::optional<int> charge;
    // The spin multiplicity to write instead of the one the domain analysis gives (its Lewis structure, raised for
    // the ground states it knows; the metal centres' ligand-field rule). Checked against the electron count:
    // multiplicity - 1 unpaired electrons, of the parity of the electron count and at most that many (an InputError
    // otherwise). Coordinates are not changed.
    std::optional<int> multiplicity;
    // Per-centre choices for metal centres (a polyhedron asked for).
    MetalOptions metals;
};

// 3D coordinates for a molecule whose hydrogens are explicit (Molecule::make_hydrogens_explicit()).
// Atom order is kept. Charge and multiplicity come from the domain analysis. Throws InputError for a molecule that
// cannot be built (a valence that cannot be satisfied, contradictory stereo), UnsupportedError for what is not
// supported yet. Known weaknesses of the result are listed in Structure::warnings.
Structure build_structure(const Molecule& molecule, const BuildOptions& options = {});

// The analysis of one molecule kept, so that it can be assembled and refined more than once without analysing it
// again (the conformer ensemble: ring systems as their other mirror image, other torsions). build_structure is
// StructureBuilder(molecule, options).build().structure under the options' time limit; the builder itself sets no
// deadline (its caller's holds). One builder is for one thread at a time (it keeps the refinement's state).
class StructureBuilder {
public:
    StructureBuilder(const Molecule& molecule, const BuildOptions& options = {});
    ~StructureBuilder();
    StructureBuilder(const StructureBuilder&) = delete;
    StructureBuilder& operator=(const StructureBuilder&) = delete;

    struct Built {
        Structure structure;
        std::vector<char> mirrorable;     // per ring system: its mirror image is another conformation
        std::vector<char> flexible;       // per ring system: other embeddings give other ring shapes: 2 for a
                                          // medium or large ring, 1 for other puckers of five- and six-membered ones
        std::vector<char> warned_system;  // per ring system: a warning already names its strain
        std::vector<DistanceRestraint> restraints;  // the hapto frame held in the refinement
        std::vector<std::string> assembly_warnings;  // the structure's warnings before the refinement and final checks
        double refined_energy = 0;  // the refinement's energy at the positions (0 when not refined)
    };
    // Assembled, refined (unless the options say not) and checked; other_mirror[k]: ring system k taken as the mirror
    // image the equatorial rule would not take (ignored where the system is not mirrorable); variant > 0: flexible
    // ring systems embedded another way (embed_ring_system); tolerance > 0: refined only to that RMS gradient and not
    // given the final checks (a candidate of the ensemble, refined and checked later when it is considered).
    Built build(const std::vector<char>& other_mirror = {}, int variant = 0, double tolerance = 0) const;
    // The build's refinement again from built.structure's positions (warnings for what it leaves added), to the
    // options' RMS gradient or to `tolerance` when that is above 0.
    RefineResult refine(Built& built, double tolerance = 0) const;
    // The final checks of a build (stereochemistry as written, overlaps refused, the closest contact said).
    void finish(Structure& structure) const;
    // Every written stereocentre and double-bond configuration met by these positions.
    bool stereo_kept(const std::vector<Eigen::Vector3d>& positions) const;

    const Molecule& molecule() const;  // hydrogens explicit, separated sandwich ions joined
    const MoleculeDomains& domains() const;
    const RingInfo& rings() const;
    bool has_hapto_ligands() const;

private:
    struct Analysis;
    std::unique_ptr<Analysis> a_;
    mutable std::unique_ptr<Refiner> refiner_;  // made on the first refinement without restraints; one thread only
    // Ring systems already embedded, by system and variant (0 for a system that is not flexible: its shape does not
    // depend on the variant), as the equatorial rule takes them; a mirror image asked for is their reflection.
    mutable std::map<std::pair<size_t, int>, RingSystemEmbedding> embedded_;
};

}  // namespace repel
