// The front door (<repel/repel.hpp>): each call runs the library's own steps, with hydrogens made explicit inside,
// and gives what those steps give when called one by one.
#include <gtest/gtest.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <repel/repel.hpp>
#include <string>

#include "api/front_door.hpp"
#include "assemble/build.hpp"
#include "check/audit.hpp"
#include "check/clean.hpp"
#include "check/perceive.hpp"
#include "core/limits.hpp"
#include "check/report.hpp"
#include "check/report_page.hpp"
#include "domains/domains.hpp"
#include "input/smiles.hpp"
#include "input/species.hpp"
#include "output/picture.hpp"
#include "output/shape_report.hpp"
#include "output/writer.hpp"

namespace repel {
namespace {

// The steps as callers wrote them before the front door: read, hydrogens, build.
Structure by_hand(const std::string& smiles, const BuildOptions& options = {}) {
    Molecule m = read_smiles(smiles);
    m.make_hydrogens_explicit();
    return build_structure(m, options);
}

TEST(FrontDoor, BuildFromTextIsTheStepsByHand) {
    for (const char* smiles : {"O", "CC(=O)Nc1ccc(O)cc1", "N[C@@H](C)C(=O)O", "F/C=C/F"}) {
        SCOPED_TRACE(smiles);
        const Structure a = build(smiles);
        const Structure b = by_hand(smiles);
        ASSERT_EQ(a.molecule.atom_count(), b.molecule.atom_count());
        for (int i = 0; i < a.molecule.atom_count(); ++i) EXPECT_EQ(a.positions[i], b.positions[i]) << i;
        EXPECT_EQ(write(a, WriteFormat::sdf, smiles), make_writer(Format::sdf)->record(b, smiles));
    }
}

// The step callers used to forget: a molecule with implicit hydrogens builds (build_structure alone refuses it).
TEST(FrontDoor, BuildFromAMoleculeMakesItsHydrogensExplicit) {
    const Molecule implicit = read_smiles("CCO");
    EXPECT_EQ(implicit.atom_count(), 3);
    EXPECT_THROW((void)build_structure(implicit), std::logic_error);
    const Structure s = build(implicit);
    EXPECT_EQ(s.molecule.atom_count(), 9);  // C2H6O
    EXPECT_EQ(s.molecule.input_atom_count(), 3);
    // Building a molecule whose hydrogens are explicit already adds none.
    EXPECT_EQ(build(s.molecule).molecule.atom_count(), 9);
}

TEST(FrontDoor, ReadMoleculeGivesExplicitHydrogensAndTheName) {
    const Molecule m = read_molecule("XeF4", {.notation = TextNotation::formula, .name = "lab standard"});
    EXPECT_EQ(m.name, "lab standard");
    EXPECT_EQ(m.atom_count(), 5);
    for (const Atom& a : read_molecule("CN").atoms) EXPECT_EQ(a.hydrogens, 0);
    EXPECT_EQ(read_molecule("CN").atom_count(), 7);  // CH3NH2
    EXPECT_THROW((void)read_molecule("C1CC"), InputError);
    // An SD record keeps its title as the name unless one is given.
    const std::string sd = write(build("CC(=O)O"), WriteFormat::sdf, "acetic acid");
    const Molecule from_sd = read_molecule(sd, {.notation = TextNotation::sd_record});
    EXPECT_EQ(from_sd.name, "acetic acid");
    EXPECT_EQ(from_sd.atom_count(), 8);
}

TEST(FrontDoor, SettingsReachTheBuild) {
    // [NH4+] has charge +1: a stated charge of 0 is refused, +1 accepted.
    EXPECT_THROW((void)build("[NH4+]", {.charge = 0}), InputError);
    EXPECT_EQ(build("[NH4+]", {.charge = 1}).charge, 1);
    EXPECT_EQ(build("O=O", {.multiplicity = 3}).multiplicity, 3);
    // A polyhedron asked for: cisplatin built tetrahedral, the Cl-Pt-Cl angle 109.5 instead of 90.
    const std::string cisplatin = "[Pt](Cl)(Cl)([NH3])[NH3]";
    const Structure tet = build(cisplatin, {.polyhedra = {{0, "tetrahedral"}}});
    const Eigen::Vector3d u = tet.positions[1] - tet.positions[0], v = tet.positions[2] - tet.positions[0];
    EXPECT_NEAR(std::acos(u.normalized().dot(v.normalized())) * 180 / M_PI, 109.5, 5);
    EXPECT_NE(std::find(polyhedron_names().begin(), polyhedron_names().end(), "tetrahedral"),
              polyhedron_names().end());
}

// XeF4 is square planar, AX4E2 (Gillespie and Hargittai, The VSEPR Model of Molecular Geometry, 1991).
TEST(FrontDoor, ShapeNamesEachCentre) {
    const Shape s = shape("XeF4");
    ASSERT_EQ(s.centres.size(), 1u);
    EXPECT_EQ(s.centres[0].atom, 0);
    EXPECT_EQ(s.centres[0].z, 54);
    EXPECT_EQ(s.centres[0].axe, "AX4E2");
    EXPECT_EQ(s.centres[0].shape, "square planar");
    EXPECT_EQ(s.centres[0].lone_pairs, 2);
    EXPECT_EQ(s.centres[0].angles.size(), 6u);
    // The reports are the library's own, for the same analysis.
    Molecule m = read_species("XeF4");
    m.make_hydrogens_explicit();
    const MoleculeDomains d = analyse_domains(m);
    EXPECT_EQ(shape_text(s, "XeF4"), shape_table(m, d, "XeF4"));
    EXPECT_EQ(shape_json_text(s, "XeF4"), shape_json(m, d, "XeF4").dump(2) + "\n");
    // Water: only the oxygen is a centre; its hydrogens were made explicit.
    const Shape water = shape("O");
    EXPECT_EQ(water.molecule.atom_count(), 3);
    ASSERT_EQ(water.centres.size(), 1u);
    EXPECT_EQ(water.centres[0].axe, "AX2E2");
    EXPECT_THROW((void)shape("CCO", {.polyhedra = {{0, "tetrahedral"}}}), InputError);
}

TEST(FrontDoor, ReadCheckAndWrite) {
    const Structure ethanol = build("CCO", {.name = "ethanol"});
    // A structure repel built passes its own audit, in memory and through each file format.
    EXPECT_TRUE(check(ethanol).findings.empty()) << check_text(check(ethanol));
    for (const auto& [format, file_format] : {std::pair{WriteFormat::xyz, FileFormat::xyz},
                                              std::pair{WriteFormat::pdb, FileFormat::pdb},
                                              std::pair{WriteFormat::sdf, FileFormat::sdf}}) {
        const auto records = read_structures_text(write(ethanol, format), file_format);
        ASSERT_EQ(records.size(), 1u);
        EXPECT_EQ(records[0].structure.molecule.atom_count(), 9);
        const CheckResult r = check(records[0]);
        EXPECT_TRUE(r.findings.empty()) << check_text(r);
        // The same as the library's audit of the same record.
        std::istringstream in(write(ethanol, format));
        const Audit a = audit_structure(read_structures(in, static_cast<InputFormat>(file_format)).at(0));
        EXPECT_EQ(check_text(r, 1), audit_text(a, 1));
    }
    // A damaged structure: one C-O bond stretched by 0.5 A is a finding, an error (more than twice 0.12 A).
    Structure damaged = ethanol;
    damaged.positions[2] += 0.5 * (ethanol.positions[2] - ethanol.positions[1]).normalized();
    const CheckResult bad = check(damaged);
    ASSERT_FALSE(bad.findings.empty());
    EXPECT_TRUE(bad.findings[0].error);

    // fix() mends the stretched bond as `repel check --fix` does (check/clean.hpp): same atoms, refined, and
    // the cleaned structure passes the audit; a clean structure is returned as it is.
    const FixResult mended = fix(bad);
    EXPECT_TRUE(mended.refined) << mended.summary;
    EXPECT_EQ(mended.structure.molecule.atom_count(), 9);
    EXPECT_GT(mended.rms_shift, 0.0);
    EXPECT_TRUE(check(mended.structure).findings.empty()) << check_text(check(mended.structure));
    EXPECT_EQ(fix(check(ethanol)).rms_shift, 0.0);
    EXPECT_THROW((void)fix(CheckResult{}), std::invalid_argument);

    // Files: two records written as one SD file, read and checked from the file.
    const std::string path = (std::filesystem::temp_directory_path() / "repel_front_door_test.sdf").string();
    {
        std::ofstream out(path, std::ios::binary);
        out << write(std::vector<Structure>{ethanol, build("O")}, WriteFormat::sdf);
    }
    EXPECT_EQ(read_structure_file(path).size(), 2u);
    const auto checked = check_file(path);
    std::remove(path.c_str());
    ASSERT_EQ(checked.size(), 2u);
    EXPECT_EQ(checked[0].title, "ethanol");
    EXPECT_TRUE(checked[1].findings.empty());
    EXPECT_THROW((void)read_structure_file(path), InputError);  // gone now

    // A JSON file of several records is one array.
    const std::string json = write(std::vector<Structure>{ethanol, ethanol}, WriteFormat::json);
    EXPECT_EQ(json.front(), '[');
    EXPECT_EQ(json.substr(json.size() - 2), "]\n");
    EXPECT_EQ(write(ethanol, WriteFormat::xyz).substr(0, 2), "9\n");
}

// `repel check`'s other steps: --json, --fix, --report, the cleaned file's titles, and the pictures, each the
// library's own step on the same audit.
TEST(FrontDoor, FixReportJsonAndPictures) {
    const Structure ethanol = build("CCO", {.name = "ethanol"});
    Structure damaged = ethanol;
    damaged.positions[2] += 0.5 * (ethanol.positions[2] - ethanol.positions[1]).normalized();
    const CheckResult bad = check(damaged);
    EXPECT_EQ(check_json_text(bad), audit_json(bad.detail->audit).dump(2) + "\n");

    const FixResult fixed = fix(bad);
    const CleanResult by_hand = clean_structure(bad.detail->audit);
    ASSERT_TRUE(fixed.refined) << fixed.summary;
    EXPECT_EQ(fixed.summary, by_hand.summary);
    EXPECT_EQ(write(fixed.structure, WriteFormat::xyz), write(by_hand.structure, WriteFormat::xyz));
    EXPECT_TRUE(check(fixed.structure).findings.empty()) << check_text(check(fixed.structure));
    // Past the time limit: not refined, the reason said, never an exception.
    CheckSettings hurried;
    hurried.time_limit = 1e-9;
    const FixResult late = fix(bad, hurried);
    EXPECT_FALSE(late.refined);
    EXPECT_NE(late.summary.find("gave up"), std::string::npos) << late.summary;

    // The report page is the library's page of the same audits.
    CheckReport report("two");
    ReportPage page("two");
    report.add(bad, 1, "a.xyz");
    page.add(bad.detail->audit, 1, "a.xyz");
    report.add_failure(2, "a.xyz", 30, "too big");
    page.add_failure(2, "a.xyz", 30, "too big");
    EXPECT_EQ(report.html(), page.html());

    // Titles given per structure; the format from a file name.
    const std::string two = write(std::vector<Structure>{ethanol, ethanol}, WriteFormat::xyz, {"first", "second"});
    EXPECT_NE(two.find("first"), std::string::npos);
    EXPECT_NE(two.find("second"), std::string::npos);
    EXPECT_THROW((void)write(std::vector<Structure>{ethanol}, WriteFormat::xyz, {"a", "b"}), std::invalid_argument);
    EXPECT_EQ(write_format_of("out/x.SDF"), WriteFormat::sdf);
    EXPECT_EQ(write_format_of("x.mol"), WriteFormat::sdf);
    EXPECT_EQ(write_format_of("x.json"), WriteFormat::json);
    EXPECT_THROW((void)write_format_of("x.txt"), InputError);

    // Pictures: the drawing of build --picture and of shape --picture.
    PictureOptions po;
    po.title = "ethanol";
    EXPECT_EQ(picture(ethanol, "ethanol"), picture_svg(ethanol, po));
    const Shape water = shape("O");
    const Structure built = build(water.molecule);
    EXPECT_EQ(shape_picture(water, built, "water", false), shape_picture_svg(built, water.detail->domains, "water", false));
}

TEST(FrontDoor, VersionIsThePackageVersion) {
    const std::string v = version();
    EXPECT_EQ(std::count(v.begin(), v.end(), '.'), 2) << v;
}

}  // namespace

// The public settings' defaults are the library's own (lib/api/front_door.cpp says why this is a test).
TEST(FrontDoor, DefaultsAreTheLibrarys) {
    EXPECT_EQ(BuildSettings{}.time_limit, kDefaultTimeLimit);
    EXPECT_EQ(CheckSettings{}.time_limit, kDefaultTimeLimit);
    EXPECT_EQ(CheckSettings{}.angle_threshold, AuditOptions{}.angle_rms);
    EXPECT_EQ(CheckSettings{}.angle_threshold, AuditOptions{}.angle_worst);
    EXPECT_EQ(CheckSettings{}.bond_threshold, AuditOptions{}.bond_deviation);
    EXPECT_EQ(CheckSettings{}.contact_fraction, AuditOptions{}.contact_fraction);
    EXPECT_EQ(CheckSettings{}.bond_tolerance, PerceptionOptions{}.tolerance);
}

}  // namespace repel
