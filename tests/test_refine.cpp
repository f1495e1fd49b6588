// Refinement: every energy term's gradient against finite differences, relaxation of distorted molecules to the
// targets the model asks for, kept stereochemistry, separation of coincident atoms, and a 10,000-atom chain.
// The targets checked here are the model's own (bond_length() and the domain angles given by hand), not outside
// data: these tests check that the refinement reaches what it is asked for.
#include <gtest/gtest.h>

#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <functional>
#include <numbers>
#include <span>
#include <vector>

#include "core/bond_length.hpp"
#include "refine/contacts.hpp"
#include "refine/grid.hpp"
#include "refine/lbfgs.hpp"
#include "refine/refine.hpp"
#include "refine/targets.hpp"
#include "refine/terms.hpp"

using namespace repel;
using Eigen::Vector3d;

namespace {

constexpr double kTetrahedral = 109.47122063449069;  // arccos(-1/3), common practice
constexpr double kDeg = std::numbers::pi / 180.0;

// Deterministic noise in [-1, 1] (a 64-bit linear congruential generator, Knuth's MMIX constants), so the tests do
// not depend on a library's random distributions.
class Noise {
public:
    explicit Noise(std::uint64_t seed) : s_(seed) {}
    double next() {
        s_ = s_ * 6364136223846793005ull + 1442695040888963407ull;
        return static_cast<double>(s_ >> 11) / static_cast<double>(1ull << 53) * 2.0 - 1.0;
    }
    Vector3d vec() {
        double a = next(), b = next(), c = next();
        return {a, b, c};
    }

private:
    std::uint64_t s_;
};

// A molecule with its geometry and the domain analysis written by hand: every atom of degree >= 2 gets the same
// predicted angle for each pair of its neighbours (`angle` per atom), steric number as given.
struct Model {
    Molecule molecule;
    std::vector<Vector3d> positions;
    std::vector<int> steric;    // per atom
    std::vector<double> angle;  // per atom, degrees
    std::vector<ChiralTarget> chiral;
    std::vector<DoubleBondTarget> double_bonds;

    int atom(int z, const Vector3d& p, int steric_number, double predicted) {
        Atom a;
        a.z = z;
        positions.push_back(p);
        steric.push_back(steric_number);
        angle.push_back(predicted);
        return molecule.add_atom(a);
    }

    MoleculeDomains domains() const {
        MoleculeDomains d;
        for (int i = 0; i < molecule.atom_count(); ++i) {
            CentreDomains c;
            c.atom = i;
            c.bonded = molecule.degree(i);
            c.steric_number = std::max(steric[static_cast<size_t>(i)], c.bonded);
            c.lone_pairs = c.steric_number - c.bonded;
            const auto& nb = molecule.neighbors(i);
            for (size_t p = 0; p < nb.size(); ++p)
                for (size_t q = p + 1; q < nb.size(); ++q)
                    c.angles.push_back({nb[p].atom, nb[q].atom, angle[static_cast<size_t>(i)]});
            d.atoms.push_back(c);
        }
        return d;
    }

    // The tests judge the minimiser's precision, so they converge tighter than the library default.
    RefineResult refine(RefineOptions options = tight()) {
        return refine_structure(molecule, domains(), chiral, double_bonds, positions, options);
    }
    static RefineOptions tight() {
        RefineOptions o;
        o.gradient_tolerance = 1e-4;
        return o;
    }

