#include "assemble/assemble.hpp"

#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <tuple>

#include "core/neighbor_grid.hpp"
#include "assemble/place.hpp"
#include "core/bond_length.hpp"
#include "core/element.hpp"
#include "graph/conjugation.hpp"

namespace repel {

using Eigen::Matrix3d;
using Eigen::Vector3d;

namespace {

// While assembling, two atoms more than two bonds apart that come closer than this fraction of the sum of their van
// der Waals radii count as a clash, and the next torsion is tried (common practice: well below contact, well above
// what a staggered or planar torsion gives for atoms three bonds apart).
constexpr double kClashFraction = 0.7;
// The clash score (sum of squared overlaps, A^2) a measured torsion target may have and still be taken: overlaps of
// up to about 0.1 A, which the refinement opens (valine's acid O 1.84 A from a methyl H against 1.90 allowed).
constexpr double kMeasuredTargetOverlap = 0.01;
constexpr double kHydrogenBondContact = 1.6;  // Angstrom: the closest a hydrogen bond's H...N/O comes at the start
// Cell of the neighbour grid: at least the largest clash distance (0.7 * 2 * 2.5 A for the largest radii).
constexpr double kGridCell = 3.6;

constexpr double kPi = M_PI;
// Torsion offsets tried in order after the preferred one: staggered first for sp3 bonds, planar first between planar
// centres.
const std::vector<double> kStaggeredOffsets{0, 2 * kPi / 3, -2 * kPi / 3, kPi / 3, -kPi / 3, kPi, kPi / 2, -kPi / 2};
const std::vector<double> kPlanarOffsets{0, kPi, kPi / 2, -kPi / 2, kPi / 3, -kPi / 3, 2 * kPi / 3, -2 * kPi / 3};
const std::vector<double> kDoubleBondOffsets{0, kPi};
// The link of an amide, ester, thioamide or amidine (graph/conjugation.hpp): planar, the preferred form first (the
// single-bonded partners anti: trans amides, Z esters), else the other; never perpendicular. The frames' ideal 120
// degree angles bring an anilide's or aryl ester's carbonyl O within 1.7 A of the ring's ortho hydrogen, which the
// clash test would otherwise take for a reason to turn the link by 90 degrees; the refinement opens the angles
// (acetanilide's O...H 2.2 A, measured), and xtb from a twisted link took 46 cycles for paracetamol (measured).
const std::vector<double> kPlanarLinkOffsets{0, kPi};
// A crowded biaryl axis (graph/conjugation.hpp): turned by kCrowdedBiarylTorsion from coplanar, either way, before
// the perpendicular.
constexpr double kBiarylTwist = kCrowdedBiarylTorsion * kPi / 180;
const std::vector<double> kCrowdedBiarylOffsets{kPi - kBiarylTwist, kBiarylTwist - kPi, kBiarylTwist, -kBiarylTwist,
                                                kPi / 2, -kPi / 2};
// A propeller's blade (graph/conjugation.hpp): turned by kPropellerTorsion, the same way first.
constexpr double kBladeTwist = kPropellerTorsion * kPi / 180;
const std::vector<double> kPropellerOffsets{kPi - kBladeTwist, kBladeTwist, kBladeTwist - kPi, -kBladeTwist, kPi / 2,
                                            -kPi / 2};
const std::vector<double> kFixedOffset{0};
// A ring-side hydrogen (ring_side_substituent): in the ring's plane on either side before the staggered turns.
const std::vector<double> kInPlaneFirstOffsets{0, kPi, 2 * kPi / 3, -2 * kPi / 3, kPi / 3, -kPi / 3, kPi / 2, -kPi / 2};

double wrap(double a) {
    while (a > kPi) a -= 2 * kPi;
    while (a <= -kPi) a += 2 * kPi;
    return a;
}

// The rotation angle about the axis from c towards p that brings the dihedral r-p-c-n (n at n0 for angle 0) to target.
double angle_for_dihedral(const Vector3d& r, const Vector3d& p, const Vector3d& c, const Vector3d& n0, double target) {
    const double phi0 = dihedral(r, p, c, n0);
    double theta = wrap(phi0 - target);
    const Vector3d axis = (p - c).normalized();
    const Vector3d n1 = c + Eigen::AngleAxisd(theta, axis) * (n0 - c);
    if (std::abs(wrap(dihedral(r, p, c, n1) - target)) > 1e-6) theta = -theta;
    return theta;
}

int neighbor_index(const Molecule& m, int centre, int atom) {
    const auto& nb = m.neighbors(centre);
    for (size_t k = 0; k < nb.size(); ++k)
        if (nb[k].atom == atom) return static_cast<int>(k);
    return -1;
}

class Walk {
public:
    Walk(const Molecule& m, const MoleculeDomains& d, const RingInfo& rings,
         const std::vector<RingSystemCoordinates>& ring_xyz, const std::vector<ChiralTarget>& chiral)
        : m_(m), d_(d), rings_(rings), ring_xyz_(ring_xyz), chiral_(chiral) {
        const size_t n = static_cast<size_t>(m.atom_count());
        pos_.assign(n, Vector3d::Zero());
        placed_.assign(n, 0);
        chiral_of_.assign(n, -1);
        for (size_t i = 0; i < chiral.size(); ++i) {
            if (is_allene_target(m, chiral[i])) allene_.push_back(chiral[i]);
            else chiral_of_[static_cast<size_t>(chiral[i].centre)] = static_cast<int>(i);
        }
        local_.assign(n, -1);
        for (const auto& sys : rings.systems)
            for (size_t k = 0; k < sys.size(); ++k) local_[static_cast<size_t>(sys[k])] = static_cast<int>(k);
        system_placed_.assign(rings.systems.size(), 0);
        system_centre_.assign(rings.systems.size(), Vector3d::Zero());
        vdw_.resize(n);
        for (size_t i = 0; i < n; ++i) vdw_[i] = element(m.atoms[i].z).r_vdw;
    }

