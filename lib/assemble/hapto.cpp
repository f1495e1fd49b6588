#include "assemble/hapto.hpp"

#include <fmt/format.h>

#include <Eigen/Eigenvalues>
#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>

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

}  // namespace

void place_hapto_ligands(const Molecule& skeleton, const MoleculeDomains& domains, std::vector<Vector3d>& pos,
                         std::vector<std::string>& warnings) {
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
            Vector3d dir = c.directions[l];
            if (mirror) dir.x() = -dir.x();
            const Vector3d u = (rotation * dir).normalized();
            // Its centroid, radius and plane as the walk built it.
            Vector3d g = Vector3d::Zero();
            for (int a : lig.atoms) g += pos[at(a)];
            g /= static_cast<double>(lig.atoms.size());
            double radius = 0;
            for (int a : lig.atoms) radius += (pos[at(a)] - g).norm();
            radius /= static_cast<double>(lig.atoms.size());
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
            const double h = std::sqrt(std::max(lig.length * lig.length - radius * radius, 0.25));
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