    std::vector<double> flat() const {
        std::vector<double> x;
        for (const Vector3d& p : positions) x.insert(x.end(), {p.x(), p.y(), p.z()});
        return x;
    }
};

// Hydrogens on a carbon at tetrahedral positions, given the directions to its heavy neighbours (1 or 2 of them).
void add_tetrahedral_hydrogens(Model& m, int c, const std::vector<Vector3d>& bonded, int count) {
    const Vector3d at = m.positions[static_cast<size_t>(c)];
    const double r = bond_length(6, 1, 1);
    std::vector<Vector3d> dirs;
    if (bonded.size() == 2) {
        const Vector3d w = -(bonded[0] + bonded[1]).normalized();
        const Vector3d n = bonded[0].cross(bonded[1]).normalized();
        const double half = 0.5 * kTetrahedral * kDeg;
        dirs = {w * std::cos(half) + n * std::sin(half), w * std::cos(half) - n * std::sin(half)};
    } else {
        const Vector3d u = bonded.empty() ? Vector3d(0, 0, 1) : bonded[0];
        Vector3d p = u.unitOrthogonal(), q = u.cross(p);
        const double t = kTetrahedral * kDeg;
        for (int k = 0; k < 3; ++k) {
            const double phi = (2.0 * std::numbers::pi / 3.0) * k;
            dirs.push_back(u * std::cos(t) + std::sin(t) * (p * std::cos(phi) + q * std::sin(phi)));
        }
        if (bonded.empty()) dirs.insert(dirs.begin(), u);  // methane: one more along u
    }
    for (int k = 0; k < count; ++k) {
        const int h = m.atom(1, at + r * dirs[static_cast<size_t>(k)], 1, 0);
        m.molecule.add_bond(c, h);
    }
}

Model methane() {
    Model m;
    const int c = m.atom(6, {0, 0, 0}, 4, kTetrahedral);
    add_tetrahedral_hydrogens(m, c, {}, 4);
    return m;
}

// A straight alkane chain C_n H_(2n+2), all anti, at the model's lengths and tetrahedral angles.
Model alkane(int carbons) {
    Model m;
    const double r = bond_length(6, 6, 1);
    const double a = r * std::sin(0.5 * kTetrahedral * kDeg), b = r * std::cos(0.5 * kTetrahedral * kDeg);
    for (int k = 0; k < carbons; ++k) {
        m.atom(6, {k * a, (k % 2) * b, 0}, 4, kTetrahedral);
        if (k > 0) m.molecule.add_bond(k - 1, k);
    }
    for (int k = 0; k < carbons; ++k) {
        std::vector<Vector3d> bonded;
        if (k > 0)
            bonded.push_back(
                (m.positions[static_cast<size_t>(k - 1)] - m.positions[static_cast<size_t>(k)]).normalized());
        if (k + 1 < carbons)
            bonded.push_back(
                (m.positions[static_cast<size_t>(k + 1)] - m.positions[static_cast<size_t>(k)]).normalized());
        add_tetrahedral_hydrogens(m, k, bonded, carbons == 1 ? 4 : (bonded.size() == 1 ? 3 : 2));
    }
    return m;
}

Model benzene() {
    Model m;
    const double rc = bond_length(6, 6, 1, true), rh = bond_length(6, 1, 1);
    for (int k = 0; k < 6; ++k) {
        const double t = k * std::numbers::pi / 3.0;
        m.atom(6, rc * Vector3d(std::cos(t), std::sin(t), 0), 3, 120.0);
    }
    for (int k = 0; k < 6; ++k) {
        const double t = k * std::numbers::pi / 3.0;
        const int h = m.atom(1, (rc + rh) * Vector3d(std::cos(t), std::sin(t), 0), 1, 0);
        m.molecule.add_bond(k, h);
        m.molecule.add_bond(k, (k + 1) % 6, 1 + (k % 2), true);
    }
    return m;
}

// 1,2-difluoroethene, cis or trans as built; a double-bond target for the written side.
Model difluoroethene(bool cis) {
    Model m;
    const double rcc = bond_length(6, 6, 2), rcf = bond_length(6, 9, 1), rch = bond_length(6, 1, 1);
    const double s = std::sin(60 * kDeg), c = std::cos(60 * kDeg);
    const int c1 = m.atom(6, {0, 0, 0}, 3, 120), c2 = m.atom(6, {rcc, 0, 0}, 3, 120);
    const int f1 = m.atom(9, {-rcf * c, rcf * s, 0}, 4, 0);
    const int h1 = m.atom(1, {-rch * c, -rch * s, 0}, 1, 0);
    const double side = cis ? 1 : -1;
    const int f2 = m.atom(9, {rcc + rcf * c, side * rcf * s, 0}, 4, 0);
    const int h2 = m.atom(1, {rcc + rch * c, -side * rch * s, 0}, 1, 0);
    m.molecule.add_bond(c1, c2, 2);
    m.molecule.add_bond(c1, f1);
    m.molecule.add_bond(c1, h1);
    m.molecule.add_bond(c2, f2);
    m.molecule.add_bond(c2, h2);
    m.double_bonds.push_back({f1, c1, c2, f2, cis});
    return m;
}

// Propyne, H-C#C-CH3: two linear centres, and no torsion about the bonds through them.
Model propyne() {
    Model m;
    const double r3 = bond_length(6, 6, 3), r1 = bond_length(6, 6, 1), rh = bond_length(6, 1, 1);
    const int c1 = m.atom(6, {0, 0, 0}, 2, 180), c2 = m.atom(6, {r3, 0, 0}, 2, 180);
    const int c3 = m.atom(6, {r3 + r1, 0, 0}, 4, kTetrahedral);
    const int h = m.atom(1, {-rh, 0, 0}, 1, 0);
    m.molecule.add_bond(c1, c2, 3);
    m.molecule.add_bond(c2, c3, 1);
    m.molecule.add_bond(c1, h);
    add_tetrahedral_hydrogens(m, c3, {Vector3d(-1, 0, 0)}, 3);
    return m;
}

// A stereocentre C(H)(F)(CH3)(CH2F) with its chiral target for the handedness as built.
Model stereocentre() {
    Model m;
    const double rcc = bond_length(6, 6, 1), rcf = bond_length(6, 9, 1), rch = bond_length(6, 1, 1);
    const Vector3d u[4] = {Vector3d(1, 1, 1).normalized(), Vector3d(1, -1, -1).normalized(),
                           Vector3d(-1, 1, -1).normalized(), Vector3d(-1, -1, 1).normalized()};
    const int c = m.atom(6, {0, 0, 0}, 4, kTetrahedral);
    const int h = m.atom(1, rch * u[0], 1, 0);
    const int f = m.atom(9, rcf * u[1], 4, 0);
    const int me = m.atom(6, rcc * u[2], 4, kTetrahedral);
    const int cf = m.atom(6, rcc * u[3], 4, kTetrahedral);
    m.molecule.add_bond(c, h);
    m.molecule.add_bond(c, f);
    m.molecule.add_bond(c, me);
    m.molecule.add_bond(c, cf);
    add_tetrahedral_hydrogens(m, me, {-u[2]}, 3);
    const int f2 = m.atom(9, m.positions[static_cast<size_t>(cf)] + rcf * Vector3d(0, 0, 1), 4, 0);
    m.molecule.add_bond(cf, f2);
    add_tetrahedral_hydrogens(m, cf, {-u[3], Vector3d(0, 0, 1)}, 2);
    const Vector3d o = m.positions[static_cast<size_t>(c)];
    const double v =
        (m.positions[static_cast<size_t>(h)] - o)
            .dot((m.positions[static_cast<size_t>(f)] - o).cross(m.positions[static_cast<size_t>(me)] - o));
    m.chiral.push_back({c, h, f, me, v > 0 ? 1 : -1});
    return m;
}

// Cyclopropane with the tetrahedral angle asked at every carbon: the ring can only give 60 degrees.
Model cyclopropane() {
    Model m;
    const double r = bond_length(6, 6, 1);
    const double ring = r / std::sqrt(3.0);  // circumradius of the triangle
    for (int k = 0; k < 3; ++k) {
        const double t = 2.0 * std::numbers::pi / 3.0 * k;
        m.atom(6, ring * Vector3d(std::cos(t), std::sin(t), 0), 4, kTetrahedral);
    }
    for (int k = 0; k < 3; ++k) m.molecule.add_bond(k, (k + 1) % 3);
    for (int k = 0; k < 3; ++k) {
        const Vector3d at = m.positions[static_cast<size_t>(k)];
        const Vector3d out = at.normalized();
        for (int side : {-1, 1}) {
            const int h = m.atom(1, at + bond_length(6, 1, 1) * (out * 0.55 + Vector3d(0, 0, side * 0.835)), 1, 0);
            m.molecule.add_bond(k, h);
        }
    }
    return m;
}

// N-methylformamide, H-C(=O)-N(H)-CH3, with the nitrogen analysed as three bonded domains and a lone pair
// (pyramidal angles of 107 degrees) and built pyramidal, as a domain count alone would give it.
Model methylformamide() {
    Model m;
    const int c1 = m.atom(6, {0, 0, 0}, 3, 120);
    const int o = m.atom(8, {-0.62, 1.07, 0}, 3, 0);
    const int n = m.atom(7, {1.35, 0, 0}, 4, 107);
    const int h1 = m.atom(1, {-0.55, -0.95, 0}, 1, 0);
    const int c2 = m.atom(6, {2.08, 1.26, 0}, 4, kTetrahedral);
    const int hn = m.atom(1, {1.85, -0.87, 0.4}, 1, 0);
    m.molecule.add_bond(c1, o, 2);
    m.molecule.add_bond(c1, n);
    m.molecule.add_bond(c1, h1);
    m.molecule.add_bond(n, c2);
    m.molecule.add_bond(n, hn);
    add_tetrahedral_hydrogens(
        m, c2, {(m.positions[static_cast<size_t>(n)] - m.positions[static_cast<size_t>(c2)]).normalized()}, 3);
    return m;
}

// Indole (benzene fused to pyrrole), all atoms planar, with ring-blind domain angles: 120 at every carbon, a
// 107-degree pyramid at the NH nitrogen. Atoms 0-5 the six-ring (0 and 5 shared), 6-8 the rest of the five-ring
// (6 the nitrogen), then the hydrogens.
Model indole() {
    Model m;
    const double r = bond_length(6, 6, 1, true);
    // Six-ring: a regular hexagon with the shared bond 0-5 vertical at x = r cos 30.
    for (int k = 0; k < 6; ++k) {
        const double t = (-30.0 - 60.0 * k) * kDeg;
        m.atom(6, r * Vector3d(std::cos(t), std::sin(t), 0), 3, 120);
    }
    // Five-ring: a regular pentagon on the other side of the shared bond, from atom 0 round to atom 5.
    const Vector3d p = m.positions[0], q = m.positions[5];
    const Vector3d mid = 0.5 * (p + q);
    const Vector3d centre5 = mid + Vector3d(r / (2 * std::tan(36 * kDeg)), 0, 0);
    for (int k = 1; k <= 3; ++k) {
        const double t = std::atan2(p.y() - centre5.y(), p.x() - centre5.x()) + k * 72 * kDeg;
        const double radius = (p - centre5).norm();
        m.atom(k == 1 ? 7 : 6, centre5 + radius * Vector3d(std::cos(t), std::sin(t), 0), k == 1 ? 4 : 3,
               k == 1 ? 107 : 120);
    }
    const int ring6[6] = {0, 1, 2, 3, 4, 5}, ring5[5] = {0, 6, 7, 8, 5};
    for (int k = 0; k < 6; ++k) m.molecule.add_bond(ring6[k], ring6[(k + 1) % 6], 1 + (k % 2), true);
    for (int k = 0; k < 4; ++k) m.molecule.add_bond(ring5[k], ring5[k + 1], 1 + (k % 2), true);
    const Vector3d centre6 = Vector3d::Zero();
    for (int atom : {1, 2, 3, 4}) {
        const Vector3d at = m.positions[static_cast<size_t>(atom)];
        m.molecule.add_bond(atom, m.atom(1, at + 1.0 * (at - centre6).normalized(), 1, 0));
    }
    for (int atom : {6, 7, 8}) {
        const Vector3d at = m.positions[static_cast<size_t>(atom)];
        m.molecule.add_bond(atom, m.atom(1, at + 1.0 * (at - centre5).normalized(), 1, 0));
    }
    return m;
}

void perturb(Model& m, double amplitude, std::uint64_t seed) {
    Noise noise(seed);
    for (Vector3d& p : m.positions) p += amplitude * noise.vec();
}

double signed_volume(const Model& m, const ChiralTarget& t) {
    const auto& p = m.positions;
    const Vector3d o = p[static_cast<size_t>(t.centre)];
    return (p[static_cast<size_t>(t.n1)] - o)
        .dot((p[static_cast<size_t>(t.n2)] - o).cross(p[static_cast<size_t>(t.n3)] - o));
}

double torsion_degrees(const Model& m, int a, int b, int c, int d) {
    const auto& p = m.positions;
    const Vector3d b1 = p[static_cast<size_t>(b)] - p[static_cast<size_t>(a)];
    const Vector3d b2 = p[static_cast<size_t>(c)] - p[static_cast<size_t>(b)];
    const Vector3d b3 = p[static_cast<size_t>(d)] - p[static_cast<size_t>(c)];
    const Vector3d n1 = b1.cross(b2), n2 = b2.cross(b3);
    return std::atan2(b2.norm() * b1.dot(n2), n1.dot(n2)) / kDeg;
}

double angle_degrees(const Model& m, int a, int c, int b) {
    const Vector3d u = m.positions[static_cast<size_t>(a)] - m.positions[static_cast<size_t>(c)];
    const Vector3d v = m.positions[static_cast<size_t>(b)] - m.positions[static_cast<size_t>(c)];
    return std::acos(std::clamp(u.normalized().dot(v.normalized()), -1.0, 1.0)) / kDeg;
}

// Every bond at bond_length() and every angle at its hand-written target, within the given tolerances.
void expect_at_targets(const Model& m, double length_tol, double angle_tol) {
    for (const Bond& b : m.molecule.bonds) {
        const double r = (m.positions[static_cast<size_t>(b.a)] - m.positions[static_cast<size_t>(b.b)]).norm();
        const double target = bond_length(m.molecule.atoms[static_cast<size_t>(b.a)].z,
                                          m.molecule.atoms[static_cast<size_t>(b.b)].z, b.order, b.aromatic);
        EXPECT_NEAR(r, target, length_tol) << "bond " << b.a + 1 << "-" << b.b + 1;
    }
    for (int c = 0; c < m.molecule.atom_count(); ++c) {
        const auto& nb = m.molecule.neighbors(c);
        for (size_t p = 0; p < nb.size(); ++p)
            for (size_t q = p + 1; q < nb.size(); ++q)
                EXPECT_NEAR(angle_degrees(m, nb[p].atom, c, nb[q].atom), m.angle[static_cast<size_t>(c)], angle_tol)
                    << "angle " << nb[p].atom + 1 << "-" << c + 1 << "-" << nb[q].atom + 1;
    }
}

// Analytic gradient of an energy function against central differences.
using EnergyFunction = std::function<double(const double*, double*)>;

void expect_gradient_matches(const EnergyFunction& energy, std::vector<double> x, const char* what) {
    std::vector<double> g(x.size(), 0.0);
    const double e0 = energy(x.data(), g.data());
    EXPECT_TRUE(std::isfinite(e0)) << what;
    EXPECT_GT(e0, 0.0) << what << ": the geometry should make the term act";
    const double h = 1e-6;
    double largest = 0;
    for (size_t i = 0; i < x.size(); ++i) {
        const double keep = x[i];
        x[i] = keep + h;
        const double ep = energy(x.data(), nullptr);
        x[i] = keep - h;
        const double em = energy(x.data(), nullptr);
        x[i] = keep;
        const double numeric = (ep - em) / (2 * h);
        largest = std::max(largest, std::abs(g[i]));
        EXPECT_NEAR(g[i], numeric, 1e-6 + 1e-5 * std::abs(numeric)) << what << ", coordinate " << i;
    }
    EXPECT_GT(largest, 1e-4) << what << ": the gradient should not vanish at this geometry";
}

refine::EnergyTerms terms_of(const Model& m) {
    return refine::build_terms(m.molecule, m.domains(), m.chiral, m.double_bonds);
}

}  // namespace