    std::vector<Vector3d> run() {
        int count = 0;
        const auto comp = m_.components(&count);
        std::vector<std::vector<int>> members(static_cast<size_t>(count));
        for (int i = 0; i < m_.atom_count(); ++i) members[static_cast<size_t>(comp[static_cast<size_t>(i)])].push_back(i);
        for (const auto& atoms : members) build_component(atoms);
        return pos_;
    }

private:
    const Molecule& m_;
    const MoleculeDomains& d_;
    const RingInfo& rings_;
    const std::vector<RingSystemCoordinates>& ring_xyz_;
    const std::vector<ChiralTarget>& chiral_;
    std::vector<Vector3d> pos_;
    std::vector<char> placed_;
    std::vector<int> chiral_of_;
    std::vector<ChiralTarget> allene_;  // allene marks: met by the choice of torsion at an end (grow)
    std::vector<int> local_;
    std::vector<char> system_placed_;
    std::vector<Vector3d> system_centre_;
    std::vector<double> vdw_;
    NeighborGrid grid_{kGridCell};
    std::vector<int> queue_;
    // Set by torsion_reference when the target came from a measured preference (ring_side_substituent,
    // carbonyl_alpha_pair): then a slight overlap at that target is left to the refinement (kMeasuredTargetOverlap).
    mutable bool measured_target_ = false;
    // Set by torsion_reference for offsets(): the bond's ring-side substituent is a hydrogen (kInPlaneFirstOffsets).
    mutable bool side_hydrogen_ = false;

    size_t at(int i) const { return static_cast<size_t>(i); }

    void place(int atom, const Vector3d& x) {
        pos_[at(atom)] = x;
        placed_[at(atom)] = 1;
        grid_.insert(atom, x);
        queue_.push_back(atom);
    }

    double bond_len(int a, const Neighbor& nb) const {
        if (d_.bond_lengths.size() == m_.bonds.size()) return d_.bond_lengths[at(nb.bond)];
        const Bond& b = m_.bonds[at(nb.bond)];
        return bond_length(m_.atoms[at(a)].z, m_.atoms[at(nb.atom)].z, b.order, b.aromatic);
    }

    // One bond or one shared neighbour apart: their distance is fixed by the frames, not a clash.
    bool near_in_graph(int a, int b) const {
        if (a == b) return true;
        for (const Neighbor& x : m_.neighbors(a)) {
            if (x.atom == b) return true;
            for (const Neighbor& y : m_.neighbors(x.atom))
                if (y.atom == b) return true;
        }
        return false;
    }

    // A hydrogen on N or O and an N or O atom: their contact is a hydrogen bond (H...O 1.8-2.0 A, common practice),
    // not a clash, down to kHydrogenBondContact.
    bool hydrogen_bond_pair(int a, int b) const {
        auto polar = [&](int x) { return m_.atoms[at(x)].z == 7 || m_.atoms[at(x)].z == 8; };
        auto polar_hydrogen = [&](int x) {
            return m_.atoms[at(x)].z == 1 && m_.degree(x) == 1 && polar(m_.neighbors(x)[0].atom);
        };
        return (polar_hydrogen(a) && polar(b)) || (polar_hydrogen(b) && polar(a));
    }

    // Sum of squared overlaps of the proposed atoms with the atoms already placed.
    double clash_score(const std::vector<int>& atoms, const std::vector<Vector3d>& xs) const {
        double score = 0;
        for (size_t k = 0; k < atoms.size(); ++k) {
            const int a = atoms[k];
            grid_.for_each_near(xs[k], [&](int b) {
                double limit = kClashFraction * (vdw_[at(a)] + vdw_[at(b)]);
                if (hydrogen_bond_pair(a, b)) limit = std::min(limit, kHydrogenBondContact);
                const double dist = (pos_[at(b)] - xs[k]).norm();
                if (dist < limit && !near_in_graph(a, b)) score += (limit - dist) * (limit - dist);
            });
        }
        return score;
    }

