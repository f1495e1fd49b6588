// Square planar, trigonal bipyramidal and octahedral stereo marks as geometry (graph/polyhedral_stereo.hpp), against
// the OpenSMILES specification (opensmiles.org), chirality section: "Square Planar Centers", "Trigonal Bipyramidal
// Centers", "Octahedral Centers"; and the SMILES writer's re-derivation of those marks for another neighbour order.
#include <gtest/gtest.h>

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <random>
#include <set>
#include <string>
#include <vector>

#include <repel/repel.hpp>

#include "core/error.hpp"
#include "graph/polyhedral_stereo.hpp"
#include "input/smiles.hpp"

using namespace repel;

namespace {

constexpr double kDegree = M_PI / 180;

// The atom of the molecule with an SP/TB/OH mark (exactly one in these tests).
int marked_atom(const Molecule& m) {
    int found = -1;
    for (int i = 0; i < m.atom_count(); ++i)
        if (polyhedral_neighbor_count(m.atoms[static_cast<size_t>(i)].chiral_class) > 0) {
            EXPECT_EQ(found, -1) << "two marked atoms";
            found = i;
        }
    EXPECT_GE(found, 0) << "no SP/TB/OH mark";
    return found;
}

// Direction of each neighbour of the marked atom from the mark, keyed by the neighbour's atom index.
std::map<int, Eigen::Vector3d> directions_by_atom(const Molecule& m, int centre) {
    std::string problem;
    const auto dirs = marked_directions(m, centre, &problem);
    EXPECT_TRUE(dirs.has_value()) << problem;
    std::map<int, Eigen::Vector3d> out;
    if (!dirs) return out;
    for (size_t k = 0; k < dirs->size(); ++k) out[m.neighbors(centre)[k].atom] = (*dirs)[k];
    return out;
}

// The arrangement of a SMILES's marked centre whose ligands are all different elements, as the index it has over
// the neighbours sorted by atomic number: equal for two SMILES exactly when they describe the same arrangement.
int index_by_element(const std::string& smiles) {
    SCOPED_TRACE(smiles);
    const Molecule m = read_molecule(smiles, {.notation = TextNotation::smiles});
    const int centre = marked_atom(m);
    const auto dirs = directions_by_atom(m, centre);
    std::vector<std::pair<int, Eigen::Vector3d>> by_z;
    for (const auto& [atom, dir] : dirs) by_z.push_back({m.atoms[static_cast<size_t>(atom)].z, dir});
    std::sort(by_z.begin(), by_z.end(), [](const auto& x, const auto& y) { return x.first < y.first; });
    for (size_t i = 1; i < by_z.size(); ++i) EXPECT_NE(by_z[i - 1].first, by_z[i].first) << "ligands must differ";
    std::vector<Eigen::Vector3d> ordered;
    for (const auto& p : by_z) ordered.push_back(p.second);
    double residual = 1;
    const int index = best_polyhedral_index(m.atoms[static_cast<size_t>(centre)].chiral_class, ordered, &residual);
    EXPECT_LT(residual, 1e-9);
    return index;
}

double angle(const Eigen::Vector3d& u, const Eigen::Vector3d& v) {
    return std::acos(std::clamp(u.normalized().dot(v.normalized()), -1.0, 1.0));
}

// Directions in stereo order of mark cls/index, from the site assignment.
std::vector<Eigen::Vector3d> ideal_directions(ChiralClass cls, int index) {
    std::vector<Eigen::Vector3d> out;
    const auto sites = polyhedral_sites(cls);
    for (int s : polyhedral_site_assignment(cls, index)) out.push_back(sites[static_cast<size_t>(s)]);
    return out;
}

const std::vector<ChiralClass> kClasses{ChiralClass::SP, ChiralClass::TB, ChiralClass::OH};

// The molecule with its atoms renumbered: atom i becomes atom order[i].
Molecule renumbered(const Molecule& m, const std::vector<int>& order) {
    const int n = m.atom_count();
    std::vector<int> old_of(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) old_of[static_cast<size_t>(order[static_cast<size_t>(i)])] = i;
    auto map = [&](int v) { return v < 0 ? v : order[static_cast<size_t>(v)]; };
    Molecule out;
    for (int j = 0; j < n; ++j) {
        Atom a = m.atoms[static_cast<size_t>(old_of[static_cast<size_t>(j)])];
        for (int& s : a.stereo_neighbors) s = map(s);
        out.add_atom(a);
    }
    for (const Bond& b : m.bonds) out.add_bond(map(b.a), map(b.b), b.order, b.aromatic);
    return out;
}

}  // namespace