// ---- Gradients ------------------------------------------------------------------------------------------------------

TEST(RefineGradient, BondsAndAnglesOfEthane) {
    Model m = alkane(2);
    perturb(m, 0.15, 1);
    const auto t = terms_of(m);
    ASSERT_EQ(t.bonds.size(), 7u);
    ASSERT_EQ(t.angles.size(), 12u);  // 6 at each carbon
    expect_gradient_matches([&](const double* x, double* g) { return refine::distance_energy(t.bonds, x, g); },
                            m.flat(), "bonds");
    expect_gradient_matches([&](const double* x, double* g) { return refine::angle_energy(t.angles, x, g); }, m.flat(),
                            "angles");
}

TEST(RefineGradient, StaggeringTorsionsOfButane) {
    Model m = alkane(4);
    perturb(m, 0.2, 2);
    const auto t = terms_of(m);
    ASSERT_FALSE(t.torsions.empty());
    expect_gradient_matches([&](const double* x, double* g) { return refine::torsion_energy(t.torsions, x, g); },
                            m.flat(), "staggered torsions");
}

TEST(RefineGradient, PlanarityAndPiTorsionsOfBenzene) {
    Model m = benzene();
    perturb(m, 0.15, 3);
    const auto t = terms_of(m);
    ASSERT_EQ(t.planes.size(), 6u);
    expect_gradient_matches([&](const double* x, double* g) { return refine::planarity_energy(t.planes, x, g); },
                            m.flat(), "planarity");
    expect_gradient_matches([&](const double* x, double* g) { return refine::torsion_energy(t.torsions, x, g); },
                            m.flat(), "pi torsions");
}