    // The preferred partner for a torsion among candidates bonded to `centre`: heavy before hydrogen, single bonds
    // before multiple ones (which makes amides trans and esters Z), then the lower index.
    int preferred(int centre, const std::vector<int>& candidates) const {
        int best = -1;
        std::tuple<int, int, int> best_key{};
        for (int a : candidates) {
            const int bond = m_.bond_between(centre, a);
            std::tuple<int, int, int> key{m_.atoms[at(a)].z == 1 ? 1 : 0, m_.bonds[at(bond)].order == 1 ? 0 : 1, a};
            if (best < 0 || key < best_key) {
                best = a;
                best_key = key;
            }
        }
        return best;
    }

    // Whether the frame of `centre` must be mirrored to give the written handedness.
    bool stereo_mirror(int centre, const std::vector<Vector3d>& dirs) const {
        const ChiralTarget& t = chiral_[at(chiral_of_[at(centre)])];
        const int k1 = neighbor_index(m_, centre, t.n1), k2 = neighbor_index(m_, centre, t.n2),
                  k3 = neighbor_index(m_, centre, t.n3);
        const int n = static_cast<int>(dirs.size());
        if (std::min({k1, k2, k3}) < 0 || std::max({k1, k2, k3}) >= n)
            throw std::logic_error("assembly: a stereo target names an atom that is not a neighbour");
        const double v = signed_volume(Vector3d::Zero(), dirs[at(k1)], dirs[at(k2)], dirs[at(k3)]);
        return v * t.sign < 0;
    }

    // The frame of a centre with placed neighbours `fixed` (indices into its neighbour list, at positions `targets`
    // relative to the centre): the rotated bonded directions. Chooses the mirror image for a stereocentre as
    // written; otherwise the better fit, and on a tie the one whose free positions clash less.
    std::vector<Vector3d> fitted_frame(int centre, const std::vector<int>& fixed, const std::vector<Vector3d>& targets,
                                       const std::vector<int>& free_atoms, const std::vector<double>& free_lengths,
                                       const Vector3d& origin, const Vector3d& outward = Vector3d::Zero()) const {
        const CentreDomains& cd = d_.atoms[at(centre)];
        auto fit = [&](bool mirrored, double* residual) {
            auto dirs = bonded_directions(m_, cd, centre, mirrored);
            std::vector<Vector3d> a;
            for (int k : fixed) a.push_back(dirs[at(k)]);
            const Matrix3d r = kabsch_rotation(a, targets);
            double res = 0;
            for (size_t i = 0; i < a.size(); ++i) res += (r * a[i] - targets[i].normalized()).squaredNorm();
            if (residual) *residual = res;
            for (auto& v : dirs) v = r * v;
            return dirs;
        };
        if (chiral_of_[at(centre)] >= 0) {
            const bool mirror = stereo_mirror(centre, bonded_directions(m_, cd, centre, false));
            return fit(mirror, nullptr);
        }
        double r0 = 0, r1 = 0;
        auto plain = fit(false, &r0);
        auto mirrored = fit(true, &r1);
        if (r1 < r0 - 1e-6) return mirrored;
        if (r0 < r1 - 1e-6 || free_atoms.empty()) return plain;
        // Equal fits (two placed neighbours in a ring): heavy substituents equatorial, pointing away from the ring.
        if (outward.squaredNorm() > 0) {
            auto out_score = [&](const std::vector<Vector3d>& dirs) {
                double sc = 0;
                for (int a : free_atoms)
                    if (m_.atoms[at(a)].z != 1) sc += dirs[at(neighbor_index(m_, centre, a))].dot(outward);
                return sc;
            };
            const double s0 = out_score(plain), s1 = out_score(mirrored);
            if (s1 > s0 + 1e-6) return mirrored;
            if (s0 > s1 + 1e-6) return plain;
        }
        auto positions = [&](const std::vector<Vector3d>& dirs) {
            std::vector<Vector3d> xs;
            for (size_t i = 0; i < free_atoms.size(); ++i)
                xs.push_back(origin + dirs[at(neighbor_index(m_, centre, free_atoms[i]))] * free_lengths[i]);
            return xs;
        };
        return clash_score(free_atoms, positions(mirrored)) < clash_score(free_atoms, positions(plain)) ? mirrored
                                                                                                        : plain;
    }

    // Offsets to try for the torsion about the bond p-c (after torsion_reference for the same bond).
    const std::vector<double>& offsets(int p, int c, int bond, bool stereo) const {
        if (stereo) return kFixedOffset;
        const Bond& b = m_.bonds[at(bond)];
        if (b.order == 2 && !b.aromatic) return kDoubleBondOffsets;
        if (crowded_biaryl_bond(m_, bond)) return kCrowdedBiarylOffsets;
        if (side_hydrogen_) return kInPlaneFirstOffsets;
        if (propeller_blade_bond(m_, bond)) return kPropellerOffsets;
        if (planar_centre(m_, d_.atoms[at(p)], p) && planar_centre(m_, d_.atoms[at(c)], c))
            return amide_like_link(m_, p, c) ? kPlanarLinkOffsets : kPlanarOffsets;
        return kStaggeredOffsets;
    }