TEST(PolyhedralSites, UnitVectorsInTheDocumentedLabelling) {
    EXPECT_EQ(polyhedral_sites(ChiralClass::SP).size(), 4u);
    EXPECT_EQ(polyhedral_sites(ChiralClass::TB).size(), 5u);
    EXPECT_EQ(polyhedral_sites(ChiralClass::OH).size(), 6u);
    EXPECT_TRUE(polyhedral_sites(ChiralClass::TH).empty());
    for (ChiralClass cls : kClasses)
        for (const Eigen::Vector3d& s : polyhedral_sites(cls)) EXPECT_NEAR(s.norm(), 1.0, 1e-12);
    const auto sq = polyhedral_sites(ChiralClass::SP);
    EXPECT_NEAR(angle(sq[0], sq[2]), M_PI, 1e-12);  // trans pairs 0-2, 1-3
    EXPECT_NEAR(angle(sq[1], sq[3]), M_PI, 1e-12);
    EXPECT_GT(sq[0].cross(sq[1]).z(), 0);           // cyclic, anticlockwise seen from +z
    const auto tb = polyhedral_sites(ChiralClass::TB);
    EXPECT_NEAR(angle(tb[0], tb[1]), M_PI, 1e-12);
    for (int i = 2; i < 5; ++i) EXPECT_NEAR(angle(tb[0], tb[static_cast<size_t>(i)]), 90 * kDegree, 1e-12);
    EXPECT_NEAR(angle(tb[2], tb[3]), 120 * kDegree, 1e-12);
    EXPECT_GT(tb[0].dot(tb[2].cross(tb[3])), 0);     // 2, 3, 4 anticlockwise seen from site 0
    const auto oh = polyhedral_sites(ChiralClass::OH);
    EXPECT_NEAR(angle(oh[0], oh[1]), M_PI, 1e-12);
    EXPECT_NEAR(angle(oh[2], oh[4]), M_PI, 1e-12);
    EXPECT_NEAR(angle(oh[3], oh[5]), M_PI, 1e-12);
    EXPECT_GT(oh[0].dot(oh[2].cross(oh[3])), 0);
}

// OpenSMILES "Square Planar Centers": the shapes U (@SP1), 4 (@SP2), Z (@SP3) drawn through the neighbours in order
// (U and Z start with two neighbouring corners; Z's start and end are never adjacent), so the trans pairs are
// U (a,c)(b,d), 4 (a,b)(c,d), Z (a,d)(b,c).
TEST(SquarePlanar, ShapesGiveTheTransPairs) {
    const std::vector<std::vector<std::pair<int, int>>> trans{{{0, 2}, {1, 3}}, {{0, 1}, {2, 3}}, {{0, 3}, {1, 2}}};
    for (int index = 1; index <= 3; ++index) {
        const auto d = ideal_directions(ChiralClass::SP, index);
        for (int i = 0; i < 4; ++i)
            for (int j = i + 1; j < 4; ++j) {
                const auto& pairs = trans[static_cast<size_t>(index - 1)];
                const bool is_trans = std::find(pairs.begin(), pairs.end(), std::pair<int, int>{i, j}) != pairs.end();
                EXPECT_NEAR(angle(d[static_cast<size_t>(i)], d[static_cast<size_t>(j)]), is_trans ? M_PI : M_PI / 2,
                            1e-12)
                    << "@SP" << index << " neighbours " << i << ", " << j;
            }
    }
}

// The square-planar examples of the SMILES theory manual's "General Chiral Specification" (Daylight Chemical
// Information Systems; the source OpenSMILES builds on): the same centre as a U, a 4 and a Z.
TEST(SquarePlanar, EquivalentFormsOfTheManual) {
    const int u = index_by_element("F[Po@SP1](Cl)(Br)I");
    EXPECT_EQ(index_by_element("F[Po@SP2](Br)(Cl)I"), u);
    EXPECT_EQ(index_by_element("F[Po@SP3](Cl)(I)Br"), u);
    // and the other two arrangements of the same four ligands differ
    EXPECT_NE(index_by_element("F[Po@SP2](Cl)(Br)I"), u);
    EXPECT_NE(index_by_element("F[Po@SP3](Cl)(Br)I"), u);
    EXPECT_NE(index_by_element("F[Po@SP2](Cl)(Br)I"), index_by_element("F[Po@SP3](Cl)(Br)I"));
}