// 180-degree targets (propyne) and near-linear geometries with other targets (a bent model asked of a straight one).
TEST(RefineGradient, AnglesNearAndAtLinear) {
    Model m = propyne();
    perturb(m, 0.02, 4);
    const auto t = terms_of(m);
    expect_gradient_matches([&](const double* x, double* g) { return refine::angle_energy(t.angles, x, g); }, m.flat(),
                            "linear targets");
    Model bent = propyne();
    bent.angle[0] = bent.angle[1] = 150.0;
    perturb(bent, 0.02, 5);
    const auto tb = terms_of(bent);
    expect_gradient_matches([&](const double* x, double* g) { return refine::angle_energy(tb.angles, x, g); },
                            bent.flat(), "bent targets at a near-linear geometry");
}

TEST(RefineGradient, DoubleBondTargetOfDifluoroethene) {
    for (bool cis : {true, false}) {
        Model m = difluoroethene(cis);
        perturb(m, 0.3, 5);
        const auto t = terms_of(m);
        ASSERT_EQ(t.double_bonds.size(), 1u);
        expect_gradient_matches(
            [&](const double* x, double* g) { return refine::torsion_energy(t.double_bonds, x, g); }, m.flat(),
            cis ? "cis target" : "trans target");
    }
}

TEST(RefineGradient, ChiralPenaltyOfAFlattenedCentre) {
    Model m = stereocentre();
    // Push the centre through the plane of H, F and CH3 so that the penalty acts.
    const ChiralTarget c = m.chiral[0];
    const Vector3d mid = (m.positions[1] + m.positions[2] + m.positions[3]) / 3.0;
    m.positions[0] = mid + 0.2 * (mid - m.positions[0]).normalized();
    perturb(m, 0.05, 6);
    const auto t = terms_of(m);
    ASSERT_EQ(t.chiral.size(), 1u);
    EXPECT_LT(c.sign * signed_volume(m, c), 0.0);
    expect_gradient_matches([&](const double* x, double* g) { return refine::chiral_energy(t.chiral, x, g); }, m.flat(),
                            "chiral");
}