    // The torsion reference pair for the bond p-c: r bonded to p (placed), n among `children` of c, with the target
    // dihedral r-p-c-n. Returns false when there is no reference (p has no other placed neighbour).
    bool torsion_reference(int p, int c, const std::vector<int>& children, int* r, int* n, double* target,
                           bool* stereo) const {
        const int bond = m_.bond_between(p, c);
        const Bond& b = m_.bonds[at(bond)];
        *stereo = false;
        measured_target_ = false;
        side_hydrogen_ = false;
        if (b.stereo != BondStereo::none && b.ref_a >= 0 && b.ref_b >= 0) {
            const int rp = p == b.a ? b.ref_a : b.ref_b, rc = p == b.a ? b.ref_b : b.ref_a;
            if (placed_[at(rp)] && std::find(children.begin(), children.end(), rc) != children.end()) {
                *r = rp;
                *n = rc;
                *target = b.stereo == BondStereo::cis ? 0.0 : kPi;
                *stereo = true;
                return true;
            }
        }
        std::vector<int> refs;
        for (const Neighbor& x : m_.neighbors(p))
            if (x.atom != c && placed_[at(x.atom)]) refs.push_back(x.atom);
        *r = preferred(p, refs);
        *n = preferred(c, children);
        *target = kPi;  // anti
        if (*r >= 0 && *n >= 0) straight_chain_reference(p, c, r, target);
        if (*r >= 0 && *n >= 0 && benzylic_bond(p, c)) *target = kPi / 2;
        double side_target = 0;
        const int s = ring_side_substituent(p, c, &side_target);
        side_hydrogen_ = s >= 0 && m_.atoms[at(s)].z == 1;
        if (s >= 0 && *r >= 0 && *n >= 0) {
            if (std::find(children.begin(), children.end(), s) != children.end()) {  // the ring placed: s is c's
                *n = s;
                *target = side_target;
                measured_target_ = true;
            } else if (placed_[at(s)] && m_.bond_between(p, s) >= 0) {  // the ring being entered: s is p's, placed
                *r = s;
                *target = side_target;
                measured_target_ = true;
            }
        }
        int on_p = -1, on_c = -1;
        double pair_target = 0;
        if (*r >= 0 && *n >= 0 && carbonyl_alpha_pair(p, c, &on_p, &on_c, &pair_target) && placed_[at(on_p)] &&
            std::find(children.begin(), children.end(), on_c) != children.end()) {
            *r = on_p;
            *n = on_c;
            *target = pair_target;
            measured_target_ = true;
        }
        return *r >= 0 && *n >= 0;
    }

    // The bond from a tetrahedral carbon to the carbonyl carbon of an acid, ester or ketone (not in a ring): which
    // substituent of the tetrahedral end the carbonyl O eclipses. Sets on_p (bonded to p) and on_c (bonded to c),
    // one of them the carbonyl O, and their dihedral. Measured with GFN2-xTB (Debian's xtb) from starts turned in
    // 60-degree steps (scratch runs of 2026-12-05), against the build's former rule (the acid's OH anti to a heavy
    // substituent, so the C=O eclipsing it):
    // - a carbon bearing one amine N or hydroxyl/ether O (alpha-amino and alpha-hydroxy acids and esters): the C=O
    //   syn to it (N-C-C=O 0 to -40 at the optimum: alanine methyl ester from 62 cycles to 16, lactic acid's start
    //   was a minimum 2.6 kcal/mol up);
    // - a methine with two tetrahedral carbons (isobutyric acid, its methyl ester, 3-methylbutan-2-one): the C=O
    //   anti to the hydrogen, between the two carbons (the lowest of the minima; with the C=O eclipsing a methyl, the
    //   former start, 22-24 cycles to a minimum 0.0-0.2 kcal/mol up, from this one 7 cycles).
    // Amides are left to the common rule (N-methylisobutyramide's lowest minimum has neither), and so are methines
    // bearing an aromatic ring (ibuprofen's C=O lies between its methyl and ring at the optimum).
    bool carbonyl_alpha_pair(int p, int c, int* on_p, int* on_c, double* target) const {
        const int bond = m_.bond_between(p, c);
        if (bond < 0 || m_.bonds[at(bond)].order != 1 || rings_.ring_bond[at(bond)]) return false;
        for (const auto& [alpha, carbonyl] : {std::pair{p, c}, std::pair{c, p}}) {
            if (m_.atoms[at(alpha)].z != 6 || m_.atoms[at(alpha)].aromatic || d_.atoms[at(alpha)].steric_number != 4 ||
                m_.degree(alpha) != 4 || m_.atoms[at(carbonyl)].z != 6 || m_.degree(carbonyl) != 3 ||
                m_.atoms[at(carbonyl)].charge != 0)
                continue;
            int oxygen = -1, third = -1;
            for (const Neighbor& x : m_.neighbors(carbonyl)) {
                if (x.atom == alpha) continue;
                const Atom& a = m_.atoms[at(x.atom)];
                if (a.z == 8 && m_.degree(x.atom) == 1 && m_.bonds[at(x.bond)].order == 2) oxygen = x.atom;
                else third = x.atom;
            }
            if (oxygen < 0 || third < 0) continue;
            const Atom& t = m_.atoms[at(third)];
            const bool acid_or_ester = t.z == 8 && m_.degree(third) == 2 && t.charge == 0;
            const bool ketone = t.z == 6 && !t.aromatic && d_.atoms[at(third)].steric_number == 4;
            if (!acid_or_ester && !ketone) continue;
            int hetero = -1, heteros = 0, hydrogen = -1, hydrogens = 0, alkyls = 0;
            for (const Neighbor& x : m_.neighbors(alpha)) {
                if (x.atom == carbonyl) continue;
                const Atom& a = m_.atoms[at(x.atom)];
                if (a.z == 1) {
                    hydrogen = x.atom;
                    ++hydrogens;
                } else if ((a.z == 7 || a.z == 8) && !a.aromatic && a.charge == 0 &&
                           d_.atoms[at(x.atom)].steric_number == 4) {
                    hetero = x.atom;
                    ++heteros;
                } else if (a.z == 6 && !a.aromatic && d_.atoms[at(x.atom)].steric_number == 4) {
                    ++alkyls;
                }
            }
            int reference = -1;
            if (acid_or_ester && heteros == 1) {
                reference = hetero;
                *target = 0;
            } else if (heteros == 0 && hydrogens == 1 && alkyls == 2) {
                reference = hydrogen;
                *target = kPi;
            }
            if (reference < 0) continue;
            *on_p = alpha == p ? reference : oxygen;
            *on_c = alpha == p ? oxygen : reference;
            return true;
        }
        return false;
    }

