#include "assemble/ring_embed.hpp"

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <fmt/format.h>
#include <algorithm>
#include <array>
#include <cmath>
#include <unordered_map>

#include "assemble/distance_geometry.hpp"
#include "assemble/place.hpp"
#include "core/bond_length.hpp"
#include "core/element.hpp"
#include "core/error.hpp"

namespace repel {

using Eigen::Vector3d;
using Matrix3 = Eigen::Matrix3d;

namespace {

constexpr double kDeg = M_PI / 180.0;

// Ring-shape choices (common practice; ring conformations as in any organic chemistry text):
// - a cyclohexane chair has ring torsions of about +-55 degrees; bonds between two sp3 atoms in a six-membered ring
//   are held between these torsions so that the embedding gives chairs, not boats;
// - five-membered rings pucker by up to about 45 degrees (envelope and twist);
// - seven-membered rings by up to about 100;
// - the envelope's flap is folded 35 degrees out of the plane of the other four atoms.
constexpr double kChairTorsionMin = 45, kChairTorsionMax = 70;
constexpr double kOtherSixTorsionMax = 65;
constexpr double kFiveTorsionMax = 45;
constexpr double kSevenTorsionMax = 100;
constexpr double kEnvelopeFlap = 35;
// The puckering amplitude of a cyclohexane twist-boat start (A): cyclohexane's chair has Q about 0.55-0.63 A (from
// memory); the twist-boat's is a little larger. A start: the refinement takes the ring to its own minimum.
constexpr double kTwistBoatPucker = 0.7;
// The ring angle at a planar centre of a puckered five-membered ring: the regular pentagon's (an envelope's flap
// takes the puckering; indoline's fusion atoms and a cyclopentanone's carbonyl carbon come near it, from memory).
constexpr double kPuckeredFiveAngle = 108;
// Tolerances of the bounds: bond lengths, angles forced by a small or planar ring, other angles, planar torsions.
constexpr double kBondTolerance = 0.01;        // Angstrom
constexpr double kRingAngleTolerance = 3;      // degrees
constexpr double kFrameAngleTolerance = 5;     // degrees
constexpr double kPlanarTorsionTolerance = 8;  // degrees
constexpr double kLargeFlatRingTolerance = 8;  // degrees, frame angles in flat rings beyond kLargestPolygonRing
// Non-bonded atoms of a ring system more than three bonds apart stay at least this fraction of their van der Waals
// sum apart (common practice; lets the para atoms of a benzene ring, 2.8 A, stay where they are).
constexpr double kFarFraction = 0.7;
// Unmarked double bonds in rings up to this size are cis (trans cycloalkenes below it are strained; common practice).
constexpr int kLargestCisOnlyRing = 11;
// Largest spread of bond lengths (Angstrom) in a ring built from a plain template without the embedding.
constexpr double kTemplateBondSpread = 0.03;
// Largest ring system (atoms) the distance-geometry embedding takes on: its bounds are n x n and their smoothing
// n^3: one ring of 2,000 atoms took 584 s to build on the shared 2-core development machine (measured), where 500
// atoms should take about 1/64 of that (by the n^3 smoothing; estimated). No drug, natural product, macrocycle or
// fullerene comes near 500 atoms in one ring system.
constexpr int kMaxEmbeddedRingSystem = 500;
// Flat rings up to this size have the angles of the regular polygon; larger flat rings (the inner ring of a porphyrin)
// take their angles from the centres' frames.
constexpr int kLargestPolygonRing = 8;
// A planar centre whose three ring angles add up to less than this (degrees) is curved (fullerenes, bowls): it is not
// held flat.
constexpr double kCurvedAngleSum = 355;
// Embedding attempts and the accepted bound violation.
constexpr int kAttempts = 6;
// A helicene's fjord: ring atoms four or more bonds apart closer than this in the flat layout (Angstrom; twice the
// carbon van der Waals radius less a little, common practice: phenanthrene's bay atoms, three bonds apart, are 3.0 A
// and stay flat) wind the chain into a helix, each ring this much above the one before (Angstrom: 3.2 A, about the
// pi-stacking distance, over the five steps of [6]helicene's turn; common practice).
constexpr double kFjordContact = 3.2;
constexpr double kHelixRise = 0.64;
constexpr int kHelixEvaluations = 400;  // the 3D relaxation of a wound helix (as many as one embedding try)
constexpr double kHelixViolation = 0.6;  // Angstrom: see twist_helix's caller
constexpr double kAcceptedViolation = 0.1;
constexpr double kAcceptedTorsion = 5;  // degrees, as in embed_points
// Angstrom: how far the planar layout's atoms are lifted off the plane when it starts a system that is not flat.
constexpr double kLift = 0.1;

size_t at(int i) { return static_cast<size_t>(i); }

// How strongly a substituent prefers the equatorial position of a cyclohexane chair: its conformational free energy
// (A-value, kcal/mol) by its first atom and that atom's heavy neighbours besides the ring. Values from Eliel and Wilen,
// Stereochemistry of Organic Compounds (Wiley, 1994), chapter 11, from memory: CH3 1.74, CH2R 1.8, CHR2 2.2, CR3 4.9,
// phenyl 2.8, vinyl 1.7, carbonyl (CO2H, COMe) 1.3, C#N 0.2, NH2 1.4, NR2 2.1, OH 0.9, OR 0.6, SH 1.2, F 0.25,
// Cl, Br, I 0.5, SiMe3 2.5. The chair whose substituents' sum over the equatorial side is larger is kept: a
// tert-butyl goes equatorial opposite a hydroxy group (cis-4-tert-butylcyclohexanol), a methyl opposite a chlorine.
double equatorial_preference(const Molecule& m, const MoleculeDomains& d, int ring_atom, int sub) {
    int heavy = 0;
    bool aromatic = false, carbonyl = false;
    for (const Neighbor& nb : m.neighbors(sub)) {
        if (nb.atom == ring_atom) continue;
        const int z = m.atoms[at(nb.atom)].z;
        if (z != 1) ++heavy;
        const Bond& b = m.bonds[at(nb.bond)];
        aromatic = aromatic || b.aromatic;
        carbonyl = carbonyl || (b.order == 2 && (z == 8 || z == 16));
    }
    const int steric = d.atoms[at(sub)].steric_number;
    switch (m.atoms[at(sub)].z) {
        case 6:
            if (steric == 4) return heavy >= 3 ? 4.9 : heavy == 2 ? 2.2 : heavy == 1 ? 1.8 : 1.74;
            if (steric == 3) return aromatic ? 2.8 : carbonyl ? 1.3 : 1.7;
            return 0.2;
        case 7: return heavy >= 2 ? 2.1 : 1.4;
        case 8: return heavy >= 1 ? 0.6 : 0.9;
        case 16: return 1.2;
        case 9: return 0.25;
        case 17: case 35: case 53: return 0.5;
        case 14: return 2.5;
        default: return 1.0;
    }
}

double law_of_cosines(double a, double b, double theta) { return std::sqrt(std::max(0.0, a * a + b * b - 2 * a * b * std::cos(theta))); }

// Distance between the ends of i-j-k-l with bond lengths b1, b2, b3, angles t1 (ijk), t2 (jkl) and torsion phi.
double distance14(double b1, double b2, double b3, double t1, double t2, double phi) {
    const Vector3d i(b1 * std::cos(t1), b1 * std::sin(t1), 0);
    const Vector3d l(b2 - b3 * std::cos(t2), b3 * std::sin(t2) * std::cos(phi), b3 * std::sin(t2) * std::sin(phi));
    return (i - l).norm();
}

class SystemEmbedder {
public:
    SystemEmbedder(const Molecule& m, const MoleculeDomains& d, const RingInfo& rings, int system,
                   const std::vector<ChiralTarget>& chiral)
        : m_(m), d_(d), rings_(rings), atoms_(rings.systems[at(system)]), chiral_(chiral) {
        const size_t n = atoms_.size();
        local_.reserve(n);
        for (size_t k = 0; k < n; ++k) local_[atoms_[k]] = static_cast<int>(k);
        nbrs_.resize(n);
        for (size_t k = 0; k < n; ++k)
            for (const Neighbor& nb : m.neighbors(atoms_[k]))
                if (local_.count(nb.atom)) nbrs_[k].push_back(local_.at(nb.atom));
        for (int r : rings.system_rings[at(system)]) {
            std::vector<int> ring;
            for (int a : rings.rings[at(r)]) ring.push_back(local_.at(a));
            rings_local_.push_back(std::move(ring));
        }
        planar_.resize(n);
        dirs_.resize(n);
        for (size_t k = 0; k < n; ++k) {
            planar_[k] = planar_centre(m, d.atoms[at(atoms_[k])], atoms_[k]);
            dirs_[k] = bonded_directions(m, d.atoms[at(atoms_[k])], atoms_[k]);
        }
        for (const auto& ring : rings_local_) {
            const int size = static_cast<int>(ring.size());
            bool flat = true;
            for (int a : ring) flat = flat && planar_[at(a)];
            for (int s = 0; s < size; ++s) {
                const int a = ring[at(s)], b = ring[at((s + 1) % size)], c = ring[at((s + 2) % size)],
                          e = ring[at((s + 3) % size)];
                note(triples_, key3(a, b, c), size, flat);
                if (size > 3) note(quads_, key4(a, b, c, e), size, flat);
            }
        }
        curved_.assign(n, 0);
        for (size_t j = 0; j < n; ++j) {
            const auto& nb = nbrs_[j];
            if (!planar_[j] || nb.size() != 3) continue;
            double sum = 0;
            int ring_angles = 0;
            for (size_t x = 0; x < 3; ++x)
                for (size_t y = x + 1; y < 3; ++y) {
                    const double a = polygon_angle(lookup3(nb[x], static_cast<int>(j), nb[y]));
                    if (a > 0) {
                        sum += a;
                        ++ring_angles;
                    }
                }
            curved_[j] = ring_angles == 3 && sum < kCurvedAngleSum;
        }
    }

