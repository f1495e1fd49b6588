#include "check/clean.hpp"

#include <fmt/format.h>

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>
#include <optional>
#include <set>

#include "check/expected_length.hpp"
#include "check/shape_measure.hpp"
#include "core/element.hpp"
#include "core/error.hpp"
#include "domains/domains.hpp"
#include "graph/rings.hpp"
#include "graph/symmetry.hpp"
#include "refine/refine.hpp"

namespace repel {
namespace {

double signed_volume(const std::vector<Eigen::Vector3d>& p, int c, int a, int b, int d) {
    const Eigen::Vector3d& o = p[static_cast<size_t>(c)];
    return (p[static_cast<size_t>(a)] - o).dot((p[static_cast<size_t>(b)] - o).cross(p[static_cast<size_t>(d)] - o));
}

double torsion(const std::vector<Eigen::Vector3d>& p, int a, int b, int c, int d) {
    const Eigen::Vector3d b1 = p[static_cast<size_t>(b)] - p[static_cast<size_t>(a)];
    const Eigen::Vector3d b2 = p[static_cast<size_t>(c)] - p[static_cast<size_t>(b)];
    const Eigen::Vector3d b3 = p[static_cast<size_t>(d)] - p[static_cast<size_t>(c)];
    const Eigen::Vector3d n1 = b1.cross(b2), n2 = b2.cross(b3);
    return std::atan2(b2.norm() * b1.dot(n2), n1.dot(n2)) * 180.0 / M_PI;
}

// A signed volume below this (A^3) is too flat to say which hand the centre has; it is not kept.
constexpr double kMinVolume = 0.1;


// CShM of a metal centre's ligand directions (a hapto ligand at its centroid) against the model's directions.
double model_shape(const MetalCentre& c, const std::vector<Eigen::Vector3d>& pos) {
    const int cn = c.coordination_number;
    if (cn < 2 || cn > 9 || static_cast<int>(c.directions.size()) != cn) return 0;
    std::vector<Eigen::Vector3d> dirs;
    for (const LigandDomain& l : c.ligands) {
        Eigen::Vector3d p = Eigen::Vector3d::Zero();
        for (int a : l.atoms) p += pos[static_cast<size_t>(a)];
        const Eigen::Vector3d v = p / static_cast<double>(l.atoms.size()) - pos[static_cast<size_t>(c.atom)];
        if (v.norm() < 1e-6) return 100;
        dirs.push_back(v.normalized());
    }
    ReferencePolyhedron model{c.polyhedron, "", cn, {}};
    for (const Eigen::Vector3d& d : c.directions) model.points.push_back(d.normalized());
    return continuous_shape_measure(dirs, Eigen::Vector3d::Zero(), model);
}

// Findings about the atoms or their connections, which relaxing the coordinates cannot fix: the summary of the
// refusal that names what can, or nothing when the structure can be refined.
std::optional<std::string> refusal(const Audit& audit) {
    // The advice names only what applies: no --multiplicity or --charge when one was given (by option or file).
    const std::pair<const char*, const char*> kRefusals[] = {
        {"overlap", "atoms overlap: move or delete the misplaced atom by hand"},
        {"neighbours", "an atom has more neighbours than its valence allows: move or delete the extra atom by hand"},
        {"radical", audit.multiplicity_given
                        ? "an atom is short of a normal valence that the multiplicity given does not account for: "
                          "add the missing atom by hand"
                        : "an atom is short of a normal valence: add the missing atom by hand, or give "
                          "--multiplicity if the structure is open-shell"},
        {"charge", audit.charge_given
                       ? "the formal charges do not add up to the total charge given: add or remove the hydrogens "
                         "by hand"
                       : "the formal charges do not add up to the total charge: give --charge, or add or remove the "
                         "hydrogens by hand"},
        {"multiplicity", "the multiplicity does not fit the electron count: give the right --multiplicity"}};
    // Overlaps first whatever the order of the findings: the atom they misplace is the cause of the others.
    for (const Finding& f : audit.findings)
        if (f.kind == "overlap") {
            return fmt::format("not refined: {}", kRefusals[0].second);
        }
    for (const Finding& f : audit.findings)
        for (const auto& [kind, advice] : kRefusals)
            if (f.kind == kind) {
                return fmt::format("not refined: {}", advice);
            }
    return std::nullopt;
}

// The handedness of every stereocentre and the configuration of every double bond as they are: kept by the
// refinement.
void stereo_as_found(const Molecule& m, const MoleculeDomains& d, const std::vector<Eigen::Vector3d>& pos,
                     std::vector<ChiralTarget>& chiral, std::vector<DoubleBondTarget>& doubles) {
    const Molecule& skeleton = m;
    for (int i = 0; i < m.atom_count(); ++i) {
        const auto& nb = skeleton.neighbors(i);
        if (nb.size() < 3 || d.atoms[static_cast<size_t>(i)].steric_number != 4) continue;
        const double v = signed_volume(pos, i, nb[0].atom, nb[1].atom, nb[2].atom);
        if (std::fabs(v) < kMinVolume) continue;
        chiral.push_back({i, nb[0].atom, nb[1].atom, nb[2].atom, v > 0 ? 1 : -1});
    }
    for (const Bond& b : m.bonds) {
        if (b.order != 2) continue;
        int a = -1, c = -1;
        for (const Neighbor& x : skeleton.neighbors(b.a))
            if (x.atom != b.b) { a = x.atom; break; }
        for (const Neighbor& x : skeleton.neighbors(b.b))
            if (x.atom != b.a) { c = x.atom; break; }
        if (a < 0 || c < 0 || a == c) continue;  // a == c: the double bond of a three-membered ring
        doubles.push_back({a, b.a, b.b, c, std::fabs(torsion(pos, a, b.a, b.b, c)) < 90});
    }
}

// How a centre named in a shape finding sits out of place, which moves its bonds with it.
enum class OutOfPlace {
    no,         // its angles are wrong but it is where it belongs: a group was turned about it, keeping the bonds
    flattened,  // a four-domain centre (tetrahedral, pyramidal) in the plane of three neighbours: all its bonds shorten
    puckered,   // a three-bond centre without lone pairs out of the plane of its neighbours: its ring bonds stretch
};

// The audit's own measures: the triple product of three bond directions (0.770 in a regular tetrahedron) below
// kFlatTetrahedron, an angle sum below 360 degrees less the planarity tolerance.
OutOfPlace out_of_place(const Molecule& m, const MoleculeDomains& d, const std::vector<Eigen::Vector3d>& pos, int c) {
    const auto& nbs = m.neighbors(c);
    const CentreDomains& cd = d.atoms[static_cast<size_t>(c)];
    const Eigen::Vector3d& o = pos[static_cast<size_t>(c)];
    auto dir = [&](size_t k) { return (pos[static_cast<size_t>(nbs[k].atom)] - o).normalized().eval(); };
    if (cd.steric_number == 3 && nbs.size() == 3) {
        double sum = 0;
        for (size_t a = 0; a < 3; ++a)
            for (size_t b = a + 1; b < 3; ++b) sum += std::acos(std::clamp(dir(a).dot(dir(b)), -1.0, 1.0));
        return sum * 180.0 / M_PI < 360.0 - AuditOptions{}.planarity ? OutOfPlace::puckered : OutOfPlace::no;
    }
    if (cd.steric_number != 4 || nbs.size() < 3) return OutOfPlace::no;
    for (size_t a = 0; a < nbs.size(); ++a)
        for (size_t b = a + 1; b < nbs.size(); ++b)
            for (size_t e = b + 1; e < nbs.size(); ++e)
                if (std::fabs(dir(a).dot(dir(b).cross(dir(e)))) < kFlatTetrahedron) return OutOfPlace::flattened;
    return OutOfPlace::no;
}

// The ends of bond e at atom a that lie across a from e's other end (angle above 150 degrees), as their symmetry
// classes, sorted: what tells an axial from an equatorial bond of one centre (ClF3, SF4, BrF5, ArSF5), which the graph
// alone cannot.
std::vector<int> trans_classes(const Molecule& m, const std::vector<Eigen::Vector3d>& pos,
                               const std::vector<int>& classes, int a, int other) {
    constexpr double kTrans = -0.866;  // cos 150 degrees
    std::vector<int> out;
    const Eigen::Vector3d u = (pos[static_cast<size_t>(other)] - pos[static_cast<size_t>(a)]).normalized();
    for (const Neighbor& nb : m.neighbors(a)) {
        if (nb.atom == other) continue;
        const Eigen::Vector3d v = (pos[static_cast<size_t>(nb.atom)] - pos[static_cast<size_t>(a)]).normalized();
        if (u.dot(v) < kTrans) out.push_back(classes[static_cast<size_t>(nb.atom)]);
    }
    std::sort(out.begin(), out.end());
    return out;
}

// Per bond, the measured length of its sound equivalents, 0 where there are none or they disagree. Equivalent: the
// same symmetry classes at its ends (graph/symmetry.hpp), the same orders, and the same classes lying across each end
// (trans_classes). Sound: not itself given a new length (keep above kExpected) and within `near` of its expected
// length. Equivalents are used only when they agree within 0.02 A (their mean is taken). A structure's own equal
// bonds carry what no table of kinds can: the level of theory it was made at and the centre's own position (the
// axial Cl-F of ClF3 is 0.1 A longer than the equatorial).
std::vector<double> equivalent_lengths(const Molecule& m, const std::vector<Eigen::Vector3d>& pos,
                                       const std::vector<double>& expected, const std::vector<double>& keep,
                                       double expected_mark, double near) {
    constexpr double kAgree = 0.02;
    const size_t nb = m.bonds.size();
    std::vector<double> out(nb, 0.0);
    bool any = false;
    for (size_t e = 0; e < nb; ++e) any = any || keep[e] <= expected_mark;
    if (!any) return out;
    const std::vector<int> classes = symmetry_classes(m);
    using Key = std::vector<int>;
    auto key = [&](size_t e) {
        const Bond& b = m.bonds[e];
        auto end = [&](int x, int other) {
            Key k{classes[static_cast<size_t>(x)]};
            for (int t : trans_classes(m, pos, classes, x, other)) k.push_back(t);
            k.push_back(-1);
            return k;
        };
        Key first = end(b.a, b.b), second = end(b.b, b.a);
        if (second < first) std::swap(first, second);
        Key k{b.aromatic ? 4 : b.order};
        k.insert(k.end(), first.begin(), first.end());
        k.insert(k.end(), second.begin(), second.end());
        return k;
    };
    std::vector<Key> keys(nb);
    for (size_t e = 0; e < nb; ++e) keys[e] = key(e);
    for (size_t e = 0; e < nb; ++e) {
        if (keep[e] > expected_mark) continue;
        double lo = 1e9, hi = -1e9, sum = 0;
        int count = 0;
        for (size_t f = 0; f < nb; ++f) {
            if (f == e || keep[f] <= expected_mark || keys[f] != keys[e]) continue;
            const Bond& b = m.bonds[f];
            const double measured = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
            if (expected[f] > 0 && std::fabs(measured - expected[f]) > near) continue;
            lo = std::min(lo, measured);
            hi = std::max(hi, measured);
            sum += measured;
            ++count;
        }
        if (count > 0 && hi - lo <= kAgree) out[e] = sum / count;
    }
    return out;
}

// A ring bond e found too long or short: one of its atoms was most likely moved along it (a ring atom cannot have
// its whole side moved). Each end in turn is put back along the bond, with its hydrogens, to the target length; the
// end whose other bonds to heavy atoms come nearer their expected lengths by it is kept, when they do come nearer. Returns whether an end was put back.
bool put_back_along_bond(const Molecule& m, int e, double target, const std::vector<double>& expected,
                         std::vector<Eigen::Vector3d>& pos) {
    const Bond& bond = m.bonds[static_cast<size_t>(e)];
    auto p = [&](int i) -> const Eigen::Vector3d& { return pos[static_cast<size_t>(i)]; };
    const double measured = (p(bond.a) - p(bond.b)).norm();
    if (measured < 1e-6) return false;
    double best = 0;
    int chosen = -1;
    for (int x : {bond.a, bond.b}) {
        const int y = x == bond.a ? bond.b : bond.a;
        const Eigen::Vector3d shift = (p(y) - p(x)).normalized() * (measured - target);
        double gain = 0;
        int judged = 0;
        for (const Neighbor& nb : m.neighbors(x)) {
            if (nb.bond == e || m.atoms[static_cast<size_t>(nb.atom)].z == 1) continue;
            const double want = expected[static_cast<size_t>(nb.bond)];
            if (want <= 0) continue;
            const double now = (p(nb.atom) - p(x)).norm(), then = (p(nb.atom) - p(x) - shift).norm();
            gain += std::fabs(now - want) - std::fabs(then - want);
            ++judged;
        }
        if (judged > 0 && gain > best) {
            best = gain;
            chosen = x;
        }
    }
    if (chosen < 0) return false;
    const int y = chosen == bond.a ? bond.b : bond.a;
    const Eigen::Vector3d shift = (p(y) - p(chosen)).normalized() * (measured - target);
    pos[static_cast<size_t>(chosen)] += shift;
    for (const Neighbor& nb : m.neighbors(chosen))
        if (m.atoms[static_cast<size_t>(nb.atom)].z == 1 && m.neighbors(nb.atom).size() == 1)
            pos[static_cast<size_t>(nb.atom)] += shift;
    return true;
}

// A ring of trigonal centres found puckered (at least half its atoms out of the plane of their neighbours): its
// atoms are put back on the ring's least-squares plane, each with its hydrogens and other one-neighbour atoms, which
// restores the ring bonds the puckering stretched. Returns the atoms moved.
std::vector<int> flatten_puckered_rings(const Molecule& m, const MoleculeDomains& d, const RingInfo& rings,
                                        std::vector<Eigen::Vector3d>& pos) {
    std::vector<int> moved;
    for (const std::vector<int>& ring : rings.rings) {
        if (ring.size() < 5 || ring.size() > 8) continue;
        size_t puckered = 0;
        bool trigonal = true;
        for (int a : ring) {
            trigonal = trigonal && d.atoms[static_cast<size_t>(a)].steric_number == 3;
            puckered += out_of_place(m, d, pos, a) == OutOfPlace::puckered;
        }
        if (!trigonal || 2 * puckered < ring.size()) continue;
        Eigen::Vector3d centre = Eigen::Vector3d::Zero();
        for (int a : ring) centre += pos[static_cast<size_t>(a)];
        centre /= static_cast<double>(ring.size());
        Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
        for (int a : ring) {
            const Eigen::Vector3d r = pos[static_cast<size_t>(a)] - centre;
            cov += r * r.transpose();
        }
        const Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> eig(cov);
        const Eigen::Vector3d normal = eig.eigenvectors().col(0);
        for (int a : ring) {
            const Eigen::Vector3d shift = -normal * normal.dot(pos[static_cast<size_t>(a)] - centre);
            pos[static_cast<size_t>(a)] += shift;
            moved.push_back(a);
            for (const Neighbor& nb : m.neighbors(a))
                if (m.neighbors(nb.atom).size() == 1) {
                    pos[static_cast<size_t>(nb.atom)] += shift;
                    moved.push_back(nb.atom);
                }
        }
    }
    return moved;
}

// The target length of every bond for the refinement. Only what is wrong is changed, so that cleaning does not move
// sound bonds to the expected lengths (their own errors, up to 0.12 A on sound structures and more for hypervalent
// centres, would become the structure's): a bond keeps its measured length unless
// - it is named in a length finding: it takes the length of its sound equivalents in the structure where it has any
//   (equivalent_lengths), else the expected length (the analysis' corrected by kind of bond, what the audit judged
//   against);
// - it lies in a ring with a bond named so, at a shared atom: an atom pulled along one ring bond moved along the
//   other ring bond too (0.15 A along one aromatic C-C shortens the next by about 0.07 A), so the atom is put back
//   along the named bond first (put_back_along_bond) and the other bonds then keep their lengths like those of a
//   bond in no ring; where neither end can be put back they take the expected lengths; any other bond of the two
//   atoms keeps its length when within the length threshold of the expected one;
// - it is a bond of a centre named in a shape finding: a centre drawn flat was moved into the plane of its
//   neighbours, which shortened its bonds, so they take the expected lengths; a centre whose angles are wrong but
//   which is not flat had a group turned about it, which keeps the bonds, so they keep their measured lengths when
//   within the length threshold.
// A ring of trigonal centres found puckered is put back on its plane first (flatten_puckered_rings); its bonds then
// keep the lengths that gives them when those are sound. Measured by tests/external/check_audit_damage.py (README,
// `repel check`).
void set_length_targets(const Audit& audit, const Molecule& m, const MoleculeDomains& d,
                        std::vector<Eigen::Vector3d>& pos, std::vector<double>& lengths) {
    lengths = corrected_lengths(m, lengths);
    const double near = AuditOptions{}.bond_deviation;
    constexpr double kExpected = -1;  // keep[e] below this: the expected length
    const RingInfo rings = perceive_rings(m);
    // How far from the expected length each bond may lie and keep its own; `undone`: ring bonds whose misplaced atom
    // was put back (their neighbours' bonds are then as they were).
    auto keeps = [&](const std::set<int>& undone) {
        std::vector<double> keep(m.bonds.size(), 1e9);
        auto limit = [&](int e, double k) { keep[static_cast<size_t>(e)] = std::min(keep[static_cast<size_t>(e)], k); };
        for (const Finding& f : audit.findings) {
            if (f.atoms.empty()) continue;
            if (f.kind == "bond length" && f.atoms.size() == 2) {
                const int e = m.bond_between(f.atoms[0] - 1, f.atoms[1] - 1);
                if (e < 0) continue;
                limit(e, kExpected);
                const bool ring = rings.ring_bond[static_cast<size_t>(e)] && !undone.count(e);
                for (int a : f.atoms)
                    for (const Neighbor& nb : m.neighbors(a - 1))
                        if (nb.bond != e) limit(nb.bond, ring ? kExpected : near);
                continue;
            }
            for (int a : f.atoms) {
                const OutOfPlace how = out_of_place(m, d, pos, a - 1);
                for (const Neighbor& nb : m.neighbors(a - 1)) {
                    const bool moved = how == OutOfPlace::flattened ||
                                       (how == OutOfPlace::puckered && rings.ring_bond[static_cast<size_t>(nb.bond)]);
                    limit(nb.bond, moved ? kExpected : near);
                }
            }
        }
        return keep;
    };
    std::vector<double> keep = keeps({});
    const std::vector<double> equivalent = equivalent_lengths(m, pos, lengths, keep, kExpected, near);
    auto target = [&](size_t e) { return equivalent[e] > 0 ? equivalent[e] : lengths[e]; };
    std::set<int> undone;
    for (const Finding& f : audit.findings) {
        if (f.kind != "bond length" || f.atoms.size() != 2) continue;
        const int e = m.bond_between(f.atoms[0] - 1, f.atoms[1] - 1);
        if (e >= 0 && rings.ring_bond[static_cast<size_t>(e)] && !undone.count(e) &&
            put_back_along_bond(m, e, target(static_cast<size_t>(e)), lengths, pos))
            undone.insert(e);
    }
    if (!undone.empty()) keep = keeps(undone);
    // Bonds given new lengths because a ring was puckered, or named in a length finding, keep their lengths when the
    // ring, put back on its plane, gives them back a sound length (0.75 x the threshold, the audit's bound for short
    // bonds).
    const std::vector<int> flattened = flatten_puckered_rings(m, d, rings, pos);
    if (!flattened.empty()) {
        std::vector<char> was_moved(pos.size(), 0);
        for (int a : flattened) was_moved[static_cast<size_t>(a)] = 1;
        for (size_t e = 0; e < m.bonds.size(); ++e) {
            const Bond& b = m.bonds[e];
            if (keep[e] > kExpected || !(was_moved[static_cast<size_t>(b.a)] || was_moved[static_cast<size_t>(b.b)]))
                continue;
            const double measured = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
            if (std::fabs(measured - lengths[e]) <= 0.75 * near) keep[e] = near;
        }
    }
    for (size_t e = 0; e < m.bonds.size(); ++e) {
        const Bond& b = m.bonds[e];
        const double measured = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
        if (std::fabs(measured - lengths[e]) <= keep[e])
            lengths[e] = measured;
        else if (keep[e] <= kExpected)
            lengths[e] = target(e);
    }
}

// The centres whose angles the refinement keeps as they are (RefineOptions::held_centres): every centre not touched
// (named in a finding, moved before the refinement, or an end of a bond given a new length); a centre the damage
// changed is one of these (an atom moved along a ring bond is named or put back, the neighbours of a centre drawn flat
// end bonds given new lengths). The touched centres take the model's angles. Without this the refinement pulls every
// centre toward the model's angles, and where those are off (strained and spiro rings, an Si-O-Si) the sound part of
// the structure moves with the part that was wrong: G2 spiropentane's ring bonds stretched by 0.07 A when one of its
// hydrogens was bent. All of a centre's angles or none: a centre held in part leaned (cyclopropane's CH2 next to a
// stretched C-H, found by tests/external/check_audit_g2.py). Measured by tests/external/check_audit_damage.py.
std::vector<char> held_centres(const Audit& audit, const Molecule& m, const std::vector<double>& lengths,
                               const std::vector<Eigen::Vector3d>& before, const std::vector<Eigen::Vector3d>& pos) {
    const size_t n = pos.size();
    std::vector<char> touched(n, 0);
    for (const Finding& f : audit.findings)
        for (int a : f.atoms)
            if (a >= 1 && static_cast<size_t>(a) <= n) touched[static_cast<size_t>(a - 1)] = 1;
    for (size_t i = 0; i < n; ++i)
        if ((pos[i] - before[i]).norm() > 1e-6) touched[i] = 1;
    for (size_t e = 0; e < m.bonds.size() && e < lengths.size(); ++e) {
        const Bond& b = m.bonds[e];
        const double measured = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
        if (std::fabs(measured - lengths[e]) > 1e-6)
            touched[static_cast<size_t>(b.a)] = touched[static_cast<size_t>(b.b)] = 1;
    }
    std::vector<char> held(n, 0);
    for (size_t i = 0; i < n; ++i) held[i] = touched[i] ? 0 : 1;
    return held;
}

}  // namespace

CleanResult clean_structure(const Audit& audit) {
    CleanResult out;
    out.structure = audit.structure;
    if (std::optional<std::string> refused = refusal(audit)) {
        out.summary = *refused;
        return out;
    }
    const Molecule& m = out.structure.molecule;
    auto& pos = out.structure.positions;
    try {
        // A complex is refined with its metals analysed as the build analyses them (metal.hpp); hapto ligands are
        // refused below, so the skeleton is the whole molecule.
        bool any_metal = false;
        for (const Atom& a : m.atoms) any_metal = any_metal || is_d_block_metal(a.z);
        MetalAnalysis metals;
        if (any_metal) metals = analyse_metals(m, true);
        // Measured: refining repel's own ferrocene and CpMn(CO)3 from their built coordinates bent every ring
        // hydrogen out of its ring plane (angle sums 345 deg; the refinement holds a centre planar only with three
        // neighbours, and a ring atom has four with its metal). Refused until it keeps them planar; then refine as
        // build_structure does (the skeleton without hapto bonds, ring_graph, lengths for the hapto bonds).
        if (!metals.hapto_bonds.empty()) {
            out.summary = fmt::format("not refined: atom {} ({}) has a hapto ligand, and the refinement does not keep "
                                      "the ring atoms of hapto ligands planar yet; the structure is left as it was",
                                      metals.hapto_bonds.front().first + 1,
                                      element(m.atoms[static_cast<size_t>(metals.hapto_bonds.front().first)].z).symbol);
            return out;
        }
        // Nothing found, nothing to change: refining a sound structure would only move it toward the model's own
        // lengths and ring angles (measured on G2: spiropentane's ring bonds 0.07 A, cyclopropene's 0.04 A).
        if (audit.findings.empty()) {
            out.refined = true;  // written as it is
            out.summary = "nothing to fix (no findings): written unchanged";
            return out;
        }
        MoleculeDomains d = analyse_domains(m, true, any_metal ? &metals : nullptr);
        std::vector<ChiralTarget> chiral;
        std::vector<DoubleBondTarget> doubles;
        stereo_as_found(m, d, pos, chiral, doubles);
        const std::vector<Eigen::Vector3d> before = pos;
        if (d.bond_lengths.size() == m.bonds.size()) set_length_targets(audit, m, d, pos, d.bond_lengths);
        RefineOptions options;
        options.held_centres = held_centres(audit, m, d.bond_lengths, before, pos);
        options.held_positions = pos;
        RefineResult r = refine_structure(m, d, chiral, doubles, pos, options);
        // The refinement must keep each metal's polyhedron: a centre that ends further from the model's polyhedron
        // than the audit's threshold, and further than it started, is left as it was (a refusal, said).
        for (const MetalCentre& c : metals.centres) {
            const double after = model_shape(c, pos), start = model_shape(c, before);
            if (after > AuditOptions{}.metal_shape && after > start) {
                pos = before;
                out.summary = fmt::format("not refined: the refinement would take the {} polyhedron of {}{} to CShM "
                                          "{:.2f} (from {:.2f}); the structure is left as it was",
                                          c.polyhedron, element(m.atoms[static_cast<size_t>(c.atom)].z).symbol,
                                          c.atom + 1, after, start);
                return out;
            }
        }
        double s = 0;
        for (size_t i = 0; i < pos.size(); ++i) s += (pos[i] - before[i]).squaredNorm();
        out.rms_shift = pos.empty() ? 0 : std::sqrt(s / static_cast<double>(pos.size()));
        out.refined = true;
        out.summary = fmt::format("refined ({} iterations{}), atoms moved {:.3f} A RMS; {} centres and {} double bonds "
                                  "kept",
                                  r.iterations, r.converged ? "" : ", not converged: " + r.message, out.rms_shift,
                                  chiral.size(), doubles.size());
    } catch (const std::exception& e) {
        out.summary = std::string("not refined: ") + e.what();
    }
    return out;
}

}  // namespace repel