    // A tetrahedral centre on an aromatic ring atom (one of p, c; single bond) with one substituent whose place
    // about the bond is known: returns that substituent and its dihedral from the ring's plane (to a ring neighbour
    // of the ring atom), or -1. Both measured with GFN2-xTB (Debian's xtb) from starts turned in 30- and 60-degree
    // steps (scratch runs of 2026-12-05):
    // - a CH with two heavy substituents, neither aromatic nor in a three-membered ring (cumene, 1-phenylethanol,
    //   1-phenylethylamine, 2-phenylpropanoic acid): its hydrogen near the ring plane (at the optimum 0-35 degrees
    //   out of it; cumene's in it, from memory). From the build's former start, a methyl in the plane, xtb needed
    //   54-94 cycles and from the hydrogen in the plane 8-29. In the drug set's GFN2-xTB optima such hydrogens lie a
    //   median 17 degrees from the plane (ibuprofen 5, venlafaxine 8, amoxicillin 1).
    // - a sulfonyl S(=O)(=O)X: X perpendicular to the ring (benzenesulfonamide's N 88-98 degrees at the optimum). In
    //   the plane it is a saddle xtb keeps by symmetry: methyl phenyl sulfone 2.25 kcal/mol above the perpendicular
    //   minimum.
    // Diaryl and aryl-heteroaryl methines are propellers (letrozole's and cetirizine's hydrogens 58 and 88 degrees
    // out of the plane at the xtb optimum) and keep the common rule.
    int ring_side_substituent(int p, int c, double* target) const {
        const int bond = m_.bond_between(p, c);
        if (bond < 0 || m_.bonds[at(bond)].order != 1) return -1;
        for (const auto& [ring, sp3] : {std::pair{p, c}, std::pair{c, p}}) {
            if (!m_.atoms[at(ring)].aromatic || m_.atoms[at(sp3)].aromatic || d_.atoms[at(sp3)].steric_number != 4 ||
                m_.degree(sp3) != 4)
                continue;
            const int z = m_.atoms[at(sp3)].z;
            int hydrogen = -1, hydrogens = 0, terminal_oxygens = 0, other = -1, others = 0;
            bool aromatic_or_small_ring = false;
            for (const Neighbor& x : m_.neighbors(sp3)) {
                aromatic_or_small_ring = aromatic_or_small_ring || rings_.smallest_ring_with_bond(m_, x.bond) == 3;
                if (x.atom == ring) continue;
                const Atom& a = m_.atoms[at(x.atom)];
                if (a.z == 1) {
                    hydrogen = x.atom;
                    ++hydrogens;
                } else if (a.z == 8 && m_.degree(x.atom) == 1) {
                    ++terminal_oxygens;
                } else {
                    other = x.atom;
                    ++others;
                    aromatic_or_small_ring = aromatic_or_small_ring || a.aromatic;
                }
            }
            if (z == 6 && hydrogens == 1 && terminal_oxygens + others == 2 && !aromatic_or_small_ring) {
                *target = 0;
                return hydrogen;
            }
            if (z == 16 && hydrogens == 0 && terminal_oxygens == 2 && others == 1) {
                *target = kPi / 2;
                return other;
            }
        }
        return -1;
    }