// cis- and trans-diamminedichloroplatinum(II): the Cl-Pt-Cl angle follows from the shape of each mark (trans pairs
// above): U (a,c)(b,d), 4 (a,b)(c,d), Z (a,d)(b,c).
TEST(SquarePlanar, CisAndTransplatin) {
    struct Case {
        const char* smiles;
        double cl_pt_cl;  // degrees
    };
    const std::vector<Case> cases{
        {"[NH3][Pt@SP1](Cl)(Cl)[NH3]", 90},   // Cl b, c: adjacent on the U
        {"[NH3][Pt@SP2](Cl)(Cl)[NH3]", 90},   // 4: a-b and c-d trans, so b-c cis
        {"[NH3][Pt@SP3](Cl)(Cl)[NH3]", 180},  // Z: b-c trans
        {"Cl[Pt@SP1](Cl)([NH3])[NH3]", 90},   // U: a-b adjacent
        {"Cl[Pt@SP2](Cl)([NH3])[NH3]", 180},  // 4: a-b trans
        {"Cl[Pt@SP3]([NH3])([NH3])Cl", 180},  // Z: a-d trans
        {"Cl[Pt@SP1]([NH3])(Cl)[NH3]", 180},  // U: a-c trans
    };
    for (const Case& c : cases) {
        SCOPED_TRACE(c.smiles);
        const Molecule m = read_molecule(c.smiles, {.notation = TextNotation::smiles});
        const int pt = marked_atom(m);
        std::vector<Eigen::Vector3d> cl;
        for (const auto& [atom, dir] : directions_by_atom(m, pt))
            if (m.atoms[static_cast<size_t>(atom)].z == 17) cl.push_back(dir);
        ASSERT_EQ(cl.size(), 2u);
        EXPECT_NEAR(angle(cl[0], cl[1]) / kDegree, c.cl_pt_cl, 1e-9);
    }
}

// OpenSMILES "Trigonal Bipyramidal Centers", its definition: for each TB number the viewing axis (from, towards) and
// whether the other three, in order, run anticlockwise (@) or clockwise (@@) seen from the first axis atom. Typed
// here a second time, from the specification's table, independently of the library's table.
TEST(TrigonalBipyramidal, EveryIndexHasTheSpecificationsAxisAndOrder) {
    const std::vector<std::string> spec{"ae@", "ae@@", "ad@", "ad@@", "ac@", "ac@@", "ab@", "ab@@", "be@",  "bd@",
                                        "be@@", "bd@@", "bc@", "bc@@", "ce@", "cd@", "de@", "de@@", "cd@@", "ce@@"};
    for (int index = 1; index <= 20; ++index) {
        SCOPED_TRACE("@TB" + std::to_string(index));
        const std::string& row = spec[static_cast<size_t>(index - 1)];
        const int from = row[0] - 'a', to = row[1] - 'a';
        const bool anticlockwise = row.size() == 3;
        const auto d = ideal_directions(ChiralClass::TB, index);
        EXPECT_NEAR(angle(d[static_cast<size_t>(from)], d[static_cast<size_t>(to)]), M_PI, 1e-12);
        std::vector<int> equatorial;
        for (int k = 0; k < 5; ++k)
            if (k != from && k != to) equatorial.push_back(k);
        // seen from `from`, the turn from the first to the second equatorial neighbour (120 degrees) is
        // anticlockwise when it is a positive rotation about the direction towards the viewer
        const Eigen::Vector3d& p = d[static_cast<size_t>(equatorial[0])];
        const Eigen::Vector3d& q = d[static_cast<size_t>(equatorial[1])];
        const Eigen::Vector3d& r = d[static_cast<size_t>(equatorial[2])];
        EXPECT_EQ(p.cross(q).dot(d[static_cast<size_t>(from)]) > 0, anticlockwise);
        EXPECT_EQ(q.cross(r).dot(d[static_cast<size_t>(from)]) > 0, anticlockwise);
    }
}

