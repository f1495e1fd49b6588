// Stereo marks of the SMILES turned into targets in 3D: the signed volume each '@'/'@@' centre must have and the
// torsion each '/' '\' double bond must have; and the checks of finished coordinates against them.
#pragma once

#include <Eigen/Core>
#include <optional>
#include <string>
#include <vector>

#include "graph/molecule.hpp"
#include "refine/refine.hpp"

namespace repel {

// The sign that (n1 - c) . ((n2 - c) x (n3 - c)) has for '@' when n1, n2, n3 are the second, third and fourth
// neighbours in SMILES order: looking from the first neighbour, the other three run anticlockwise (OpenSMILES), which
// puts them at negative signed volume (derived from the definition; checked against L-alanine in the tests).
constexpr int kAnticlockwiseSign = -1;

// The chirality target of a tetrahedral stereocentre as written (TH class, '@' or '@@'), on three of its real
// neighbours. A centre with three neighbours and a lone pair (sulfoxides, phosphines, [N@@]) counts the lone pair as
// OpenSMILES does for an implicit hydrogen: first when the centre opens the SMILES, else right after the preceding atom.
// Returns nothing for atoms without a usable mark; `problem` says why a mark was not usable.
std::optional<ChiralTarget> chiral_target(const Molecule& molecule, int atom, std::string* problem = nullptr);

// Targets of every tetrahedral stereocentre; marks that cannot be used are listed in `warnings`.
std::vector<ChiralTarget> chiral_targets(const Molecule& molecule, std::vector<std::string>& warnings);

// Targets of every double bond with a written configuration.
std::vector<DoubleBondTarget> double_bond_targets(const Molecule& molecule);

// Whether coordinates meet a target (the signed volume has the target sign, or the torsion is on the target side of
// 90 degrees).
bool chirality_met(const ChiralTarget& target, const std::vector<Eigen::Vector3d>& positions);
bool double_bond_met(const DoubleBondTarget& target, const std::vector<Eigen::Vector3d>& positions);

}  // namespace repel