    RingSystemEmbedding run(bool other_mirror, int variant) {
        variant_ = variant;
        RingSystemEmbedding out = shape();
        out.mirrorable = prefer_equatorial(out.coordinates, other_mirror);
        out.large = flexible_ring();
        out.flexible = out.large || puckered_small_ring();
        return out;
    }

    // A ring of five or six atoms with three or more sp3 atoms not held planar: other embeddings (variant > 0) give
    // its other puckers (a twist-boat for a chair, another envelope's flap).
    bool puckered_small_ring() const {
        for (const auto& ring : rings_local_) {
            if (ring.size() != 5 && ring.size() != 6) continue;
            int sp3 = 0;
            for (int a : ring) sp3 += !planar_[at(a)] && d_.atoms[at(atom(a))].steric_number == 4;
            if (sp3 >= 3) return true;
        }
        return false;
    }

    // A ring of seven or more atoms with an atom that is not planar.
    bool flexible_ring() const {
        for (const auto& ring : rings_local_) {
            if (ring.size() < 7) continue;
            for (int a : ring)
                if (!planar_[at(a)]) return true;
        }
        return false;
    }

private:
    RingSystemEmbedding shape() {
        if (rings_local_.size() == 1) {
            const auto& ring = rings_local_[0];
            const int size = static_cast<int>(ring.size());
            bool all_planar = true, all_sp3 = true, marked_double = false;
            for (int a : ring) {
                all_planar = all_planar && planar_[at(a)];
                all_sp3 = all_sp3 && !planar_[at(a)] && d_.atoms[at(atoms_[at(a)])].steric_number == 4;
            }
            for (size_t s = 0; s < ring.size(); ++s) {
                const int b = m_.bond_between(atoms_[at(ring[s])], atoms_[at(ring[(s + 1) % ring.size()])]);
                marked_double = marked_double || m_.bonds[at(b)].stereo != BondStereo::none;
            }
            // The plain templates need bonds of one length; rings with heteroatoms or mixed bonds go through the
            // embedding, which starts from the same template.
            double shortest = 1e9, longest = 0;
            for (size_t s = 0; s < ring.size(); ++s) {
                const double len = bond_len(ring[s], ring[(s + 1) % ring.size()]);
                shortest = std::min(shortest, len);
                longest = std::max(longest, len);
            }
            const bool uniform = longest - shortest < kTemplateBondSpread;
            if (!marked_double && uniform && (size <= 4 || (all_planar && size <= 8))) return polygon(ring, 0, "polygon");
            if (uniform && size == 6 && all_sp3) return variant_ > 0 ? twist_boat(ring, variant_) : chair(ring);
            if (uniform && size == 5 && all_sp3) return envelope(rotated(ring, variant_));
            // Another pucker of a lone puckered ring with heteroatoms or mixed bonds: from the template too (an
            // embedding from another seed costs several builds' time and mostly finds the chair again); the
            // refinement sets its bonds and planar atoms.
            if (variant_ > 0 && !marked_double && puckered_small_ring()) {
                if (size == 6) return twist_boat(ring, variant_);
                if (size == 5) return envelope(rotated(ring, variant_));
            }
        }
        return distance_geometry();
    }

    // How far the heavy substituents of the system's stereocentres (those with two ring neighbours, whose frames the
    // assembly mirrors to the written handedness) point away from the system's centre: equatorial rather than axial,
    // each weighted by how strongly it prefers that (equatorial_preference).
    double outwardness(const std::vector<Vector3d>& x) const {
        Vector3d centre = Vector3d::Zero();
        for (const auto& p : x) centre += p;
        centre /= static_cast<double>(x.size());
        double score = 0;
        for (const ChiralTarget& t : chiral_) {
            auto it = local_.find(t.centre);
            if (it == local_.end() || nbrs_[at(it->second)].size() != 2) continue;
            const int c = it->second;
            const CentreDomains& cd = d_.atoms[at(t.centre)];
            auto dirs = bonded_directions(m_, cd, t.centre, false);
            const auto& nb = m_.neighbors(t.centre);
            auto index_of = [&](int a) {
                for (size_t k = 0; k < nb.size(); ++k)
                    if (nb[k].atom == a) return k;
                return size_t{0};
            };
            const double v = signed_volume(Vector3d::Zero(), dirs[index_of(t.n1)], dirs[index_of(t.n2)], dirs[index_of(t.n3)]);
            if (v * t.sign < 0) dirs = bonded_directions(m_, cd, t.centre, true);
            std::vector<Vector3d> a, b;
            for (int r : nbrs_[at(c)]) {
                a.push_back(dirs[index_of(atom(r))]);
                b.push_back((x[at(r)] - x[at(c)]).normalized());
            }
            const Eigen::Matrix3d rot = kabsch_rotation(a, b);
            const Vector3d out = (x[at(c)] - centre).normalized();
            for (size_t k = 0; k < nb.size(); ++k)
                if (!local_.count(nb[k].atom) && m_.atoms[at(nb[k].atom)].z != 1)
                    score += equatorial_preference(m_, d_, t.centre, nb[k].atom) * (rot * dirs[k]).dot(out);
        }
        return score;
    }

    // Ring systems without handedness of their own may be taken as their mirror image (for a chair: the other
    // chair); take the one that puts the substituents of stereocentres equatorial, or the other one when asked.
    // Returns whether the mirror image is another conformation (no handedness of its own, not flat).
    bool prefer_equatorial(std::vector<Vector3d>& x, bool other_mirror) const {
        for (const VolumeCondition& v : volume_conditions())
            if (v.sign != 0) return false;
        auto mirrored = x;
        for (auto& p : mirrored) p.x() = -p.x();
        const bool flip = outwardness(mirrored) > outwardness(x) + 1e-6;
        if (flip != other_mirror) x.swap(mirrored);
        return !flat(x);
    }

    // All atoms within 0.05 A of their best plane (a flat system is its own mirror image).
    static bool flat(const std::vector<Vector3d>& x) {
        if (x.size() < 4) return true;
        Vector3d centre = Vector3d::Zero();
        for (const auto& p : x) centre += p;
        centre /= static_cast<double>(x.size());
        Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
        for (const auto& p : x) cov += (p - centre) * (p - centre).transpose();
        const Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> solver(cov);
        const Vector3d normal = solver.eigenvectors().col(0);
        for (const auto& p : x)
            if (std::abs((p - centre).dot(normal)) > 0.05) return false;
        return true;
    }

