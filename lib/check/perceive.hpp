// Connectivity, bond orders and formal charges of a structure whose file gives coordinates only (XYZ), or
// connectivity without orders (PDB CONECT, aromatic SDF bonds).
#pragma once

#include <Eigen/Core>
#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// Bond perception: atoms a and b are bonded when overlap * (r_a + r_b) < d <= r_a + r_b + tolerance, r the
// covalent radii for perception (Cordero et al. 2008, element(z).r_perception). The tolerance of 0.45 A is common
// practice for perception from Cordero radii (from memory). Closer pairs are overlapping atoms: a structure error,
// not a bond.
struct PerceptionOptions {
    double tolerance = 0.45;  // Angstrom added to the sum of the radii (common practice, from memory)
    double overlap = 0.5;     // fraction of the radii sum below which two atoms overlap instead of bonding
};

struct Overlap {
    int a = -1, b = -1;  // 0-based
    double distance = 0;
    // false: neither atom is left out (two hydrogens within bonding distance of each other, each with a bond of its
    // own: the pair is not bonded and both keep their bonds).
    bool left_out = true;
    std::vector<int> also;  // further atoms within bonding distance of b that b cannot bond to (a hydrogen's)
};

// Adds a single bond for every bonded pair not yet bonded, found through a cell grid (linear in the atom count).
// Returns the overlapping pairs. Of two overlapping atoms the later one (in file order) is left out of perception
// altogether (it is where it should not be), so that its presence does not invent bonds for its neighbours; of a
// hydrogen and a heavier atom, the hydrogen is left out. Overlap::b is the atom left out.
// A hydrogen bonds to one atom: within bonding distance of two hydrogens that have heavier partners, the H-H pair is
// an overlap (not bonded, nobody left out); within bonding distance of two or more heavier atoms (an H placed at a
// ring centre), the hydrogen is an overlap and left out, unless they are two boron or metal atoms (a bridging
// hydride, B2H6).
std::vector<Overlap> perceive_bonds(Molecule& molecule, const std::vector<Eigen::Vector3d>& positions,
                                    const PerceptionOptions& options = {});

// What the valence assignment could not do.
struct ValenceResult {
    std::vector<int> unpaired;     // per atom: electrons left unpaired (a valence not satisfied: a radical, or a
                                   // missing neighbour such as a hydrogen)
    std::vector<int> overbonded;   // atoms with more bonds than any normal valence of the element allows
    int charge = 0;                // the total formal charge of the assignment
    int total_unpaired = 0;
};

// Bond orders and formal charges such that every atom has a normal valence (H 1; C 4; N 3, or 4 with +1, or 2 with
// -1; O 2, or 1 with -1, or 3 with +1; S 2/4/6; P 3/5; halogens 1 (3/5/7 from Cl on); B 3, or 4 with -1; Si 4; ...
// common practice) and the charges add up to total_charge, with as few charges as the rules below reach.
//  1. Each atom takes the lowest neutral valence its bonds allow (a charged one only when its bond count forces it:
//     four-bonded N is N+, three-bonded O is O+, four-bonded B is B-).
//  2. The bonds that may change (free_bonds; all bonds when null) get extra orders by a degree-constrained matching
//     over the atoms still below their valence, preferring the bonds that are short for a single bond (measured
//     length over the single-bond length), like kekulization; a perfect matching is searched for first.
//  3. Where atoms are left below valence: a neighbour takes its next neutral valence (S 4 -> 6, sulfones), or a
//     neighbour takes +1 (N+ of nitro groups, the O+ of CO), or an unsatisfied atom takes a charge (O- first when the
//     charge is to go down, C+ when it is to go up) -- each kept only when it helps.
// unpaired_allowed (multiplicity - 1 when it is known, else 0) electrons may stay unpaired. With fixed_charges the
// atoms' formal charges (from the file) are kept and step 3 only raises neutral valences.
// Atoms marked in `ignore` (left out of perception) take no part. Where no perfect assignment exists, the atom left
// with the unpaired electron is the one whose Lewis structure fits the measured bond lengths best.
// Deterministic. Sets Bond::order and Atom::charge (and Atom::radical_electrons of the atoms left unpaired).
ValenceResult assign_valences(Molecule& molecule, const std::vector<Eigen::Vector3d>& positions, int total_charge,
                              int unpaired_allowed, const std::vector<int>* free_bonds = nullptr,
                              bool fixed_charges = false, const std::vector<char>* ignore = nullptr);

// The same for a structure with d-block metals, by the ionic model: the ligands are the closed-shell species cut off
// the metals (every bond to a metal left out; NH3, H2O, CO neutral; Cl-, CN-, CH3-, C5H5-, oxo O2-, nitrido N3- ...:
// unsatisfied atoms take anionic states until none is left, least charge first), and the metals take what is left
// of total_charge as their formal charges, which are then their oxidation states (shared evenly among several
// metals). Bonds to metals are single. Radical ligands cannot come out of it (an atom with no anionic state left
// keeps its unpaired electron); the charge always adds up (ValenceResult::charge == total_charge).
ValenceResult assign_valences_ionic(Molecule& molecule, const std::vector<Eigen::Vector3d>& positions,
                                    int total_charge, const std::vector<char>* ignore = nullptr);

// For a molecule with orders and charges given (SDF): per atom, the electrons by which it falls short of its
// nearest normal valence for its charge (0 when satisfied or when the charge has no tabulated state), and -1 for an
// atom with more bonds than any valence allows. Bonds to d-block metals count as covalent as far as the donor's
// valence needs, dative beyond (an NH3 or a C5H5 ring on a metal is satisfied as written).
std::vector<int> valence_shortfall(const Molecule& molecule);

}  // namespace repel
