// Which energy terms a molecule gets, and what each pulls towards: bond lengths from the bond-length tables, angles
// from each centre's domain analysis (with the angles small and flat rings force), planes for sp2 centres and
// conjugated nitrogens, torsion preferences by the kind of bond, and the stereochemistry the caller asks to keep.
#pragma once

#include <vector>

#include "domains/domains.hpp"
#include "graph/molecule.hpp"
#include "refine/refine.hpp"
#include "refine/terms.hpp"

namespace repel::refine {

// Throws std::invalid_argument when the domain analysis does not belong to the molecule (a count that differs, an
// angle between atoms that are not bonded to the centre) or a stereo target names atoms that do not exist.
// `ring_graph`, when given, is the graph searched for small and flat rings (the molecule without the bonds of hapto
// ligands); the molecule itself otherwise. `held`, when given, holds the angles of the centres it names
// (RefineOptions::held_centres).
EnergyTerms build_terms(const Molecule& molecule, const MoleculeDomains& domains,
                        const std::vector<ChiralTarget>& chiral, const std::vector<DoubleBondTarget>& double_bonds,
                        const Molecule* ring_graph = nullptr,
                        const std::vector<DistanceRestraint>* restraints = nullptr,
                        const RefineOptions* held = nullptr);

}  // namespace repel::refine