// OpenSMILES "Trigonal Bipyramidal Centers": "The following SMILES are all equivalent".
TEST(TrigonalBipyramidal, EquivalentSmilesOfTheSpecification) {
    const int reference = index_by_element("S[As@TB1](F)(Cl)(Br)N");
    for (const char* s : {"S[As@TB2](Br)(Cl)(F)N", "S[As@TB5](F)(N)(Cl)Br", "F[As@TB10](S)(Cl)(N)Br",
                          "F[As@TB15](Cl)(S)(Br)N", "Br[As@TB20](Cl)(S)(F)N"})
        EXPECT_EQ(index_by_element(s), reference) << s;
    // the text's own examples: @TB1 from S towards N with F, Cl, Br anticlockwise; @TB6 from a towards c, the rest
    // clockwise, which is @TB5's mirror image
    EXPECT_NE(index_by_element("S[As@TB2](F)(Cl)(Br)N"), reference);
    EXPECT_NE(index_by_element("S[As@TB6](F)(N)(Cl)Br"), reference);
    // '@' on five neighbours is @TB1
    EXPECT_EQ(index_by_element("S[As@](F)(Cl)(Br)N"), reference);
    EXPECT_EQ(index_by_element("S[As@@](Br)(Cl)(F)N"), reference);
}

// OpenSMILES "Octahedral Centers", its table typed a second time: shape of the four atoms off the axis (U, Z, 4),
// the axis end (from a), and the winding seen from a: U the cycle, Z the step from the first to the second atom,
// 4 the step from the second to the third.
TEST(Octahedral, EveryIndexHasTheSpecificationsShapeAxisAndOrder) {
    struct Row {
        char shape, to;
        bool anticlockwise;
    };
    const std::map<int, Row> spec{
        {1, {'U', 'f', true}},   {2, {'U', 'f', false}},  {3, {'U', 'e', true}},   {16, {'U', 'e', false}},
        {6, {'U', 'd', true}},   {18, {'U', 'd', false}}, {19, {'U', 'c', true}},  {24, {'U', 'c', false}},
        {25, {'U', 'b', true}},  {30, {'U', 'b', false}}, {4, {'Z', 'f', true}},   {14, {'Z', 'f', false}},
        {5, {'Z', 'e', true}},   {15, {'Z', 'e', false}}, {7, {'Z', 'd', true}},   {17, {'Z', 'd', false}},
        {20, {'Z', 'c', true}},  {23, {'Z', 'c', false}}, {26, {'Z', 'b', true}},  {29, {'Z', 'b', false}},
        {10, {'4', 'f', true}},  {8, {'4', 'f', false}},  {11, {'4', 'e', true}},  {9, {'4', 'e', false}},
        {13, {'4', 'd', true}},  {12, {'4', 'd', false}}, {22, {'4', 'c', true}},  {21, {'4', 'c', false}},
        {28, {'4', 'b', true}},  {27, {'4', 'b', false}}};
    ASSERT_EQ(spec.size(), 30u);
    for (const auto& [index, row] : spec) {
        SCOPED_TRACE("@OH" + std::to_string(index));
        const auto d = ideal_directions(ChiralClass::OH, index);
        const int to = row.to - 'a';
        EXPECT_NEAR(angle(d[0], d[static_cast<size_t>(to)]), M_PI, 1e-12);
        std::vector<Eigen::Vector3d> w;  // the four off the axis, in order
        for (int k = 1; k < 6; ++k)
            if (k != to) w.push_back(d[static_cast<size_t>(k)]);
        auto at = [&](int i) { return w[static_cast<size_t>(i)]; };
        auto trans = [&](int i, int j) { return std::abs(angle(at(i), at(j)) - M_PI) < 1e-9; };
        auto turn = [&](int i, int j) { return at(i).cross(at(j)).dot(d[0]) > 0; };
        switch (row.shape) {
        case 'U':
            EXPECT_TRUE(trans(0, 2) && trans(1, 3));
            EXPECT_EQ(turn(0, 1), row.anticlockwise);
            EXPECT_EQ(turn(1, 2), row.anticlockwise);
            EXPECT_EQ(turn(2, 3), row.anticlockwise);
            break;
        case 'Z':
            EXPECT_TRUE(trans(0, 3) && trans(1, 2));
            EXPECT_EQ(turn(0, 1), row.anticlockwise);
            break;
        default:
            EXPECT_TRUE(trans(0, 1) && trans(2, 3));
            EXPECT_EQ(turn(1, 2), row.anticlockwise);
            break;
        }
    }
}