TEST(RefineGradient, ContactsOfACompressedChain) {
    Model m = alkane(6);
    for (Vector3d& p : m.positions) p *= 0.6;  // bring 1-4 and 1-5 pairs into contact
    perturb(m, 0.05, 7);
    refine::ContactModel contacts(m.molecule);
    const auto x0 = m.flat();
    contacts.update(x0);
    ASSERT_FALSE(contacts.pairs().empty());
    expect_gradient_matches(
        [&](const double* x, double* g) {
            contacts.update({x, x0.size()});
            return contacts.energy(x, g);
        },
        x0, "contacts");
}

TEST(RefineGradient, TotalOfEachMolecule) {
    std::vector<Model> models = {methane(), alkane(5), benzene(), propyne(), difluoroethene(true), stereocentre()};
    std::uint64_t seed = 10;
    for (Model& m : models) {
        perturb(m, 0.2, seed++);
        const auto t = terms_of(m);
        refine::ContactModel contacts(m.molecule);
        const auto x0 = m.flat();
        expect_gradient_matches(
            [&](const double* x, double* g) {
                contacts.update({x, x0.size()});
                return refine::bonded_energy(t, x, g) + contacts.energy(x, g);
            },
            x0, "total");
    }
}

// Coincident atoms: every term stays finite and the gradient pushes the pair apart.
TEST(RefineGradient, FiniteWhenAtomsCoincide) {
    Model m = stereocentre();
    m.positions[2] = m.positions[0];  // F on top of the centre
    m.positions[5] = m.positions[4];  // a methyl H on the CH2F carbon
    m.positions[3] = m.positions[1];  // two substituents on top of each other
    const auto t = terms_of(m);
    refine::ContactModel contacts(m.molecule);
    const auto x = m.flat();
    contacts.update(x);
    std::vector<double> g(x.size(), 0.0);
    const double e = refine::bonded_energy(t, x.data(), g.data()) + contacts.energy(x.data(), g.data());
    EXPECT_TRUE(std::isfinite(e));
    for (double v : g) EXPECT_TRUE(std::isfinite(v));
}

// ---- The cell grid ------------------------------------------------------------------------------------------------

TEST(RefineGrid, FindsExactlyThePairsWithinTheCutoff) {
    Noise noise(42);
    std::vector<double> x;
    for (int i = 0; i < 400; ++i) {
        const Vector3d p = 8.0 * noise.vec();
        x.insert(x.end(), {p.x(), p.y(), p.z()});
    }
    // Far outliers: the grid stores only occupied cells, so a huge extent costs nothing.
    x.insert(x.end(), {1e6, -1e6, 3e5, 1e6 + 1.0, -1e6, 3e5});
    refine::CellGrid grid;
    std::vector<std::pair<int, int>> pairs;
    const double cutoff = 2.5;
    grid.close_pairs(x, cutoff, pairs);
    std::vector<std::pair<int, int>> brute;
    const int n = static_cast<int>(x.size() / 3);
    for (int i = 0; i < n; ++i)
        for (int j = i + 1; j < n; ++j) {
            const Vector3d d(x[3 * i] - x[3 * j], x[3 * i + 1] - x[3 * j + 1], x[3 * i + 2] - x[3 * j + 2]);
            if (d.norm() < cutoff) brute.emplace_back(i, j);
        }
    std::sort(pairs.begin(), pairs.end());
    EXPECT_EQ(pairs, brute);
    EXPECT_NE(std::find(pairs.begin(), pairs.end(), std::pair<int, int>{400, 401}), pairs.end());
}

TEST(RefineContacts, ExcludesOneTwoAndOneThreeAndScalesOneFour) {
    Model m = alkane(4);
    refine::BondNeighbourhood near(m.molecule);
    EXPECT_EQ(near.bonds_apart(0, 1), 1);
    EXPECT_EQ(near.bonds_apart(0, 2), 2);
    EXPECT_EQ(near.bonds_apart(0, 3), 3);
    EXPECT_EQ(near.bonds_apart(3, 0), 3);
    // A hydrogen on C1 and one on C4 are 5 bonds apart.
    EXPECT_EQ(near.bonds_apart(4, m.molecule.atom_count() - 1), 0);
}

