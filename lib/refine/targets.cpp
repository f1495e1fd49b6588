#include "refine/targets.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>

#include "core/bond_length.hpp"
#include "refine/constants.hpp"
#include "graph/conjugation.hpp"
#include "graph/rings.hpp"

namespace repel::refine {

namespace {

constexpr double kDegree = std::numbers::pi / 180.0;

void require(bool ok, const std::string& message) {
    if (!ok) throw std::invalid_argument("refine_structure: " + message);
}

// The predicted angles of a centre: as analysed, or from the solved directions of its bonded domains when only
// those were kept.
std::vector<PredictedAngle> centre_angles(const CentreDomains& centre) {
    if (!centre.angles.empty() || centre.directions.size() != centre.domains.size()) return centre.angles;
    std::vector<PredictedAngle> angles;
    for (size_t p = 0; p < centre.domains.size(); ++p)
        for (size_t q = p + 1; q < centre.domains.size(); ++q) {
            const Domain& a = centre.domains[p];
            const Domain& b = centre.domains[q];
            // Bonded domains with a neighbour atom (a hapto ligand's domain has none: no angle term of its own).
            if (a.kind != DomainKind::bond || b.kind != DomainKind::bond || a.neighbor < 0 || b.neighbor < 0) continue;
            const double c =
                std::clamp(centre.directions[p].normalized().dot(centre.directions[q].normalized()), -1.0, 1.0);
            angles.push_back({a.neighbor, b.neighbor, std::acos(c) / kDegree});
        }
    return angles;
}

class TermBuilder {
public:
    TermBuilder(const Molecule& molecule, const MoleculeDomains& domains, const Molecule* ring_graph)
        : m_(molecule), d_(domains) {
        const int n = m_.atom_count();
        require(static_cast<int>(d_.atoms.size()) == n, "the domain analysis has " + std::to_string(d_.atoms.size()) +
                                                            " atoms, the molecule " + std::to_string(n));
        length_.reserve(m_.bonds.size());
        // The domain analysis' lengths (resonance and the Lewis structure at each end, domains.hpp); the plain
        // radii by order when it has none (a hand-made analysis).
        const bool analysed = d_.bond_lengths.size() == m_.bonds.size();
        for (size_t e = 0; e < m_.bonds.size(); ++e) {
            const Bond& b = m_.bonds[e];
            length_.push_back(analysed ? d_.bond_lengths[e] : bond_length(atom_z(b.a), atom_z(b.b), b.order, b.aromatic));
        }
        angles_.reserve(static_cast<size_t>(n));
        for (int i = 0; i < n; ++i) {
            angles_.push_back(centre_angles(d_.atoms[static_cast<size_t>(i)]));
            for (const PredictedAngle& a : angles_.back())
                if (!(m_.bond_between(i, a.a) >= 0 && m_.bond_between(i, a.b) >= 0 && a.a != a.b))  // message only then
                    require(false,
                        "the predicted angle " + std::to_string(a.a + 1) + "-" + std::to_string(i + 1) + "-" +
                            std::to_string(a.b + 1) + " is not between two neighbours of atom " +
                            std::to_string(i + 1));
        }
        pi_.resize(static_cast<size_t>(n));
        donor_.resize(static_cast<size_t>(n));
        planar_nitrogen_.resize(static_cast<size_t>(n));
        for (int i = 0; i < n; ++i) pi_[static_cast<size_t>(i)] = pi_centre(i);
        for (int i = 0; i < n; ++i) {
            donor_[static_cast<size_t>(i)] = conjugated_donor(i);
            const CentreDomains& c = centre(i);
            planar_nitrogen_[static_cast<size_t>(i)] = donor_[static_cast<size_t>(i)] && atom_z(i) == 7 &&
                                                       c.bonded == 3 && c.lone_pairs == 1 && m_.degree(i) == 3 &&
                                                       angles_[static_cast<size_t>(i)].size() == 3;
        }
        curved_.resize(static_cast<size_t>(n));
        SmallRingSearch rings(ring_graph != nullptr ? *ring_graph : m_);
        for (int i = 0; i < n; ++i) fit_angles_to_rings(i, rings);
    }