// OpenSMILES "Octahedral Centers": "The following SMILES are all equivalent" (the first two with the '@'/'@@'
// shorthand, which is @OH1/@OH2 on six neighbours).
TEST(Octahedral, EquivalentSmilesOfTheSpecification) {
    const int reference = index_by_element("C[Co@](F)(Cl)(Br)(I)S");
    EXPECT_EQ(index_by_element("C[Co@OH1](F)(Cl)(Br)(I)S"), reference);
    for (const char* s : {"F[Co@@](S)(I)(C)(Cl)Br", "S[Co@OH5](F)(I)(Cl)(C)Br", "Br[Co@OH9](C)(S)(Cl)(F)I",
                          "Br[Co@OH12](Cl)(I)(F)(S)C", "Cl[Co@OH15](C)(Br)(F)(I)S", "Cl[Co@OH19](C)(I)(F)(S)Br",
                          "I[Co@OH27](Cl)(Br)(F)(S)C"})
        EXPECT_EQ(index_by_element(s), reference) << s;
    EXPECT_NE(index_by_element("C[Co@@](F)(Cl)(Br)(I)S"), reference);  // the mirror image
}

TEST(ShorthandMarks, AtOnFiveAndSixNeighboursReadsAsTbAndOh) {
    const Molecule tb = read_smiles("S[As@@](F)(Cl)(Br)N");
    EXPECT_EQ(tb.atoms[1].chiral_class, ChiralClass::TB);
    EXPECT_EQ(tb.atoms[1].chiral_index, 2);
    const Molecule oh = read_smiles("C[Co@](F)(Cl)(Br)(I)S");
    EXPECT_EQ(oh.atoms[1].chiral_class, ChiralClass::OH);
    EXPECT_EQ(oh.atoms[1].chiral_index, 1);
    // an explicit class keeps its neighbour count: @TH1 is tetrahedral only
    EXPECT_THROW(read_smiles("S[As@TH1](F)(Cl)(Br)N"), InputError);
    // four neighbours stay tetrahedral: @SP has no shorthand
    EXPECT_EQ(read_smiles("F[Pt@](Cl)(Br)I").atoms[1].chiral_class, ChiralClass::TH);
}

// fac- and mer-triamminetrichlorocobalt(III): with OH1 (a at +z, f at -z, b..e round the square in a U) the three
// Cl are mutually cis when they are the axis end and two neighbours next to each other on the square (fac), and two
// of them trans when they stand opposite on the square or on the axis (mer).
TEST(Octahedral, FacAndMerIsomers) {
    auto chloride_angles = [](const std::string& smiles) {
        const Molecule m = read_molecule(smiles, {.notation = TextNotation::smiles});
        const int co = marked_atom(m);
        std::vector<Eigen::Vector3d> cl;
        for (const auto& [atom, dir] : directions_by_atom(m, co))
            if (m.atoms[static_cast<size_t>(atom)].z == 17) cl.push_back(dir);
        std::multiset<long> out;
        for (size_t i = 0; i < cl.size(); ++i)
            for (size_t j = i + 1; j < cl.size(); ++j) out.insert(std::lround(angle(cl[i], cl[j]) / kDegree));
        return out;
    };
    EXPECT_EQ(chloride_angles("[NH3][Co@OH1]([NH3])([NH3])(Cl)(Cl)Cl"), (std::multiset<long>{90, 90, 90}));   // fac
    EXPECT_EQ(chloride_angles("[NH3][Co@OH1]([NH3])(Cl)([NH3])(Cl)Cl"), (std::multiset<long>{90, 90, 180}));  // mer
    // OH2: axis a-f, and b, e close the U round the square, so the Cl at a, b, e are mutually cis
    EXPECT_EQ(chloride_angles("Cl[Co@OH2](Cl)([NH3])([NH3])(Cl)[NH3]"), (std::multiset<long>{90, 90, 90}));   // fac
    // OH3: the same list with the axis a-e: two Cl trans
    EXPECT_EQ(chloride_angles("Cl[Co@OH3](Cl)([NH3])([NH3])(Cl)[NH3]"), (std::multiset<long>{90, 90, 180}));  // mer
}

