#include "assemble/hapto.hpp"

#include <fmt/format.h>

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>
#include <optional>

#include "assemble/place.hpp"
#include "core/element.hpp"

namespace repel {

using Eigen::Matrix3d;
using Eigen::Vector3d;

namespace {

size_t at(int i) { return static_cast<size_t>(i); }

// Turns about the metal-centroid axis tried for a hapto ligand, and the fraction of the van der Waals sum below which
// two atoms clash while choosing among them (as in the assembly's torsion choice, common practice).
constexpr int kTurns = 24;
constexpr double kClashFraction = 0.7;

// The unit normal of the best plane through the points (the direction of least spread).
Vector3d plane_normal(const std::vector<Vector3d>& points) {
    Vector3d g = Vector3d::Zero();
    for (const Vector3d& p : points) g += p;
    g /= static_cast<double>(points.size());
    Matrix3d cov = Matrix3d::Zero();
    for (const Vector3d& p : points) cov += (p - g) * (p - g).transpose();
    Eigen::SelfAdjointEigenSolver<Matrix3d> eig(cov);
    Vector3d n = eig.eigenvectors().col(0);
    return n.norm() > 1e-9 ? n.normalized() : Vector3d::UnitZ();
}

// A hapto ligand as the walk built it: its centroid and the mean distance of its atoms from it.
struct RingPlace {
    Vector3d centroid = Vector3d::Zero();
    double radius = 0;
};
RingPlace ring_place(const std::vector<int>& atoms, const std::vector<Vector3d>& pos) {
    RingPlace r;
    for (int a : atoms) r.centroid += pos[at(a)];
    r.centroid /= static_cast<double>(atoms.size());
    for (int a : atoms) r.radius += (pos[at(a)] - r.centroid).norm();
    r.radius /= static_cast<double>(atoms.size());
    return r;
}

// The unit direction of ligand l of `c` in the frame the walk gave the metal (`rotation`, `mirror`).
Vector3d site_direction(const MetalCentre& c, size_t l, const Matrix3d& rotation, bool mirror) {
    Vector3d dir = c.directions[l];
    if (mirror) dir.x() = -dir.x();
    return (rotation * dir).normalized();
}

// How far from the metal a ring of this radius sits so that its atoms are at the ligand's length.
double ring_height(const LigandDomain& lig, double radius) {
    return std::sqrt(std::max(lig.length * lig.length - radius * radius, 0.25));
}

// Moves a piece holding several hapto ligands of the metal `c` rigidly: the ligands' centroids (as the walk built
// them) onto their sites (the metal's solved directions in the frame `rotation`/`mirror`, each at the height that
// puts its atoms at the ligand's length), then the turn about the best-fit axis that keeps the rest of the piece
// farthest from the metal. The refinement then settles the ring onto the sites.
void place_chelating_piece(const Molecule& skeleton, const MetalCentre& c, const std::vector<size_t>& group,
                           const std::vector<int>& members, const Matrix3d& rotation, bool mirror,
                           std::vector<Vector3d>& pos, std::vector<std::optional<Vector3d>>* site_shift) {
    const Vector3d pm = pos[at(c.atom)];
    std::vector<Vector3d> from, to;
    std::vector<char> in_group(pos.size(), 0);
    for (size_t l : group) {
        const LigandDomain& lig = c.ligands[l];
        const RingPlace r = ring_place(lig.atoms, pos);
        for (int a : lig.atoms) in_group[at(a)] = 1;
        from.push_back(r.centroid);
        to.push_back(pm + site_direction(c, l, rotation, mirror) * ring_height(lig, r.radius));
    }
    Vector3d cf = Vector3d::Zero(), ct = Vector3d::Zero();
    for (size_t k = 0; k < from.size(); ++k) {
        cf += from[k];
        ct += to[k];
    }
    cf /= static_cast<double>(from.size());
    ct /= static_cast<double>(to.size());
    std::vector<Vector3d> a, b;
    for (size_t k = 0; k < from.size(); ++k) {
        a.push_back(from[k] - cf);
        b.push_back(to[k] - ct);
    }
    const Matrix3d r0 = kabsch_rotation(a, b);
    // Two sites leave the turn about the line through them free (three or more fix it, but are tried the same way).
    const Vector3d axis = b.front().norm() > 1e-9 ? b.front().normalized() : Vector3d::UnitZ();
    double best_score = 0;
    std::vector<Vector3d> best;
    for (int k = 0; k < kTurns; ++k) {
        const Matrix3d q = Eigen::AngleAxisd(2 * M_PI * k / kTurns, axis).toRotationMatrix() * r0;
        std::vector<Vector3d> xs;
        xs.reserve(members.size());
        double score = 0;
        for (int m : members) {
            xs.push_back(ct + q * (pos[at(m)] - cf));
            if (in_group[at(m)]) continue;
            // Atoms outside the ligands kept beyond the bonding sphere of the metal.
            const double limit = kClashFraction * (element(skeleton.atoms[at(m)].z).r_vdw +
                                                   element(skeleton.atoms[at(c.atom)].z).r_vdw);
            const double d = (xs.back() - pm).norm();
            if (d < limit) score += (limit - d) * (limit - d);
        }
        // The sites themselves as the first measure (a turn that moves the centroids off them is worse).
        for (size_t g = 0; g < from.size(); ++g) score += 10 * (ct + q * (from[g] - cf) - to[g]).squaredNorm();
        if (best.empty() || score < best_score - 1e-9) {
            best_score = score;
            best = std::move(xs);
        }
    }
    for (size_t i = 0; i < members.size(); ++i) pos[at(members[i])] = best[i];
    // How far each ligand's centroid still is from its site: the refinement's frame is measured as if it were there.
    if (site_shift) {
        site_shift->resize(pos.size());
        for (size_t k = 0; k < group.size(); ++k) {
            const LigandDomain& lig = c.ligands[group[k]];
            const Vector3d shift = to[k] - ring_place(lig.atoms, pos).centroid;
            for (int atom : lig.atoms) (*site_shift)[at(atom)] = shift;
        }
    }
}

}  // namespace

void place_hapto_ligands(const Molecule& skeleton, const MoleculeDomains& domains, std::vector<Vector3d>& pos,
                         std::vector<std::string>& warnings, std::vector<std::optional<Vector3d>>* site_shift) {
    const MetalAnalysis& ma = domains.metals;
    if (ma.hapto_bonds.empty()) return;
    int count = 0;
    const std::vector<int> comp = skeleton.components(&count);
    std::vector<char> moved(at(count), 0);
    std::vector<std::vector<int>> members_of(at(count));
    for (int i = 0; i < skeleton.atom_count(); ++i) members_of[at(comp[at(i)])].push_back(i);
    for (const MetalCentre& c : ma.centres) {
        bool any = false;
        for (const LigandDomain& l : c.ligands) any = any || l.hapto();
        if (!any || c.directions.size() != c.ligands.size()) continue;
        const Vector3d pm = pos[at(c.atom)];
        // The metal's frame as the walk placed it: the rotation (or rotation and mirror) that takes the sigma
        // ligands' directions onto their bonds.
        std::vector<Vector3d> from, to;
        for (size_t l = 0; l < c.ligands.size(); ++l) {
            if (c.ligands[l].hapto()) continue;
            const Vector3d b = pos[at(c.ligands[l].atoms[0])] - pm;
            if (b.norm() < 1e-9) continue;
            from.push_back(c.directions[l]);
            to.push_back(b.normalized());
        }
        Matrix3d rotation = Matrix3d::Identity();
        bool mirror = false;
        if (!from.empty()) {
            auto residual = [&](const std::vector<Vector3d>& a, const Matrix3d& r) {
                double s = 0;
                for (size_t k = 0; k < a.size(); ++k) s += (r * a[k] - to[k]).squaredNorm();
                return s;
            };
            std::vector<Vector3d> flipped = from;
            for (Vector3d& v : flipped) v.x() = -v.x();
            const Matrix3d r0 = kabsch_rotation(from, to), r1 = kabsch_rotation(flipped, to);
            mirror = residual(flipped, r1) < residual(from, r0) - 1e-9;
            rotation = mirror ? r1 : r0;
        }
        for (size_t l = 0; l < c.ligands.size(); ++l) {
            const LigandDomain& lig = c.ligands[l];
            if (!lig.hapto()) continue;
            const int piece = comp[at(lig.atoms[0])];
            if (piece == comp[at(c.atom)]) {
                warnings.push_back(fmt::format("hapto ligand of atom {} (atoms {}..{}) is joined to the metal through "
                                               "other bonds too; placed by the walk and the refinement only",
                                               c.atom + 1, lig.atoms.front() + 1, lig.atoms.back() + 1));
                continue;
            }
            if (moved[at(piece)]) continue;
            // Several hapto ligands of this metal in one piece (a chelating diene: cycloocta-1,5-diene,
            // norbornadiene): the piece is moved whole so that each ligand's centroid sits on its own site.
            std::vector<size_t> group;
            for (size_t o = 0; o < c.ligands.size(); ++o)
                if (c.ligands[o].hapto() && comp[at(c.ligands[o].atoms[0])] == piece) group.push_back(o);
            if (group.size() >= 2) {
                place_chelating_piece(skeleton, c, group, members_of[at(piece)], rotation, mirror, pos, site_shift);
                moved[at(piece)] = 1;
                continue;
            }
            const Vector3d u = site_direction(c, l, rotation, mirror);
            // Its centroid, radius and plane as the walk built it.
            const RingPlace r = ring_place(lig.atoms, pos);
            const Vector3d g = r.centroid;
            std::vector<Vector3d> plane;
            for (int a : lig.atoms) {
                plane.push_back(pos[at(a)]);
                if (lig.atoms.size() <= 2)  // an alkene: its plane is that of its substituents
                    for (const Neighbor& nb : skeleton.neighbors(a)) plane.push_back(pos[at(nb.atom)]);
            }
            Vector3d n = plane_normal(plane);
            const std::vector<int>& members = members_of[at(piece)];
            Vector3d rest = Vector3d::Zero();
            int nrest = 0;
            for (int i : members) {
                if (std::find(lig.atoms.begin(), lig.atoms.end(), i) == lig.atoms.end()) {
                    rest += pos[at(i)];
                    ++nrest;
                }
            }
            // The rest of the ligand (substituents out of the plane) on the far side from the metal.
            if (nrest > 0 && (rest / nrest - g).dot(n) < 0) n = -n;
            const double h = ring_height(lig, r.radius);
            const Vector3d target = pm + u * h;
            const Matrix3d q0 = rotation_between(n, u);
            // The turn about the axis that clashes least with what is already in place.
            // Atoms already in place near this metal: its own piece and the hapto pieces moved onto it.
            std::vector<int> fixed = members_of[at(comp[at(c.atom)])];
            for (const LigandDomain& other : c.ligands)
                if (other.hapto() && moved[at(comp[at(other.atoms[0])])] && comp[at(other.atoms[0])] != piece)
                    for (int i : members_of[at(comp[at(other.atoms[0])])]) fixed.push_back(i);
            double best_score = 0;
            std::vector<Vector3d> best;
            for (int k = 0; k < kTurns; ++k) {
                const Matrix3d q = Eigen::AngleAxisd(2 * M_PI * k / kTurns, u).toRotationMatrix() * q0;
                std::vector<Vector3d> xs;
                xs.reserve(members.size());
                for (int a : members) xs.push_back(target + q * (pos[at(a)] - g));
                double score = 0;
                for (size_t i = 0; i < members.size(); ++i)
                    for (int f : fixed) {
                        if (f == c.atom) continue;
                        const double limit = kClashFraction * (element(skeleton.atoms[at(members[i])].z).r_vdw +
                                                               element(skeleton.atoms[at(f)].z).r_vdw);
                        const double d = (xs[i] - pos[at(f)]).norm();
                        if (d < limit) score += (limit - d) * (limit - d);
                    }
                if (best.empty() || score < best_score - 1e-9) {
                    best_score = score;
                    best = std::move(xs);
                }
            }
            for (size_t i = 0; i < members.size(); ++i) pos[at(members[i])] = best[i];
            moved[at(piece)] = 1;
        }
    }
}

}  // namespace repel