    // The angle targets of the held centres become their angles in `pos` (RefineOptions::held_centres).
    void hold_angles(const std::vector<char>& held, const std::vector<Eigen::Vector3d>& pos) {
        for (size_t i = 0; i < held.size(); ++i) {
            if (held[i] == 0) continue;
            for (PredictedAngle& p : angles_[i]) {
                const Eigen::Vector3d u = pos[static_cast<size_t>(p.a)] - pos[i], v = pos[static_cast<size_t>(p.b)] - pos[i];
                if (u.norm() < 1e-6 || v.norm() < 1e-6) continue;
                p.degrees = std::acos(std::clamp(u.normalized().dot(v.normalized()), -1.0, 1.0)) / kDegree;
            }
        }
    }

    EnergyTerms build(const std::vector<ChiralTarget>& chiral, const std::vector<DoubleBondTarget>& double_bonds) {
        EnergyTerms t;
        for (size_t b = 0; b < m_.bonds.size(); ++b)
            t.bonds.push_back({m_.bonds[b].a, m_.bonds[b].b, length_[b], kBond});
        for (int i = 0; i < m_.atom_count(); ++i) add_angles(i, t);
        for (int i = 0; i < m_.atom_count(); ++i) add_plane(i, t);
        for (size_t b = 0; b < m_.bonds.size(); ++b) add_torsions(m_.bonds[b], t);
        for (const ChiralTarget& c : chiral) add_chiral(c, t);
        for (const DoubleBondTarget& db : double_bonds) add_double_bond(db, t);
        return t;
    }

private:
    int atom_z(int i) const { return m_.atoms[static_cast<size_t>(i)].z; }
    const CentreDomains& centre(int i) const { return d_.atoms[static_cast<size_t>(i)]; }

    // Target length of the bond between i and j, or the single-bond length when they are not bonded.
    double length(int i, int j) const {
        const int b = m_.bond_between(i, j);
        return b >= 0 ? length_[static_cast<size_t>(b)] : bond_length(atom_z(i), atom_z(j), 1);
    }

    // The predicted angle a-centre-b in degrees, or -1 when the analysis gives none.
    double angle(int centre_atom, int a, int b) const {
        for (const PredictedAngle& p : angles_[static_cast<size_t>(centre_atom)])
            if ((p.a == a && p.b == b) || (p.a == b && p.b == a)) return p.degrees;
        return -1;
    }

    void add_angles(int i, EnergyTerms& t) const {
        for (const PredictedAngle& p : angles_[static_cast<size_t>(i)]) {
            const double theta = p.degrees * kDegree;
            t.angles.push_back({i, p.a, p.b, std::cos(theta), std::sin(theta), kAngle});
        }
    }

    // Per atom: pi_centre_for_planarity and conjugated_donor (graph/conjugation.hpp) on the analysis' counts.
    bool pi_centre(int i) const {
        return pi_centre_for_planarity(m_, i, centre(i).steric_number, centre(i).bonded);
    }
    bool conjugated_donor(int i) const {
        const CentreDomains& c = centre(i);
        return repel::conjugated_donor(m_, i, {c.lone_pairs, c.delocalised_lone_pairs, c.single_electrons, c.steric_number},
                                       pi_);
    }

    // Three domains for the torsion rules, counting a conjugated three-coordinate nitrogen as trigonal.
    int steric(int i) const { return planar_nitrogen_[static_cast<size_t>(i)] ? 3 : centre(i).steric_number; }

    // An atom that keeps its ring flat: trigonal, or on an aromatic bond (the oxygen of furan).
    bool flat_atom(int i) const {
        if (steric(i) == 3) return true;
        for (const Neighbor& nb : m_.neighbors(i))
            if (m_.bonds[static_cast<size_t>(nb.bond)].aromatic) return true;
        return false;
    }

