#include "assemble/components.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/neighbor_grid.hpp"
#include "core/element.hpp"

namespace repel {

using Eigen::Vector3d;

namespace {

// A contact ion pair sits near the sum of the covalent radii (Cordero et al. 2008) stretched by this factor: Na-O
// 2.55 A against about 2.3-2.4 A in sodium carboxylates (from memory). A start for quantum chemistry, where an ion
// left at van der Waals distance can stop the SCF (xtb failed on sodium acetate built that way).
constexpr double kIonPairContactScale = 1.1;

// Directions tried around the anchor, in order: the faces, edges and corners of a cube.
std::vector<Vector3d> probe_directions() {
    std::vector<Vector3d> out;
    for (int pass = 1; pass <= 3; ++pass)
        for (int x = -1; x <= 1; ++x)
            for (int y = -1; y <= 1; ++y)
                for (int z = -1; z <= 1; ++z)
                    if (std::abs(x) + std::abs(y) + std::abs(z) == pass) out.push_back(Vector3d(x, y, z).normalized());
    // Faces first, +x before -x etc.
    return out;
}

int sign(int v) { return (v > 0) - (v < 0); }

}  // namespace

void pack_components(const Molecule& molecule, std::vector<Vector3d>& positions) {
    int count = 0;
    const auto comp = molecule.components(&count);
    if (count < 2) return;
    std::vector<std::vector<int>> members(static_cast<size_t>(count));
    for (int i = 0; i < molecule.atom_count(); ++i) members[static_cast<size_t>(comp[static_cast<size_t>(i)])].push_back(i);
    auto vdw = [&](int a) { return element(molecule.atoms[static_cast<size_t>(a)].z).r_vdw; };
    auto covalent = [&](int a) { return element(molecule.atoms[static_cast<size_t>(a)].z).r_perception; };
    double max_vdw = 0;
    for (const Atom& a : molecule.atoms) max_vdw = std::max(max_vdw, element(a.z).r_vdw);
    const double reach = 2 * max_vdw + kComponentContactMargin;
    NeighborGrid grid(reach);
    std::vector<int> placed;
    for (int a : members[0]) {
        grid.insert(a, positions[static_cast<size_t>(a)]);
        placed.push_back(a);
    }
    const auto directions = probe_directions();
    for (int c = 1; c < count; ++c) {
        const auto& atoms = members[static_cast<size_t>(c)];
        int charge = 0;
        for (int a : atoms) charge += molecule.atoms[static_cast<size_t>(a)].charge;
        // The anchor: a placed counter-ion atom for an ion, else the centre of what is placed.
        Vector3d anchor = Vector3d::Zero();
        for (int a : placed) anchor += positions[static_cast<size_t>(a)];
        anchor /= static_cast<double>(placed.size());
        if (charge != 0)
            for (int a : placed)
                if (sign(molecule.atoms[static_cast<size_t>(a)].charge) == -sign(charge)) {
                    anchor = positions[static_cast<size_t>(a)];
                    break;
                }
        // The pivot of the new component: its own charged atom for an ion, else its centroid.
        Vector3d pivot = Vector3d::Zero();
        for (int a : atoms) pivot += positions[static_cast<size_t>(a)];
        pivot /= static_cast<double>(atoms.size());
        if (charge != 0)
            for (int a : atoms)
                if (sign(molecule.atoms[static_cast<size_t>(a)].charge) == sign(charge)) {
                    pivot = positions[static_cast<size_t>(a)];
                    break;
                }
        // Worst overlap (positive when too close) of the component shifted by `shift`.
        auto overlap = [&](const Vector3d& shift) {
            double worst = -std::numeric_limits<double>::infinity();
            for (int a : atoms) {
                const Vector3d x = positions[static_cast<size_t>(a)] + shift;
                grid.for_each_near(x, [&](int b) {
                    const int qa = molecule.atoms[static_cast<size_t>(a)].charge;
                    const int qb = molecule.atoms[static_cast<size_t>(b)].charge;
                    // Opposite charges meet at an ion-pair contact, not at van der Waals contact.
                    const double need = qa * qb < 0 ? kIonPairContactScale * (covalent(a) + covalent(b))
                                                     : vdw(a) + vdw(b) + kComponentContactMargin;
                    worst = std::max(worst, need - (positions[static_cast<size_t>(b)] - x).norm());
                });
            }
            return worst;
        };
        double best_t = std::numeric_limits<double>::infinity();
        Vector3d best_shift = Vector3d::Zero();
        for (const Vector3d& u : directions) {
            // Walk outwards until the component no longer touches what is placed.
            double t = 0;
            for (int step = 0; step < 100000; ++step) {
                const double o = overlap(anchor - pivot + t * u);
                if (o <= 0) break;
                t += std::max(0.1, o);
            }
            if (t < best_t - 1e-9) {
                best_t = t;
                best_shift = anchor - pivot + t * u;
            }
        }
        for (int a : atoms) {
            positions[static_cast<size_t>(a)] += best_shift;
            grid.insert(a, positions[static_cast<size_t>(a)]);
            placed.push_back(a);
        }
    }
}

}  // namespace repel
