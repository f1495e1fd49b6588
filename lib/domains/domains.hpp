// Electron domains of every atom: bonded domains, lone pairs and single electrons, the AXE class, the electron
// geometry and the molecular shape, and their directions from the sphere solver.
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "domains/metal.hpp"
#include "domains/model.hpp"
#include "graph/molecule.hpp"

namespace repel {

struct Domain {
    DomainKind kind = DomainKind::bond;
    int neighbor = -1;  // the bonded atom (kind == bond), else -1
    int bond = -1;      // index into Molecule::bonds (kind == bond), else -1
    int order = 0;      // bond order (kind == bond)
    double weight = 1;  // repulsion weight from the domain model
    double radius = 1;  // sphere radius from the domain model
};

// An ideal angle the model predicts between two bonded neighbours of a centre.
struct PredictedAngle {
    int a = -1, b = -1;  // neighbour atoms (0-based)
    double degrees = 0;
};

struct CentreDomains {
    int atom = -1;
    int bonded = 0;            // X: bonded neighbours (one domain each, whatever the bond order)
    int lone_pairs = 0;        // E: lone pairs that hold a domain of their own on the sphere
    // Lone pairs delocalised into a neighbouring pi system (0 or 1; see delocalised_lone_pair() in domains.cpp):
    // part of the Lewis structure but no sigma domain (the N of an amide is AX3, the O of an ester AX2E).
    int delocalised_lone_pairs = 0;
    int single_electrons = 0;  // unpaired electron domains (0 or 1)
    // A single electron in a p orbital rather than a domain of its own (0 or 1): the methyl radical's, on a period-2
    // centre with three bonds and nothing else (planar, common practice). Unpaired, but not on the sphere.
    int p_single_electrons = 0;
    int steric_number = 0;     // bonded + lone_pairs + single_electrons: the sigma domains (delocalised pairs not)
    std::string axe;           // "AX4E2"; see axe_class()
    std::string electron_geometry;  // "octahedral"
    std::string shape;              // "square planar"
    std::vector<Domain> domains;    // bonded domains first (in neighbour order), then lone pairs, then the electron
    std::vector<Eigen::Vector3d> directions;  // unit vectors from the sphere solver, one per domain; empty if < 2
    std::vector<PredictedAngle> angles;       // between bonded neighbours, from the directions
};

struct MoleculeDomains {
    std::vector<CentreDomains> atoms;  // one per atom, in atom order
    int charge = 0;                    // sum of formal charges
    int unpaired_electrons = 0;        // single-electron domains in the Lewis structure
    int multiplicity = 1;              // 2S+1 (with the ground-state triplets handled, see domains.cpp)
    std::vector<std::string> warnings;
    // Target length of every bond (Angstrom, in Molecule::bonds order): covalent radii by the bond's order, with
    // resonance-shared orders and the corrections of core/bond_length.cpp for the Lewis structure at its ends.
    std::vector<double> bond_lengths;
    // The d-block centres (oxidation state, d count, polyhedron, spin and why), empty without metals.
    MetalAnalysis metals;
    // How the multiplicity was decided, when more than counting the Lewis structure's single electrons went into it.
    std::string multiplicity_reason;
};

// The domains of every atom of a molecule whose hydrogens are explicit. Throws InputError for a valence that
// cannot be satisfied (more bonds than valence electrons allow), UnsupportedError for f-block centres.
// With solve=false the directions and angles are left empty (counting only). d-block centres are analysed by
// analyse_metals (metal.hpp); `metals` passes an analysis made on the whole molecule when `molecule` is its skeleton
// without the bonds of hapto ligands (the graph the assembly walks).
MoleculeDomains analyse_domains(const Molecule& molecule, bool solve = true, const MetalAnalysis* metals = nullptr);

// Names of the trade, by steric number and by (bonded, lone pairs + single electrons).
std::string electron_geometry_name(int steric_number);
std::string shape_name(int bonded, int nonbonded);
// "AX3E2": X bonded neighbours, E lone pairs (E0 omitted). A single-electron domain is written as a trailing
// "+e" ("AX2+e" for the nitrogen of NO2), since it is a domain of its own, smaller than a lone pair.
std::string axe_class(int bonded, int lone_pairs, int single_electrons);

}  // namespace repel
