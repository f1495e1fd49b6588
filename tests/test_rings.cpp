// Ring perception, the optimal rotation, distance geometry, and ring-system shapes.
#include <gtest/gtest.h>

#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>

#include <repel/repel.hpp>

#include "assemble/distance_geometry.hpp"
#include "assemble/place.hpp"
#include "assemble/ring_embed.hpp"
#include "graph/rings.hpp"
#include "domains/domains.hpp"
#include "input/smiles.hpp"

using namespace repel;
using Eigen::Vector3d;

namespace {

Molecule mol(const std::string& smi) { return read_molecule(smi, {.notation = TextNotation::smiles}); }

std::vector<int> ring_sizes(const RingInfo& r) {
    std::vector<int> s;
    for (const auto& ring : r.rings) s.push_back(static_cast<int>(ring.size()));
    std::sort(s.begin(), s.end());
    return s;
}

}  // namespace

// The bounded searches: an angle, an atom and a bond in rings of at most a given size (indices as read: SMILES order,
// hydrogens after the heavy atoms).
TEST(SmallRingSearch, AngleAtomAndBondMembership) {
    // Methylcyclopropane: C0 outside, C1 C2 C3 the three-membered ring.
    const Molecule cp = mol("CC1CC1");
    SmallRingSearch cps(cp);
    EXPECT_TRUE(cps.angle_in_ring(2, 1, 3, 3));
    EXPECT_FALSE(cps.angle_in_ring(0, 1, 2, 9));   // the methyl is on no ring
    EXPECT_EQ(cps.ring_through(2, 1, 3, 3), (std::vector<int>{1, 2, 3}));
    EXPECT_TRUE(cps.atom_in_ring(1, 4));
    EXPECT_FALSE(cps.atom_in_ring(0, 9));
    EXPECT_TRUE(cps.bond_in_ring(cp.bond_between(1, 2), 3));
    EXPECT_FALSE(cps.bond_in_ring(cp.bond_between(0, 1), 9));
    // Cyclohexene: the double bond C0=C1 lies in a six-membered ring, not in one of five or fewer.
    const Molecule hx = mol("C1=CCCCC1");
    SmallRingSearch hxs(hx);
    const int db = hx.bond_between(0, 1);
    EXPECT_TRUE(hxs.bond_in_ring(db, 6));
    EXPECT_FALSE(hxs.bond_in_ring(db, 5));
    EXPECT_TRUE(hxs.angle_in_ring(1, 0, 5, 6));
    EXPECT_FALSE(hxs.angle_in_ring(1, 0, 5, 5));
    EXPECT_FALSE(hxs.atom_in_ring(0, 4));
}

TEST(RingPerception, SmallestSetOfSmallestRings) {
    struct Case {
        const char* smi;
        std::vector<int> sizes;
        int systems;
    };
    const Case cases[] = {
        {"CCCC", {}, 0},
        {"c1ccccc1", {6}, 1},
        {"c1ccc2ccccc2c1", {6, 6}, 1},
        {"C1CC2CCC1C2", {5, 5}, 1},                   // norbornane: two five-membered rings, not the six
        {"C1C2CC3CC1CC(C2)C3", {6, 6, 6}, 1},         // adamantane
        {"C12C3C4C1C5C2C3C45", {4, 4, 4, 4, 4}, 1},   // cubane: five of its six faces
        {"C1CCC2(CC1)CCCC2", {5, 6}, 1},              // spiro: one system
        {"c1ccccc1-c1ccccc1", {6, 6}, 2},             // biphenyl: two systems
        {"C1CC1C1CC1", {3, 3}, 2},
    };
    for (const Case& k : cases) {
        const Molecule m = mol(k.smi);
        const RingInfo r = perceive_rings(m);
        EXPECT_EQ(ring_sizes(r), k.sizes) << k.smi;
        EXPECT_EQ(static_cast<int>(r.systems.size()), k.systems) << k.smi;
        // Each ring is a cycle of bonded atoms.
        for (const auto& ring : r.rings)
            for (size_t i = 0; i < ring.size(); ++i)
                EXPECT_GE(m.bond_between(ring[i], ring[(i + 1) % ring.size()]), 0) << k.smi;
    }
}

