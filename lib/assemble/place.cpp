#include "assemble/place.hpp"

#include <Eigen/Geometry>
#include <Eigen/SVD>
#include <cmath>

#include "core/error.hpp"

namespace repel {

using Eigen::Matrix3d;
using Eigen::Vector3d;

namespace {

// Ideal polyhedra (common practice) for a frame without a sphere solution: first direction along +z, the second in
// the xz half-plane x > 0, like the solver's canonical frame.
std::vector<Vector3d> ideal_polyhedron(int n) {
    const double t = std::acos(-1.0 / 3.0);  // tetrahedral angle
    switch (n) {
        case 0: return {};
        case 1: return {Vector3d::UnitZ()};
        case 2: return {Vector3d::UnitZ(), -Vector3d::UnitZ()};
        case 3: {
            const double a = 2 * M_PI / 3;
            return {Vector3d::UnitZ(), Vector3d(std::sin(a), 0, std::cos(a)), Vector3d(-std::sin(a), 0, std::cos(a))};
        }
        case 4: {
            std::vector<Vector3d> v{Vector3d::UnitZ()};
            for (int k = 0; k < 3; ++k) {
                const double phi = 2 * M_PI * k / 3;
                v.emplace_back(std::sin(t) * std::cos(phi), std::sin(t) * std::sin(phi), std::cos(t));
            }
            return v;
        }
        case 5:
            return {Vector3d::UnitZ(), Vector3d::UnitX(), -Vector3d::UnitZ(),
                    Vector3d(-0.5, std::sqrt(0.75), 0), Vector3d(-0.5, -std::sqrt(0.75), 0)};
        case 6:
            return {Vector3d::UnitZ(), Vector3d::UnitX(), -Vector3d::UnitZ(), -Vector3d::UnitX(), Vector3d::UnitY(),
                    -Vector3d::UnitY()};
        default: {
            // Beyond six domains without a solution: spread on a spiral (only a starting frame; refinement follows).
            std::vector<Vector3d> v;
            for (int k = 0; k < n; ++k) {
                const double z = 1 - 2.0 * (k + 0.5) / n, r = std::sqrt(1 - z * z), phi = k * 2.399963229728653;
                v.emplace_back(r * std::cos(phi), r * std::sin(phi), z);
            }
            return v;
        }
    }
}

}  // namespace

bool planar_centre(const Molecule& molecule, const CentreDomains& centre, int atom) {
    const int degree = molecule.degree(atom);
    if (degree >= 2 && degree <= 3 && molecule.atoms[static_cast<size_t>(atom)].aromatic) return true;
    return centre.steric_number == 3 && degree >= 2;
}

std::vector<Vector3d> bonded_directions(const Molecule& molecule, const CentreDomains& centre, int atom,
                                        bool mirrored) {
    const auto& nbrs = molecule.neighbors(atom);
    const int degree = static_cast<int>(nbrs.size());
    std::vector<Vector3d> out(static_cast<size_t>(degree), Vector3d::UnitZ());
    // Three ring-equivalent bonds of an aromatic centre: the Kekule structure's single/double split would tilt the
    // frame, and a pyrrole-type lone pair would make it pyramidal.
    const bool aromatic_trigonal = molecule.atoms[static_cast<size_t>(atom)].aromatic && degree == 3;
    if (!aromatic_trigonal && static_cast<int>(centre.directions.size()) >= degree && degree > 0 &&
        static_cast<int>(centre.domains.size()) == static_cast<int>(centre.directions.size())) {
        // Bonded domains come first, in neighbour order; match them by neighbour atom to be safe.
        for (int k = 0; k < degree; ++k) {
            int domain = k;
            const Domain& d = centre.domains[static_cast<size_t>(k)];
            if (d.kind != DomainKind::bond || d.neighbor != nbrs[static_cast<size_t>(k)].atom ||
                (d.bond >= 0 && d.bond != nbrs[static_cast<size_t>(k)].bond)) {
                domain = -1;
                for (size_t j = 0; j < centre.domains.size(); ++j)
                    if (centre.domains[j].kind == DomainKind::bond &&
                        centre.domains[j].bond == nbrs[static_cast<size_t>(k)].bond)
                        domain = static_cast<int>(j);
                if (domain < 0) throw std::logic_error("assembly: a neighbour without a domain");
            }
            out[static_cast<size_t>(k)] = centre.directions[static_cast<size_t>(domain)].normalized();
        }
    } else {
        const int n = aromatic_trigonal ? 3 : std::max(degree, centre.steric_number);
        const auto ideal = ideal_polyhedron(n);
        for (int k = 0; k < degree && k < n; ++k) out[static_cast<size_t>(k)] = ideal[static_cast<size_t>(k)];
    }
    if (mirrored)
        for (auto& v : out) v.x() = -v.x();
    return out;
}

}  // namespace repel
