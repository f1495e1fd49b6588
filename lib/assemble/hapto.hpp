// Hapto ligands (a metal bonded to every atom of a ring or pi chain) placed on their metal: the assembly walks the
// molecule without those bonds, so each such ligand comes out as a piece of its own; here it is turned and moved so
// that its centroid lies on the metal's domain direction and its plane faces the metal.
#pragma once

#include <Eigen/Core>
#include <optional>
#include <string>
#include <vector>

#include "domains/domains.hpp"
#include "graph/molecule.hpp"

namespace repel {

// `skeleton` is the molecule without the bonds of hapto ligands (without_hapto_bonds), `domains` its analysis (the
// metal centres' directions in their own frames). Positions are changed in place. A hapto ligand joined to its metal
// through other bonds too (a tethered ring) is left where the walk put it, with a warning.
// `site_shift` (optional, per atom) receives, for the atoms of several hapto ligands moved together in one piece (a
// chelating diene), how far their ligand's centroid is from its site; empty for every other atom.
void place_hapto_ligands(const Molecule& skeleton, const MoleculeDomains& domains, std::vector<Eigen::Vector3d>& positions,
                         std::vector<std::string>& warnings,
                         std::vector<std::optional<Eigen::Vector3d>>* site_shift = nullptr);

}  // namespace repel