    // The angle a ring forces at a consecutive triple a-centre-b (degrees), or 0 when it forces none: three- and
    // four-membered rings always, flat rings up to kLargestPolygonRing atoms as the regular polygon. A three-membered
    // ring's angles follow from its three target lengths (the law of cosines: cyclopropene's C=C 1.30 A against
    // C-C 1.51 A gives 51 degrees at the CH2, not 60), so that the angle terms do not pull its bonds off their lengths.
    double polygon_angle(const std::vector<int>& ring, int a, int centre, int b) const {
        const int size = static_cast<int>(ring.size());
        if (size == 3) {
            const double x = length(centre, a), y = length(centre, b), z = length(a, b);
            if (std::fabs(x - y) < 1e-9 && std::fabs(x - z) < 1e-9) return 60;
            return std::acos(std::clamp((x * x + y * y - z * z) / (2 * x * y), -1.0, 1.0)) / kDegree;
        }
        if (size == 4) return 90;
        if (size == 0 || size > kLargestPolygonRing) return 0;
        for (int atom : ring)
            if (!flat_atom(atom)) return 0;
        return 180.0 * (size - 2) / size;
    }

    // The domain analysis knows no rings: its angles (120-125 degrees at an aromatic carbon, 109.5 in cyclopropane)
    // cannot all be met in a small or flat ring, and the strain would go into the bonds. Ring angles get what the
    // ring forces (as in the ring embedding, assemble/ring_embed.cpp); a planar centre shares what its ring angles
    // leave of 360 degrees among its other angles; a conjugated nitrogen outside small rings keeps the analysis'
    // proportions scaled to 360.
    void fit_angles_to_rings(int i, SmallRingSearch& rings) {
        auto& angles = angles_[static_cast<size_t>(i)];
        if (angles.empty()) return;
        const bool planar = steric(i) == 3 && m_.degree(i) == 3 && angles.size() == 3;
        double fixed_sum = 0;
        int fixed = 0;
        bool is_fixed[3] = {false, false, false};
        std::vector<char> forced(angles.size(), 0);
        for (size_t q = 0; q < angles.size(); ++q) {
            PredictedAngle& p = angles[q];
            const std::vector<int> ring = rings.ring_through(p.a, i, p.b, kLargestPolygonRing);
            const double polygon = polygon_angle(ring, p.a, i, p.b);
            if (polygon > 0) {
                p.degrees = polygon;
                fixed_sum += polygon;
                ++fixed;
                forced[q] = 1;
                if (q < 3) is_fixed[q] = true;
            } else if (ring.size() == 5) {
                p.degrees = std::min(p.degrees, kPuckeredFiveRingAngle);
            }
        }
        if (!planar) {
            if (fixed == 3 && angles.size() == 6) point_away_from_ring_bonds(angles, forced);
            // Tetrahedral centres only: a square-planar metal with two four-membered chelate rings is no spiro centre.
            if (fixed == 2 && angles.size() == 6 && steric(i) == 4 && !is_transition_metal(atom_z(i)))
                open_spiro_centre(angles, forced);
            return;
        }
        if (fixed == 3) {
            curved_[static_cast<size_t>(i)] = fixed_sum < kCurvedAngleSum;
        } else if (fixed > 0) {
            // What the ring angles leave of 360 degrees. With one forced angle whose two ring bonds are aromatic,
            // the analysis' difference between the two other angles comes from the ligands' electronegativity
            // (Bent's rule: furan's C-H leans towards the O, H-C-O 115.5 and H-C-C 134.0 in G2) and is kept; where
            // the ring bonds differ in order (cyclobutene's C=C and C-C) the fitted double-bond weight overstates
            // the difference (G2 cyclobutene: 133.6 and 132.2, nearly equal), so the two share equally. Within
            // 90..160 degrees.
            bool keep_difference = false;
            if (fixed == 1)
                for (size_t q = 0; q < 3; ++q)
                    if (is_fixed[q]) {
                        const int ba = m_.bond_between(i, angles[q].a), bb = m_.bond_between(i, angles[q].b);
                        keep_difference = ba >= 0 && bb >= 0 && m_.bonds[static_cast<size_t>(ba)].aromatic &&
                                          m_.bonds[static_cast<size_t>(bb)].aromatic;
                    }
            double free_sum = 0;
            for (size_t q = 0; q < 3; ++q)
                if (!is_fixed[q]) free_sum += angles[q].degrees;
            const double share = (360.0 - fixed_sum) / (3 - fixed);
            const double shift = (360.0 - fixed_sum - free_sum) / (3 - fixed);
            for (size_t q = 0; q < 3; ++q)
                if (!is_fixed[q])
                    angles[q].degrees = std::clamp(keep_difference ? angles[q].degrees + shift : share, 90.0, 160.0);
        } else if (planar_nitrogen_[static_cast<size_t>(i)]) {
            double sum = 0;
            for (const PredictedAngle& a : angles) sum += a.degrees;
            for (PredictedAngle& a : angles) a.degrees *= 360.0 / sum;
        }
    }