// ---- Relaxation ---------------------------------------------------------------------------------------------------

TEST(Refine, DistortedMethaneRelaxesToTheTargets) {
    Model m = methane();
    perturb(m, 0.25, 20);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    EXPECT_LT(r.energy_after, r.energy_before);
    expect_at_targets(m, 0.002, 0.2);
}

TEST(Refine, DistortedEthaneRelaxesToTheTargetsAndStaggers) {
    Model m = alkane(2);
    perturb(m, 0.25, 21);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    expect_at_targets(m, 0.002, 0.3);
    // H-C-C-H torsions staggered: 60 or 180 degrees, never eclipsed.
    const auto& h1 = m.molecule.neighbors(0);
    const auto& h2 = m.molecule.neighbors(1);
    for (const Neighbor& a : h1)
        for (const Neighbor& d : h2) {
            if (a.atom == 1 || d.atom == 0) continue;
            const double phi = std::abs(torsion_degrees(m, a.atom, 0, 1, d.atom));
            EXPECT_TRUE(std::abs(phi - 60) < 2 || std::abs(phi - 180) < 2) << phi;
        }
}

TEST(Refine, DistortedBenzeneRelaxesFlat) {
    Model m = benzene();
    perturb(m, 0.2, 22);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    expect_at_targets(m, 0.002, 0.3);
    // Every atom within 0.01 A of the best plane (through the centroid, normal from the ring).
    Vector3d centroid = Vector3d::Zero();
    for (const Vector3d& p : m.positions) centroid += p;
    centroid /= 12.0;
    const Vector3d normal = (m.positions[0] - m.positions[2]).cross(m.positions[4] - m.positions[2]).normalized();
    for (const Vector3d& p : m.positions) EXPECT_NEAR((p - centroid).dot(normal), 0.0, 0.01);
}

TEST(Refine, LinearCentreStaysLinear) {
    Model m = propyne();
    perturb(m, 0.15, 23);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    EXPECT_GT(angle_degrees(m, 3, 0, 1), 179.0);
    EXPECT_GT(angle_degrees(m, 0, 1, 2), 179.0);
}

TEST(Refine, DoubleBondKeepsItsSide) {
    for (bool cis : {true, false}) {
        Model m = difluoroethene(cis);
        perturb(m, 0.3, 24);
        const RefineResult r = m.refine();
        EXPECT_TRUE(r.converged) << r.message;
        const double phi = std::abs(torsion_degrees(m, 2, 0, 1, 4));
        EXPECT_NEAR(phi, cis ? 0.0 : 180.0, 2.0);
    }
}

TEST(Refine, FlattenedStereocentreRecoversItsHandedness) {
    Model m = stereocentre();
    const ChiralTarget c = m.chiral[0];
    // Flatten: put the centre in the plane of H, F and CH3 (signed volume 0).
    m.positions[0] = (m.positions[1] + m.positions[2] + m.positions[3]) / 3.0;
    EXPECT_NEAR(signed_volume(m, c), 0.0, 1e-9);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    EXPECT_GT(c.sign * signed_volume(m, c), 0.5);
    expect_at_targets(m, 0.002, 0.3);
}

TEST(Refine, InvertedStereocentreIsTurnedBack) {
    Model m = stereocentre();
    const ChiralTarget c = m.chiral[0];
    // Mirror the centre through the plane of H, F and CH3: fully inverted, at the wrong-handed minimum of the angles.
    const Vector3d mid = (m.positions[1] + m.positions[2] + m.positions[3]) / 3.0;
    const Vector3d normal = (m.positions[2] - m.positions[1]).cross(m.positions[3] - m.positions[1]).normalized();
    m.positions[0] -= 2.0 * (m.positions[0] - mid).dot(normal) * normal;
    ASSERT_LT(c.sign * signed_volume(m, c), 0.0);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    EXPECT_GT(c.sign * signed_volume(m, c), 0.5);
}

TEST(Refine, CorrectStereocentreNeverInverts) {
    for (std::uint64_t seed = 30; seed < 40; ++seed) {
        Model m = stereocentre();
        perturb(m, 0.3, seed);
        const ChiralTarget c = m.chiral[0];
        m.refine();
        EXPECT_GT(c.sign * signed_volume(m, c), 0.5) << "seed " << seed;
    }
}

// An amide nitrogen conjugates with its carbonyl: refined planar, with the amide bond's torsion at 0 or 180
// degrees, although its domain count (three bonds and a lone pair) asks for a pyramid.
TEST(Refine, AmideNitrogenBecomesPlanar) {
    Model m = methylformamide();
    perturb(m, 0.05, 26);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    const double sum = angle_degrees(m, 0, 2, 4) + angle_degrees(m, 0, 2, 5) + angle_degrees(m, 4, 2, 5);
    EXPECT_GT(sum, 359.0);
    const double omega = std::abs(torsion_degrees(m, 1, 0, 2, 4));
    EXPECT_TRUE(omega < 3.0 || omega > 177.0) << omega;
}

