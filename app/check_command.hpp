// `repel check`: the arguments of the audit of structure files and its entry point (options are defined in main.cpp).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include <repel/repel.hpp>

namespace repel::app {

struct CheckArgs {
    std::vector<std::string> files;   // FILE...: .xyz, .pdb, .sdf/.mol, or - for standard input (then --format)
    std::string format;               // --format xyz|pdb|sdf when the extension does not tell
    bool json = false;                // --json: one JSON document
    // The audit's thresholds, charge, multiplicity, --smiles reference and time limit (--time-limit: seconds per
    // structure for the audit, and again for --fix), mapped onto the library's options by the front door.
    CheckSettings settings;
    bool fix = false;                 // --fix: write a cleaned structure
    std::string output_file;          // -o with --fix (.xyz, .pdb, .sdf)
    std::string report;               // --report FILE.html: one self-contained page of every structure
};

// Exit status of the contract: 0 no finding, 1 findings, 2 a file cannot be read (or a usage error). With several
// files, one that cannot be read is named and the others are still checked (status 2 at the end).
int run_check(const CheckArgs& args);

}  // namespace repel::app