// A tris-chelate: [Co@OH1]123(NCCN1)(NCCN2)NCCN3 lists the ring-closure partners first (the second N of each
// ethylenediamine), then the branches' first atoms. OH1 and OH2 both keep every chelate's two N cis and are mirror
// images of each other (Delta and Lambda): the volume targets of one are those of the other with opposite signs.
TEST(Octahedral, TrisChelateEnantiomersHaveOppositeVolumeTargets) {
    std::vector<std::vector<SignedVolumeTarget>> targets;
    std::vector<std::vector<Eigen::Vector3d>> positions;
    for (const char* s : {"[Co@OH1]123(NCCN1)(NCCN2)NCCN3", "[Co@OH2]123(NCCN1)(NCCN2)NCCN3"}) {
        SCOPED_TRACE(s);
        const Molecule m = read_molecule(s, {.notation = TextNotation::smiles});
        const auto dirs = directions_by_atom(m, 0);
        // each chelate's two N are cis
        for (const Bond& b : m.bonds) {
            if (m.atoms[static_cast<size_t>(b.a)].z != 6 || m.atoms[static_cast<size_t>(b.b)].z != 6) continue;
            int n[2] = {-1, -1};
            for (int k = 0; k < 2; ++k)
                for (const Neighbor& nb : m.neighbors(k == 0 ? b.a : b.b))
                    if (m.atoms[static_cast<size_t>(nb.atom)].z == 7) n[k] = nb.atom;
            ASSERT_TRUE(n[0] >= 0 && n[1] >= 0);
            EXPECT_NEAR(angle(dirs.at(n[0]), dirs.at(n[1])), M_PI / 2, 1e-12);
        }
        std::string problem;
        targets.push_back(volume_targets(m, 0, &problem));
        EXPECT_TRUE(problem.empty()) << problem;
        EXPECT_EQ(targets.back().size(), 8u);
        std::vector<Eigen::Vector3d> p(static_cast<size_t>(m.atom_count()), Eigen::Vector3d::Zero());
        for (const auto& [atom, dir] : dirs) p[static_cast<size_t>(atom)] = dir;
        positions.push_back(p);
    }
    auto volume = [](const std::vector<Eigen::Vector3d>& p, const SignedVolumeTarget& t) {
        return p[static_cast<size_t>(t.n1)].dot(p[static_cast<size_t>(t.n2)].cross(p[static_cast<size_t>(t.n3)]));
    };
    for (size_t k = 0; k < 2; ++k)
        for (const SignedVolumeTarget& t : targets[k]) {
            EXPECT_GT(volume(positions[k], t) * t.sign, 0) << "own arrangement meets its targets";
            EXPECT_LT(volume(positions[1 - k], t) * t.sign, 0) << "the mirror image fails every one";
        }
    // the same triples, opposite signs
    for (const SignedVolumeTarget& t : targets[0]) {
        bool found = false;
        for (const SignedVolumeTarget& u : targets[1])
            if (std::set<int>{t.n1, t.n2, t.n3} == std::set<int>{u.n1, u.n2, u.n3}) {
                found = true;
                const int parity = std::vector<int>{t.n1, t.n2, t.n3} == std::vector<int>{u.n1, u.n2, u.n3} ||
                                           std::vector<int>{t.n2, t.n3, t.n1} == std::vector<int>{u.n1, u.n2, u.n3} ||
                                           std::vector<int>{t.n3, t.n1, t.n2} == std::vector<int>{u.n1, u.n2, u.n3}
                                       ? 1
                                       : -1;
                EXPECT_EQ(t.sign, -parity * u.sign);
            }
        EXPECT_TRUE(found);
    }
}

// Every permutation of the sites is exactly one index (up to a proper rotation), each index the same number of
// times (the rotation group's order: square 8, trigonal bipyramid 6, octahedron 24), so the indices are distinct
// arrangements and cover all orders, as the specification's background notes count (3 x 8 = 4!, 20 x 6 = 5!,
// 30 x 24 = 6!).
TEST(PolyhedralIndex, EveryOrderIsExactlyOneIndex) {
    for (ChiralClass cls : kClasses) {
        const int n = polyhedral_neighbor_count(cls);
        const auto sites = polyhedral_sites(cls);
        std::vector<int> perm(static_cast<size_t>(n));
        std::iota(perm.begin(), perm.end(), 0);
        std::map<int, int> hits;
        do {
            std::vector<Eigen::Vector3d> d;
            for (int s : perm) d.push_back(sites[static_cast<size_t>(s)]);
            double residual = 1;
            const int index = best_polyhedral_index(cls, d, &residual);
            EXPECT_LT(residual, 1e-9);
            ++hits[index];
        } while (std::next_permutation(perm.begin(), perm.end()));
        const int indices = polyhedral_index_count(cls);
        EXPECT_EQ(static_cast<int>(hits.size()), indices);
        const int group = cls == ChiralClass::SP ? 8 : cls == ChiralClass::TB ? 6 : 24;
        for (const auto& [index, count] : hits) EXPECT_EQ(count, group) << "index " << index;
    }
}