    // A single bond from an aromatic ring atom to a tetrahedral carbon whose one heavy substituent besides the ring is
    // a carbon (a benzylic CH2 of an alkyl chain: ethylbenzene, propylbenzene): that carbon stands perpendicular to
    // the ring's plane. In the plane it sits on a saddle which, by symmetry, neither the refinement nor a quantum-chemistry
    // optimiser leaves: GFN2-xTB (Debian's xtb) kept ethylbenzene's in-plane start, 1.34 kcal/mol above the
    // perpendicular minimum it reaches from a turned one (measured; the perpendicular ethyl group is the known
    // minimum, from memory), propylbenzene's 1.52 below. Not for a CH2 bearing O or N: from the in-plane start xtb
    // reached benzyl alcohol's and benzylamine's lower minima (0.49 and 0.39 kcal/mol below those from the
    // perpendicular one, measured), where the OH and NH2 turn towards the ring.
    bool benzylic_bond(int p, int c) const {
        if (m_.bonds[at(m_.bond_between(p, c))].order != 1) return false;
        for (const auto& [ring, sp3] : {std::pair{p, c}, std::pair{c, p}}) {
            if (!m_.atoms[at(ring)].aromatic || m_.atoms[at(sp3)].z != 6 || m_.atoms[at(sp3)].aromatic ||
                d_.atoms[at(sp3)].steric_number != 4 || m_.degree(sp3) != 4)
                continue;
            int heavy = 0, carbon = 0;
            for (const Neighbor& x : m_.neighbors(sp3)) {
                if (x.atom == ring || m_.atoms[at(x.atom)].z == 1) continue;
                ++heavy;
                carbon += m_.atoms[at(x.atom)].z == 6 ? 1 : 0;
            }
            if (heavy == 1 && carbon == 1) return true;
        }
        return false;
    }

    // The allene mark whose last atoms are among `free_atoms` (the others placed), if any.
    const ChiralTarget* allene_placed_now(const std::vector<int>& free_atoms) const {
        for (const ChiralTarget& t : allene_) {
            bool any_free = false, all_there = placed_[at(t.centre)] != 0;
            for (int x : {t.n1, t.n2, t.n3}) {
                const bool is_free = std::find(free_atoms.begin(), free_atoms.end(), x) != free_atoms.end();
                any_free = any_free || is_free;
                all_there = all_there && (is_free || placed_[at(x)]);
            }
            if (any_free && all_there) return &t;
        }
        return nullptr;
    }

    // Whether the allene mark holds with `free_atoms` at `xs` and the rest where they are placed.
    bool allene_met(const ChiralTarget& t, const std::vector<int>& free_atoms, const std::vector<Vector3d>& xs) const {
        auto where = [&](int x) -> Vector3d {
            const auto it = std::find(free_atoms.begin(), free_atoms.end(), x);
            return it != free_atoms.end() ? xs[static_cast<size_t>(it - free_atoms.begin())] : pos_[at(x)];
        };
        return signed_volume(pos_[at(t.centre)], where(t.n1), where(t.n2), where(t.n3)) * t.sign > 0;
    }

    // Through a straight chain (the middle atoms of an allene or a cumulene, an alkyne) the dihedral r-p-c-n has no
    // meaning: the reference becomes the first atom off the line, found by walking back along the chain. Across a
    // chain of cumulated double bonds the ends' planes are perpendicular for an even count (allenes) and coplanar for
    // an odd one (butatrienes), the p orbitals alternating along the chain (common practice; allene's H-C-C-H planes
    // are at 90 degrees in its D2d structure, from memory).
    void straight_chain_reference(int p, int c, int* r, double* target) const {
        constexpr double kStraight = -0.9962;  // cos 175 degrees
        int before = c, end = p, ref = *r;
        bool cumulated = m_.bonds[at(m_.bond_between(p, c))].order == 2;
        int doubles = 1;
        bool moved = false;
        for (int guard = 0; guard < m_.atom_count() && ref >= 0; ++guard) {
            const Vector3d u = (pos_[at(before)] - pos_[at(end)]).normalized();
            const Vector3d v = (pos_[at(ref)] - pos_[at(end)]).normalized();
            if (u.dot(v) > kStraight) break;  // ref is off the line: the reference
            cumulated = cumulated && m_.bonds[at(m_.bond_between(end, ref))].order == 2;
            ++doubles;
            std::vector<int> refs;
            for (const Neighbor& x : m_.neighbors(ref))
                if (x.atom != end && placed_[at(x.atom)]) refs.push_back(x.atom);
            before = end;
            end = ref;
            ref = preferred(end, refs);
            moved = true;
        }
        if (!moved || ref < 0) return;
        *r = ref;
        if (cumulated) *target = doubles % 2 == 0 ? kPi / 2 : kPi;
    }