    // A spiro centre of two small rings (two forced angles with no neighbour in common): the analysis' angles between
    // the rings (about 109.5 degrees) cannot be met beside 60- or 90-degree ring angles, and the strain would go into
    // the ring bonds. With the two rings in perpendicular planes and their bisectors opposite, a bond of one ring
    // makes acos(-cos(a/2) cos(b/2)) with a bond of the other (a, b the two ring angles): 137 degrees in
    // spiropentane (G2's MP2 geometry, Debian's python3-ase: 137.2), 120 in spiro[3.3]heptane.
    static void open_spiro_centre(std::vector<PredictedAngle>& angles, const std::vector<char>& forced) {
        std::vector<size_t> ring;
        for (size_t q = 0; q < angles.size(); ++q)
            if (forced[q]) ring.push_back(q);
        if (ring.size() != 2) return;
        const PredictedAngle &x = angles[ring[0]], &y = angles[ring[1]];
        if (x.a == y.a || x.a == y.b || x.b == y.a || x.b == y.b) return;
        const double cross =
            std::acos(-std::cos(x.degrees * kDegree / 2) * std::cos(y.degrees * kDegree / 2)) / kDegree;
        for (size_t q = 0; q < angles.size(); ++q)
            if (!forced[q]) angles[q].degrees = cross;
    }

    // A centre with four neighbours whose three ring angles are all forced (the bridgeheads of bicyclobutane, the
    // corners of cubane or prismane): the analysis' angles to the fourth neighbour (about 109.5 degrees) cannot be
    // met beside 60- and 90-degree ring angles. The fourth bond takes the direction at equal angles to the three ring
    // bonds (the axis of the cone they span; 125.3 degrees in cubane by symmetry, 135 at the bridgehead of
    // bicyclobutane's ideal 60/60/90 frame against 128-130 in G2).
    static void point_away_from_ring_bonds(std::vector<PredictedAngle>& angles, const std::vector<char>& forced) {
        std::vector<int> ring_atoms, all;
        for (const PredictedAngle& p : angles)
            for (int x : {p.a, p.b})
                if (std::find(all.begin(), all.end(), x) == all.end()) all.push_back(x);
        if (all.size() != 4) return;
        // The exo neighbour is the one in no forced angle: the three forced angles are those among the other three.
        int exo = -1;
        for (int x : all) {
            int in_forced = 0;
            for (size_t q = 0; q < angles.size(); ++q)
                if ((angles[q].a == x || angles[q].b == x) && forced[q]) ++in_forced;
            if (in_forced == 0) exo = x;
        }
        if (exo < 0) return;
        for (int x : all)
            if (x != exo) ring_atoms.push_back(x);
        auto ring_angle = [&](int x, int y) {
            for (const PredictedAngle& p : angles)
                if ((p.a == x && p.b == y) || (p.a == y && p.b == x)) return p.degrees * kDegree;
            return 0.0;
        };
        const double a01 = ring_angle(ring_atoms[0], ring_atoms[1]), a02 = ring_angle(ring_atoms[0], ring_atoms[2]),
                     a12 = ring_angle(ring_atoms[1], ring_atoms[2]);
        // Three unit vectors with these mutual angles: u0 along z, u1 in the xz plane, u2 from the two others.
        const Eigen::Vector3d u0(0, 0, 1), u1(std::sin(a01), 0, std::cos(a01));
        const double x2 = (std::cos(a12) - std::cos(a01) * std::cos(a02)) / std::sin(a01);
        const double y2sq = 1 - x2 * x2 - std::cos(a02) * std::cos(a02);
        if (!(y2sq > 1e-6) || !(std::sin(a01) > 1e-6)) return;  // the forced angles admit no such frame
        const Eigen::Vector3d u2(x2, std::sqrt(y2sq), std::cos(a02));
        Eigen::Matrix3d rows;
        rows.row(0) = u0;
        rows.row(1) = u1;
        rows.row(2) = u2;
        Eigen::Vector3d w = -rows.fullPivLu().solve(Eigen::Vector3d::Ones());
        if (!(w.norm() > 1e-9)) return;
        w.normalize();
        const Eigen::Vector3d u[3] = {u0, u1, u2};
        for (PredictedAngle& p : angles)
            for (int k = 0; k < 3; ++k)
                if ((p.a == exo && p.b == ring_atoms[static_cast<size_t>(k)]) ||
                    (p.b == exo && p.a == ring_atoms[static_cast<size_t>(k)]))
                    p.degrees = std::acos(std::clamp(w.dot(u[k]), -1.0, 1.0)) / kDegree;
    }

