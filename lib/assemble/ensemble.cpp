#include "assemble/ensemble.hpp"

#include <Eigen/Geometry>

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>
#include <numeric>
#include <set>

#include "core/element.hpp"
#include "core/error.hpp"
#include "core/geometry.hpp"
#include "core/limits.hpp"
#include "graph/conjugation.hpp"
#include "graph/symmetry.hpp"
#include "refine/conformer_energy.hpp"

namespace repel {

using Eigen::Vector3d;

namespace {

size_t at(int i) { return static_cast<size_t>(i); }

// splitmix64 (Steele, Lea, Flood, OOPSLA 2014): a fixed, portable stream, so that an ensemble is the same on every
// machine and library (the standard distributions are not).
class Stream {
public:
    explicit Stream(std::uint64_t seed) : state_(seed) {}
    std::uint64_t next() {
        std::uint64_t z = (state_ += 0x9e3779b97f4a7c15ULL);
        z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
        z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
        return z ^ (z >> 31);
    }
    size_t below(size_t n) { return n ? static_cast<size_t>(next() % n) : 0; }

private:
    std::uint64_t state_;
};

bool is_metal_atom(int z) { return is_transition_metal(z); }

// An end of a bond whose other neighbours are all terminal atoms of one element (CH3, CF3, OH, a carboxylate's
// oxygens), or none: turning it gives the same shape.
bool symmetric_rotor(const Molecule& m, int end, int other) {
    int z = -1;
    for (const Neighbor& nb : m.neighbors(end)) {
        if (nb.atom == other) continue;
        const int nz = m.atoms[at(nb.atom)].z;
        if (m.neighbors(nb.atom).size() != 1 || (z >= 0 && nz != z)) return false;
        z = nz;
    }
    return true;
}

bool linear_centre(const CentreDomains& c) { return c.bonded == 2 && c.lone_pairs + c.single_electrons == 0 && c.steric_number == 2; }

// The atoms on b's side of the bond a-b (a not crossed).
std::vector<int> side_of(const Molecule& m, int a, int b) {
    std::vector<char> seen(at(m.atom_count()), 0);
    seen[at(a)] = seen[at(b)] = 1;
    std::vector<int> out{b};
    for (size_t k = 0; k < out.size(); ++k)
        for (const Neighbor& nb : m.neighbors(out[k]))
            if (!seen[at(nb.atom)]) {
                seen[at(nb.atom)] = 1;
                out.push_back(nb.atom);
            }
    return out;
}

// Turns b's side of a-b about the bond by `degrees`.
void turn(std::vector<Vector3d>& x, const std::vector<int>& side, int a, int b, double degrees) {
    const Vector3d axis = (x[at(b)] - x[at(a)]).normalized();
    const Eigen::AngleAxisd r(degrees * std::numbers::pi / 180, axis);
    const Vector3d origin = x[at(b)];
    for (int i : side)
        if (i != b) x[at(i)] = origin + r * (x[at(i)] - origin);
}

// Heavy atoms, or every atom for molecules with fewer than three heavy atoms.
std::vector<int> compared_atoms(const Molecule& m) {
    std::vector<int> heavy;
    for (int i = 0; i < m.atom_count(); ++i)
        if (m.atoms[at(i)].z != 1) heavy.push_back(i);
    if (heavy.size() >= 3) return heavy;
    std::vector<int> all(at(m.atom_count()));
    std::iota(all.begin(), all.end(), 0);
    return all;
}

double rmsd_of(const std::vector<Vector3d>& a, const std::vector<Vector3d>& b, const std::vector<int>& atoms,
               const std::vector<int>& match, Eigen::Matrix3d* rotation, Vector3d* ca, Vector3d* cb) {
    Vector3d ma = Vector3d::Zero(), mb = Vector3d::Zero();
    for (size_t k = 0; k < atoms.size(); ++k) {
        ma += a[at(atoms[k])];
        mb += b[at(match[k])];
    }
    ma /= static_cast<double>(atoms.size());
    mb /= static_cast<double>(atoms.size());
    std::vector<Vector3d> pa, pb;
    pa.reserve(atoms.size());
    pb.reserve(atoms.size());
    for (size_t k = 0; k < atoms.size(); ++k) {
        pa.push_back(a[at(atoms[k])] - ma);
        pb.push_back(b[at(match[k])] - mb);
    }
    const Eigen::Matrix3d r = kabsch_rotation(pb, pa);  // b onto a
    double sum = 0;
    for (size_t k = 0; k < atoms.size(); ++k) sum += (r * pb[k] - pa[k]).squaredNorm();
    *rotation = r;
    *ca = ma;
    *cb = mb;
    return std::sqrt(sum / static_cast<double>(atoms.size()));
}

}  // namespace


namespace {

// Every automorphism of the compared atoms (classes kept, bonds kept both ways), up to `cap`, found depth first on an
// explicit stack in breadth-first order of the atoms so that each atom after the first of a piece has a mapped
// neighbour. Returns false when the cap was reached.
bool automorphisms(const Molecule& m, const std::vector<int>& atoms, const std::vector<int>& classes, size_t cap,
                   std::vector<std::vector<int>>& out) {
    const size_t n = atoms.size();
    std::vector<int> local(at(m.atom_count()), -1);
    for (size_t k = 0; k < n; ++k) local[at(atoms[k])] = static_cast<int>(k);
    std::vector<std::vector<int>> adj(n);
    for (size_t k = 0; k < n; ++k)
        for (const Neighbor& nb : m.neighbors(atoms[k]))
            if (local[at(nb.atom)] >= 0) adj[k].push_back(local[at(nb.atom)]);
    // Breadth-first order.
    std::vector<int> order;
    std::vector<char> seen(n, 0);
    for (size_t s = 0; s < n; ++s) {
        if (seen[s]) continue;
        seen[s] = 1;
        order.push_back(static_cast<int>(s));
        for (size_t q = order.size() - 1; q < order.size(); ++q)
            for (int j : adj[at(order[q])])
                if (!seen[at(j)]) {
                    seen[at(j)] = 1;
                    order.push_back(j);
                }
    }
    std::vector<std::vector<char>> bonded(n, std::vector<char>(n, 0));
    if (n <= 2000)
        for (size_t k = 0; k < n; ++k)
            for (int j : adj[k]) bonded[k][at(j)] = 1;
    else
        return false;  // too large to enumerate: the class matching alone
    std::vector<int> image(n, -1);
    std::vector<char> used(n, 0);
    // A bound on the search, so that no graph makes it slow (a regular lattice-like graph can need many tries).
    constexpr long kStepBudget = 200000;
    long steps = 0;
    std::vector<int> next(n + 1, 0);  // per depth: the next candidate image to try
    size_t depth = 0;
    while (true) {
        if (depth == n) {
            std::vector<int> mapping(n);
            for (size_t k = 0; k < n; ++k) mapping[k] = atoms[at(image[k])];
            out.push_back(std::move(mapping));
            if (out.size() >= cap) return false;
            if (depth == 0) return true;
            --depth;
            const int i = order[depth];
            used[at(image[at(i)])] = 0;
            image[at(i)] = -1;
            continue;
        }
        if (++steps > kStepBudget) return false;
        const int i = order[depth];
        bool placed = false;
        for (int c = next[depth]; c < static_cast<int>(n); ++c) {
            if (used[at(c)] || classes[at(atoms[at(c)])] != classes[at(atoms[at(i)])]) continue;
            bool fits = true;
            for (size_t d = 0; d < depth && fits; ++d) {
                const int j = order[d];
                fits = bonded[at(i)][at(j)] == bonded[at(c)][at(image[at(j)])];
            }
            if (!fits) continue;
            image[at(i)] = c;
            used[at(c)] = 1;
            next[depth] = c + 1;
            next[depth + 1] = 0;
            ++depth;
            placed = true;
            break;
        }
        if (placed) continue;
        if (depth == 0) return true;
        --depth;
        const int j = order[depth];
        used[at(image[at(j)])] = 0;
        image[at(j)] = -1;
    }
}

// Each compared atom's distance from the centroid of the compared atoms, in a and in b (indexed by atom). They give a
// lower bound of any matching's RMSD which no rotation can beat (matching_bound): the centroid is the same for every
// matching, which only permutes the atoms.
struct CentroidDistances {
    std::vector<double> a, b;
};

CentroidDistances centroid_distances(const std::vector<Vector3d>& a, const std::vector<Vector3d>& b,
                                     const std::vector<int>& atoms) {
    Vector3d ma = Vector3d::Zero(), mb = Vector3d::Zero();
    for (int k : atoms) {
        ma += a[at(k)];
        mb += b[at(k)];
    }
    ma /= static_cast<double>(atoms.size());
    mb /= static_cast<double>(atoms.size());
    CentroidDistances d{std::vector<double>(b.size(), 0.0), std::vector<double>(b.size(), 0.0)};
    for (int k : atoms) {
        d.a[at(k)] = (a[at(k)] - ma).norm();
        d.b[at(k)] = (b[at(k)] - mb).norm();
    }
    return d;
}

double matching_bound(const CentroidDistances& d, const std::vector<int>& atoms, const std::vector<int>& match) {
    double bound = 0;
    for (size_t k = 0; k < atoms.size(); ++k) {
        const double x = d.a[at(atoms[k])] - d.b[at(match[k])];
        bound += x * x;
    }
    return std::sqrt(bound / static_cast<double>(atoms.size()));
}

}  // namespace

ConformerComparer::ConformerComparer(const Molecule& m, bool mirror_images_equal)
    : ConformerComparer(m, mirror_images_equal, symmetry_classes(m)) {}

ConformerComparer::ConformerComparer(const Molecule& m, bool mirror_images_equal, const std::vector<int>& classes)
    : atoms_(compared_atoms(m)), classes_(classes), mirror_(mirror_images_equal) {
    capped_ = !automorphisms(m, atoms_, classes_, kMaxSymmetries, mappings_);
    if (mappings_.empty()) mappings_.push_back(atoms_);
}

double ConformerComparer::rmsd_one(const std::vector<Vector3d>& a, const std::vector<Vector3d>& b) const {
    if (atoms_.empty()) return 0;
    Eigen::Matrix3d r;
    Vector3d ca, cb;
    double best = 1e300;
    std::vector<int> best_match;
    // A matching whose lower bound is no better than the best so far is not superposed (most of the symmetric
    // matchings of a molecule with a few methyl-like groups).
    const CentroidDistances distances = centroid_distances(a, b, atoms_);
    for (const std::vector<int>& match : mappings_) {
        if (!best_match.empty() && matching_bound(distances, atoms_, match) >= best) continue;
        const double d = rmsd_of(a, b, atoms_, match, &r, &ca, &cb);
        if (d < best) {
            best = d;
            best_match = match;
        }
    }
    if (!capped_) return best;
    // Too many symmetries to list: from the best one listed, each atom of a takes the nearest unmatched atom of its
    // class in b as superposed; twice (the superposition moves with the matching).
    std::vector<int> match = best_match;
    rmsd_of(a, b, atoms_, match, &r, &ca, &cb);
    for (int round = 0; round < 2; ++round) {
        std::vector<char> used(b.size(), 0);
        std::vector<int> next(atoms_.size(), -1);
        for (size_t k = 0; k < atoms_.size(); ++k) {
            double nearest = 1e300;
            for (int j : atoms_) {
                if (used[at(j)] || classes_[at(j)] != classes_[at(atoms_[k])]) continue;
                const double d = (r * (b[at(j)] - cb) - (a[at(atoms_[k])] - ca)).squaredNorm();
                if (d < nearest) {
                    nearest = d;
                    next[k] = j;
                }
            }
            used[at(next[k])] = 1;  // every class has as many atoms in b as in a, so one is found
        }
        if (next == match) break;
        match = std::move(next);
        best = std::min(best, rmsd_of(a, b, atoms_, match, &r, &ca, &cb));
    }
    return best;
}

bool ConformerComparer::any_closer(const std::vector<Vector3d>& a, const std::vector<Vector3d>& b,
                                   double threshold) const {
    if (atoms_.empty()) return 0 < threshold;
    // A margin keeps the answer rmsd's where the bound and the superposed RMSD would differ only by rounding.
    constexpr double kBoundMargin = 1e-9;
    const CentroidDistances distances = centroid_distances(a, b, atoms_);
    Eigen::Matrix3d r;
    Vector3d ca, cb;
    for (const std::vector<int>& match : mappings_) {
        if (matching_bound(distances, atoms_, match) >= threshold + kBoundMargin) continue;
        if (rmsd_of(a, b, atoms_, match, &r, &ca, &cb) < threshold) return true;
    }
    return false;
}

bool ConformerComparer::closer_than(const std::vector<Vector3d>& a, const std::vector<Vector3d>& b,
                                    double threshold) const {
    if (capped_) return rmsd(a, b) < threshold;  // the matchings listed are not all: rmsd_one's nearest-atom step
    if (any_closer(a, b, threshold)) return true;
    if (!mirror_) return false;
    std::vector<Vector3d> mirrored = b;
    for (Vector3d& p : mirrored) p.x() = -p.x();
    return any_closer(a, mirrored, threshold);
}

double ConformerComparer::rmsd(const std::vector<Vector3d>& a, const std::vector<Vector3d>& b) const {
    double d = rmsd_one(a, b);
    if (mirror_) {
        std::vector<Vector3d> mirrored = b;
        for (Vector3d& p : mirrored) p.x() = -p.x();
        d = std::min(d, rmsd_one(a, mirrored));
    }
    return d;
}

bool may_be_chiral(const Molecule& m, const MoleculeDomains& d, const std::vector<int>& classes) {
    for (const Atom& a : m.atoms)
        if (a.chiral_class != ChiralClass::none) return true;
    for (const Bond& b : m.bonds)
        if (b.stereo != BondStereo::none) return true;
    for (int i = 0; i < m.atom_count(); ++i) {
        const CentreDomains& c = d.atoms[at(i)];
        if (c.steric_number != 4 || c.bonded < 3) continue;
        std::vector<int> seen;
        for (const Neighbor& nb : m.neighbors(i)) seen.push_back(classes[at(nb.atom)]);
        std::sort(seen.begin(), seen.end());
        if (std::adjacent_find(seen.begin(), seen.end()) == seen.end()) return true;
    }
    return false;
}

std::vector<RotatableBond> rotatable_bonds(const Molecule& m, const MoleculeDomains& d, const RingInfo& rings) {
    std::vector<RotatableBond> out;
    for (int e = 0; e < static_cast<int>(m.bonds.size()); ++e) {
        const Bond& bond = m.bonds[at(e)];
        if (bond.order != 1 || bond.aromatic || (at(e) < rings.ring_bond.size() && rings.ring_bond[at(e)])) continue;
        const int a = bond.a, b = bond.b;
        if (is_metal_atom(m.atoms[at(a)].z) || is_metal_atom(m.atoms[at(b)].z)) continue;
        if (symmetric_rotor(m, a, b) || symmetric_rotor(m, b, a)) continue;
        const CentreDomains& ca = d.atoms[at(a)];
        const CentreDomains& cb = d.atoms[at(b)];
        if (linear_centre(ca) || linear_centre(cb) || amide_like_link(m, a, b)) continue;
        // The smaller side turns (fewer atoms to move; the same shapes either way).
        const std::vector<int> sb = side_of(m, a, b), sa = side_of(m, b, a);
        if (sb.size() + sa.size() != at(m.atom_count())) continue;  // a ring the perception did not list: leave it
        RotatableBond r;
        r.a = sb.size() <= sa.size() ? a : b;
        r.b = r.a == a ? b : a;
        const bool tetra_a = ca.steric_number == 4, tetra_b = cb.steric_number == 4;
        const bool planar_a = ca.steric_number == 3, planar_b = cb.steric_number == 3;
        if (tetra_a && tetra_b) r.turns = {120, 240};
        else if (planar_a && planar_b) r.turns = {180};
        else r.turns = {60, 120, 180, 240, 300};
        out.push_back(std::move(r));
    }
    return out;
}

namespace {

struct Candidate {
    StructureBuilder::Built built;
    double energy = 0;
    int index = 0;          // order of making: ties in energy go to the earlier
    bool polished = false;  // refined to the build's own tolerance and checked (finish)
};

// Candidates are refined to this RMS gradient first (the build's is 3e-3): enough to rank them and to find the
// duplicates; only those considered for the ensemble are refined further (measured on the drug set: the ensemble
// then costs about half as much, with as many conformers kept).
constexpr double kCandidateTolerance = 2e-2;

// Other embeddings of a flexible ring system tried as bases (each a whole build).
constexpr int kRingShapes = 4;
// ... of a system whose puckered rings are all of five or six atoms (a twist-boat, another envelope): fewer shapes to
// find, and most drug molecules have such a ring (measured on the drug set: four cost 1.2 times the ensemble's time).
constexpr int kSmallRingShapes = 2;

// Draws of turns and swaps per try at most: a draw made before is drawn again (it would only be refined to the same
// shape), up to this many times the tries.
constexpr int kDrawsPerTry = 8;

// The energy conformers are ranked by (refine/conformer_energy.hpp: torsions, van der Waals, electrostatics).
double ranking_energy(const ConformerEnergy& model, const StructureBuilder::Built& built) {
    return model.energy(built.structure.positions).total;
}


// A ring atom whose two substituents may trade places (axial for equatorial), or a nitrogen that inverts: the plane
// of its two ring bonds (of two of its bonds) reflects the atoms of `side`.
struct SwapCentre {
    int centre = -1, ring1 = -1, ring2 = -1;
    std::vector<int> side;  // both substituents' atoms
};

// A nitrogen whose pyramid inverts at room temperature: three neighbours and a lone pair (steric number 4; amide
// and aniline nitrogens are planar, steric number 3), no written stereo mark, no charge, not in a three-membered ring
// (aziridines invert slowly: barriers near 17-20 kcal/mol against about 6 for amines, from memory).
bool free_inversion(const Molecule& m, const MoleculeDomains& d, const RingInfo& rings, int i) {
    const Atom& a = m.atoms[at(i)];
    if (a.z != 7 || a.charge != 0 || a.chiral_class != ChiralClass::none || m.neighbors(i).size() != 3) return false;
    const CentreDomains& c = d.atoms[at(i)];
    if (c.steric_number != 4 || c.lone_pairs != 1) return false;
    for (const Neighbor& nb : m.neighbors(i))
        if (rings.smallest_ring_with_bond(m, nb.bond) == 3) return false;
    return true;
}

// every: also the centres whose trade makes another stereoisomer (to trade back, match_configuration), and no
// nitrogen inversions.
std::vector<SwapCentre> swap_centres(const Molecule& m, const MoleculeDomains& d, const RingInfo& rings,
                                     const std::vector<int>& classes, bool every = false) {
    std::vector<SwapCentre> out;
    // Per ring system: its sp3 atoms with two substituents of different classes.
    std::vector<int> unlike_pairs(rings.systems.size(), 0);
    for (int i = 0; i < m.atom_count(); ++i) {
        const int sys = rings.atom_system[at(i)];
        if (sys < 0 || d.atoms[at(i)].steric_number != 4) continue;
        std::vector<int> outside;
        for (const Neighbor& nb : m.neighbors(i))
            if (rings.atom_system[at(nb.atom)] != sys) outside.push_back(classes[at(nb.atom)]);
        if (outside.size() == 2 && outside[0] != outside[1]) ++unlike_pairs[at(sys)];
    }
    for (int i = 0; i < m.atom_count(); ++i) {
        const int sys = rings.atom_system[at(i)];
        if (sys < 0 || d.atoms[at(i)].steric_number != 4 || m.atoms[at(i)].chiral_class != ChiralClass::none) continue;
        std::vector<int> in, outside;
        for (const Neighbor& nb : m.neighbors(i))
            (rings.atom_system[at(nb.atom)] == sys ? in : outside).push_back(nb.atom);
        // A ring nitrogen with one substituent and its lone pair inverts freely (its substituent axial or
        // equatorial); two substituents of one symmetry class trade places to the same conformation.
        const bool invertible = !every && outside.size() == 1 && free_inversion(m, d, rings, i);
        if (in.size() != 2 || !(invertible || (outside.size() == 2 && classes[at(outside[0])] != classes[at(outside[1])])))
            continue;
        // Trading the substituents of a stereocentre (ring neighbours of two classes), or of one of two or more ring
        // atoms with unlike substituents in one system (cis and trans), makes another stereoisomer, not another
        // conformation: only a lone such atom with like ring neighbours (methylcyclohexane's) may trade.
        if (!every && !invertible && (classes[at(in[0])] != classes[at(in[1])] || unlike_pairs[at(sys)] > 1)) continue;
        SwapCentre c{i, in[0], in[1], {}};
        bool separate = true;
        for (int o : outside)
            for (int a : side_of(m, i, o)) {
                separate = separate && rings.atom_system[at(a)] != sys;
                c.side.push_back(a);
            }
        if (separate) out.push_back(std::move(c));
    }
    // Nitrogen outside rings with three different neighbours: inverting it (one neighbour's side reflected through
    // the plane of the other two bonds) gives the other pyramid, which no turn of a bond reaches; it matters where the
    // molecule has another stereocentre (else the two are mirror images, which the comparison takes as one).
    for (int i = 0; i < m.atom_count() && !every; ++i) {
        if (rings.atom_system[at(i)] >= 0 || !free_inversion(m, d, rings, i)) continue;
        const auto& nb = m.neighbors(i);
        if (classes[at(nb[0].atom)] == classes[at(nb[1].atom)] || classes[at(nb[0].atom)] == classes[at(nb[2].atom)] ||
            classes[at(nb[1].atom)] == classes[at(nb[2].atom)])
            continue;
        // The side reflected: the smallest of the three (fewest atoms moved), which must not hold the other two.
        std::vector<int> best;
        int keep1 = -1, keep2 = -1;
        for (size_t k = 0; k < 3; ++k) {
            std::vector<int> side = side_of(m, i, nb[k].atom);
            const int o1 = nb[(k + 1) % 3].atom, o2 = nb[(k + 2) % 3].atom;
            if (std::find(side.begin(), side.end(), o1) != side.end() || std::find(side.begin(), side.end(), o2) != side.end())
                continue;
            if (best.empty() || side.size() < best.size()) {
                best = std::move(side);
                keep1 = o1;
                keep2 = o2;
            }
        }
        if (!best.empty()) out.push_back(SwapCentre{i, keep1, keep2, std::move(best)});
    }
    return out;
}

// Reflects the substituents of a swap centre through the plane of its ring bonds.
void swap(std::vector<Vector3d>& x, const SwapCentre& c) {
    const Vector3d o = x[at(c.centre)];
    const Vector3d n = (x[at(c.ring1)] - o).cross(x[at(c.ring2)] - o);
    if (!(n.norm() > 1e-6)) return;
    const Vector3d u = n.normalized();
    for (int a : c.side) x[at(a)] -= 2 * (x[at(a)] - o).dot(u) * u;
}

// The handedness of the first build's tetrahedral centres, written or not (sp3 atoms with four neighbours, at most
// one of them hydrogen; three-neighbour centres with a lone pair that do not invert: S, P, As ...), so that
// every conformer is of the stereoisomer the first build is: a candidate is the same when one automorphism of the
// graph (over the heavy atoms, as the comparer's) maps every centre to one of the same handedness. An unwritten
// stereocentre otherwise comes out either way from other ring shapes and swapped substituents, and so do cis and
// trans rings (1,4-dimethylcyclohexane's two ring carbons, not stereocentres by their neighbours alone). Past the
// comparer's cap on automorphisms every candidate is taken as the same.
class Configuration {
public:
    Configuration(const Molecule& m, const MoleculeDomains& d, const std::vector<int>& classes,
                  const std::vector<Vector3d>& reference)
        : reference_(reference) {
        const std::vector<int> atoms = compared_atoms(m);
        std::vector<char> compared(reference.size(), 0);
        for (int a : atoms) compared[at(a)] = 1;
        for (int i = 0; i < m.atom_count(); ++i) {
            const Atom& a = m.atoms[at(i)];
            const CentreDomains& c = d.atoms[at(i)];
            const auto& nb = m.neighbors(i);
            if (c.steric_number != 4 || is_metal_atom(a.z) || !compared[at(i)]) continue;
            // Three neighbours and a lone pair: P, As, Sb, S, Se, Te hold their pyramid (barriers of 30 kcal/mol and
            // more, from memory); N, O+ and carbanions invert.
            const bool slow = a.z == 15 || a.z == 33 || a.z == 51 || a.z == 16 || a.z == 34 || a.z == 52;
            if (nb.size() == 3 && (c.lone_pairs != 1 || !slow)) continue;
            if (nb.size() != 3 && nb.size() != 4) continue;
            std::vector<int> heavy;
            for (const Neighbor& x : nb)
                if (compared[at(x.atom)]) heavy.push_back(x.atom);
            if (heavy.size() < 3) continue;
            std::sort(heavy.begin(), heavy.end());
            const Centre centre{i, heavy[0], heavy[1], heavy[2]};
            if (std::abs(volume(reference, centre)) < kFlat) continue;
            centres_.push_back(centre);
        }
        if (centres_.empty()) return;
        capped_ = !automorphisms(m, atoms, classes, ConformerComparer::kMaxSymmetries, mappings_);
        if (mappings_.empty()) mappings_.push_back(atoms);
        atoms_ = atoms;
    }