// The domain analysis knows no rings: a flat five-membered ring's angles become the regular pentagon's, the
// others at its atoms share what is left of 360 degrees, and a pyrrole-type nitrogen is made planar.
TEST(RefineTargets, RingAnglesFollowTheRing) {
    const Model m = indole();
    const auto t = terms_of(m);
    auto target = [&](int a, int c, int b) {
        for (const auto& angle : t.angles)
            if (angle.centre == c && ((angle.i == a && angle.j == b) || (angle.i == b && angle.j == a)))
                return std::atan2(angle.sin0, angle.cos0) / kDeg;
        return -1.0;
    };
    EXPECT_NEAR(target(0, 6, 7), 108.0, 1e-9);  // at the nitrogen
    EXPECT_NEAR(target(6, 7, 8), 108.0, 1e-9);
    EXPECT_NEAR(target(6, 0, 5), 108.0, 1e-9);   // at the fusion atom, in the five-ring
    EXPECT_NEAR(target(1, 0, 5), 120.0, 1e-9);   // in the six-ring
    EXPECT_NEAR(target(1, 0, 6), 132.0, 1e-9);   // what is left of 360
    EXPECT_NEAR(target(0, 6, 13), 126.0, 1e-9);  // N-H shares 360 - 108
}

// In a fused system the ring-blind angles could only be met by squeezing the shared bond (a pentagon with a short
// side has wider angles at its ends); with the ring's angles every bond keeps its length.
TEST(Refine, FusedRingsKeepTheirBonds) {
    Model m = indole();
    perturb(m, 0.1, 27);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    for (const Bond& b : m.molecule.bonds) {
        const double target = bond_length(m.molecule.atoms[static_cast<size_t>(b.a)].z,
                                          m.molecule.atoms[static_cast<size_t>(b.b)].z, b.order, b.aromatic);
        EXPECT_NEAR((m.positions[static_cast<size_t>(b.a)] - m.positions[static_cast<size_t>(b.b)]).norm(), target,
                    0.01)
            << "bond " << b.a + 1 << "-" << b.b + 1;
    }
    const double sum = angle_degrees(m, 0, 6, 7) + angle_degrees(m, 0, 6, 13) + angle_degrees(m, 7, 6, 13);
    EXPECT_GT(sum, 359.5);
}

TEST(Refine, DoubleBondBuiltOnTheWrongSideIsReported) {
    Model m = difluoroethene(false);
    m.double_bonds[0].cis = true;  // asks cis, built exactly trans and planar: a saddle of the target term
    const RefineResult r = m.refine();
    EXPECT_FALSE(r.converged);
    EXPECT_NE(r.message.find("is not cis as asked"), std::string::npos) << r.message;
}

// A strained ring: the angles give way to the ring, the bonds stay close to their lengths (the angle constant is
// well below the bond constant), and the torsion terms do not fight the eclipsed ring bonds.
TEST(Refine, StrainedRingKeepsItsBonds) {
    Model m = cyclopropane();
    perturb(m, 0.1, 25);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    for (int k = 0; k < 3; ++k) {
        EXPECT_NEAR(angle_degrees(m, (k + 1) % 3, k, (k + 2) % 3), 60.0, 0.5);
        EXPECT_NEAR((m.positions[static_cast<size_t>(k)] - m.positions[static_cast<size_t>((k + 1) % 3)]).norm(),
                    bond_length(6, 6, 1), 0.05);
    }
}

TEST(Refine, CoincidentAtomsSeparate) {
    Model m = alkane(4);
    // A hydrogen of C1 placed exactly on a hydrogen of C4's neighbour, and one carbon on top of another.
    m.positions[m.molecule.atom_count() - 1] = m.positions[4];
    m.positions[3] = m.positions[1];
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    for (int i = 0; i < m.molecule.atom_count(); ++i)
        for (int j = i + 1; j < m.molecule.atom_count(); ++j) {
            const double d = (m.positions[static_cast<size_t>(i)] - m.positions[static_cast<size_t>(j)]).norm();
            EXPECT_GT(d, 0.9) << i + 1 << " and " << j + 1;
        }
    expect_at_targets(m, 0.01, 2.0);
}

TEST(Refine, SameInputGivesBitIdenticalOutput) {
    Model a = alkane(12), b = alkane(12);
    perturb(a, 0.2, 50);
    perturb(b, 0.2, 50);
    const RefineResult ra = a.refine(), rb = b.refine();
    EXPECT_EQ(ra.iterations, rb.iterations);
    for (size_t i = 0; i < a.positions.size(); ++i)
        for (int k = 0; k < 3; ++k) EXPECT_EQ(a.positions[i][k], b.positions[i][k]);
}

TEST(Refine, ReportsNonConvergenceWithAMessage) {
    Model m = alkane(20);
    perturb(m, 0.3, 60);
    RefineOptions options;
    options.max_iterations = 5;
    const RefineResult r = m.refine(options);
    EXPECT_FALSE(r.converged);
    EXPECT_LE(r.iterations, 5);
    EXPECT_NE(r.message.find("above the tolerance"), std::string::npos) << r.message;
    for (const Vector3d& p : m.positions) EXPECT_TRUE(p.allFinite());
}

TEST(Refine, RejectsMismatchedInput) {
    Model m = methane();
    MoleculeDomains d = m.domains();
    d.atoms.pop_back();
    EXPECT_THROW(refine_structure(m.molecule, d, {}, {}, m.positions), std::invalid_argument);
    std::vector<Vector3d> few(3, Vector3d::Zero());
    EXPECT_THROW(refine_structure(m.molecule, m.domains(), {}, {}, few), std::invalid_argument);
    std::vector<ChiralTarget> bad = {{0, 1, 2, 9, 1}};
    EXPECT_THROW(refine_structure(m.molecule, m.domains(), bad, {}, m.positions), std::invalid_argument);
    m.positions[1].x() = std::nan("");
    EXPECT_THROW(m.refine(), std::invalid_argument);
}

