// The bond lengths `repel check` expects: the domain analysis' lengths (the ones the build aims at) with a small
// correction per kind of bond, fitted on sound structures (expected_length.cpp has the table and its source).
#pragma once

#include <string>
#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// The kind of bond e of m (explicit hydrogens): each end's element and neighbour count, `u` when that end has another
// double, triple or aromatic bond, else `c` for an N or O with another neighbour that has one (its lone pair shared
// elsewhere: an anilide's N); the order (1, 2, 3, ar), or `s` for a bond to one of two or more terminal atoms of one
// element on one centre, one of those bonds multiple (carboxylate, nitro, sulfonyl); ` r3` in a three-membered ring;
// aromatic bonds ` r5` in a five-membered ring, ` f` between two atoms of three aromatic bonds (ring fusion). The
// ends are sorted (element symbol, then the rest): "C3u-N3 1", "C3-O1 s", "C4-C4 1 r3", "C3u-C3u ar f".
std::string bond_kind(const Molecule& m, int e);
// The element pair and order of bond e ("C-S 1") when one end lies beyond F, else empty: the fallback kind.
std::string coarse_bond_kind(const Molecule& m, int e);

// The analysis' lengths of m's bonds (model[e], 0 where none) corrected by kind. Bonds of one atom to one element
// written with different orders whose model lengths are equal (orders the analysis shared: carboxylate, guanidinium;
// 0.0001 A) take the mean of their corrections, so that they stay equal.
std::vector<double> corrected_lengths(const Molecule& m, const std::vector<double>& model);

}  // namespace repel