    // Trigonal planar: three bonded domains and nothing else, or a conjugated nitrogen with three neighbours (amide,
    // pyrrole, aniline: planar or nearly so in gas-phase and crystal structures, common practice), whose angles were
    // scaled to a plane above.
    void add_plane(int i, EnergyTerms& t) const {
        const CentreDomains& c = centre(i);
        const bool trigonal = c.bonded == 3 && c.lone_pairs == 0 && c.single_electrons == 0;
        if (!(trigonal || planar_nitrogen_[static_cast<size_t>(i)]) || m_.degree(i) != 3) return;
        if (curved_[static_cast<size_t>(i)]) return;  // three ring angles short of 360: a bowl or cage (fullerenes)
        const auto& nb = m_.neighbors(i);
        const double scale = 1.0 / (length(i, nb[0].atom) * length(i, nb[1].atom) * length(i, nb[2].atom));
        t.planes.push_back({i, nb[0].atom, nb[1].atom, nb[2].atom, scale, kPlanarity});
    }

    // One torsion a-b-c-d about the bond b-c, by the kind of bond: pi bonds flat, single bonds between two trigonal
    // centres or between a pi centre and a conjugated donor flat (conjugation), single bonds between two centres with
    // four domains staggered. One
    // representative quadruple per bond (the heaviest neighbour at each end, then the lowest index) gives the same
    // minima as all of them, since the angle terms hold the other substituents in place, at a fraction of the cost.
    // Torsions through a linear angle are undefined and left out.
    void add_torsions(const Bond& bond, EnergyTerms& t) const {
        const int b = bond.a, c = bond.b;
        const int sb = steric(b), sc = steric(c);
        const bool conjugated = (sb == 3 && sc == 3) ||
                                (pi_[static_cast<size_t>(b)] && donor_[static_cast<size_t>(c)]) ||
                                (pi_[static_cast<size_t>(c)] && donor_[static_cast<size_t>(b)]);
        std::array<double, 4> coefficients;
        if (bond.aromatic || bond.order == 2) {
            coefficients = planar_torsion(kPiBond);
        } else if (bond.order == 1 && conjugated) {
            // A crowded biaryl axis or a propeller's blade: no planar torsion (graph/conjugation.hpp).
            const int e = m_.bond_between(b, c);
            if (crowded_biaryl_bond(m_, e) || propeller_blade_bond(m_, e)) return;
            coefficients = planar_torsion(kConjugation);
        } else if (bond.order == 1 && sb == 4 && sc == 4) {
            coefficients = staggered_torsion(kStaggered);
        } else {
            return;
        }
        int best_a = -1, best_d = -1;
        for (const Neighbor& na : m_.neighbors(b)) {
            // The metal of a hapto ligand's atom is not one of its domains: no torsion through it.
            if (na.atom == c || angle(b, na.atom, c) >= kLinearAngleDegrees || hapto_metal(b, na.atom)) continue;
            for (const Neighbor& nd : m_.neighbors(c)) {
                if (nd.atom == b || nd.atom == na.atom || angle(c, b, nd.atom) >= kLinearAngleDegrees ||
                    hapto_metal(c, nd.atom))
                    continue;
                if (best_a < 0 || heavier(na.atom, best_a) || (na.atom == best_a && heavier(nd.atom, best_d))) {
                    best_a = na.atom;
                    best_d = nd.atom;
                }
            }
        }
        if (best_a >= 0) t.torsions.push_back({best_a, b, c, best_d, coefficients});
    }