TEST(Refine, TenThousandAtomChainConverges) {
    Model m = alkane(3333);  // C3333H6668: 10,001 atoms
    ASSERT_EQ(m.molecule.atom_count(), 10001);
    perturb(m, 0.1, 70);
    const RefineResult r = m.refine();
    EXPECT_TRUE(r.converged) << r.message;
    expect_at_targets(m, 0.005, 1.0);
}

// ---- The minimiser on its own (lbfgs.hpp) ------------------------------------------------------------------------

TEST(Lbfgs, FindsTheRosenbrockMinimum) {
    // Rosenbrock's function (Rosenbrock, Comput. J. 3 (1960) 175): a curved valley with its minimum 0 at (1, 1),
    // from the customary start (-1.2, 1).
    auto f = [](std::span<const double> x, std::span<double> g) {
        const double a = 1 - x[0], b = x[1] - x[0] * x[0];
        g[0] = -2 * a - 400 * x[0] * b;
        g[1] = 200 * b;
        return a * a + 100 * b * b;
    };
    std::vector<double> x = {-1.2, 1.0};
    refine::LbfgsOptions o;
    o.gradient_tolerance = 1e-8;
    o.max_step = 10;
    o.first_step = 1;
    const refine::LbfgsResult r = refine::minimise_lbfgs(f, x, o);
    EXPECT_EQ(r.status, refine::LbfgsStatus::converged);
    EXPECT_NEAR(x[0], 1.0, 1e-6);
    EXPECT_NEAR(x[1], 1.0, 1e-6);
    EXPECT_LT(r.rms_gradient, 1e-8);
}

TEST(Lbfgs, SolvesAnIllConditionedQuadratic) {
    // sum_i c_i (x_i - i)^2 with c_i from 1 to 1000 over 60 variables: minimum at x_i = i.
    const int n = 60;
    auto f = [n](std::span<const double> x, std::span<double> g) {
        double e = 0;
        for (int i = 0; i < n; ++i) {
            const double c = std::pow(1000.0, i / (n - 1.0)), d = x[static_cast<size_t>(i)] - i;
            e += c * d * d;
            g[static_cast<size_t>(i)] = 2 * c * d;
        }
        return e;
    };
    std::vector<double> x(n, 0.0);
    refine::LbfgsOptions o;
    o.gradient_tolerance = 1e-9;
    o.max_step = 100;
    const refine::LbfgsResult r = refine::minimise_lbfgs(f, x, o);
    EXPECT_EQ(r.status, refine::LbfgsStatus::converged);
    for (int i = 0; i < n; ++i) EXPECT_NEAR(x[static_cast<size_t>(i)], i, 1e-6) << i;
}

TEST(Lbfgs, NoTrialStepLongerThanTheCap) {
    // (x - 100)^2 from 0 with a cap of 1: the minimiser must walk; consecutive evaluated points are never more than
    // the cap apart, and the minimum is still reached.
    std::vector<double> seen;
    auto f = [&seen](std::span<const double> x, std::span<double> g) {
        seen.push_back(x[0]);
        g[0] = 2 * (x[0] - 100);
        return (x[0] - 100) * (x[0] - 100);
    };
    std::vector<double> x = {0.0};
    refine::LbfgsOptions o;
    o.max_step = 1.0;
    o.first_step = 0.1;
    o.gradient_tolerance = 1e-6;
    const refine::LbfgsResult r = refine::minimise_lbfgs(f, x, o);
    EXPECT_EQ(r.status, refine::LbfgsStatus::converged);
    EXPECT_NEAR(x[0], 100.0, 1e-5);
    ASSERT_GT(seen.size(), 100u);  // at least 100 steps of at most 1
    for (size_t k = 1; k < seen.size(); ++k) EXPECT_LE(std::abs(seen[k] - seen[k - 1]), 1.0 + 1e-12) << k;
}

TEST(Lbfgs, StopsAtTheBudgetWithTheLowestPoint) {
    auto f = [](std::span<const double> x, std::span<double> g) {
        const double a = 1 - x[0], b = x[1] - x[0] * x[0];
        g[0] = -2 * a - 400 * x[0] * b;
        g[1] = 200 * b;
        return a * a + 100 * b * b;
    };
    std::vector<double> x = {-1.2, 1.0};
    std::vector<double> g(2);
    const double start = f(x, g);
    refine::LbfgsOptions o;
    o.max_evaluations = 5;
    const refine::LbfgsResult r = refine::minimise_lbfgs(f, x, o);
    EXPECT_EQ(r.status, refine::LbfgsStatus::budget);
    EXPECT_LE(r.evaluations, 5);
    EXPECT_LT(r.energy, start);
    EXPECT_DOUBLE_EQ(f(x, g), r.energy);  // x is the point the energy belongs to
}

TEST(Lbfgs, StopsOnANonFiniteEnergyAndKeepsTheLastFinitePoint) {
    // Finite for x < 2, NaN beyond: the first steps towards the minimum at 5 run into it.
    auto f = [](std::span<const double> x, std::span<double> g) {
        g[0] = 2 * (x[0] - 5);
        return x[0] < 2 ? (x[0] - 5) * (x[0] - 5) : std::nan("");
    };
    std::vector<double> x = {0.0};
    refine::LbfgsOptions o;
    o.first_step = 1;
    o.max_step = 10;
    const refine::LbfgsResult r = refine::minimise_lbfgs(f, x, o);
    EXPECT_EQ(r.status, refine::LbfgsStatus::non_finite);
    EXPECT_TRUE(std::isfinite(x[0]));
    EXPECT_LT(x[0], 2.0);
}