    bool same(const std::vector<Vector3d>& x) const {
        if (centres_.empty() || capped_) return true;
        std::vector<int> image(x.size(), -1);
        for (const std::vector<int>& mapping : mappings_) {
            for (size_t k = 0; k < atoms_.size(); ++k) image[at(atoms_[k])] = mapping[k];
            bool all = true;
            for (const Centre& c : centres_) {
                const Centre to{image[at(c.c)], image[at(c.a)], image[at(c.b)], image[at(c.e)]};
                if (std::signbit(volume(x, c)) != std::signbit(volume(reference_, to))) {
                    all = false;
                    break;
                }
            }
            if (all) return true;
        }
        return false;
    }

    // The centres whose handedness differs from the first build's, atom for atom.
    std::vector<int> differing(const std::vector<Vector3d>& x) const {
        std::vector<int> out;
        for (const Centre& c : centres_)
            if (std::signbit(volume(x, c)) != std::signbit(volume(reference_, c))) out.push_back(c.c);
        return out;
    }

private:
    struct Centre {
        int c, a, b, e;
    };
    static double volume(const std::vector<Vector3d>& x, const Centre& c) {
        return signed_volume(x[at(c.c)], x[at(c.a)], x[at(c.b)], x[at(c.e)]);
    }
    static constexpr double kFlat = 0.1;  // A^3: flatter centres have no handedness to keep

