// `repel check`: the arguments of the audit of structure files and its entry point (options are defined in main.cpp).
#pragma once

#include <optional>
#include <string>
#include <vector>

namespace repel::app {

struct CheckArgs {
    std::vector<std::string> files;   // FILE...: .xyz, .pdb, .sdf/.mol, or - for standard input (then --format)
    std::string format;               // --format xyz|pdb|sdf when the extension does not tell
    bool json = false;                // --json: one JSON document
    std::optional<int> charge;        // --charge (default: the file's, else 0)
    std::optional<int> multiplicity;  // --multiplicity (default: none; unpaired electrons are findings)
    double angle_threshold = 15.0;    // --angle-threshold: degrees, the RMS and the worst angle from the predicted ones
    double bond_deviation = 0.12;     // --bond-threshold: Angstrom from the expected bond length (audit.hpp)
    double contact_fraction = 0.6;    // --contact-fraction: of the van der Waals contact distance
    double tolerance = 0.45;          // --bond-tolerance: Angstrom added to the covalent radii for perception
    std::string smiles;               // --smiles REF: the molecule the structure is meant to be
    bool fix = false;                 // --fix: write a cleaned structure
    std::string output_file;          // -o with --fix (.xyz, .pdb, .sdf)
    double time_limit = 60;           // --time-limit: seconds per structure for the audit and again for --fix
    std::string report;               // --report FILE.html: one self-contained page of every structure
};

// Exit status of the contract: 0 no finding, 1 findings, 2 a file cannot be read (or a usage error). With several
// files, one that cannot be read is named and the others are still checked (status 2 at the end).
int run_check(const CheckArgs& args);

}  // namespace repel::app