    // Places the unplaced neighbours of a placed atom.
    void grow(int c) {
        const auto& nb = m_.neighbors(c);
        std::vector<int> fixed, free_idx, free_atoms;
        std::vector<Vector3d> targets;
        std::vector<double> lengths;
        for (size_t k = 0; k < nb.size(); ++k) {
            if (placed_[at(nb[k].atom)]) {
                fixed.push_back(static_cast<int>(k));
                targets.push_back((pos_[at(nb[k].atom)] - pos_[at(c)]).normalized());
            } else {
                free_idx.push_back(static_cast<int>(k));
                free_atoms.push_back(nb[k].atom);
                lengths.push_back(bond_len(c, nb[k]));
            }
        }
        if (free_atoms.empty()) return;
        std::vector<Vector3d> xs(free_atoms.size());
        if (fixed.size() != 1) {
            Vector3d outward = Vector3d::Zero();
            const int sys = rings_.atom_system[at(c)];
            if (sys >= 0 && fixed.size() == 2) {
                const Vector3d away = pos_[at(c)] - system_centre_[at(sys)];
                if (away.norm() > 1e-6) outward = away.normalized();
            }
            const auto dirs = fitted_frame(c, fixed, targets, free_atoms, lengths, pos_[at(c)], outward);
            for (size_t i = 0; i < free_idx.size(); ++i) xs[i] = pos_[at(c)] + dirs[at(free_idx[i])] * lengths[i];
        } else {
            const int p = nb[at(fixed[0])].atom;
            const CentreDomains& cd = d_.atoms[at(c)];
            auto dirs = bonded_directions(m_, cd, c, false);
            if (chiral_of_[at(c)] >= 0 && stereo_mirror(c, dirs)) dirs = bonded_directions(m_, cd, c, true);
            const Vector3d axis = targets[0];
            const Matrix3d r0 = rotation_between(dirs[at(fixed[0])], axis);
            auto at_angle = [&](double theta) {
                const Matrix3d r = Eigen::AngleAxisd(theta, axis).toRotationMatrix() * r0;
                std::vector<Vector3d> out(free_idx.size());
                for (size_t i = 0; i < free_idx.size(); ++i) out[i] = pos_[at(c)] + r * dirs[at(free_idx[i])] * lengths[i];
                return out;
            };
            int r = -1, n = -1;
            double target = 0;
            bool stereo = false;
            double base = 0;
            if (torsion_reference(p, c, free_atoms, &r, &n, &target, &stereo)) {
                const auto x0 = at_angle(0);
                const size_t in = static_cast<size_t>(std::find(free_atoms.begin(), free_atoms.end(), n) - free_atoms.begin());
                base = angle_for_dihedral(pos_[at(r)], pos_[at(p)], pos_[at(c)], x0[in], target);
            }
            if (const ChiralTarget* t = allene_placed_now(free_atoms)) {
                // An allene end: the torsion from straight_chain_reference (90 degrees) or its mirror (-90), as
                // the mark says.
                if (!allene_met(*t, free_atoms, at_angle(base))) base += kPi;
                stereo = true;
            }
            xs = best_torsion(free_atoms, offsets(p, c, m_.bond_between(p, c), stereo), base, at_angle,
                              measured_target_ ? kMeasuredTargetOverlap : 0.0);
        }
        // Terminal hydrogens first: a ring system entered next then sees them (its clash test, and the place of a
        // ring-side hydrogen, ring_side_substituent). A hydrogen grows nothing, so the order of the walk is the same.
        auto terminal_hydrogen = [&](int u) { return m_.atoms[at(u)].z == 1 && m_.degree(u) == 1; };
        for (size_t i = 0; i < free_atoms.size(); ++i)
            if (terminal_hydrogen(free_atoms[i])) place(free_atoms[i], xs[i]);
        for (size_t i = 0; i < free_atoms.size(); ++i) {
            const int u = free_atoms[i];
            if (terminal_hydrogen(u)) continue;
            const int s = rings_.atom_system[at(u)];
            if (s >= 0 && !system_placed_[at(s)]) enter_system(s, u, c, xs[i]);
            else place(u, xs[i]);
        }
    }

    // The first offset whose atoms do not clash, else the one that clashes least.
    template <class F>
    std::vector<Vector3d> best_torsion(const std::vector<int>& atoms, const std::vector<double>& offs, double base,
                                       F&& at_angle, double first_tolerance = 0) const {
        std::vector<Vector3d> best;
        double best_score = 0;
        for (double off : offs) {
            auto xs = at_angle(base + off);
            const double score = clash_score(atoms, xs);
            if (score == 0 || (best.empty() && score <= first_tolerance)) return xs;
            if (best.empty() || score < best_score) {
                best = std::move(xs);
                best_score = score;
            }
        }
        return best;
    }

