// The electron-domain analysis of every centre as a readable table or a JSON document (`repel shape`).
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "domains/domains.hpp"
#include "graph/molecule.hpp"

namespace repel {

// A table: one row per centre (atoms with two or more bonded neighbours, and lone atoms), then the predicted angles.
std::string shape_table(const Molecule& molecule, const MoleculeDomains& domains, const std::string& title);

// {"name", "charge", "multiplicity", "centres": [{"atom", "element", "steric_number", "bonded_domains",
//  "lone_pairs", "delocalised_lone_pairs", "single_electrons", "axe", "electron_geometry", "shape",
//  "angles": [{"atoms": [a, centre, b], "degrees"}], and for a d-block centre "metal": {"oxidation_state",
//  "d_electrons", "coordination_number", "sites", "polyhedron", "polyhedron_reason", "unpaired_electrons",
//  "spin_state", "spin_reason", "ligands": [{"atoms", "hapto", "sites", "length", "label"}], "stereo"}}],
//  "multiplicity_reason" (with metal centres), "warnings"}. Atom numbers are 1-based. Delocalised lone
//  pairs (an amide N's, an ester O's) take no sigma domain and are not in "lone_pairs" or "steric_number".
nlohmann::json shape_json(const Molecule& molecule, const MoleculeDomains& domains, const std::string& title);

}  // namespace repel
