#include "graph/stereo.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <fmt/format.h>

#include "core/geometry.hpp"
#include "graph/polyhedral_stereo.hpp"

namespace repel {

namespace {
constexpr int kLonePair = -2;  // stands for a lone pair in a neighbour list
}

namespace {
// A mark's four atoms in its order (the first the one looked from) and its index (1: '@', 2: '@@') as a target: the
// other three run anticlockwise for '@'.
ChiralTarget target_from_list(int atom, const std::array<int, 4>& l, int chiral_index) {
    ChiralTarget t;
    t.centre = atom;
    t.n1 = l[1];
    t.n2 = l[2];
    t.n3 = l[3];
    t.sign = chiral_index == 1 ? kAnticlockwiseSign : -kAnticlockwiseSign;
    return t;
}
}  // namespace

std::optional<ChiralTarget> chiral_target(const Molecule& molecule, int atom, std::string* problem) {
    const Atom& a = molecule.atoms[static_cast<size_t>(atom)];
    if (a.chiral_class == ChiralClass::none) return std::nullopt;
    auto refuse = [&](const std::string& why) -> std::optional<ChiralTarget> {
        if (problem) *problem = why;
        return std::nullopt;
    };
    if (a.chiral_class == ChiralClass::AL) {
        // An allene mark: the four substituents of the two ends read as the neighbours of a tetrahedral centre
        // (OpenSMILES "Tetrahedral Allene-like Systems"), looking from the first; the target's centre is the middle
        // atom, its three atoms are not its neighbours (assembly and refinement treat it apart, see is_allene_target).
        const std::vector<int>& l = a.stereo_neighbors;
        if (l.size() != 4 || std::any_of(l.begin(), l.end(), [](int x) { return x < 0; }))
            return refuse("an allene mark needs two substituents (atoms or hydrogens) on each end");
        if (a.chiral_index != 1 && a.chiral_index != 2) return refuse("an allene mark must be @AL1 or @AL2");
        return target_from_list(atom, {l[0], l[1], l[2], l[3]}, a.chiral_index);
    }
    if (a.chiral_class != ChiralClass::TH)
        return refuse("only tetrahedral and allene chirality marks ('@', '@@', '@TH1', '@TH2', '@AL1', '@AL2') are "
                      "placed in 3D this way");
    if (a.chiral_index != 1 && a.chiral_index != 2) return refuse("a tetrahedral mark must be @TH1 or @TH2");
    const int degree = molecule.degree(atom);
    std::vector<int> order = a.stereo_neighbors;
    if (static_cast<int>(order.size()) != degree || (degree != 4 && degree != 3))
        return refuse(fmt::format("a tetrahedral mark needs four neighbours (or three and a lone pair), found {}",
                                  degree));
    for (int s : order)
        if (s < 0 || molecule.bond_between(atom, s) < 0) return refuse("the mark's neighbour list does not match the bonds");
    std::array<int, 4> l{};
    if (degree == 4) {
        std::copy(order.begin(), order.end(), l.begin());
    } else {
        // The lone pair takes the implicit hydrogen's place: first when nothing precedes the centre.
        const bool opens = order[0] > atom;
        if (opens) l = {kLonePair, order[0], order[1], order[2]};
        else l = {order[0], kLonePair, order[1], order[2]};
        // An even permutation that brings the lone pair to the front keeps the handedness.
        if (!opens) l = {l[1], l[0], l[3], l[2]};
    }
    return target_from_list(atom, l, a.chiral_index);
}

std::vector<ChiralTarget> chiral_targets(const Molecule& molecule, std::vector<std::string>& warnings) {
    std::vector<ChiralTarget> out;
    for (int i = 0; i < molecule.atom_count(); ++i) {
        std::string problem;
        const ChiralClass cls = molecule.atoms[static_cast<size_t>(i)].chiral_class;
        if (cls == ChiralClass::SP || cls == ChiralClass::TB || cls == ChiralClass::OH) {
            // Square-planar, trigonal-bipyramidal and octahedral marks: the metal analysis puts the ligands on their
            // sites; the handedness of TB and OH arrangements is kept by one signed volume per face.
            for (const SignedVolumeTarget& v : volume_targets(molecule, i, &problem))
                out.push_back({i, v.n1, v.n2, v.n3, v.sign});
            if (!problem.empty())
                warnings.push_back(fmt::format("stereo mark on atom {} not applied: {}", i + 1, problem));
            continue;
        }
        if (auto t = chiral_target(molecule, i, &problem)) out.push_back(*t);
        else if (!problem.empty())
            warnings.push_back(fmt::format("stereo mark on atom {} not applied: {}", i + 1, problem));
    }
    return out;
}

std::vector<DoubleBondTarget> double_bond_targets(const Molecule& molecule) {
    std::vector<DoubleBondTarget> out;
    for (const Bond& b : molecule.bonds) {
        if (b.stereo == BondStereo::none || b.ref_a < 0 || b.ref_b < 0) continue;
        if (molecule.bond_between(b.a, b.ref_a) < 0 || molecule.bond_between(b.b, b.ref_b) < 0) continue;
        out.push_back({b.ref_a, b.a, b.b, b.ref_b, b.stereo == BondStereo::cis});
    }
    return out;
}

bool is_allene_target(const Molecule& molecule, const ChiralTarget& t) {
    return molecule.atoms[static_cast<size_t>(t.centre)].chiral_class == ChiralClass::AL;
}

bool chirality_met(const ChiralTarget& t, const std::vector<Eigen::Vector3d>& p) {
    const double v = signed_volume(p[static_cast<size_t>(t.centre)], p[static_cast<size_t>(t.n1)],
                                   p[static_cast<size_t>(t.n2)], p[static_cast<size_t>(t.n3)]);
    return v * t.sign > 0;
}

bool double_bond_met(const DoubleBondTarget& t, const std::vector<Eigen::Vector3d>& p) {
    const double phi = dihedral(p[static_cast<size_t>(t.a)], p[static_cast<size_t>(t.b)],
                                p[static_cast<size_t>(t.c)], p[static_cast<size_t>(t.d)]);
    return t.cis ? std::abs(phi) < M_PI / 2 : std::abs(phi) > M_PI / 2;
}

}  // namespace repel
