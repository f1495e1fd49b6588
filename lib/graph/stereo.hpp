// Stereo marks of the SMILES turned into targets in 3D: the signed volume each '@'/'@@' centre must have and the
// torsion each '/' '\' double bond must have; and the checks of finished coordinates against them.
#pragma once

#include <Eigen/Core>
#include <optional>
#include <string>
#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// A stereocentre whose handedness must be kept: the signed volume (b-a)x(c-a).(d-a) of neighbours a, b, c, d... of
// `centre`, taken as (pos[n1]-pos[centre]) . ((pos[n2]-pos[centre]) x (pos[n3]-pos[centre])), has sign `sign`.
struct ChiralTarget {
    int centre = -1;
    int n1 = -1, n2 = -1, n3 = -1;
    int sign = 0;  // +1 or -1
};

// A double bond whose configuration must be kept: the torsion a-b=c-d is near 0 (cis) or 180 degrees (trans).
struct DoubleBondTarget {
    int a = -1, b = -1, c = -1, d = -1;
    bool cis = false;
};

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

// Whether a target comes from an allene mark: its atoms are the substituents of the chain's ends, not neighbours of
// its centre (the middle atom).
bool is_allene_target(const Molecule& molecule, const ChiralTarget& t);

// Targets of every double bond with a written configuration.
std::vector<DoubleBondTarget> double_bond_targets(const Molecule& molecule);

// Whether coordinates meet a target (the signed volume has the target sign, or the torsion is on the target side of
// 90 degrees).
bool chirality_met(const ChiralTarget& target, const std::vector<Eigen::Vector3d>& positions);
bool double_bond_met(const DoubleBondTarget& target, const std::vector<Eigen::Vector3d>& positions);

}  // namespace repel
