#include "assemble/components.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/neighbor_grid.hpp"
#include "core/element.hpp"
#include "core/limits.hpp"

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

// Components placed one by one by walking out from what is placed (the close packing a salt or a solvate wants);
// beyond this many the rest go on a lattice (the walk costs grow with everything placed: 2,000 methanes took 28 s
// here, measured). No salt or solvate written as one SMILES comes near 64 components.
constexpr int kWalkedComponents = 64;

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
    // What is placed, kept as a running sum (added in placement order, so the centroid is bit for bit the sum over
    // the placed atoms in that order) and the first placed atom of each charge sign: both were loops over every
    // placed atom per component, quadratic in the number of components ("C.C.C..." with 100,000 dots).
    size_t placed_count = 0;
    Vector3d placed_sum = Vector3d::Zero();
    int first_placed_of_sign[3] = {-1, -1, -1};  // index sign + 1
    auto place = [&](int a) {
        grid.insert(a, positions[static_cast<size_t>(a)]);
        placed_sum += positions[static_cast<size_t>(a)];
        ++placed_count;
        int& first = first_placed_of_sign[sign(molecule.atoms[static_cast<size_t>(a)].charge) + 1];
        if (first < 0) first = a;
    };
    for (int a : members[0]) place(a);
    const auto directions = probe_directions();
    const int walked = std::min(count, kWalkedComponents);
    for (int c = 1; c < walked; ++c) {
        const auto& atoms = members[static_cast<size_t>(c)];
        int charge = 0;
        for (int a : atoms) charge += molecule.atoms[static_cast<size_t>(a)].charge;
        // The anchor: a placed counter-ion atom for an ion, else the centre of what is placed.
        Vector3d anchor = placed_sum / static_cast<double>(placed_count);
        if (charge != 0 && first_placed_of_sign[-sign(charge) + 1] >= 0)
            anchor = positions[static_cast<size_t>(first_placed_of_sign[-sign(charge) + 1])];
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
                if (step % 64 == 63) check_deadline("packing the components");
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
            place(a);
        }
    }
    if (walked == count) return;
    // The rest on a cubic lattice beside what is placed: each component centred in its own cell, cells as wide as
    // the widest remaining component plus van der Waals contact and margin, so no two can touch. Linear in the atoms.
    Vector3d lo = Vector3d::Constant(std::numeric_limits<double>::infinity());
    Vector3d hi = -lo;
    for (int c = 0; c < walked; ++c)
        for (int a : members[static_cast<size_t>(c)]) {
            lo = lo.cwiseMin(positions[static_cast<size_t>(a)]);
            hi = hi.cwiseMax(positions[static_cast<size_t>(a)]);
        }
    double widest = 0;
    std::vector<Vector3d> centre(static_cast<size_t>(count), Vector3d::Zero());
    for (int c = walked; c < count; ++c) {
        const auto& atoms = members[static_cast<size_t>(c)];
        for (int a : atoms) centre[static_cast<size_t>(c)] += positions[static_cast<size_t>(a)];
        centre[static_cast<size_t>(c)] /= static_cast<double>(atoms.size());
        for (int a : atoms)
            widest = std::max(widest, (positions[static_cast<size_t>(a)] - centre[static_cast<size_t>(c)]).norm());
    }
    const double spacing = 2 * widest + 2 * max_vdw + kComponentContactMargin;
    const int rest = count - walked;
    const int side = std::max(1, static_cast<int>(std::ceil(std::cbrt(static_cast<double>(rest)))));
    const Vector3d origin(hi.x() + spacing, lo.y(), lo.z());
    for (int k = 0; k < rest; ++k) {
        const int c = walked + k;
        const Vector3d cell = origin + spacing * Vector3d(k % side, (k / side) % side, k / (side * side));
        for (int a : members[static_cast<size_t>(c)])
            positions[static_cast<size_t>(a)] += cell - centre[static_cast<size_t>(c)];
    }
}

}  // namespace repel
