// The only place the Python module calls into the library (through its front door, <repel/repel.hpp>, where that
// offers the call): plain data in and out, so that module.cpp holds no chemistry.
#pragma once

#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace repel {
struct Structure;
}

namespace repel::python {

struct BuildRequest {
    std::string text;  // a SMILES or a single-centre formula, as `repel build TEXT`
    std::string name;  // empty: none (the writers then use the text as the title, as the command line does)
    std::string notation = "auto";  // "auto", "smiles" or "formula" (`repel build --smiles/--formula`)
    bool refine = true;
    std::optional<int> charge;
    std::optional<int> multiplicity;
};

// A built structure as plain data (atom indices 0-based), and the library's structure for the writers.
struct Built {
    std::vector<int> numbers;            // atomic numbers
    std::vector<std::string> elements;   // symbols
    std::vector<double> positions;       // x, y, z per atom, Angstrom
    std::vector<int> bonds;              // atom i, atom j (0-based), order, per bond
    int charge = 0;
    int multiplicity = 1;
    std::vector<std::string> warnings;
    std::string name;                    // as given, empty when none
    std::string title;                   // what the writers put in a file: the name, else the input text
    // A member of a conformer ensemble: rank (1 the lowest), count, energy and relative energy (kcal/mol), RMSD to
    // the first (Angstrom); rank 0 for a single build.
    int conformer_rank = 0, conformer_count = 0;
    double conformer_energy = 0, conformer_relative_energy = 0, conformer_rmsd_to_first = 0;
    std::shared_ptr<const Structure> structure;
};

// Throws the library's InputError (with the column) or UnsupportedError; anything else is a std::exception too.
Built build(const BuildRequest& request);

// build_conformers of the library (`repel build TEXT --conformers COUNT`): up to `count` distinct conformers, lowest
// energy first; rmsd, tries and seed as --conformer-rmsd, --conformer-tries, --conformer-seed.
std::vector<Built> build_conformers(const BuildRequest& request, int count, double rmsd, int tries,
                                    unsigned long long seed);

// Why one record of build_many() could not be built: the exception's type name ("InputError", "LimitError",
// "UnsupportedError", or another), its message alone, and the 1-based column (0: not about a column).
struct Failure {
    std::string error;
    std::string message;
    int column = 0;
};

// A record of build_many(): built, or the failure (exactly one of the two).
struct Outcome {
    std::optional<Built> built;
    Failure failure;
};

// build() of every request on `threads` worker threads (at least 1), results in request order; a record that
// fails costs only itself. The results do not depend on the number of threads (each record is built alone).
std::vector<Outcome> build_many(const std::vector<BuildRequest>& requests, unsigned threads);

// The record `repel build TEXT --format F` writes, byte for byte. format: "xyz", "sdf" ("mol"), "pdb", "json" (any
// case); InputError for another name.
std::string write_text(const Built& built, const std::string& format);

// The format name for a file name's extension (.xyz, .sdf, .mol, .pdb, .json); InputError otherwise.
std::string format_for_path(const std::string& path);

// Unpaired electrons per atom, summing to multiplicity - 1: the single electrons of the domain analysis and the
// unpaired d electrons of metal centres; where those do not add up to the written multiplicity (a ground state the
// analysis raised, such as O2's triplet, or a multiplicity asked for) the total is spread evenly over the heavy atoms
// (over all atoms when there are none): a starting guess, as an initial magnetic moment is.
std::vector<double> unpaired_per_atom(const Built& built);

// `repel shape TEXT --json` as JSON text, with every atom number 0-based ("atom", "angles"[].atoms,
// "metal".ligands[].atoms); messages in text keep the command line's 1-based numbers.
std::string shape_json_text(const std::string& text, const std::string& name);

// One finding of the audit (check/audit.hpp), atoms 0-based (the audited atom first).
struct CheckFinding {
    std::string kind;  // "geometry", "planarity", "bond length", "overlap", "contact", "neighbours", "radical", ...
    std::vector<int> atoms;
    std::string message;  // one line, atoms numbered from 1 as on the command line
    std::optional<double> measured, expected;
    std::string unit;      // "degrees", "angstrom", "" (a count or a charge)
    std::string severity;  // "warning" or "error"
};

// The audit of one structure, or why it could not be audited (error non-empty, nothing else filled).
struct CheckResult {
    std::string title;
    long line = 0;  // 1-based line of the file where the structure starts (0 for atoms given directly)
    int charge = 0;
    int multiplicity = 1;
    std::vector<CheckFinding> findings;  // worst first
    std::vector<std::string> notes;
    std::string error;
    // With CheckRequest::fix: the cleaned structure when it could be refined (none otherwise), and the one-line
    // summary `repel check --fix` prints (why not, when not).
    std::optional<Built> fixed;
    std::string fix_summary;
};

struct CheckRequest {
    std::optional<int> charge;        // else the file's, else 0
    std::optional<int> multiplicity;  // else the file's, else none (unpaired electrons are findings)
    std::string smiles;               // `repel check --smiles`: the molecule meant (bond orders, charges); empty: none
    bool fix = false;                 // `repel check --fix`: also the cleaned structure
};

// `repel check FILE`: every structure of an .xyz, .pdb, .sdf or .mol file. Throws InputError when the file cannot be
// opened or read (a structure that cannot be audited is a result with its error instead).
std::vector<CheckResult> check_file(const std::string& path, const CheckRequest& request);

// The same audit of atoms given directly: atomic numbers and x, y, z per atom (Angstrom); bonds from coordinates.
CheckResult check_atoms(const std::vector<int>& numbers, const std::vector<double>& positions, const std::string& title,
                        const CheckRequest& request);

std::string version();

}  // namespace repel::python
