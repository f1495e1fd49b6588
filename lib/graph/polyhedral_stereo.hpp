// Non-tetrahedral stereo marks of OpenSMILES as geometry: square planar (@SP1-3), trigonal bipyramidal (@TB1-20)
// and octahedral (@OH1-30) centres. A mark and its neighbour order (Atom::stereo_neighbors) put each neighbour on one
// site of an ideal polyhedron; the inverse reads the index back from directions. Reference: the OpenSMILES
// specification (opensmiles.org), chirality section, "Square Planar Centers", "Trigonal Bipyramidal Centers" and
// "Octahedral Centers".
//
// Site labelling (unit vectors, fixed; "anticlockwise seen from +z" is increasing azimuth, the sense in which '@'
// means anticlockwise in OpenSMILES, see kAnticlockwiseSign in graph/stereo.hpp):
//   square (SP):  0 +x, 1 +y, 2 -x, 3 -y                  cyclic order; trans pairs 0-2 and 1-3
//   trigonal bipyramid (TB): 0 +z, 1 -z (axial),
//                 2, 3, 4 equatorial at azimuth 0, 120, 240 degrees (anticlockwise seen from site 0)
//   octahedron (OH): 0 +z, 1 -z, 2 +x, 3 +y, 4 -x, 5 -y  (2..5 anticlockwise seen from site 0;
//                 trans pairs 0-1, 2-4, 3-5)
// A mark puts its first neighbour on site 0 (SP, OH) or its viewing axis on sites 0 -> 1 (TB, OH).
#pragma once

#include <Eigen/Core>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// Number of neighbours a class needs (SP 4, TB 5, OH 6) and how many indices it has (SP 3, TB 20, OH 30); 0 for
// the other classes.
int polyhedral_neighbor_count(ChiralClass cls);
int polyhedral_index_count(ChiralClass cls);

// The ideal sites of the class's polyhedron in the labelling above; empty for TH, AL and none.
std::span<const Eigen::Vector3d> polyhedral_sites(ChiralClass cls);

// For a mark cls/index (SP 1..3, TB 1..20, OH 1..30): the site of each neighbour, in stereo order (entry k is the
// site of the k-th neighbour of Atom::stereo_neighbors). Empty for another class or an index out of range.
std::vector<int> polyhedral_site_assignment(ChiralClass cls, int index);

// The ideal unit direction (centre to neighbour) of each neighbour of an atom with an SP, TB or OH mark, returned in
// Molecule::neighbors(atom) order. Needs hydrogens explicit (no kImplicitHydrogen left in stereo_neighbors) and as
// many bonds as the class needs. Returns nothing for an atom without such a mark; `problem` says why a mark was not
// usable (left untouched when the atom has no SP/TB/OH mark).
std::optional<std::vector<Eigen::Vector3d>> marked_directions(const Molecule& molecule, int atom,
                                                              std::string* problem = nullptr);

// The index (SP 1..3, TB 1..20, OH 1..30) whose ideal arrangement fits the given directions best (least squares
// after the best proper rotation; the directions are normalised first, their lengths do not matter).
// directions_in_stereo_order[k] points from the centre to the k-th neighbour in stereo order. Returns 0 when the
// class is not SP/TB/OH or the count does not match. `residual`, when given, receives the root-mean-square distance
// between the rotated ideal sites and the unit directions (0 for an ideal arrangement).
int best_polyhedral_index(ChiralClass cls, std::span<const Eigen::Vector3d> directions_in_stereo_order,
                          double* residual = nullptr);

// The index that describes the arrangement of mark cls/index over neighbour order `from` when the same neighbours
// are listed in order `to` (any labels, e.g. atom indices or kImplicitHydrogen, each at most once). Returns 0 when
// the class or index is not valid or `to` is not a permutation of `from`. Used by the SMILES writer and to compare
// two marks: (index_a over a) and (index_b over b) are the same arrangement iff
// reorder_polyhedral_index(cls, index_a, a, b) == index_b.
int reorder_polyhedral_index(ChiralClass cls, int index, std::span<const int> from, std::span<const int> to);

// A signed-volume condition: the sign of (n1 - c) . ((n2 - c) x (n3 - c)) for the centre c, n1..n3 neighbour atoms.
struct SignedVolumeTarget {
    int n1, n2, n3;
    int sign;  // +1 or -1
};

// Conditions that pin the handedness of a TB or OH arrangement (the angles alone fix it up to a mirror image, e.g.
// fac/mer, but not Delta/Lambda): one per face of the polyhedron, each a triple of mutually cis neighbours with the
// sign of its ideal signed volume (TB: the 6 faces, an axial and two equatorial neighbours; OH: the 8 faces). None
// for SP (planar: the mirror image through the plane is the same arrangement). `neighbors_in_stereo_order` holds the
// labels (atom indices) that the targets name.
std::vector<SignedVolumeTarget> polyhedral_volume_targets(ChiralClass cls, int index,
                                                          std::span<const int> neighbors_in_stereo_order);

// The same for an atom of a molecule with its mark (hydrogens explicit); empty with `problem` set when the mark is
// not usable, empty without a problem for SP and for atoms without an SP/TB/OH mark.
std::vector<SignedVolumeTarget> volume_targets(const Molecule& molecule, int atom, std::string* problem = nullptr);

}  // namespace repel
