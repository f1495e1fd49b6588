// repel command-line front end: option definitions and dispatch. No chemistry here.
#include <CLI/CLI.hpp>
#include <cstdio>
#include <iostream>
#include <repel/repel.hpp>

#include "check_command.hpp"
#include "commands.hpp"
#include "mpi_driver.hpp"

namespace {
int run(int argc, char** argv);
}

int main(int argc, char** argv) {
    repel::app::mpi::init(&argc, &argv);
    const int status = run(argc, argv);
    repel::app::mpi::finalize();
    return status;
}

namespace {
int run(int argc, char** argv) {
    using namespace repel::app;
    const bool root = mpi::rank() == 0;
    CLI::App app{"repel: 3D structures from electron domains (VSEPR). Builds coordinates from SMILES or a formula,\n"
                 "explains each centre's electron-domain shape, and checks structures built elsewhere."};
    app.set_version_flag("--version", std::string("repel ") + repel::version());
    app.require_subcommand(1);

    BuildArgs build;
    bool build_formula = false, build_smiles = false, no_refine = false;
    CLI::App* cmd_build = app.add_subcommand("build", "3D coordinates for a molecule (XYZ on standard output by default)");
    cmd_build->add_option("INPUT", build.input, "a SMILES string, or a formula of a single-centre species (XeF4, 'SO4 2-')");
    cmd_build->add_option("-i,--input", build.input_file, "a batch: a .smi file (SMILES and an optional name a line), an .sdf file (new coordinates for its molecules), or - for standard input");
    cmd_build->add_option("-o,--output", build.output_file, "output file; the format follows the extension (.xyz .pdb .sdf .mol .json)");
    cmd_build->add_option("--format", build.format, "output format when not given by -o's extension")
        ->check(CLI::IsMember({"xyz", "pdb", "sdf", "mol", "json"}));
    cmd_build->add_option("--errors", build.errors_file, "write failed records here: line<TAB>name<TAB>reason");
    cmd_build->add_option("--name", build.name, "a name for a single INPUT (written in the output's title)");
    cmd_build->add_flag("--formula", build_formula, "read INPUT as a formula only");
    cmd_build->add_flag("--smiles", build_smiles, "read INPUT as SMILES only");
    cmd_build->add_flag("--no-refine", no_refine, "skip the whole-molecule refinement (assembled frames only)");
    cmd_build->add_option("--input-format", build.input_format, "the format of -i when its extension does not tell (standard input: smi)")
        ->check(CLI::IsMember({"smi", "sdf"}));
    cmd_build->add_option("-j,--threads", build.threads, "threads for a batch (default: every core this process may use)")
        ->check(CLI::PositiveNumber);
    cmd_build->add_option("--shard", build.shard,
                          "K/N: build only the K-th of N interleaved slices of -i (record i, counted from 0, when i mod N = K-1)");
    cmd_build->add_flag("--resume", build.resume,
                        "continue an interrupted batch from the checkpoint beside -o (starts afresh when there is none)");
    bool no_progress = false;
    cmd_build->add_flag("--no-progress", no_progress, "no progress line on standard error (it is only drawn on a terminal)");
    cmd_build->add_option("--polyhedron", build.polyhedra,
                          "ATOM=NAME: build metal atom ATOM (1-based) as this polyhedron (square planar, tetrahedral, "
                          "octahedral, trigonal prismatic, ...); may be repeated")
        ->type_name("ATOM=NAME");
    cmd_build->add_option("--time-limit", build.time_limit,
                          "seconds one molecule may take before it fails as a record (0: no limit)")
        ->check(CLI::NonNegativeNumber)
        ->capture_default_str();
    int build_charge = 0, build_multiplicity = 1;
    auto* build_charge_opt = cmd_build->add_option(
        "--charge", build_charge,
        "total charge; must equal the sum of the formal charges written on the atoms (a check, for every record)");
    auto* build_mult_opt = cmd_build->add_option(
        "--multiplicity", build_multiplicity,
        "spin multiplicity 2S+1 to write for every record (default: the ground state where it is known, else the "
        "Lewis structure's unpaired electrons + 1); checked against the electron count")
        ->check(CLI::Range(1, 1000));
    bool build_no_h = false;
    cmd_build->add_option("--picture", build.picture,
                          "also draw the molecule as a standalone SVG picture (one molecule only, not with -i)");
    cmd_build->add_flag("--picture-without-hydrogens", build_no_h, "leave hydrogen atoms out of --picture");
    cmd_build->add_option("--conformers", build.conformers,
                          "write up to N distinct conformers per molecule, lowest energy first (consecutive records; "
                          "each carries its rank, energy and RMSD to the first)")
        ->check(CLI::Range(1, 1000))
        ->type_name("N");
    cmd_build->add_option("--conformer-rmsd", build.conformer_settings.distinct_rmsd,
                          "Angstrom: conformers whose heavy atoms lie closer than this after superposition are one")
        ->check(CLI::Range(0.0, 100.0))
        ->capture_default_str();
    cmd_build->add_option("--conformer-tries", build.conformer_settings.tries,
                          "candidate shapes refined per molecule (0: two per conformer asked for, at least 12)")
        ->check(CLI::Range(0, 100000))
        ->capture_default_str();
    cmd_build->add_option("--conformer-seed", build.conformer_settings.seed,
                          "seed of the sampling (the same seed gives the same conformers)")
        ->capture_default_str();
    auto* in_opt = cmd_build->get_option("INPUT");
    auto* file_opt = cmd_build->get_option("--input");
    in_opt->excludes(file_opt);
    cmd_build->get_option("--formula")->excludes(cmd_build->get_option("--smiles"));

    ShapeArgs shape;
    bool shape_formula = false, shape_smiles = false;
    CLI::App* cmd_shape = app.add_subcommand("shape", "the electron-domain analysis of every centre");
    cmd_shape->add_option("INPUT", shape.input, "a SMILES string or a formula of a single-centre species");
    cmd_shape->add_option("-i,--input", shape.input_file, "a .smi file, or - for standard input");
    cmd_shape->add_flag("--json", shape.json, "one JSON document instead of the table");
    cmd_shape->add_option("--polyhedron", shape.polyhedra, "ATOM=NAME: analyse metal atom ATOM as this polyhedron")
        ->type_name("ATOM=NAME");
    cmd_shape->add_flag("--formula", shape_formula, "read INPUT as a formula only");
    cmd_shape->add_flag("--smiles", shape_smiles, "read INPUT as SMILES only");
    bool shape_no_h = false;
    cmd_shape->add_option("--picture", shape.picture,
                          "also draw the built molecule as an SVG picture with every centre's lone pairs and single "
                          "electrons, AXE class, shape and predicted angles (one molecule only, not with -i)");
    cmd_shape->add_flag("--picture-without-hydrogens", shape_no_h, "leave hydrogen atoms out of --picture");
    cmd_shape->get_option("INPUT")->excludes(cmd_shape->get_option("--input"));

    CheckArgs check;
    int check_charge = 0, check_multiplicity = 0;
    CLI::App* cmd_check = app.add_subcommand("check", "audit a structure built elsewhere: what is wrong, where, how badly");
    cmd_check->add_option("FILE", check.files,
                          "structure files: .xyz (one or several frames), .pdb, .sdf/.mol; - for standard input")
        ->required();
    cmd_check->add_option("--format", check.format, "the file's format when the extension does not tell")
        ->check(CLI::IsMember({"xyz", "pdb", "sdf", "mol"}));
    auto* charge_opt = cmd_check->add_option("--charge", check_charge, "total charge (default: the file's, else 0)");
    auto* mult_opt = cmd_check->add_option("--multiplicity", check_multiplicity,
                                           "spin multiplicity (default: none; unpaired electrons are findings)")
                         ->check(CLI::PositiveNumber);
    cmd_check->add_flag("--json", check.json, "one JSON document, whatever the verdict");
    cmd_check->add_option("--angle-threshold", check.settings.angle_threshold, "degrees RMS from the predicted angles at a centre, and for its worst single angle")
        ->capture_default_str();
    cmd_check->add_option("--bond-threshold", check.settings.bond_threshold, "Angstrom a bond may be longer than expected between atoms of the first two periods (twice it with a heavier atom; shorter: 0.75 and 1.25 times it in closed-shell molecules)")
        ->capture_default_str();
    cmd_check->add_option("--contact-fraction", check.settings.contact_fraction,
                          "closest allowed non-bonded distance, as a fraction of the van der Waals contact")
        ->capture_default_str();
    cmd_check->add_option("--bond-tolerance", check.settings.bond_tolerance,
                          "Angstrom added to the sum of covalent radii when bonds are perceived from coordinates")
        ->capture_default_str();
    cmd_check->add_option("--smiles", check.settings.reference_smiles,
                          "the intended molecule (SMILES): compare atoms, connectivity, stereocentres and double bonds");
    cmd_check->add_flag("--fix", check.fix, "write a cleaned structure (with -o): same atoms and stereochemistry, relaxed");
    cmd_check->add_option("-o,--output", check.output_file, "where --fix writes (.xyz, .pdb, .sdf)");
    cmd_check->add_option("--report", check.report,
                          "also write one self-contained HTML page: a sortable, filterable table of every structure, "
                          "and per structure its picture with the flagged atoms marked, its findings and a 3D view");
    cmd_check->add_option("--time-limit", check.settings.time_limit,
                          "seconds one structure's audit (and again its --fix) may take before it is reported as not "
                          "audited (0: no limit)")
        ->check(CLI::NonNegativeNumber)
        ->capture_default_str();

    try {
        app.parse(argc, argv);
    } catch (const CLI::CallForHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForAllHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForVersion& e) {
        return app.exit(e);
    } catch (const CLI::ParseError& e) {
        if (root) app.exit(e);
        return 2;  // a usage error is exit status 2 (docs/interface.md), whatever code the parser uses
    }

    auto notation = [](bool formula, bool smiles) {
        return formula ? repel::TextNotation::formula : smiles ? repel::TextNotation::smiles : repel::TextNotation::automatic;
    };
    // Under mpirun every rank parses the same command line; ranks other than 0 only take part in a batch build.
    if (!root && !(cmd_build->parsed() && !build.input_file.empty())) return 0;
    if (cmd_build->parsed()) {
        build.progress = !no_progress;
        if (build.input.empty() && build.input_file.empty()) {
            std::cerr << "repel build: give a SMILES or formula, or -i FILE (see repel build --help)\n";
            return 2;
        }
        build.notation = notation(build_formula, build_smiles);
        build.refine = !no_refine;
        if (build_charge_opt->count() > 0) build.charge = build_charge;
        if (build_mult_opt->count() > 0) build.multiplicity = build_multiplicity;
        build.picture_hydrogens = !build_no_h;
        return run_build(build);
    }
    if (cmd_shape->parsed()) {
        if (shape.input.empty() && shape.input_file.empty()) {
            std::cerr << "repel shape: give a SMILES or formula, or -i FILE (see repel shape --help)\n";
            return 2;
        }
        shape.notation = notation(shape_formula, shape_smiles);
        shape.picture_hydrogens = !shape_no_h;
        return run_shape(shape);
    }
    if (cmd_check->parsed()) {
        if (charge_opt->count() > 0) check.settings.charge = check_charge;
        if (mult_opt->count() > 0) check.settings.multiplicity = check_multiplicity;
        if (check.fix && check.output_file.empty()) {
            std::cerr << "repel check: --fix needs -o FILE\n";
            return 2;
        }
        return run_check(check);
    }
    return 2;
}
}  // namespace