    const Molecule& m_;
    const MoleculeDomains& d_;
    const RingInfo& rings_;
    const std::vector<int>& atoms_;
    const std::vector<ChiralTarget>& chiral_;
    std::unordered_map<int, int> local_;
    std::vector<std::vector<int>> nbrs_;
    std::vector<std::vector<int>> rings_local_;
    std::vector<char> planar_;
    std::vector<char> curved_;  // planar centres that three small rings bend out of plane
    std::vector<std::vector<Vector3d>> dirs_;
    // Whether the six-membered rings' sp3-sp3 bonds are held at chair torsions (cleared for a second try).
    bool chairs_ = true;
    int variant_ = 0;  // > 0: a flexible system's other embedding (embed_ring_system)
    // Smallest ring size holding a consecutive triple / quadruple of atoms, and whether that ring is planar.
    struct RingNote {
        int size = 0;
        bool flat = false;
    };
    std::unordered_map<std::uint64_t, RingNote> triples_, quads_;

    std::uint64_t key3(int a, int b, int c) const {
        if (a > c) std::swap(a, c);
        return (static_cast<std::uint64_t>(a) << 42) | (static_cast<std::uint64_t>(b) << 21) | static_cast<std::uint64_t>(c);
    }
    std::uint64_t key4(int a, int b, int c, int e) const {
        if (a > e) {
            std::swap(a, e);
            std::swap(b, c);
        }
        return (static_cast<std::uint64_t>(a) << 48) | (static_cast<std::uint64_t>(b) << 32) |
               (static_cast<std::uint64_t>(c) << 16) | static_cast<std::uint64_t>(e);
    }
    static void note(std::unordered_map<std::uint64_t, RingNote>& map, std::uint64_t key, int size, bool flat) {
        auto it = map.find(key);
        if (it == map.end() || size < it->second.size) map[key] = {size, flat};
    }
    RingNote lookup3(int a, int b, int c) const {
        auto it = triples_.find(key3(a, b, c));
        return it == triples_.end() ? RingNote{} : it->second;
    }
    RingNote lookup4(int a, int b, int c, int e) const {
        auto it = quads_.find(key4(a, b, c, e));
        return it == quads_.end() ? RingNote{} : it->second;
    }

    int atom(int local) const { return atoms_[at(local)]; }

    double bond_len(int a, int b) const {
        const int e = m_.bond_between(atom(a), atom(b));
        if (d_.bond_lengths.size() == m_.bonds.size()) return d_.bond_lengths[at(e)];
        const Bond& bond = m_.bonds[at(e)];
        return bond_length(m_.atoms[at(atom(a))].z, m_.atoms[at(atom(b))].z, bond.order, bond.aromatic);
    }

    int neighbor_slot(int centre_local, int other_local) const {
        const auto& nb = m_.neighbors(atom(centre_local));
        for (size_t k = 0; k < nb.size(); ++k)
            if (nb[k].atom == atom(other_local)) return static_cast<int>(k);
        return -1;
    }

    // The angle the centre's frame puts between two of its neighbours, radians.
    double frame_angle(int i, int j, int k) const {
        const Vector3d& a = dirs_[at(j)][at(neighbor_slot(j, i))];
        const Vector3d& b = dirs_[at(j)][at(neighbor_slot(j, k))];
        return std::acos(std::clamp(a.dot(b), -1.0, 1.0));
    }

    // The angle (degrees) a small or flat ring fixes at a consecutive triple, or 0 when it fixes none.
    static double polygon_angle(const RingNote& q) {
        if (q.size == 3) return 60;
        if (q.size == 4) return 90;
        if (q.size > 0 && q.flat && q.size <= kLargestPolygonRing) return 180.0 * (q.size - 2) / q.size;
        return 0;
    }

    // True when centre j lies in a flat ring larger than kLargestPolygonRing (a porphyrinoid's inner ring).
    bool in_large_flat_ring(int j) const {
        for (const auto& ring : rings_local_) {
            if (ring.size() <= static_cast<size_t>(kLargestPolygonRing) ||
                std::find(ring.begin(), ring.end(), j) == ring.end())
                continue;
            bool flat = true;
            for (int a : ring) flat = flat && planar_[at(a)];
            if (flat) return true;
        }
        return false;
    }

    // The ring angle i-j-k the embedding aims at, with its tolerance (radians).
    std::pair<double, double> target_angle(int i, int j, int k) const {
        const RingNote r = lookup3(i, j, k);
        if (r.size == 3) return {60 * kDeg, kRingAngleTolerance * kDeg};
        if (r.size == 4) return {90 * kDeg, kRingAngleTolerance * kDeg};
        if (r.size > 0 && r.flat && r.size <= kLargestPolygonRing) return {M_PI * (r.size - 2) / r.size, kRingAngleTolerance * kDeg};
        if (planar_[at(j)] && !curved_[at(j)] && nbrs_[at(j)].size() == 3) {
            // A planar centre with three ring neighbours: the angles its small rings fix, or nearly fix, and the
            // others share what those leave of 360 degrees (indole's fusion atom: 360-108-120; a porphyrin's alpha
            // carbon: (360-108)/2; indoline's, whose five-membered ring is puckered: 360-108-120 too, where the
            // frame's 120 in the five-membered ring would squeeze its other angles).
            auto fixed = [&](int a, int c, bool* estimated) {
                const RingNote q = lookup3(a, j, c);
                const double p = polygon_angle(q);
                if (p > 0) return p;
                if (q.size == 5 && !in_large_flat_ring(j)) {  // a chlorin's reduced ring keeps the frame's angles
                    *estimated = true;
                    return kPuckeredFiveAngle;
                }
                return 0.0;
            };
            double sum = 0;
            int known = 0;
            bool estimated = false;
            const auto& nb = nbrs_[at(j)];
            for (size_t x = 0; x < 3; ++x)
                for (size_t y = x + 1; y < 3; ++y) {
                    const double a = fixed(nb[x], nb[y], &estimated);
                    if (a > 0) {
                        sum += a;
                        ++known;
                    }
                }
            const double tol = (estimated ? kFrameAngleTolerance : kRingAngleTolerance) * kDeg;
            bool own_estimated = false;
            const double own = fixed(i, k, &own_estimated);
            if (own > 0) return {own * kDeg, tol};
            if (known > 0) return {std::clamp((360 - sum) / (3 - known), 90.0, 160.0) * kDeg, tol};
        }
        double theta = frame_angle(i, j, k);
        if (r.size == 5) theta = std::min(theta, 106 * kDeg);  // five-membered rings close their sp3 angles a little
        // In a large flat ring (a porphyrin's inner ring) the angles give way more than elsewhere.
        if (r.size > kLargestPolygonRing && r.flat) return {theta, kLargeFlatRingTolerance * kDeg};
        return {theta, kFrameAngleTolerance * kDeg};
    }

    // Torsion range (absolute, radians) for i-j-k-l inside the system, or {0, pi} when free.
    std::pair<double, double> torsion_range(int i, int j, int k, int l) const {
        const Bond& b = m_.bonds[at(m_.bond_between(atom(j), atom(k)))];
        const bool planar_bond = (b.order == 2 && !b.aromatic) || b.aromatic || (planar_[at(j)] && planar_[at(k)]);
        const RingNote r = lookup4(i, j, k, l);
        const double tol = kPlanarTorsionTolerance * kDeg;
        if (planar_bond && (curved_[at(j)] || curved_[at(k)])) {
            if (r.size > 0) return {0, 2 * tol};
            return {0, M_PI};
        }
        if (planar_bond) {
            const int cis = planar_relation(i, j, k, l, b);
            if (cis > 0) return {0, tol};
            if (cis < 0) return {M_PI - tol, M_PI};
            return {0, M_PI};
        }
        const bool sp3j = !planar_[at(j)] && d_.atoms[at(atom(j))].steric_number == 4;
        const bool sp3k = !planar_[at(k)] && d_.atoms[at(atom(k))].steric_number == 4;
        switch (r.size) {
            case 5: return {0, kFiveTorsionMax * kDeg};
            case 6:
                if (sp3j && sp3k) return {(chairs_ ? kChairTorsionMin : 0.0) * kDeg, kChairTorsionMax * kDeg};
                return {0, kOtherSixTorsionMax * kDeg};
            case 7: return {0, kSevenTorsionMax * kDeg};
            default: return {0, M_PI};
        }
    }