TEST(RingPerception, RingBondsAndMacrocycle) {
    std::string smi = "C1";
    for (int i = 0; i < 29; ++i) smi += "C";
    smi += "1CC";
    const Molecule m = mol(smi);
    const RingInfo r = perceive_rings(m);
    ASSERT_EQ(r.rings.size(), 1u);
    EXPECT_EQ(r.rings[0].size(), 30u);
    int ring_bonds = 0;
    for (char c : r.ring_bond) ring_bonds += c;
    EXPECT_EQ(ring_bonds, 30);
    EXPECT_EQ(r.atom_system[30], -1);  // the tail
}

TEST(RingPerception, LongChainHasNoRings) {
    const Molecule m = mol(std::string(5000, 'C'));
    const RingInfo r = perceive_rings(m);
    EXPECT_TRUE(r.rings.empty());
    EXPECT_TRUE(r.systems.empty());
}

TEST(Kabsch, RecoversARotationAndNeverReflects) {
    const Eigen::Matrix3d rot = Eigen::AngleAxisd(1.1, Vector3d(1, 2, 3).normalized()).toRotationMatrix();
    std::vector<Vector3d> a{{1, 0, 0}, {0, 1, 0}, {0.3, 0.2, 1}}, b;
    for (const auto& v : a) b.push_back(rot * v);
    EXPECT_LT((kabsch_rotation(a, b) - rot).norm(), 1e-9);
    // A mirror image cannot be reached by a rotation: the result stays proper.
    std::vector<Vector3d> mirrored;
    for (const auto& v : b) mirrored.emplace_back(-v.x(), v.y(), v.z());
    EXPECT_NEAR(kabsch_rotation(a, mirrored).determinant(), 1.0, 1e-9);
    // One pair: the rotation takes the one direction onto the other.
    const Vector3d from(0, 0, 1), to = Vector3d(1, 1, 0).normalized();
    std::vector<Vector3d> f{from}, t{to};
    EXPECT_LT((kabsch_rotation(f, t) * from - to).norm(), 1e-12);
    // Opposite directions.
    EXPECT_LT((rotation_between(from, -from) * from + from).norm(), 1e-12);
}

TEST(Geometry, DihedralSign) {
    // a-b-c-d with d turned +90 degrees about b->c seen along the axis (right-handed): +90.
    const double t = dihedral({1, 0, 0}, {0, 0, 0}, {0, 0, 1}, {0, 1, 1});
    EXPECT_NEAR(t * 180 / M_PI, 90.0, 1e-9);
}

TEST(DistanceGeometry, GradientMatchesFiniteDifferences) {
    const int n = 5;
    DistanceBounds b(n);
    b.narrow(0, 1, 1.5, 1.5);
    b.narrow(1, 2, 1.4, 1.6);
    b.narrow(0, 2, 2.6, 2.7);
    b.narrow(2, 3, 1.0, 1.1);
    b.narrow(3, 4, 3.0, 3.5);
    b.narrow(0, 4, 2.0, 2.2);
    std::vector<VolumeCondition> vols{{1, 0, 2, 3, 1, 1.0}, {2, 1, 3, 4, 0, 0}};
    std::vector<TorsionCondition> tors{{0, 1, 2, 3, 0.8, 1.2}, {1, 2, 3, 4, 0.0, 0.3}};
    std::vector<double> x{0.1, 0.2, -0.3, 1.2, 0.9, 0.4, 2.1, -0.5, 0.7, 2.9, 0.3, 1.8, 0.4, 1.7, -0.6};
    std::vector<double> g(x.size());
    distance_geometry_error(b, vols, tors, x.data(), g.data());
    for (size_t i = 0; i < x.size(); ++i) {
        const double h = 1e-6;
        auto xp = x, xm = x;
        xp[i] += h;
        xm[i] -= h;
        const double num = (distance_geometry_error(b, vols, tors, xp.data(), nullptr) -
                            distance_geometry_error(b, vols, tors, xm.data(), nullptr)) / (2 * h);
        EXPECT_NEAR(g[i], num, 1e-5 * std::max(1.0, std::abs(num))) << "coordinate " << i;
    }
}

