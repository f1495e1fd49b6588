// The commands of the front end. Each parses nothing itself (main.cpp holds the option definitions) and returns the
// process exit status of the contract: 0 all done, 1 some records failed or findings, 2 nothing could be done.
#pragma once

#include <fstream>
#include <istream>
#include <optional>
#include <string>
#include <vector>

#include <repel/repel.hpp>

#include "core/limits.hpp"
#include "output/writer.hpp"

namespace repel::app {

struct BuildArgs {
    std::string input;        // a SMILES or formula given on the command line
    std::string input_file;   // -i: a .smi file or "-"
    std::string output_file;  // -o
    std::string format;       // --format
    std::string errors_file;  // --errors
    TextNotation notation = TextNotation::automatic;
    bool refine = true;
    std::string name;         // --name for a single input
    std::string input_format; // --input-format smi|sdf (default: from -i's extension; smi for standard input)
    int threads = 0;          // --threads (0: every core this process may use)
    std::string shard;        // --shard K/N
    bool resume = false;      // --resume
    bool progress = true;     // a progress line when standard error is a terminal (--no-progress turns it off)
    double time_limit = kDefaultTimeLimit;  // --time-limit: seconds per molecule (0: none)
    std::vector<std::string> polyhedra;     // --polyhedron ATOM=NAME, for metal centres
    std::optional<int> charge;        // --charge: must equal the written total charge
    std::optional<int> multiplicity;  // --multiplicity: written instead of the domain analysis's
    std::string picture;      // --picture FILE.svg: a drawing of the one molecule built (refused with -i)
    bool picture_hydrogens = true;  // --picture-without-hydrogens turns it off
    int conformers = 0;             // --conformers N: an ensemble of up to N per molecule (0: one build)
    ConformerSettings conformer_settings;  // --conformer-rmsd, --conformer-tries, --conformer-seed
};

struct ShapeArgs {
    std::string input;
    std::string input_file;
    TextNotation notation = TextNotation::automatic;
    bool json = false;
    std::vector<std::string> polyhedra;  // --polyhedron ATOM=NAME
    std::string picture;      // --picture FILE.svg: the built molecule with every centre's lone pairs (refused with -i)
    bool picture_hydrogens = true;
};

// --polyhedron ATOM=NAME values (ATOM 1-based) as BuildSettings::polyhedra (0-based atom, name). Throws InputError
// naming the value that is not of that form or names no polyhedron the library knows.
std::vector<std::pair<int, std::string>> polyhedron_choices(const std::vector<std::string>& values);

// Writes text to path through a temporary file renamed at the end (never a half-written file). Throws
// std::runtime_error naming the file when it cannot be written.
void write_whole_file(const std::string& path, const std::string& text);

// The refusal of --picture for a batch (-i), the same for every command.
constexpr const char* kPictureBatchRefusal =
    "--picture draws one molecule and cannot be used with -i; draw a record on its own (a SMILES or formula on the "
    "command line with --picture FILE.svg)";

int run_build(const BuildArgs& args);
int run_shape(const ShapeArgs& args);

// The input stream of a batch: the named file, or standard input for "-". Null (after a message) when the file
// cannot be read.
std::istream* open_input(const std::string& path, std::ifstream& file, const char* command);

// One line for the user about a failed record: "line 3 (name): column 5: ...\n  text\n  ^".
std::string describe_failure(const std::string& where, const std::string& text, const std::exception& e);

}  // namespace repel::app