    // +1 when i and l are cis across the planar bond j-k, -1 when trans, 0 when nothing says.
    int planar_relation(int i, int j, int k, int l, const Bond& b) const {
        // Sides: a neighbour of j (other than k) is on side +1 if it is the first such neighbour, else -1.
        auto side = [&](int centre, int other, int x) {
            for (int y : nbrs_[at(centre)])
                if (y != other) return y == x ? 1 : -1;
            return 1;
        };
        // A written configuration decides.
        if (b.stereo != BondStereo::none && b.ref_a >= 0 && b.ref_b >= 0 && local_.count(b.ref_a) &&
            local_.count(b.ref_b)) {
            const int ja = local_.at(b.a) == j ? j : k;
            const int ra = local_.at(b.ref_a), rb = local_.at(b.ref_b);
            const int ref_j = ja == j ? ra : rb, ref_k = ja == j ? rb : ra;
            const int relation = (b.stereo == BondStereo::cis ? 1 : -1) * side(j, k, ref_j) * side(k, j, ref_k);
            return relation * side(j, k, i) * side(k, j, l);
        }
        // Else the smallest ring that runs through a neighbour of each end: cis in rings up to kLargestCisOnlyRing
        // and across an aromatic bond, trans beyond. The smallest, since a large ring may run through the
        // bond and turn back (a calixarene's large ring enters a benzene ring and leaves it at the next atom): only
        // the small ring says how the two sides lie.
        int best_a = -1, best_c = -1;
        RingNote best;
        for (int a : nbrs_[at(j)]) {
            if (a == k) continue;
            for (int c : nbrs_[at(k)]) {
                if (c == j || c == a) continue;
                const RingNote r = lookup4(a, j, k, c);
                if (r.size > 0 && (best.size == 0 || r.size < best.size)) {
                    best = r;
                    best_a = a;
                    best_c = c;
                }
            }
        }
        // A large flat ring may zigzag (a porphyrin's inner ring turns back at each nitrogen), and a large puckered
        // ring through an aromatic bond too: running through it says nothing about cis or trans.
        if (best.size == 0 || (best.size > kLargestPolygonRing && (best.flat || b.aromatic))) return 0;
        const bool ring_cis = best.size <= kLargestCisOnlyRing || b.aromatic;
        const int relation = (ring_cis ? 1 : -1) * side(j, k, best_a) * side(k, j, best_c);
        return relation * side(j, k, i) * side(k, j, l);
    }

    // Signed-volume conditions: the written stereocentres of the system, and planarity of planar fusion atoms.
    std::vector<VolumeCondition> volume_conditions() const {
        std::vector<VolumeCondition> out;
        for (const ChiralTarget& t : chiral_) {
            auto it = local_.find(t.centre);
            if (it == local_.end()) continue;
            const int c = it->second;
            if (nbrs_[at(c)].size() < 3) continue;  // two ring neighbours: the assembly mirrors the frame instead
            VolumeCondition v;
            v.centre = c;
            const double b = 1.5;  // typical bond; the minimum is half an ideal tetrahedron's volume
            v.minimum = 0.5 * b * b * b * 0.77;
            if (local_.count(t.n1) && local_.count(t.n2) && local_.count(t.n3)) {
                v.b = local_.at(t.n1);
                v.d = local_.at(t.n2);
                v.e = local_.at(t.n3);
                v.sign = t.sign;
            } else {
                // One neighbour is outside the system: it sits opposite the three inside, so the handedness of the
                // three inside follows from an ideal tetrahedron.
                const auto& in = nbrs_[at(c)];
                const double s = std::sqrt(8.0 / 9.0), h = -1.0 / 3.0;
                const Vector3d t1(0, 0, 1), t2(s, 0, h), t3(-s / 2, std::sqrt(2.0 / 3.0), h);
                const Vector3d t4 = -(t1 + t2 + t3);
                auto dir = [&](int atom_index) {
                    if (local_.count(atom_index)) {
                        const int li = local_.at(atom_index);
                        if (li == in[0]) return t1;
                        if (li == in[1]) return t2;
                        if (li == in[2]) return t3;
                    }
                    return t4;
                };
                const double vt = dir(t.n1).dot(dir(t.n2).cross(dir(t.n3)));
                const double v0 = t1.dot(t2.cross(t3));
                v.b = in[0];
                v.d = in[1];
                v.e = in[2];
                v.sign = (vt * t.sign > 0) == (v0 > 0) ? 1 : -1;
            }
            out.push_back(v);
        }
        for (size_t c = 0; c < atoms_.size(); ++c)
            if (planar_[c] && !curved_[c] && nbrs_[c].size() == 3)
                out.push_back({static_cast<int>(c), nbrs_[c][0], nbrs_[c][1], nbrs_[c][2], 0, 0});
        return out;
    }

    // Orientations (+1 or -1 per ring) under which the system's rings run as the faces of a planar drawing: every
    // bond two rings share runs one way in one ring and the other way in the other, so every ring has its inside on
    // the same side. Empty when the rings are not such faces (a bond in three rings, orientations that cannot agree,
    // rings joined only at atoms).
    std::vector<int> ring_orientations() const {
        const size_t nr = rings_local_.size();
        if (nr < 2) return {};
        // Per bond (as a local pair) the rings holding it and the direction each runs it.
        std::unordered_map<std::uint64_t, std::vector<std::pair<int, int>>> bond_rings;  // (ring, +1 when a < b first)
        for (size_t r = 0; r < nr; ++r) {
            const auto& ring = rings_local_[r];
            for (size_t s = 0; s < ring.size(); ++s) {
                const int a = ring[s], b = ring[(s + 1) % ring.size()];
                const std::uint64_t key =
                    (static_cast<std::uint64_t>(std::min(a, b)) << 32) | static_cast<std::uint64_t>(std::max(a, b));
                bond_rings[key].push_back({static_cast<int>(r), a < b ? 1 : -1});
            }
        }
        std::vector<std::vector<std::pair<int, int>>> links(nr);  // (other ring, +1 when both run the bond alike)
        for (const auto& [key, list] : bond_rings) {
            if (list.size() > 2) return {};
            if (list.size() == 2) {
                const int same = list[0].second == list[1].second ? 1 : -1;
                links[at(list[0].first)].push_back({list[1].first, same});
                links[at(list[1].first)].push_back({list[0].first, same});
            }
        }
        std::vector<int> orient(nr, 0);
        std::vector<int> queue{0};
        orient[0] = 1;
        for (size_t k = 0; k < queue.size(); ++k) {
            const int r = queue[k];
            for (auto [other, same] : links[at(r)]) {
                const int want = -same * orient[at(r)];  // a shared bond runs opposite ways
                if (orient[at(other)] == 0) {
                    orient[at(other)] = want;
                    queue.push_back(other);
                } else if (orient[at(other)] != want) {
                    return {};
                }
            }
        }
        if (queue.size() != nr) return {};
        return orient;
    }

    // The neighbours before and after centre c in ring r as the ring runs under orientation o.
    std::pair<int, int> ring_step(size_t r, int o, int c) const {
        const auto& ring = rings_local_[r];
        const size_t size = ring.size();
        const size_t s = static_cast<size_t>(std::find(ring.begin(), ring.end(), c) - ring.begin());
        int p = ring[(s + size - 1) % size], q = ring[(s + 1) % size];
        if (o < 0) std::swap(p, q);
        return {p, q};
    }

    // Handedness in the plane of the centres with three ring neighbours, for a flat system drawn with its rings as
    // faces (ring_orientations): a centre c met as p -> c -> q in a ring has its third neighbour r outside that ring's
    // corner, so p, r, q come in turn anticlockwise about c and the signed area (p - c) x (r - c) is positive (taking
    // the insides on the left; the mirror image is the same drawing).
    std::vector<AreaCondition> area_conditions(const std::vector<int>& orient) const {
        std::vector<AreaCondition> out;
        if (orient.empty()) return out;
        std::vector<char> done(atoms_.size(), 0);
        for (size_t r = 0; r < rings_local_.size(); ++r)
            for (int c : rings_local_[r]) {
                if (done[at(c)] || nbrs_[at(c)].size() != 3) continue;
                const auto [p, q] = ring_step(r, orient[r], c);
                int third = -1;
                for (int x : nbrs_[at(c)])
                    if (x != p && x != q) third = x;
                // About a third of the area two ring bonds span at 120 degrees: a sign, not a shape.
                out.push_back({c, p, third, 1, 0.3 * bond_len(p, c) * bond_len(third, c)});
                done[at(c)] = 1;
            }
        return out;
    }