    // Places ring system s as a rigid unit: atom u goes to xu, bonded to the placed atom c outside the system.
    void enter_system(int s, int u, int c, const Vector3d& xu) {
        const auto& atoms = rings_.systems[at(s)];
        const auto& local = ring_xyz_[at(s)];
        const int lu = local_[at(u)];
        const auto& nbu = m_.neighbors(u);
        std::vector<int> fixed;
        std::vector<Vector3d> targets;
        for (size_t k = 0; k < nbu.size(); ++k)
            if (rings_.atom_system[at(nbu[k].atom)] == s) {
                fixed.push_back(static_cast<int>(k));
                targets.push_back((local[at(local_[at(nbu[k].atom)])] - local[at(lu)]).normalized());
            }
        const auto dirs = fitted_frame(u, fixed, targets, {}, {}, local[at(lu)]);
        const Vector3d e = dirs[at(neighbor_index(m_, u, c))];  // direction u -> c in the system's frame
        const Vector3d axis = (pos_[at(c)] - xu).normalized();
        const Matrix3d q0 = rotation_between(e, axis);
        auto at_angle = [&](double theta) {
            const Matrix3d q = Eigen::AngleAxisd(theta, axis).toRotationMatrix() * q0;
            std::vector<Vector3d> out(atoms.size());
            for (size_t k = 0; k < atoms.size(); ++k) out[k] = xu + q * (local[k] - local[at(lu)]);
            return out;
        };
        std::vector<int> ring_nbrs;
        for (int k : fixed) ring_nbrs.push_back(nbu[at(k)].atom);
        int r = -1, n = -1;
        double target = 0, base = 0;
        bool stereo = false;
        if (torsion_reference(c, u, ring_nbrs, &r, &n, &target, &stereo)) {
            const auto x0 = at_angle(0);
            base = angle_for_dihedral(pos_[at(r)], pos_[at(c)], xu, x0[at(local_[at(n)])], target);
            // A ring-side substituent of u itself that comes with the ring (its hydrogen, placed after it): where
            // the system's frame puts it decides the turn.
            double side_target = 0;
            const int side = ring_side_substituent(c, u, &side_target);
            if (!stereo && side >= 0 && !placed_[at(side)] && m_.bond_between(u, side) >= 0) {
                const Vector3d x_side = xu + q0 * dirs[at(neighbor_index(m_, u, side))];
                base = angle_for_dihedral(pos_[at(r)], pos_[at(c)], xu, x_side, side_target);
            }
        }
        const auto xs = best_torsion(atoms, offsets(c, u, m_.bond_between(c, u), stereo), base, at_angle,
                                     measured_target_ ? kMeasuredTargetOverlap : 0.0);
        system_placed_[at(s)] = 1;
        for (const auto& x : xs) system_centre_[at(s)] += x / static_cast<double>(xs.size());
        place(u, xs[at(lu)]);
        for (size_t k = 0; k < atoms.size(); ++k)
            if (atoms[k] != u) place(atoms[k], xs[k]);
        place_ring_hydrogens(s);
    }

    // The hydrogens of a ring system placed with it, at the atoms whose only unplaced neighbours are hydrogens (their
    // positions follow from the ring alone; growing such an atom later would put them at the same places). Then the
    // clash test of what is attached next sees them: a phenyl entering at a porphyrin's meso carbon flat would put its
    // ortho hydrogens onto the pyrrole hydrogens beside it, and only those hydrogens tell it to turn.
    void place_ring_hydrogens(int s) {
        for (int a : rings_.systems[at(s)]) {
            bool any = false, only_hydrogens = true;
            for (const Neighbor& nb : m_.neighbors(a)) {
                if (placed_[at(nb.atom)]) continue;
                any = true;
                only_hydrogens = only_hydrogens && m_.atoms[at(nb.atom)].z == 1 && m_.degree(nb.atom) == 1;
            }
            if (any && only_hydrogens) grow(a);
        }
    }

    int choose_root(const std::vector<int>& atoms) const {
        int best_system = -1;
        for (int a : atoms) {
            const int s = rings_.atom_system[at(a)];
            if (s >= 0 && (best_system < 0 || rings_.systems[at(s)].size() > rings_.systems[at(best_system)].size()))
                best_system = s;
        }
        if (best_system >= 0) return rings_.systems[at(best_system)][0];
        int best = atoms[0];
        for (int a : atoms) {
            const bool heavy = m_.atoms[at(a)].z != 1, best_heavy = m_.atoms[at(best)].z != 1;
            if (heavy != best_heavy ? heavy : m_.degree(a) > m_.degree(best)) best = a;
        }
        return best;
    }

    void build_component(const std::vector<int>& atoms) {
        queue_.clear();
        grid_ = NeighborGrid(kGridCell);  // each component is built on its own around the origin
        const int root = choose_root(atoms);
        const int s = rings_.atom_system[at(root)];
        if (s >= 0) {
            system_placed_[at(s)] = 1;
            const auto& sys = rings_.systems[at(s)];
            for (size_t k = 0; k < sys.size(); ++k) {
                place(sys[k], ring_xyz_[at(s)][k]);
                system_centre_[at(s)] += ring_xyz_[at(s)][k] / static_cast<double>(sys.size());
            }
            place_ring_hydrogens(s);
        } else {
            place(root, Vector3d::Zero());
        }
        for (size_t head = 0; head < queue_.size(); ++head) grow(queue_[head]);
        for (int a : atoms)
            if (!placed_[at(a)]) throw std::logic_error("assembly: an atom was not reached");
    }
};

}  // namespace

std::vector<Vector3d> assemble_positions(const Molecule& molecule, const MoleculeDomains& domains,
                                         const RingInfo& rings, const std::vector<RingSystemCoordinates>& ring_coordinates,
                                         const std::vector<ChiralTarget>& chiral) {
    if (static_cast<int>(domains.atoms.size()) != molecule.atom_count())
        throw std::logic_error("assembly: the domain analysis does not match the molecule");
    return Walk(molecule, domains, rings, ring_coordinates, chiral).run();
}

}  // namespace repel
