#include "graph/polyhedral_stereo.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <array>
#include <cmath>
#include <limits>

namespace repel {

namespace {

// Neighbour letters of the specification: a is the first neighbour in stereo order, b the second, ...
enum Letter : int { a = 0, b, c, d, e, f };

// A path through the four sites of a square, as quarter turns from the first atom of the path (0 = where it
// starts, 1 = a quarter turn anticlockwise, ...). The three shapes of OpenSMILES, "Square Planar Centers": 'U' runs
// round the square (start and end adjacent), '4' crosses a diagonal, steps along a side and crosses the other
// diagonal, 'Z' runs along one side, crosses a diagonal and runs along the opposite side (start and end trans).
using SquarePath = std::array<int, 4>;
constexpr SquarePath kU{0, 1, 2, 3};
constexpr SquarePath kFour{0, 2, 3, 1};
constexpr SquarePath kZ{0, 1, 3, 2};

// The same path with the opposite winding (a mirror image in the plane).
constexpr SquarePath reversed(const SquarePath& p) {
    return {(4 - p[0]) % 4, (4 - p[1]) % 4, (4 - p[2]) % 4, (4 - p[3]) % 4};
}

// OpenSMILES "Square Planar Centers": @SP1 is the U shape, @SP2 the 4 shape, @SP3 the Z shape, the neighbours in
// stereo order drawn along the path (no winding: a square is its own mirror image).
constexpr std::array<SquarePath, 3> kSquarePlanar{kU, kFour, kZ};

// OpenSMILES "Trigonal Bipyramidal Centers", its table row by row: the viewing axis (from, towards: the two axial
// neighbours) and whether the other three, in stereo order, run anticlockwise (@) or clockwise (@@) seen from the
// first axial neighbour. Note the spec's order of indices: TB9 and TB11 share the axis b-e, TB15 and TB20 c-e, TB16
// and TB19 c-d.
struct TbRow {
    int from, to;
    bool anticlockwise;
};
constexpr std::array<TbRow, 20> kTrigonalBipyramidal{{
    {a, e, true},   // TB1
    {a, e, false},  // TB2
    {a, d, true},   // TB3
    {a, d, false},  // TB4
    {a, c, true},   // TB5
    {a, c, false},  // TB6
    {a, b, true},   // TB7
    {a, b, false},  // TB8
    {b, e, true},   // TB9
    {b, d, true},   // TB10
    {b, e, false},  // TB11
    {b, d, false},  // TB12
    {b, c, true},   // TB13
    {b, c, false},  // TB14
    {c, e, true},   // TB15
    {c, d, true},   // TB16
    {d, e, true},   // TB17
    {d, e, false},  // TB18
    {c, d, false},  // TB19
    {c, e, false},  // TB20
}};

// OpenSMILES "Octahedral Centers", its table: the viewing axis always starts at a (towards the given neighbour); the
// other four, in stereo order, form a U, Z or 4 shape in the equatorial square, with a winding seen from a: for U the
// whole cycle, for Z the step from the first to the second of the four, for 4 the step from the second to the third
// runs anticlockwise (@) or clockwise (@@).
enum class Shape { U, Z, Four };
struct OhRow {
    Shape shape;
    int to;
    bool anticlockwise;
};
constexpr std::array<OhRow, 30> kOctahedral{{
    {Shape::U, f, true},      // OH1
    {Shape::U, f, false},     // OH2
    {Shape::U, e, true},      // OH3
    {Shape::Z, f, true},      // OH4
    {Shape::Z, e, true},      // OH5
    {Shape::U, d, true},      // OH6
    {Shape::Z, d, true},      // OH7
    {Shape::Four, f, false},  // OH8
    {Shape::Four, e, false},  // OH9
    {Shape::Four, f, true},   // OH10
    {Shape::Four, e, true},   // OH11
    {Shape::Four, d, false},  // OH12
    {Shape::Four, d, true},   // OH13
    {Shape::Z, f, false},     // OH14
    {Shape::Z, e, false},     // OH15
    {Shape::U, e, false},     // OH16
    {Shape::Z, d, false},     // OH17
    {Shape::U, d, false},     // OH18
    {Shape::U, c, true},      // OH19
    {Shape::Z, c, true},      // OH20
    {Shape::Four, c, false},  // OH21
    {Shape::Four, c, true},   // OH22
    {Shape::Z, c, false},     // OH23
    {Shape::U, c, false},     // OH24
    {Shape::U, b, true},      // OH25
    {Shape::Z, b, true},      // OH26
    {Shape::Four, b, false},  // OH27
    {Shape::Four, b, true},   // OH28
    {Shape::Z, b, false},     // OH29
    {Shape::U, b, false},     // OH30
}};

// The anticlockwise path of each shape (as seen from the viewing atom): the step that carries the winding turns +1
// (U: every step, Z: first to second, 4: second to third); the clockwise one is its mirror image.
SquarePath wound_path(Shape shape, bool anticlockwise) {
    const SquarePath& p = shape == Shape::U ? kU : shape == Shape::Z ? kZ : kFour;
    return anticlockwise ? p : reversed(p);
}

const std::array<Eigen::Vector3d, 4> kSquareSites{Eigen::Vector3d(1, 0, 0), Eigen::Vector3d(0, 1, 0),
                                                  Eigen::Vector3d(-1, 0, 0), Eigen::Vector3d(0, -1, 0)};
const double kHalfRoot3 = std::sqrt(3.0) / 2;
const std::array<Eigen::Vector3d, 5> kBipyramidSites{Eigen::Vector3d(0, 0, 1), Eigen::Vector3d(0, 0, -1),
                                                     Eigen::Vector3d(1, 0, 0), Eigen::Vector3d(-0.5, kHalfRoot3, 0),
                                                     Eigen::Vector3d(-0.5, -kHalfRoot3, 0)};
const std::array<Eigen::Vector3d, 6> kOctahedronSites{Eigen::Vector3d(0, 0, 1),  Eigen::Vector3d(0, 0, -1),
                                                      Eigen::Vector3d(1, 0, 0),  Eigen::Vector3d(0, 1, 0),
                                                      Eigen::Vector3d(-1, 0, 0), Eigen::Vector3d(0, -1, 0)};

// Faces of the polyhedra as site triples (an axial site and two neighbouring equatorial ones), for volume targets.
constexpr std::array<std::array<int, 3>, 6> kBipyramidFaces{
    {{0, 2, 3}, {0, 3, 4}, {0, 4, 2}, {1, 2, 3}, {1, 3, 4}, {1, 4, 2}}};
constexpr std::array<std::array<int, 3>, 8> kOctahedronFaces{
    {{0, 2, 3}, {0, 3, 4}, {0, 4, 5}, {0, 5, 2}, {1, 2, 3}, {1, 3, 4}, {1, 4, 5}, {1, 5, 2}}};

// Residual below which a fit counts as the ideal arrangement itself (sites are unit vectors; distinct arrangements
// differ by at least a whole site, far above this).
constexpr double kExactFit = 1e-6;

bool polyhedral(ChiralClass cls) {
    return cls == ChiralClass::SP || cls == ChiralClass::TB || cls == ChiralClass::OH;
}

// Root-mean-square distance between the ideal sites (in the order of `sites`) after the best proper rotation and
// the unit vectors `target` (Kabsch's method, with the determinant correction that forbids a reflection).
double rotation_fit(const std::vector<Eigen::Vector3d>& sites, const std::vector<Eigen::Vector3d>& target) {
    Eigen::Matrix3d h = Eigen::Matrix3d::Zero();
    for (size_t i = 0; i < sites.size(); ++i) h += sites[i] * target[i].transpose();
    const Eigen::JacobiSVD<Eigen::Matrix3d> svd(h, Eigen::ComputeFullU | Eigen::ComputeFullV);
    const Eigen::Matrix3d u = svd.matrixU();
    const Eigen::Matrix3d v = svd.matrixV();
    Eigen::Matrix3d correction = Eigen::Matrix3d::Identity();
    correction(2, 2) = (v * u.transpose()).determinant() < 0 ? -1.0 : 1.0;
    const Eigen::Matrix3d rotation = v * correction * u.transpose();
    double sum = 0;
    for (size_t i = 0; i < sites.size(); ++i) sum += (rotation * sites[i] - target[i]).squaredNorm();
    return std::sqrt(sum / static_cast<double>(sites.size()));
}

// The neighbour order of an atom's SP/TB/OH mark as atom indices, checked against the bonds; nothing (with the
// reason in `problem`) when it cannot be used.
std::optional<std::vector<int>> usable_order(const Molecule& m, int atom, std::string* problem) {
    const Atom& at = m.atoms[static_cast<size_t>(atom)];
    auto refuse = [&](const std::string& why) -> std::optional<std::vector<int>> {
        if (problem) *problem = why;
        return std::nullopt;
    };
    const int count = polyhedral_neighbor_count(at.chiral_class);
    if (at.chiral_index < 1 || at.chiral_index > polyhedral_index_count(at.chiral_class))
        return refuse("the mark's index is out of range for its class");
    const std::vector<int>& order = at.stereo_neighbors;
    if (static_cast<int>(order.size()) != count)
        return refuse("the mark needs " + std::to_string(count) + " neighbours in its list, it has " +
                      std::to_string(order.size()));
    for (size_t i = 0; i < order.size(); ++i) {
        if (order[i] == kImplicitHydrogen) return refuse("the mark's hydrogen is not an explicit atom yet");
        if (order[i] < 0 || order[i] >= m.atom_count() || m.bond_between(atom, order[i]) < 0)
            return refuse("the mark's neighbour list does not match the bonds");
        for (size_t j = 0; j < i; ++j)
            if (order[j] == order[i]) return refuse("the mark's neighbour list names an atom twice");
    }
    if (m.degree(atom) != count)
        return refuse("the mark needs " + std::to_string(count) + " bonded neighbours, the atom has " +
                      std::to_string(m.degree(atom)));
    return order;
}

}  // namespace

int polyhedral_neighbor_count(ChiralClass cls) {
    switch (cls) {
    case ChiralClass::SP: return 4;
    case ChiralClass::TB: return 5;
    case ChiralClass::OH: return 6;
    default: return 0;
    }
}

int polyhedral_index_count(ChiralClass cls) {
    switch (cls) {
    case ChiralClass::SP: return static_cast<int>(kSquarePlanar.size());
    case ChiralClass::TB: return static_cast<int>(kTrigonalBipyramidal.size());
    case ChiralClass::OH: return static_cast<int>(kOctahedral.size());
    default: return 0;
    }
}

std::span<const Eigen::Vector3d> polyhedral_sites(ChiralClass cls) {
    switch (cls) {
    case ChiralClass::SP: return kSquareSites;
    case ChiralClass::TB: return kBipyramidSites;
    case ChiralClass::OH: return kOctahedronSites;
    default: return {};
    }
}

std::vector<int> polyhedral_site_assignment(ChiralClass cls, int index) {
    if (!polyhedral(cls) || index < 1 || index > polyhedral_index_count(cls)) return {};
    const size_t row = static_cast<size_t>(index - 1);
    switch (cls) {
    case ChiralClass::SP: {
        const SquarePath& p = kSquarePlanar[row];
        return {p[0], p[1], p[2], p[3]};
    }
    case ChiralClass::TB: {
        const TbRow& r = kTrigonalBipyramidal[row];
        std::vector<int> site(5, -1);
        site[static_cast<size_t>(r.from)] = 0;
        site[static_cast<size_t>(r.to)] = 1;
        // equatorial sites 2, 3, 4 run anticlockwise seen from site 0
        const std::array<int, 3> equatorial =
            r.anticlockwise ? std::array<int, 3>{2, 3, 4} : std::array<int, 3>{2, 4, 3};
        size_t next = 0;
        for (int& s : site)
            if (s < 0) s = equatorial[next++];
        return site;
    }
    case ChiralClass::OH: {
        const OhRow& r = kOctahedral[row];
        std::vector<int> site(6, -1);
        site[0] = 0;
        site[static_cast<size_t>(r.to)] = 1;
        // equatorial sites 2..5 run anticlockwise seen from site 0: a quarter turn is one site on
        const SquarePath path = wound_path(r.shape, r.anticlockwise);
        size_t next = 0;
        for (int& s : site)
            if (s < 0) s = 2 + path[next++];
        return site;
    }
    default: return {};
    }
}

std::optional<std::vector<Eigen::Vector3d>> marked_directions(const Molecule& m, int atom, std::string* problem) {
    const Atom& at = m.atoms[static_cast<size_t>(atom)];
    if (!polyhedral(at.chiral_class)) return std::nullopt;
    const auto order = usable_order(m, atom, problem);
    if (!order) return std::nullopt;
    const std::vector<int> site = polyhedral_site_assignment(at.chiral_class, at.chiral_index);
    const std::span<const Eigen::Vector3d> sites = polyhedral_sites(at.chiral_class);
    std::vector<Eigen::Vector3d> out;
    out.reserve(order->size());
    for (const Neighbor& nb : m.neighbors(atom)) {
        const size_t k = static_cast<size_t>(std::find(order->begin(), order->end(), nb.atom) - order->begin());
        out.push_back(sites[static_cast<size_t>(site[k])]);
    }
    return out;
}

int best_polyhedral_index(ChiralClass cls, std::span<const Eigen::Vector3d> directions, double* residual) {
    const int count = polyhedral_neighbor_count(cls);
    if (count == 0 || static_cast<int>(directions.size()) != count) return 0;
    std::vector<Eigen::Vector3d> target;
    target.reserve(directions.size());
    for (const Eigen::Vector3d& v : directions) {
        const double n = v.norm();
        target.push_back(n > 0 && std::isfinite(n) ? Eigen::Vector3d(v / n) : Eigen::Vector3d::Zero());
    }
    const std::span<const Eigen::Vector3d> sites = polyhedral_sites(cls);
    int best = 0;
    double best_fit = std::numeric_limits<double>::infinity();
    std::vector<Eigen::Vector3d> ideal(static_cast<size_t>(count));
    for (int index = 1; index <= polyhedral_index_count(cls); ++index) {
        const std::vector<int> site = polyhedral_site_assignment(cls, index);
        for (size_t k = 0; k < site.size(); ++k) ideal[k] = sites[static_cast<size_t>(site[k])];
        const double fit = rotation_fit(ideal, target);
        if (fit < best_fit) {  // strict: the lowest index wins a tie (only possible for degenerate input)
            best_fit = fit;
            best = index;
        }
    }
    if (residual) *residual = best_fit;
    return best;
}

int reorder_polyhedral_index(ChiralClass cls, int index, std::span<const int> from, std::span<const int> to) {
    const std::vector<int> site = polyhedral_site_assignment(cls, index);
    if (site.empty() || from.size() != site.size() || to.size() != site.size()) return 0;
    const std::span<const Eigen::Vector3d> sites = polyhedral_sites(cls);
    std::vector<Eigen::Vector3d> directions;
    directions.reserve(to.size());
    for (int label : to) {
        const auto it = std::find(from.begin(), from.end(), label);
        if (it == from.end()) return 0;
        if (std::count(to.begin(), to.end(), label) != 1 || std::count(from.begin(), from.end(), label) != 1) return 0;
        directions.push_back(sites[static_cast<size_t>(site[static_cast<size_t>(it - from.begin())])]);
    }
    double residual = 0;
    const int found = best_polyhedral_index(cls, directions, &residual);
    return residual < kExactFit ? found : 0;
}

std::vector<SignedVolumeTarget> polyhedral_volume_targets(ChiralClass cls, int index,
                                                          std::span<const int> neighbors) {
    if (cls != ChiralClass::TB && cls != ChiralClass::OH) return {};
    const std::vector<int> site = polyhedral_site_assignment(cls, index);
    if (site.empty() || neighbors.size() != site.size()) return {};
    // the neighbour on each site
    std::vector<int> on_site(site.size());
    for (size_t k = 0; k < site.size(); ++k) on_site[static_cast<size_t>(site[k])] = neighbors[k];
    const std::span<const Eigen::Vector3d> sites = polyhedral_sites(cls);
    std::vector<SignedVolumeTarget> out;
    auto add = [&](const std::array<int, 3>& face) {
        const Eigen::Vector3d& p = sites[static_cast<size_t>(face[0])];
        const Eigen::Vector3d& q = sites[static_cast<size_t>(face[1])];
        const Eigen::Vector3d& r = sites[static_cast<size_t>(face[2])];
        const double volume = p.dot(q.cross(r));
        out.push_back({on_site[static_cast<size_t>(face[0])], on_site[static_cast<size_t>(face[1])],
                       on_site[static_cast<size_t>(face[2])], volume > 0 ? 1 : -1});
    };
    if (cls == ChiralClass::TB)
        for (const auto& face : kBipyramidFaces) add(face);
    else
        for (const auto& face : kOctahedronFaces) add(face);
    return out;
}

std::vector<SignedVolumeTarget> volume_targets(const Molecule& m, int atom, std::string* problem) {
    const Atom& at = m.atoms[static_cast<size_t>(atom)];
    if (at.chiral_class != ChiralClass::TB && at.chiral_class != ChiralClass::OH) return {};
    const auto order = usable_order(m, atom, problem);
    if (!order) return {};
    return polyhedral_volume_targets(at.chiral_class, at.chiral_index, *order);
}

}  // namespace repel