    // A start for a flat system whose rings are the faces of a planar drawing: the atoms laid out in the plane one
    // bond at a time (breadth first), each at its bond length and at the ring angle the bounds aim at from the bond it
    // is reached by, turning the way the drawing says (a centre with three neighbours by its handedness; one with two
    // by the corner of its smallest ring, taken convex, the ring's inside on the left). Ring closures are left to the
    // embedding. A fused start cannot do this for a large ring: its template, a regular polygon, has every corner
    // convex, where a porphyrin's inner ring turns back at each nitrogen, and the small rings fused on it then sit
    // inside out. Empty when a centre has more than three ring neighbours.
    std::vector<Vector3d> planar_start(const std::vector<int>& orient, const std::vector<AreaCondition>& areas) const {
        const size_t n = atoms_.size();
        std::vector<std::array<int, 3>> turn(n, {-1, -1, -1});  // three neighbours in anticlockwise order
        for (const AreaCondition& q : areas) {
            int last = -1;
            for (int x : nbrs_[at(q.centre)])
                if (x != q.a && x != q.b) last = x;
            turn[at(q.centre)] = {q.a, q.b, last};
        }
        for (size_t c = 0; c < n; ++c)
            if (nbrs_[c].size() > 3 || (nbrs_[c].size() == 3 && turn[c][0] < 0)) return {};
        auto rotate = [](const Vector3d& u, double angle) {
            return Vector3d(std::cos(angle) * u.x() - std::sin(angle) * u.y(), std::sin(angle) * u.x() + std::cos(angle) * u.y(), 0);
        };
        std::vector<Vector3d> x(n, Vector3d::Zero());
        std::vector<char> placed(n, 0);
        std::vector<int> queue{0}, parent(n, -1);
        placed[0] = 1;
        parent[0] = nbrs_[0][0];
        x[at(parent[0])] = Vector3d(bond_len(0, parent[0]), 0, 0);
        placed[at(parent[0])] = 1;
        queue.push_back(parent[0]);
        parent[at(parent[0])] = 0;
        for (size_t k = 0; k < queue.size(); ++k) {
            const int c = queue[k], from = parent[at(c)];
            const Vector3d u = (x[at(from)] - x[at(c)]).normalized();
            for (int nb : nbrs_[at(c)]) {
                if (nb == from || placed[at(nb)]) continue;
                const double theta = target_angle(from, c, nb).first;
                double side = 0;  // +1: anticlockwise from `from`
                if (nbrs_[at(c)].size() == 3) {
                    const auto& t = turn[at(c)];
                    const int k0 = static_cast<int>(std::find(t.begin(), t.end(), from) - t.begin());
                    side = t[at((k0 + 1) % 3)] == nb ? 1 : -1;
                } else {
                    // The smallest ring through from-c-nb (the rings are listed smallest first).
                    for (size_t r = 0; r < rings_local_.size() && side == 0; ++r) {
                        const auto [p, q] = ring_step(r, orient[r], c);
                        if (p == from && q == nb) side = -1;
                        else if (q == from && p == nb) side = 1;
                    }
                    if (side == 0) return {};
                }
                x[at(nb)] = x[at(c)] + bond_len(c, nb) * rotate(u, side * theta);
                placed[at(nb)] = 1;
                parent[at(nb)] = c;
                queue.push_back(nb);
            }
        }
        return x;
    }

    // A first try holds every six-membered ring of sp3 atoms in a chair; where that cannot be met (bridged and caged
    // systems whose rings must be boats or twists: bicyclo[2.2.2]octane, twistane, strychnine's cyclohexane ring) a
    // second try lets those torsions go down to zero and keeps whichever meets its conditions.
    RingSystemEmbedding distance_geometry() {
        bool six_sp3 = false;
        for (const auto& ring : rings_local_)
            if (ring.size() == 6)
                for (int a : ring) six_sp3 = six_sp3 || (!planar_[at(a)] && d_.atoms[at(atom(a))].steric_number == 4);
        // Another shape asked of a system whose rings are all small: its six-membered rings are not held in chairs.
        if (variant_ > 0 && !flexible_ring() && puckered_small_ring()) chairs_ = false;
        RingSystemEmbedding first = distance_geometry_try();
        chairs_ = true;
        if (first.met || !six_sp3) return first;
        chairs_ = false;
        RingSystemEmbedding second = distance_geometry_try();
        chairs_ = true;
        if (second.met || (second.satisfied && !first.satisfied) || second.error < first.error) return second;
        return first;
    }

    RingSystemEmbedding distance_geometry_try() {
        const int n = static_cast<int>(atoms_.size());
        // The embedding keeps n x n bounds and smooths them in n^3 steps: past this size a hostile input (one ring
        // of 100,000 atoms) would take hours and gigabytes. Refused plainly instead.
        if (n > kMaxEmbeddedRingSystem)
            throw UnsupportedError(fmt::format("a ring system of {} atoms (atoms {}..{}) is larger than the {} atoms "
                                               "the ring embedding handles",
                                               n, atoms_.front() + 1, atoms_.back() + 1, kMaxEmbeddedRingSystem));
        DistanceBounds bounds(n);
        // 1-2
        for (int a = 0; a < n; ++a)
            for (int b : nbrs_[at(a)])
                if (a < b) {
                    const double len = bond_len(a, b);
                    bounds.narrow(a, b, len - kBondTolerance, len + kBondTolerance);
                }
        std::vector<std::vector<char>> close(at(n), std::vector<char>(at(n), 0));
        for (int a = 0; a < n; ++a)
            for (int b : nbrs_[at(a)]) close[at(a)][at(b)] = 1;
        // 1-3
        for (int j = 0; j < n; ++j) {
            const auto& nb = nbrs_[at(j)];
            for (size_t x = 0; x < nb.size(); ++x)
                for (size_t y = x + 1; y < nb.size(); ++y) {
                    const int i = nb[x], k = nb[y];
                    if (close[at(i)][at(k)] == 1) continue;
                    const auto [theta, tol] = target_angle(i, j, k);
                    const double a = bond_len(i, j), c = bond_len(j, k);
                    bounds.narrow(i, k, law_of_cosines(a, c, std::max(0.0, theta - tol)),
                                  law_of_cosines(a, c, std::min(M_PI, theta + tol)));
                    close[at(i)][at(k)] = close[at(k)][at(i)] = 2;
                }
        }
        // 1-4: distance bounds from the torsion range, and the range itself as a torsion condition.
        std::vector<TorsionCondition> torsions;
        for (int j = 0; j < n; ++j)
            for (int k : nbrs_[at(j)]) {
                if (k < j) continue;
                for (int i : nbrs_[at(j)]) {
                    if (i == k) continue;
                    for (int l : nbrs_[at(k)]) {
                        if (l == j || l == i || close[at(i)][at(l)] == 1) continue;
                        const auto [lo, hi] = torsion_range(i, j, k, l);
                        if (lo > 0 || hi < M_PI) torsions.push_back({i, j, k, l, lo, hi});
                        if (close[at(i)][at(l)] == 2) continue;
                        const double b1 = bond_len(i, j), b2 = bond_len(j, k), b3 = bond_len(k, l);
                        const auto [t1, tol1] = target_angle(i, j, k);
                        const auto [t2, tol2] = target_angle(j, k, l);
                        // The distance range over the corners of the two angle ranges.
                        double dlo = 1e9, dhi = 0;
                        for (double s1 : {-1.0, 1.0})
                            for (double s2 : {-1.0, 1.0}) {
                                dlo = std::min(dlo, distance14(b1, b2, b3, t1 + s1 * tol1, t2 + s2 * tol2, lo));
                                dhi = std::max(dhi, distance14(b1, b2, b3, t1 + s1 * tol1, t2 + s2 * tol2, hi));
                            }
                        bounds.narrow(i, l, dlo, dhi);
                        close[at(i)][at(l)] = close[at(l)][at(i)] = 3;
                    }
                }
            }
        // Far pairs: not closer than a fraction of the van der Waals contact.
        for (int a = 0; a < n; ++a)
            for (int b = a + 1; b < n; ++b)
                if (!close[at(a)][at(b)]) {
                    const double sum = element(m_.atoms[at(atom(a))].z).r_vdw + element(m_.atoms[at(atom(b))].z).r_vdw;
                    bounds.narrow(a, b, kFarFraction * sum, 1e6);
                }
        const auto volumes = volume_conditions();
        bounds.smooth();
        // The first try starts from ring templates fused one ring at a time (chairs stay chairs, aromatic systems
        // start flat, macrocycles start as an open crown and cannot come out knotted); then metric-matrix embeddings.
        bool flat = true;
        for (size_t a = 0; a < atoms_.size(); ++a) flat = flat && planar_[a] && !curved_[a];
        // A system with a large flat ring (a chlorin: a porphyrin with one saturated pyrrole bond) starts from the
        // planar layout too, lifted a little off the plane so that its puckered parts have a direction to go: the
        // fused templates would put its large ring on a regular polygon.
        bool large_flat_ring = false;
        for (const auto& ring : rings_local_) {
            bool ring_flat = ring.size() > static_cast<size_t>(kLargestPolygonRing);
            for (int a : ring) ring_flat = ring_flat && planar_[at(a)] && !curved_[at(a)];
            large_flat_ring = large_flat_ring || ring_flat;
        }
        const std::vector<int> orient = flat || large_flat_ring ? ring_orientations() : std::vector<int>{};
        const std::vector<AreaCondition> areas = area_conditions(orient);
        std::vector<Vector3d> layout = orient.empty() ? std::vector<Vector3d>{} : planar_start(orient, areas);
        if (!flat)
            for (size_t a = 0; a < layout.size(); ++a) layout[a].z() = a % 2 ? kLift : -kLift;
        const bool other_shape = variant_ > 0 && !flat && (flexible_ring() || puckered_small_ring());
        const std::vector<Vector3d> start = other_shape       ? std::vector<Vector3d>{}
                                            : !layout.empty() ? layout
                                                              : fused_start(bounds, torsions, volumes);
        const EmbedResult e = flat ? embed_points(bounds, {}, {}, kAttempts, kAcceptedViolation, start, true, areas)
                                   : embed_points(bounds, volumes, torsions, kAttempts, kAcceptedViolation, start, false,
                                                  {}, other_shape ? static_cast<std::uint64_t>(variant_) : 0);
        RingSystemEmbedding out;
        out.coordinates = e.coordinates;
        out.satisfied = e.volumes_met && e.worst_violation < 0.3 && e.worst_torsion < 20 * kDeg;
        out.met = e.volumes_met && e.worst_violation <= kAcceptedViolation && e.worst_torsion <= kAcceptedTorsion * kDeg;
        out.error = e.error;
        out.method = "distance geometry";
        out.worst_angle_strain = bridged() ? angle_strain(out.coordinates) : 0.0;
        if (flat && twist_helix(out.coordinates)) {
            // The wound helix relaxed against the same bounds in three dimensions (its ends no longer overlap). The
            // bounds were set for a flat system, whose 1-4 distances a helix must give up (up to 0.5 A in
            // [6]helicene, measured): a helix with its centres' handedness and torsions kept is taken as met.
            const EmbedResult h = refine_points(bounds, volumes, torsions, out.coordinates, kHelixEvaluations);
            out.coordinates = h.coordinates;
            out.satisfied = h.volumes_met && h.worst_violation < kHelixViolation && h.worst_torsion < 20 * kDeg;
            out.met = out.satisfied;
            out.error = h.error;
        }
        return out;
    }