    std::vector<Vector3d> reference_;
    std::vector<Centre> centres_;
    std::vector<int> atoms_;
    std::vector<std::vector<int>> mappings_;
    bool capped_ = false;
};

// A base built another way (a ring system's mirror image, another ring shape) whose unwritten centres came out the
// other way: the substituents of those centres that may trade (all_swaps) trade back, and the copy is refined
// loosely. False when it is still another stereoisomer.
bool match_configuration(const StructureBuilder& builder, const Configuration& configuration,
                         const std::vector<SwapCentre>& all_swaps, StructureBuilder::Built& built) {
    if (configuration.same(built.structure.positions)) return true;
    const std::vector<int> wrong = configuration.differing(built.structure.positions);
    bool swapped = false;
    for (const SwapCentre& c : all_swaps)
        if (std::find(wrong.begin(), wrong.end(), c.centre) != wrong.end()) {
            swap(built.structure.positions, c);
            swapped = true;
        }
    if (!swapped) return false;
    builder.refine(built, kCandidateTolerance);
    return builder.stereo_kept(built.structure.positions) && configuration.same(built.structure.positions);
}

// One candidate from a base build: the turns and swaps chosen for it applied and refined loosely; false when it fails.
enum class Sampled { made, failed, repeated };
Sampled sample(const StructureBuilder& builder, const StructureBuilder::Built& base, std::uint32_t base_index,
               const std::vector<RotatableBond>& bonds, const std::vector<std::vector<int>>& sides,
               const std::vector<SwapCentre>& swaps, const ConformerEnergy& model, Stream& stream,
               std::set<std::vector<std::uint32_t>>& drawn, Candidate& out) {
    // The choices first: a draw made before (or one that changes nothing) is not refined again.
    std::vector<std::uint32_t> choices{base_index};
    bool turned = false;
    for (size_t k = 0; k < swaps.size(); ++k)
        if (stream.below(4) == 0) {  // one centre in four: most substituents stay where the build put them
            choices.push_back(static_cast<std::uint32_t>(k));
            turned = true;
        }
    choices.push_back(~std::uint32_t{0});
    for (const RotatableBond& r : bonds) {
        const size_t choice = stream.below(r.turns.size() + 1);  // 0: as built
        choices.push_back(static_cast<std::uint32_t>(choice));
        turned = turned || choice != 0;
    }
    if (!turned || !drawn.insert(choices).second) return Sampled::repeated;
    out.built = base;
    StructureBuilder::Built& built = out.built;
    built.structure.warnings = base.assembly_warnings;
    size_t next = 1;
    for (; choices[next] != ~std::uint32_t{0}; ++next) swap(built.structure.positions, swaps[choices[next]]);
    for (size_t k = 0; k < bonds.size(); ++k) {
        const std::uint32_t choice = choices[next + 1 + k];
        if (choice != 0) turn(built.structure.positions, sides[k], bonds[k].a, bonds[k].b, bonds[k].turns[choice - 1]);
    }
    builder.refine(built, kCandidateTolerance);
    if (!builder.stereo_kept(built.structure.positions)) return Sampled::failed;
    out.energy = ranking_energy(model, built);
    return Sampled::made;
}

// Refined to the build's tolerance and given the build's final checks; false when it fails them (overlapping atoms,
// stereochemistry lost).
bool polish(const StructureBuilder& builder, const ConformerEnergy& model, Candidate& c) {
    if (c.polished) return true;
    c.polished = true;
    StructureBuilder::Built& built = c.built;
    built.structure.warnings = built.assembly_warnings;
    builder.refine(built);
    c.energy = ranking_energy(model, built);
    if (!builder.stereo_kept(built.structure.positions)) return false;
    try {
        builder.finish(built.structure);
    } catch (const UnsupportedError&) {
        return false;
    }
    return true;
}

// The candidates: the first build, the ring systems' other mirror images, then turned and swapped copies.
std::vector<Candidate> make_candidates(const StructureBuilder& builder, const StructureBuilder::Built& first,
                                       const ConformerEnergy& model, const Configuration& configuration,
                                       const std::vector<int>& classes, const EnsembleOptions& options) {
    std::vector<Candidate> candidates;
    candidates.push_back({first, ranking_energy(model, first), 0, false});
    const Molecule& m = builder.molecule();
    const int tries = options.tries > 0 ? options.tries : std::max(12, 2 * options.count);
    // Ring systems that may be taken as their other mirror image (none holding a metal: that would turn a chelate's
    // handedness).
    std::vector<int> mirrorable;
    for (size_t k = 0; k < first.mirrorable.size(); ++k) {
        bool metal = false;
        for (int a : builder.rings().systems[k]) metal = metal || is_metal_atom(m.atoms[at(a)].z);
        if (first.mirrorable[k] && !metal) mirrorable.push_back(static_cast<int>(k));
    }
    const std::vector<RotatableBond> bonds = rotatable_bonds(m, builder.domains(), builder.rings());
    const std::vector<SwapCentre> swaps = swap_centres(m, builder.domains(), builder.rings(), classes);
    const std::vector<SwapCentre> all_swaps = swap_centres(m, builder.domains(), builder.rings(), classes, true);
    std::vector<std::vector<int>> sides;
    for (const RotatableBond& r : bonds) sides.push_back(side_of(m, r.a, r.b));
    // Bases: the first build and up to three builds with other mirror images (all of them for up to two mirrorable
    // systems; else each of the first three flipped alone).
    std::vector<const StructureBuilder::Built*> bases{&first};
    const size_t flips = mirrorable.size() <= 2 ? (size_t{1} << mirrorable.size()) - 1 : size_t{3};
    for (size_t f = 1; f <= flips; ++f) {
        std::vector<char> other(builder.rings().systems.size(), 0);
        for (size_t k = 0; k < mirrorable.size(); ++k)
            if (mirrorable.size() <= 2 ? ((f >> k) & 1) : k == f - 1) other[at(mirrorable[k])] = 1;
        try {
            Candidate c;
            c.built = builder.build(other, 0, kCandidateTolerance);
            if (!builder.stereo_kept(c.built.structure.positions) ||
                !match_configuration(builder, configuration, all_swaps, c.built))
                continue;
            // Unwritten centres of the mirrored systems come out equatorial again (trans-1,4-dimethylcyclohexane's
            // mirror image is itself): their substituents traded give the other chair of the same stereoisomer.
            Candidate flipped;
            flipped.built = c.built;
            bool swapped = false;
            for (const SwapCentre& w : all_swaps)
                if (other[at(builder.rings().atom_system[at(w.centre)])]) {
                    swap(flipped.built.structure.positions, w);
                    swapped = true;
                }
            c.energy = ranking_energy(model, c.built);
            c.index = static_cast<int>(candidates.size());
            candidates.push_back(std::move(c));
            if (swapped) {
                builder.refine(flipped.built, kCandidateTolerance);
                if (builder.stereo_kept(flipped.built.structure.positions) &&
                    configuration.same(flipped.built.structure.positions)) {
                    flipped.energy = ranking_energy(model, flipped.built);
                    flipped.index = static_cast<int>(candidates.size());
                    candidates.push_back(std::move(flipped));
                }
            }
        } catch (const UnsupportedError&) {
        }
    }
    // Flexible ring systems embedded other ways: other ring shapes (macrocycles, medium rings; other puckers of five-
    // and six-membered rings) to start from.
    char flexible = 0;
    for (char f : first.flexible) flexible = std::max(flexible, f);
    const int shapes = flexible == 2 ? kRingShapes : flexible == 1 ? kSmallRingShapes : 0;
    for (int variant = 1; variant <= shapes; ++variant) {
        check_deadline("sampling ring shapes");
        try {
            Candidate c;
            c.built = builder.build({}, variant, kCandidateTolerance);
            if (!builder.stereo_kept(c.built.structure.positions) ||
                !match_configuration(builder, configuration, all_swaps, c.built))
                continue;
            c.energy = ranking_energy(model, c.built);
            c.index = static_cast<int>(candidates.size());
            candidates.push_back(std::move(c));
        } catch (const UnsupportedError&) {
        }
    }
    for (size_t k = 1; k < candidates.size(); ++k) bases.push_back(&candidates[k].built);
    if (bonds.empty() && swaps.empty()) return candidates;
    std::vector<StructureBuilder::Built> base_copies;  // candidates grows: the bases are copied first
    for (const StructureBuilder::Built* b : bases) base_copies.push_back(*b);
    Stream stream(options.seed);
    // A repeated draw costs no try; the draws are bounded (a molecule with few choices has few new ones).
    std::set<std::vector<std::uint32_t>> drawn;
    for (int t = static_cast<int>(candidates.size()), draws = 0; t < tries && draws < kDrawsPerTry * tries; ++draws) {
        check_deadline("sampling conformers");
        Candidate c;
        c.index = static_cast<int>(candidates.size());
        const size_t b = at(t) % base_copies.size();
        const Sampled result = sample(builder, base_copies[b], static_cast<std::uint32_t>(b), bonds, sides, swaps,
                                      model, stream, drawn, c);
        if (result == Sampled::repeated) continue;
        ++t;
        if (result == Sampled::made) candidates.push_back(std::move(c));
    }
    return candidates;
}

}  // namespace

std::vector<Structure> build_ensemble(const Molecule& molecule, const BuildOptions& build_options,
                                      const EnsembleOptions& options) {
    if (options.count < 1) throw InputError("the number of conformers must be at least 1");
    if (!(options.distinct_rmsd >= 0) || !std::isfinite(options.distinct_rmsd))
        throw InputError("the RMSD that makes two conformers distinct must be a finite number of at least 0 A");
    const ScopedDeadline deadline(build_options.time_limit);
    const StructureBuilder builder(molecule, build_options);
    const StructureBuilder::Built first = builder.build();
    const Molecule& m = builder.molecule();
    const ConformerEnergy model(m, builder.domains());
    const std::vector<int> classes = symmetry_classes(m);
    const Configuration configuration(m, builder.domains(), classes, first.structure.positions);
    std::vector<Candidate> candidates;
    if (options.count > 1 && build_options.refine && m.atom_count() > 3)
        candidates = make_candidates(builder, first, model, configuration, classes, options);
    else
        candidates.push_back({first, ranking_energy(model, first), 0, true});

    std::stable_sort(candidates.begin(), candidates.end(), [](const Candidate& p, const Candidate& q) {
        return p.energy < q.energy || (p.energy == q.energy && p.index < q.index);
    });
    // In order of energy, each candidate refined fully and kept when no kept one is closer than the threshold.
    const ConformerComparer comparer(m, !may_be_chiral(m, builder.domains(), classes), classes);
    std::vector<Candidate*> kept;
    for (Candidate& c : candidates) {
        if (static_cast<int>(kept.size()) >= options.count) break;
        check_deadline("choosing conformers");
        if (!configuration.same(c.built.structure.positions) || !polish(builder, model, c) ||
            !configuration.same(c.built.structure.positions))
            continue;
        bool distinct = true;
        for (const Candidate* k : kept)
            if (comparer.closer_than(k->built.structure.positions, c.built.structure.positions, options.distinct_rmsd)) {
                distinct = false;
                break;
            }
        if (distinct) kept.push_back(&c);
    }
    // Ranked again on the energies after the full refinement.
    std::stable_sort(kept.begin(), kept.end(), [](const Candidate* p, const Candidate* q) {
        return p->energy < q->energy || (p->energy == q->energy && p->index < q->index);
    });
    std::vector<Structure> out;
    const std::vector<Vector3d> lowest = kept.empty() ? std::vector<Vector3d>{} : kept.front()->built.structure.positions;
    for (Candidate* c : kept) {
        ConformerInfo info;
        info.rank = static_cast<int>(out.size()) + 1;
        info.count = static_cast<int>(kept.size());
        info.energy = c->energy;
        info.relative_energy = c->energy - kept.front()->energy;
        info.rmsd_to_first = out.empty() ? 0.0 : comparer.rmsd(lowest, c->built.structure.positions);
        Structure s = std::move(c->built.structure);
        s.conformer = info;
        out.push_back(std::move(s));
    }
    return out;
}

}  // namespace repel