// The signed-area conditions of planar embeddings (a centre's handedness in the plane): gradient, and an embedding
// in the plane that meets the sign asked for (distances alone allow both mirror images).
TEST(DistanceGeometry, AreaConditionGradientAndSign) {
    DistanceBounds b(4);
    for (int i = 1; i < 4; ++i) b.narrow(0, i, 1.4, 1.4);
    b.narrow(1, 2, 2.42, 2.43);  // 120 degrees between the three bonds
    b.narrow(2, 3, 2.42, 2.43);
    b.narrow(1, 3, 2.42, 2.43);
    const std::vector<AreaCondition> areas{{0, 1, 2, 1, 0.5}};
    std::vector<double> x{0.1, 0.2, 0, 1.2, 0.9, 0, -0.8, 1.1, 0, 0.3, -1.2, 0};
    std::vector<double> g(x.size());
    // Mirror the x coordinates so that the area is negative: the condition acts.
    for (size_t i = 0; i < x.size(); i += 3) x[i] = -x[i];
    distance_geometry_error(b, {}, {}, x.data(), g.data(), areas);
    for (size_t i = 0; i < x.size(); ++i) {
        const double h = 1e-6;
        auto xp = x, xm = x;
        xp[i] += h;
        xm[i] -= h;
        const double num = (distance_geometry_error(b, {}, {}, xp.data(), nullptr, areas) -
                            distance_geometry_error(b, {}, {}, xm.data(), nullptr, areas)) / (2 * h);
        EXPECT_NEAR(g[i], num, 1e-5 * std::max(1.0, std::abs(num))) << "coordinate " << i;
    }
    for (int sign : {1, -1}) {
        const std::vector<AreaCondition> want{{0, 1, 2, sign, 0.5}};
        const EmbedResult r = embed_points(b, {}, {}, 4, 0.01, {}, true, want);
        EXPECT_TRUE(r.volumes_met);
        EXPECT_LT(r.worst_violation, 0.01);
        const Vector3d u = r.coordinates[1] - r.coordinates[0], v = r.coordinates[2] - r.coordinates[0];
        EXPECT_GT(sign * (u.x() * v.y() - u.y() * v.x()), 0.5);
    }
}

TEST(DistanceGeometry, EmbedsARegularTetrahedronWithItsHandedness) {
    DistanceBounds b(5);
    // A centre and four points at 1.5 A, 2.449 A apart (ideal tetrahedron).
    for (int i = 1; i < 5; ++i) {
        b.narrow(0, i, 1.5, 1.5);
        for (int j = i + 1; j < 5; ++j) b.narrow(i, j, 2.449, 2.45);
    }
    for (int sign : {1, -1}) {
        const EmbedResult r = embed_points(b, {{0, 1, 2, 3, sign, 1.0}}, {}, 4, 0.01);
        EXPECT_TRUE(r.volumes_met);
        EXPECT_LT(r.worst_violation, 0.01);
        EXPECT_GT(sign * signed_volume(r.coordinates[0], r.coordinates[1], r.coordinates[2], r.coordinates[3]), 0);
    }
}

TEST(RingEmbedding, ShapesOfSingleRings) {
    auto embed = [](const std::string& smi) {
        const Molecule m = mol(smi);
        const MoleculeDomains d = analyse_domains(m);
        const RingInfo r = perceive_rings(m);
        return embed_ring_system(m, d, r, 0, {});
    };
    // Chair: alternating torsions of about 55 degrees.
    const auto chair = embed("C1CCCCC1");
    EXPECT_EQ(chair.method, "chair");
    for (int i = 0; i < 6; ++i) {
        const auto& x = chair.coordinates;
        const double t = dihedral(x[i], x[(i + 1) % 6], x[(i + 2) % 6], x[(i + 3) % 6]) * 180 / M_PI;
        EXPECT_GT(std::abs(t), 45.0);
        EXPECT_LT(std::abs(t), 65.0);
    }
    // Benzene: a flat regular hexagon.
    const auto flat = embed("c1ccccc1");
    EXPECT_EQ(flat.method, "polygon");
    for (const auto& p : flat.coordinates) EXPECT_NEAR(p.z(), 0.0, 1e-12);
    // Cyclopentane: an envelope, four atoms in a plane and the fifth out of it.
    const auto env = embed("C1CCCC1");
    EXPECT_EQ(env.method, "envelope");
    const auto& x = env.coordinates;
    const Vector3d normal = (x[2] - x[1]).cross(x[3] - x[1]).normalized();
    EXPECT_NEAR((x[4] - x[1]).dot(normal), 0.0, 1e-9);
    EXPECT_GT(std::abs((x[0] - x[1]).dot(normal)), 0.3);
}