// Mirror images: a square is its own (every SP index maps to itself); TB pairs into 10 enantiomer pairs, OH into 15,
// each index's mirror image another index.
TEST(PolyhedralIndex, MirrorImages) {
    for (ChiralClass cls : kClasses) {
        std::set<std::pair<int, int>> pairs;
        for (int index = 1; index <= polyhedral_index_count(cls); ++index) {
            auto d = ideal_directions(cls, index);
            for (Eigen::Vector3d& v : d) v.x() = -v.x();  // reflect through the yz plane
            double residual = 1;
            const int mirror = best_polyhedral_index(cls, d, &residual);
            EXPECT_LT(residual, 1e-9);
            if (cls == ChiralClass::SP) {
                EXPECT_EQ(mirror, index);
            } else {
                EXPECT_NE(mirror, index);
                pairs.insert({std::min(index, mirror), std::max(index, mirror)});
            }
        }
        if (cls == ChiralClass::TB) {
            EXPECT_EQ(pairs.size(), 10u);
        } else if (cls == ChiralClass::OH) {
            EXPECT_EQ(pairs.size(), 15u);
        }
    }
    // the specification's pairs under one axis: @ and @@
    EXPECT_EQ(best_polyhedral_index(ChiralClass::TB, [] {
                  auto d = ideal_directions(ChiralClass::TB, 1);
                  for (Eigen::Vector3d& v : d) v.z() = -v.z();
                  return d;
              }()),
              2);
}

// index -> directions -> best index, also after a rotation, a scaling and a small distortion (a structure read from
// a file is never ideal).
TEST(PolyhedralIndex, RoundTripThroughDirections) {
    std::mt19937 rng(7);
    std::normal_distribution<double> noise(0.0, 0.05);
    for (ChiralClass cls : kClasses)
        for (int index = 1; index <= polyhedral_index_count(cls); ++index) {
            EXPECT_EQ(best_polyhedral_index(cls, ideal_directions(cls, index)), index);
            const Eigen::Matrix3d rotation =
                (Eigen::AngleAxisd(0.3 * index, Eigen::Vector3d(1, 2, 3).normalized()) *
                 Eigen::AngleAxisd(1.1, Eigen::Vector3d::UnitX()))
                    .toRotationMatrix();
            std::vector<Eigen::Vector3d> d;
            for (const Eigen::Vector3d& v : ideal_directions(cls, index))
                d.push_back(2.1 * (rotation * v + Eigen::Vector3d(noise(rng), noise(rng), noise(rng))));
            EXPECT_EQ(best_polyhedral_index(cls, d), index) << "class " << static_cast<int>(cls);
        }
    EXPECT_EQ(best_polyhedral_index(ChiralClass::TH, ideal_directions(ChiralClass::SP, 1)), 0);
    EXPECT_EQ(best_polyhedral_index(ChiralClass::OH, ideal_directions(ChiralClass::SP, 1)), 0);
}

TEST(VolumeTargets, MetByTheirOwnArrangementAndFailedByTheMirrorImage) {
    for (ChiralClass cls : kClasses)
        for (int index = 1; index <= polyhedral_index_count(cls); ++index) {
            const int n = polyhedral_neighbor_count(cls);
            std::vector<int> labels(static_cast<size_t>(n));
            std::iota(labels.begin(), labels.end(), 0);
            const auto targets = polyhedral_volume_targets(cls, index, labels);
            if (cls == ChiralClass::SP) {
                EXPECT_TRUE(targets.empty());
                continue;
            }
            EXPECT_EQ(targets.size(), cls == ChiralClass::TB ? 6u : 8u);
            const auto d = ideal_directions(cls, index);
            for (const SignedVolumeTarget& t : targets) {
                auto at = [&](int k) { return d[static_cast<size_t>(k)]; };
                const double v = at(t.n1).dot(at(t.n2).cross(at(t.n3)));
                EXPECT_GT(v * t.sign, 0.3);  // well away from flat
                EXPECT_LT(-v * t.sign, 0);   // the mirror image (all vectors negated) fails it
            }
        }
}