    bool hapto_metal(int atom, int neighbor) const {
        const auto& hapto = d_.metals.hapto_atom;
        return !hapto.empty() && hapto[static_cast<size_t>(atom)] && is_d_block_metal(atom_z(neighbor));
    }

    // Order for choosing representatives: higher atomic number first, then lower index.
    bool heavier(int i, int j) const { return atom_z(i) != atom_z(j) ? atom_z(i) > atom_z(j) : i < j; }

    void check_atom(int i, const char* what) const {
        require(i >= 0 && i < m_.atom_count(), std::string(what) + " names atom " + std::to_string(i + 1) +
                                                   ", outside 1.." + std::to_string(m_.atom_count()));
    }

    void add_chiral(const ChiralTarget& c, EnergyTerms& t) const {
        for (int i : {c.centre, c.n1, c.n2, c.n3}) check_atom(i, "a chiral target");
        require(c.sign == 1 || c.sign == -1, "a chiral target's sign must be +1 or -1");
        require(
            c.n1 != c.n2 && c.n1 != c.n3 && c.n2 != c.n3 && c.centre != c.n1 && c.centre != c.n2 && c.centre != c.n3,
            "a chiral target names the same atom twice");
        const double scale = 1.0 / (length(c.centre, c.n1) * length(c.centre, c.n2) * length(c.centre, c.n3));
        t.chiral.push_back({c.centre, c.n1, c.n2, c.n3, scale, c.sign, kChiralMargin, kChiral});
    }

    void add_double_bond(const DoubleBondTarget& db, EnergyTerms& t) const {
        for (int i : {db.a, db.b, db.c, db.d}) check_atom(i, "a double-bond target");
        require(db.a != db.b && db.b != db.c && db.c != db.d && db.a != db.d,
                "a double-bond target names the same atom twice");
        t.double_bonds.push_back(
            {db.a, db.b, db.c, db.d, db.cis ? cis_torsion(kDoubleBondTarget) : trans_torsion(kDoubleBondTarget)});
    }

    const Molecule& m_;
    const MoleculeDomains& d_;
    std::vector<double> length_;                       // target length per bond
    std::vector<std::vector<PredictedAngle>> angles_;  // per centre
    std::vector<bool> pi_;                             // per atom: pi_centre()
    std::vector<bool> donor_;                          // per atom: conjugated_donor()
    std::vector<bool> planar_nitrogen_;                // per atom: a conjugated nitrogen held planar
    std::vector<bool> curved_;                         // per atom: planar centre whose ring angles are short of 360
};

}  // namespace

EnergyTerms build_terms(const Molecule& molecule, const MoleculeDomains& domains,
                        const std::vector<ChiralTarget>& chiral, const std::vector<DoubleBondTarget>& double_bonds,
                        const Molecule* ring_graph, const std::vector<DistanceRestraint>* restraints,
                        const RefineOptions* held) {
    TermBuilder builder(molecule, domains, ring_graph);
    if (held != nullptr && !held->held_centres.empty()) {
        require(held->held_centres.size() == static_cast<size_t>(molecule.atom_count()) &&
                    held->held_positions.size() == held->held_centres.size(),
                "held centres and their positions do not match the molecule");
        builder.hold_angles(held->held_centres, held->held_positions);
    }
    EnergyTerms terms = builder.build(chiral, double_bonds);
    if (restraints != nullptr)
        for (const DistanceRestraint& r : *restraints) {
            require(r.a >= 0 && r.b >= 0 && r.a < molecule.atom_count() && r.b < molecule.atom_count() && r.a != r.b,
                    "a distance restraint names atoms outside the molecule");
            terms.bonds.push_back({r.a, r.b, r.length, kBond * r.weight});
        }
    return terms;
}

}  // namespace repel::refine