    // A chain of four or more ortho-fused six-membered rings whose flat layout brings atoms four or more bonds apart
    // within kFjordContact of each other (a helicene: its end rings would overlap) is wound into a helix: each ring
    // raised by kHelixRise over the one before it, along the chain. Flat, such a molecule sits on a symmetric saddle
    // that the refinement cannot leave ([6]helicene, 97 kcal/mol above the helix in GFN2-xTB, measured).
    bool twist_helix(std::vector<Vector3d>& x) const {
        const size_t rings = rings_local_.size();
        if (rings < 4) return false;
        for (const auto& r : rings_local_)
            if (r.size() != 6) return false;
        std::vector<std::vector<size_t>> fused(rings);
        for (size_t p = 0; p < rings; ++p)
            for (size_t q = p + 1; q < rings; ++q) {
                int shared = 0;
                for (int a : rings_local_[p])
                    shared += std::count(rings_local_[q].begin(), rings_local_[q].end(), a) > 0;
                if (shared >= 2) {
                    fused[p].push_back(q);
                    fused[q].push_back(p);
                }
            }
        // A path: two ends, every other ring fused to two.
        size_t end = rings;
        for (size_t p = 0; p < rings; ++p) {
            if (fused[p].size() > 2 || fused[p].empty()) return false;
            if (fused[p].size() == 1) end = p;
        }
        if (end == rings) return false;
        std::vector<size_t> order{end};
        while (order.size() < rings) {
            const size_t last = order.back();
            size_t next = rings;
            for (size_t q : fused[last])
                if (std::find(order.begin(), order.end(), q) == order.end()) next = q;
            if (next == rings) return false;
            order.push_back(next);
        }
        if (!fjord_clash(x)) return false;
        std::vector<double> z(x.size(), 0), count(x.size(), 0);
        for (size_t k = 0; k < rings; ++k)
            for (int a : rings_local_[order[k]]) {
                z[at(a)] += (static_cast<double>(k) - 0.5 * static_cast<double>(rings - 1)) * kHelixRise;
                count[at(a)] += 1;
            }
        for (size_t a = 0; a < x.size(); ++a)
            if (count[a] > 0) x[a].z() += z[a] / count[a];
        return true;
    }

    // Two atoms of the system four or more bonds apart closer than kFjordContact.
    bool fjord_clash(const std::vector<Vector3d>& x) const {
        const size_t n = x.size();
        for (size_t s = 0; s < n; ++s) {
            std::vector<int> depth(n, -1);
            depth[s] = 0;
            std::vector<int> queue{static_cast<int>(s)};
            for (size_t q = 0; q < queue.size(); ++q) {
                if (depth[at(queue[q])] == 3) continue;
                for (int b : nbrs_[at(queue[q])])
                    if (depth[at(b)] < 0) {
                        depth[at(b)] = depth[at(queue[q])] + 1;
                        queue.push_back(b);
                    }
            }
            for (size_t t = s + 1; t < n; ++t)
                if (depth[t] < 0 && (x[s] - x[t]).norm() < kFjordContact) return true;
        }
        return false;
    }

    // Template coordinates of one ring, by position in the ring: chair, envelope, polygon, or a crown for larger rings.
    std::vector<Vector3d> ring_template(const std::vector<int>& ring) const {
        bool all_planar = true;
        for (int a : ring) all_planar = all_planar && planar_[at(a)];
        RingSystemEmbedding e;
        // Any ring with an sp3 atom starts puckered: the refinement flattens what must be flat (a half-chair from a
        // chair), but cannot pucker a flat start the right way.
        if (ring.size() == 6 && !all_planar) e = chair(ring);
        else if (ring.size() == 5 && !all_planar) e = envelope(ring);
        else e = polygon(ring, ring.size() >= 7 && !all_planar ? 0.4 : 0.0, "");
        std::vector<Vector3d> out;
        for (int a : ring) out.push_back(e.coordinates[at(a)]);
        return out;
    }