TEST(MarkedDirections, RefusesWhatItCannotPlace) {
    std::string problem;
    // no SP/TB/OH mark: nothing, and no problem
    const Molecule th = read_smiles("N[C@@H](C)C(=O)O");
    EXPECT_FALSE(marked_directions(th, 1, &problem).has_value());
    EXPECT_TRUE(problem.empty());
    // the mark's hydrogen must be an atom first
    Molecule h = read_smiles("F[Pt@SP1H](Cl)Br");
    EXPECT_FALSE(marked_directions(h, 1, &problem).has_value());
    EXPECT_NE(problem.find("hydrogen"), std::string::npos) << problem;
    problem.clear();
    h.make_hydrogens_explicit();
    const auto dirs = marked_directions(h, 1, &problem);
    ASSERT_TRUE(dirs.has_value()) << problem;
    EXPECT_EQ(dirs->size(), 4u);
    // in Molecule::neighbors order: F (0), Cl (2), Br (3), then the hydrogen added last; U shape over F, H, Cl, Br
    // puts F trans to Cl and H trans to Br
    EXPECT_NEAR(angle((*dirs)[0], (*dirs)[1]), M_PI, 1e-12);
    EXPECT_NEAR(angle((*dirs)[2], (*dirs)[3]), M_PI, 1e-12);
    // a list that no longer matches the bonds
    Molecule broken = read_smiles("S[As@TB1](F)(Cl)(Br)N");
    broken.atoms[1].stereo_neighbors[2] = 0;
    EXPECT_FALSE(marked_directions(broken, 1, &problem).has_value());
    EXPECT_FALSE(problem.empty());
    EXPECT_TRUE(volume_targets(broken, 1, &problem).empty());
}

// The writer re-derives every @SP, @TB and @OH index for the neighbour order it writes: each of the 3 + 20 + 30
// marks, written in many atom orders (every order for SP and TB, random ones for OH), reads back to the same
// arrangement; with an implicit hydrogen in the list too.
TEST(SmilesWriter, EveryMarkRoundTripsThroughReordering) {
    std::mt19937 rng(11);
    struct Family {
        ChiralClass cls;
        std::string before, after;  // the SMILES around the index
        bool all_orders;
    };
    const std::vector<Family> families{
        {ChiralClass::SP, "F[Pt@SP", "](Cl)(Br)I", true},
        {ChiralClass::SP, "F[Pt@SP", "H](Cl)Br", true},
        {ChiralClass::TB, "S[As@TB", "](F)(Cl)(Br)N", true},
        {ChiralClass::TB, "[As@TB", "]1(F)(Cl)(Br)NS1", false},  // ring closure in the list
        {ChiralClass::OH, "C[Co@OH", "](F)(Cl)(Br)(I)S", false},
        {ChiralClass::OH, "C[Co@OH", "H](F)(Cl)(Br)I", false},
    };
    int trips = 0;
    for (const Family& fam : families)
        for (int index = 1; index <= polyhedral_index_count(fam.cls); ++index) {
            const std::string smiles = fam.before + std::to_string(index) + fam.after;
            SCOPED_TRACE(smiles);
            const Molecule m = read_smiles(smiles);
            const int reference = index_by_element(smiles);
            const int n = m.atom_count();
            std::vector<int> order(static_cast<size_t>(n));
            std::iota(order.begin(), order.end(), 0);
            std::vector<std::vector<int>> orders;
            if (fam.all_orders && n <= 6) {
                do orders.push_back(order);
                while (std::next_permutation(order.begin(), order.end()));
            } else {
                for (int k = 0; k < 60; ++k) {
                    std::shuffle(order.begin(), order.end(), rng);
                    orders.push_back(order);
                }
            }
            for (const std::vector<int>& o : orders) {
                const Molecule shuffled = renumbered(m, o);
                std::string written;
                ASSERT_NO_THROW(written = write_smiles(shuffled));
                const Molecule back = read_smiles(written);
                const int centre = o[1 - (fam.before[0] == '[' ? 1 : 0)];
                const Atom& a = shuffled.atoms[static_cast<size_t>(centre)];
                const Atom& b = back.atoms[static_cast<size_t>(centre)];
                ASSERT_EQ(b.chiral_class, fam.cls) << written;
                EXPECT_EQ(reorder_polyhedral_index(a.chiral_class, a.chiral_index, a.stereo_neighbors,
                                                   b.stereo_neighbors),
                          b.chiral_index)
                    << written;
                EXPECT_EQ(index_by_element(written), reference) << written;
                ++trips;
            }
        }
    EXPECT_GT(trips, 3000);
}
