// Metal centres (d block): the ionic-model electron count (oxidation state, d electrons), the ligands as domains on
// the sphere (a hapto ligand is one domain at the centroid of its atoms), the polyhedron from the ligands'
// repulsion (Kepert) with the d-count exceptions, metal-ligand bond lengths and the spin state. The main-group
// analysis (domains.cpp) calls it for every metal atom and counts each donor's bond to a metal as dative or
// covalent as it says.
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "core/element.hpp"
#include "graph/molecule.hpp"

namespace repel {

// One ligand domain of a metal centre: a sigma donor atom, or a hapto ligand (every atom of a contiguous pi system
// bonded to the metal), whose domain points at the centroid of its atoms.
struct LigandDomain {
    std::vector<int> atoms;   // the donor atom, or the hapto ligand's atoms in ascending order
    int bond_order = 1;       // the written order of a sigma donor's bond to the metal (1, 2 or 3)
    int sites = 1;            // coordination sites it takes in the polyhedron (hapto: 1 per pi pair, at most 3)
    bool hapto() const { return atoms.size() > 1; }
    // Target distance from the metal to the donor atom, or for a hapto ligand to each of its atoms (Angstrom).
    double length = 0;
    // Ligand-field class of the donor (spectrochemical series): 0 weak (halides, O, S), 1 intermediate (sp3 N),
    // 2 strong (C, P, hydride, pi-acceptor N, hapto ligands).
    int field = 0;
    std::string label;  // "Cl", "NH3 (N)", "eta5 C5 ring" ...
};

struct MetalCentre {
    int atom = -1;
    int oxidation_state = 0;
    int d_electrons = 0;
    int coordination_number = 0;  // ligand domains, a hapto ligand counted once
    int sites = 0;                // coordination sites of the polyhedron (a hapto ligand counts its sites)
    std::vector<LigandDomain> ligands;  // sigma donors in the order of Molecule::neighbors(atom), then hapto ligands
    std::string polyhedron;             // "octahedral", "square planar", ...
    std::string polyhedron_reason;      // "d8 Pt(II), four-coordinate: square planar"
    bool square_planar = false;         // four sites held in a plane (d8 / d9 rules)
    int unpaired_electrons = 0;
    std::string spin_state;             // "low spin", "high spin", or "" where the d count leaves no choice
    std::string spin_reason;
    int metal_metal_bonds = 0;          // bond orders to other metals (they pair d electrons)
    std::string stereo_note;            // how a written @SP/@TB/@OH mark was used, or why not
    // Directions of the ligand domains (unit vectors, one per entry of `ligands`) in the centre's own frame.
    std::vector<Eigen::Vector3d> directions;
};

// How the Lewis structure of a donor counts its bond to a metal.
struct MetalBond {
    int donor = -1, metal = -1;
    int covalent = 0;  // bond-order units shared with one electron from each side (X type); the rest are dative (L)
    int taken = 0;     // electrons the donor's ligand takes from the metal in the ionic model (oxidation state)
};

struct MetalAnalysis {
    std::vector<MetalCentre> centres;
    std::vector<int> centre_of_atom;       // per atom: index into centres, or -1
    std::vector<MetalBond> bonds;          // per sigma bond from a non-metal to a metal
    std::vector<char> hapto_atom;          // per atom: 1 when it belongs to a hapto ligand
    std::vector<std::pair<int, int>> hapto_bonds;  // (metal, atom) bonds that make hapto ligands
    std::vector<std::string> warnings;
    bool empty() const { return centres.empty(); }
    // The covalent units of the bond donor-metal (0 when the pair is not a sigma metal bond).
    const MetalBond* bond(int donor, int metal) const;
};

// Options a user can set per metal centre.
struct MetalOptions {
    // Polyhedron asked for, by atom (1-based in the app; 0-based here): "tetrahedral", "square planar",
    // "trigonal bipyramidal", "square pyramidal", "octahedral", "trigonal prismatic" ... Empty: the model decides.
    std::vector<std::pair<int, std::string>> polyhedra;
};

// The analysis of every d-block centre of a molecule whose hydrogens are explicit. With solve=false the directions
// are left empty. Throws UnsupportedError for f-block centres, InputError for an electron count that cannot be
// (a donor whose ligand cannot be closed-shell, a metal left with fewer than zero d electrons).
MetalAnalysis analyse_metals(const Molecule& molecule, bool solve = true, const MetalOptions& options = {});

// The molecule with the bonds of hapto ligands removed: the graph the assembly walks (each hapto ligand is placed
// as a whole at its domain afterwards; see place_hapto_ligands in assemble/). Same atoms; bonds in the same order
// but without those.
Molecule without_hapto_bonds(const Molecule& molecule, const MetalAnalysis& metals);

// The ion-separated form of metallocenes and their relatives as chemical databases write them
// ("[CH-]1C=CC=C1.[CH-]1C=CC=C1.[Fe+2]"): a d-block metal cation with charge +q, alone or with ligands of its own
// ("[cH-]1cccc1.[Mn+](...)"), takes up to min(q, 2) cyclopentadienide rings (a five-membered carbon ring whose atoms carry a total charge of -1, every ring
// atom trigonal), in the order written, each bonded to the metal through all five ring atoms (an eta5 ligand). Other
// ions stay apart. Returns the number of rings joined and says so in `warnings`; a lone metal atom beside rings it is
// not joined to (arenes, a neutral metal) is left apart with a warning, since the form does not say it is a sandwich.
int join_separated_sandwich_ions(Molecule& molecule, std::vector<std::string>& warnings);

// The polyhedron names a user may ask for, for the option's help and its check.
const std::vector<std::string>& polyhedron_names();

}  // namespace repel