    // How badly new ring atoms (positions `y` for atoms `fresh`) fit the bounds, torsions and volumes with what is
    // placed.
    double fit_score(const DistanceBounds& b, const std::vector<TorsionCondition>& torsions,
                     const std::vector<VolumeCondition>& volumes, std::vector<Vector3d>& x, std::vector<char>& placed,
                     const std::vector<int>& fresh, const std::vector<Vector3d>& y) const {
        double score = 0;
        for (size_t q = 0; q < fresh.size(); ++q)
            for (size_t a = 0; a < x.size(); ++a) {
                if (!placed[a]) continue;
                const double d = (y[q] - x[a]).norm();
                const double lo = b.lower(fresh[q], static_cast<int>(a)), hi = b.upper(fresh[q], static_cast<int>(a));
                if (d < lo) score += (lo - d) * (lo - d);
                if (d > hi) score += (d - hi) * (d - hi);
            }
        for (size_t q = 0; q < fresh.size(); ++q) {
            x[at(fresh[q])] = y[q];
            placed[at(fresh[q])] = 2;
        }
        auto ready = [&](std::initializer_list<int> list, bool* touches) {
            bool all = true;
            *touches = false;
            for (int a : list) {
                all = all && placed[at(a)];
                *touches = *touches || placed[at(a)] == 2;
            }
            return all;
        };
        for (const TorsionCondition& t : torsions) {
            bool touches = false;
            if (!ready({t.i, t.j, t.k, t.l}, &touches) || !touches) continue;
            const double a = std::abs(dihedral(x[at(t.i)], x[at(t.j)], x[at(t.k)], x[at(t.l)]));
            const double v = std::max({0.0, t.lower - a, a - t.upper});
            score += v * v;
        }
        for (const VolumeCondition& v : volumes) {
            bool touches = false;
            if (v.sign == 0 || !ready({v.centre, v.b, v.d, v.e}, &touches) || !touches) continue;
            if (v.sign * signed_volume(x[at(v.centre)], x[at(v.b)], x[at(v.d)], x[at(v.e)]) <= 0) score += 10;
        }
        for (int a : fresh) placed[at(a)] = 0;
        return score;
    }

    // Points on a circular arc from a to b (both excluded), `count` of them, consecutive points `bond` apart, in the
    // plane of a, b and `away`, bulging towards `away`.
    static std::vector<Vector3d> arc(const Vector3d& a, const Vector3d& b, int count, double bond, const Vector3d& away) {
        const double chord = (b - a).norm();
        const Vector3d u = (b - a) / std::max(chord, 1e-9);
        Vector3d w = away - away.dot(u) * u;
        w = w.norm() > 1e-9 ? w.normalized() : any_perpendicular(u);
        std::vector<Vector3d> out;
        if ((count + 1) * bond <= chord * 1.0001) {  // stretched: a straight line
            for (int k = 1; k <= count; ++k) out.push_back(a + (b - a) * k / (count + 1.0));
            return out;
        }
        // Step angle delta: 2 r sin((count+1) delta / 2) = chord with r = bond / (2 sin(delta / 2)).
        double lo = 1e-9, hi = 2 * M_PI / (count + 1);
        for (int it = 0; it < 60; ++it) {
            const double mid = 0.5 * (lo + hi);
            const double r = bond / (2 * std::sin(mid / 2));
            (2 * r * std::sin((count + 1) * mid / 2) - chord > 0 ? lo : hi) = mid;
        }
        const double delta = 0.5 * (lo + hi), r = bond / (2 * std::sin(delta / 2));
        const double total = (count + 1) * delta;
        const double h = std::sqrt(std::max(0.0, r * r - chord * chord / 4)) * (total > M_PI ? 1 : -1);
        const Vector3d centre = 0.5 * (a + b) + h * w;
        const Vector3d e1 = (a - centre) / r;
        Vector3d e2 = w - w.dot(e1) * e1;
        e2 = e2.norm() > 1e-9 ? e2.normalized() : u;
        // Turn from a towards b through the `away` side.
        for (int k = 1; k <= count; ++k) out.push_back(centre + r * (std::cos(k * delta) * e1 + std::sin(k * delta) * e2));
        return out;
    }

    // The fresh atoms of a ring laid on arcs between the placed atoms that bound them, away from what is placed
    // around those atoms. Empty when a stretch of fresh atoms is not bounded by placed atoms on both sides.
    std::vector<Vector3d> arc_candidate(const std::vector<int>& ring, const std::vector<char>& placed,
                                        const std::vector<Vector3d>& x) const {
        const int size = static_cast<int>(ring.size());
        std::vector<Vector3d> by_pos(at(size));
        int start = -1;
        for (int s = 0; s < size; ++s)
            if (placed[at(ring[at(s)])] && !placed[at(ring[at((s + 1) % size)])]) {
                start = s;
                break;
            }
        if (start < 0) return {};
        for (int s = start, done = 0; done < size;) {
            // From placed position s, run over the fresh stretch to the next placed position e.
            int e = (s + 1) % size, count = 0;
            while (!placed[at(ring[at(e)])]) {
                e = (e + 1) % size;
                ++count;
            }
            if (count > 0) {
                const int a = ring[at(s)], b = ring[at(e)];
                Vector3d centre = Vector3d::Zero();
                int nc = 0;
                for (int end : {a, b})
                    for (int nb : nbrs_[at(end)])
                        if (placed[at(nb)] && std::find(ring.begin(), ring.end(), nb) == ring.end()) {
                            centre += x[at(nb)];
                            ++nc;
                        }
                if (nc == 0)  // nothing around: bulge away from the other placed ring atoms
                    for (int q : ring)
                        if (placed[at(q)] && q != a && q != b) {
                            centre += x[at(q)];
                            ++nc;
                        }
                const Vector3d mid = 0.5 * (x[at(a)] + x[at(b)]);
                const Vector3d away = nc ? Vector3d(mid - centre / nc) : Vector3d(any_perpendicular((x[at(b)] - x[at(a)]).normalized()));
                const double bond = mean_ring_bond(ring);
                const auto pts = arc(x[at(a)], x[at(b)], count, bond, away);
                for (int k = 0; k < count; ++k) by_pos[at((s + 1 + k) % size)] = pts[at(k)];
            }
            done += count + 1;
            s = e;
        }
        std::vector<Vector3d> out;
        for (int s = 0; s < size; ++s)
            if (!placed[at(ring[at(s)])]) out.push_back(by_pos[at(s)]);
        return out;
    }

    std::vector<Vector3d> fused_start(const DistanceBounds& b, const std::vector<TorsionCondition>& torsions,
                                      const std::vector<VolumeCondition>& volumes) const {
        const size_t n = atoms_.size();
        std::vector<Vector3d> x(n, Vector3d::Zero());
        std::vector<char> placed(n, 0), ring_done(rings_local_.size(), 0);
        {
            // The first (smallest) ring from its template; the others fuse on in order of atoms shared.
            const size_t first = 0;
            const auto t = ring_template(rings_local_[first]);
            for (size_t s = 0; s < t.size(); ++s) {
                x[at(rings_local_[first][s])] = t[s];
                placed[at(rings_local_[first][s])] = 1;
            }
            ring_done[first] = 1;
        }
        for (size_t step = 1; step < rings_local_.size(); ++step) {
            int next = -1, best_shared = 0;
            for (size_t r = 0; r < rings_local_.size(); ++r) {
                if (ring_done[r]) continue;
                int shared = 0;
                for (int a : rings_local_[r]) shared += placed[at(a)] ? 1 : 0;
                if (shared > best_shared) {
                    best_shared = shared;
                    next = static_cast<int>(r);
                }
            }
            if (next < 0) break;  // cannot happen: a ring system is connected through its rings
            ring_done[at(next)] = 1;
            const auto& ring = rings_local_[at(next)];
            std::vector<int> shared_pos, fresh_pos, fresh;
            for (size_t s = 0; s < ring.size(); ++s) {
                if (placed[at(ring[s])]) shared_pos.push_back(static_cast<int>(s));
                else {
                    fresh_pos.push_back(static_cast<int>(s));
                    fresh.push_back(ring[s]);
                }
            }
            if (fresh.empty()) continue;
            std::vector<Vector3d> best;
            double best_score = 0;
            for (int mirror = 0; mirror < 2; ++mirror) {
                auto t = ring_template(ring);
                // The mirror image (x -> -x: within the plane for a flat template, the other chair for a chair).
                if (mirror)
                    for (auto& v : t) v.x() = -v.x();
                std::vector<std::vector<Vector3d>> candidates;
                auto transform = [&](const Matrix3 & r, const Vector3d& from, const Vector3d& to) {
                    std::vector<Vector3d> y;
                    for (int s : fresh_pos) y.push_back(to + r * (t[at(s)] - from));
                    candidates.push_back(std::move(y));
                };
                if (shared_pos.size() >= 3) {
                    Vector3d ct = Vector3d::Zero(), cx = Vector3d::Zero();
                    for (int s : shared_pos) {
                        ct += t[at(s)];
                        cx += x[at(ring[at(s)])];
                    }
                    ct /= static_cast<double>(shared_pos.size());
                    cx /= static_cast<double>(shared_pos.size());
                    std::vector<Vector3d> a, c;
                    for (int s : shared_pos) {
                        a.push_back(t[at(s)] - ct);
                        c.push_back(x[at(ring[at(s)])] - cx);
                    }
                    transform(kabsch_rotation(a, c), ct, cx);
                } else {
                    Vector3d from, to, axis_t, axis_x;
                    if (shared_pos.size() == 2) {
                        const int p = shared_pos[0], q = shared_pos[1];
                        from = 0.5 * (t[at(p)] + t[at(q)]);
                        to = 0.5 * (x[at(ring[at(p)])] + x[at(ring[at(q)])]);
                        axis_t = (t[at(q)] - t[at(p)]).normalized();
                        axis_x = (x[at(ring[at(q)])] - x[at(ring[at(p)])]).normalized();
                    } else {
                        const int p = shared_pos[0];
                        Vector3d centre = Vector3d::Zero();
                        for (const auto& v : t) centre += v;
                        centre /= static_cast<double>(t.size());
                        from = t[at(p)];
                        to = x[at(ring[at(p)])];
                        axis_t = (centre - from).normalized();
                        Vector3d away = Vector3d::Zero();
                        for (int nb : nbrs_[at(ring[at(p)])])
                            if (placed[at(nb)]) away -= (x[at(nb)] - to).normalized();
                        axis_x = away.norm() > 1e-6 ? away.normalized() : Vector3d::UnitZ();
                    }
                    const Matrix3 r0 = rotation_between(axis_t, axis_x);
                    constexpr int kSteps = 24;
                    for (int k = 0; k < kSteps; ++k)
                        transform(Eigen::AngleAxisd(2 * M_PI * k / kSteps, axis_x).toRotationMatrix() * r0, from, to);
                }
                if (mirror == 0 && shared_pos.size() >= 2) {
                    auto y = arc_candidate(ring, placed, x);
                    if (!y.empty()) candidates.push_back(std::move(y));
                }
                for (const auto& y : candidates) {
                    const double score = fit_score(b, torsions, volumes, x, placed, fresh, y);
                    if (best.empty() || score < best_score - 1e-9) {
                        best = y;
                        best_score = score;
                    }
                }
            }
            for (size_t q = 0; q < fresh.size(); ++q) {
                x[at(fresh[q])] = best[q];
                placed[at(fresh[q])] = 1;
            }
        }
        return x;
    }

