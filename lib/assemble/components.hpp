// Separate components ('.': salts, solvates, counter-ions), each built on its own, then placed apart in input order.
#pragma once

#include <Eigen/Core>
#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// Margin added to the sum of van der Waals radii for the closest contact between two components (Angstrom;
// common practice: a loose contact that a quantum-chemistry optimisation closes, never an overlap).
constexpr double kComponentContactMargin = 0.5;

// Moves every component after the first so that no atom comes closer to an atom of another component than the sum of
// their van der Waals radii plus kComponentContactMargin, as close as that allows. A charged component is put next
// to the first placed atom of opposite formal charge (an ion beside its counter-ion), a neutral one next to the
// centre of what is placed. Past the first 64 components the rest go on a cubic lattice beside them (kept apart by
// the same contact rule), so that thousands of components cost linear time. Deterministic; the first component does
// not move.
void pack_components(const Molecule& molecule, std::vector<Eigen::Vector3d>& positions);

}  // namespace repel