    // True when two rings of the system share more than two atoms (bridged) or an atom lies in three rings (caged,
    // or peri-fused like pyrene, whose angles are unstrained and so never warned about).
    bool bridged() const {
        std::vector<int> count(atoms_.size(), 0);
        for (const auto& ring : rings_local_)
            for (int a : ring)
                if (++count[at(a)] >= 3) return true;
        for (size_t r = 0; r < rings_local_.size(); ++r)
            for (size_t s = r + 1; s < rings_local_.size(); ++s) {
                int shared = 0;
                for (int a : rings_local_[r])
                    if (std::find(rings_local_[s].begin(), rings_local_[s].end(), a) != rings_local_[s].end()) ++shared;
                if (shared > 2) return true;
            }
        return false;
    }

    double angle_strain(const std::vector<Vector3d>& x) const {
        double worst = 0;
        for (size_t j = 0; j < atoms_.size(); ++j) {
            const auto& nb = nbrs_[j];
            for (size_t p = 0; p < nb.size(); ++p)
                for (size_t q = p + 1; q < nb.size(); ++q) {
                    const Vector3d u = (x[at(nb[p])] - x[j]).normalized(), v = (x[at(nb[q])] - x[j]).normalized();
                    const double got = std::acos(std::clamp(u.dot(v), -1.0, 1.0));
                    worst = std::max(worst, std::abs(got - frame_angle(nb[p], static_cast<int>(j), nb[q])) / kDeg);
                }
        }
        return worst;
    }

    double mean_ring_bond(const std::vector<int>& ring) const {
        double sum = 0;
        for (size_t s = 0; s < ring.size(); ++s) sum += bond_len(ring[s], ring[(s + 1) % ring.size()]);
        return sum / static_cast<double>(ring.size());
    }

    // A regular polygon in the xy plane (pucker > 0: alternate atoms that far above and below it).
    RingSystemEmbedding polygon(const std::vector<int>& ring, double pucker, const char* method) const {
        RingSystemEmbedding out;
        out.coordinates.assign(atoms_.size(), Vector3d::Zero());
        const double n = static_cast<double>(ring.size());
        const double radius = mean_ring_bond(ring) / (2 * std::sin(M_PI / n));
        for (size_t s = 0; s < ring.size(); ++s) {
            const double phi = 2 * M_PI * static_cast<double>(s) / n;
            out.coordinates[at(ring[s])] =
                Vector3d(radius * std::cos(phi), radius * std::sin(phi), (s % 2 ? -pucker : pucker));
        }
        out.method = method;
        return out;
    }

    // Cyclohexane chair: atoms on a circle of radius R, alternately h above and below, so that every bond has the
    // mean length b and every ring angle the mean frame angle theta: 3R^2 = 2b^2(1 - cos theta), R^2 + 4h^2 = b^2.
    RingSystemEmbedding chair(const std::vector<int>& ring) const {
        const double b = mean_ring_bond(ring);
        double theta = 0;
        for (size_t s = 0; s < 6; ++s) theta += frame_angle(ring[(s + 5) % 6], ring[s], ring[(s + 1) % 6]);
        theta = std::min(theta / 6, 118 * kDeg);
        const double r2 = 2 * b * b * (1 - std::cos(theta)) / 3;
        const double h = std::sqrt(std::max(0.0, (b * b - r2) / 4));
        RingSystemEmbedding out;
        out.coordinates.assign(atoms_.size(), Vector3d::Zero());
        for (size_t s = 0; s < 6; ++s) {
            const double phi = M_PI / 3 * static_cast<double>(s);
            out.coordinates[at(ring[s])] = Vector3d(std::sqrt(r2) * std::cos(phi), std::sqrt(r2) * std::sin(phi), s % 2 ? -h : h);
        }
        out.method = "chair";
        return out;
    }

    // The ring's atoms starting at position k (mod its size).
    static std::vector<int> rotated(const std::vector<int>& ring, int k) {
        std::vector<int> out(ring.size());
        for (size_t s = 0; s < ring.size(); ++s) out[s] = ring[(s + static_cast<size_t>(k)) % ring.size()];
        return out;
    }

    // Six-membered twist-boat: the Cremer-Pople puckering with the chair amplitude q3 = 0 and q2 = kTwistBoatPucker at
    // phase 30 + 60 (variant - 1) degrees (Cremer and Pople, J. Am. Chem. Soc. 97 (1975) 1354: z_j = sqrt(1/3) q2
    // cos(phi2 + 2 pi j * 2/6)), atoms on the polygon's circle; the refinement sets the bonds and angles.
    RingSystemEmbedding twist_boat(const std::vector<int>& ring, int variant) const {
        RingSystemEmbedding out = polygon(ring, 0, "twist-boat");
        const double phase = (30.0 + 60.0 * static_cast<double>(variant - 1)) * kDeg;
        for (size_t s = 0; s < 6; ++s)
            out.coordinates[at(ring[s])].z() =
                std::sqrt(1.0 / 3.0) * kTwistBoatPucker * std::cos(phase + 2 * M_PI * 2 * static_cast<double>(s) / 6);
        return out;
    }

    // Envelope: a regular pentagon with its first atom folded out of the plane about the line through its two
    // neighbours, which keeps both of its bond lengths.
    RingSystemEmbedding envelope(const std::vector<int>& ring) const {
        RingSystemEmbedding out = polygon(ring, 0, "envelope");
        const Vector3d a = out.coordinates[at(ring[1])], b = out.coordinates[at(ring[4])];
        const Vector3d axis = (b - a).normalized();
        Vector3d& flap = out.coordinates[at(ring[0])];
        flap = a + Eigen::AngleAxisd(kEnvelopeFlap * kDeg, axis) * (flap - a);
        return out;
    }
};

}  // namespace

RingSystemEmbedding embed_ring_system(const Molecule& molecule, const MoleculeDomains& domains, const RingInfo& rings,
                                      int system, const std::vector<ChiralTarget>& chiral, bool other_mirror,
                                      int variant) {
    return SystemEmbedder(molecule, domains, rings, system, chiral).run(other_mirror, variant);
}

}  // namespace repel
