// The audit of a structure built elsewhere: the engine's electron-domain analysis applied to the measured
// coordinates, centre by centre, plus bond lengths, contacts, neighbour counts, valences and charge.
#pragma once

#include "core/limits.hpp"

#include <optional>
#include <string>
#include <vector>

#include "check/perceive.hpp"
#include "graph/molecule.hpp"
#include "input/structure_reader.hpp"

namespace repel {

enum class Severity { warning, error };  // error: at least twice the threshold, or a broken structure

struct Finding {
    std::string kind;             // "geometry", "planarity", "bond length", "overlap", "contact", "neighbours",
                                  // "radical", "charge", "multiplicity"
    std::vector<int> atoms;       // 1-based; the atom the finding is about first
    std::string message;          // one line for the user
    std::optional<double> measured, expected;
    std::string unit;             // "degrees", "angstrom", "" (a count or a charge)
    Severity severity = Severity::warning;
    double badness = 0;           // deviation over threshold (or a large number for broken structures): the order
};

// The thresholds (each a choice, common practice; tests/test_check.cpp shows what each catches).
struct AuditOptions {
    double angle_rms = 15.0;        // degrees: RMS deviation of a centre's angles from the predicted ones
    double planarity = 10.0;        // degrees: an AX3 centre (no lone pair) whose angles sum below 360 - this
    double bond_deviation = 0.25;   // Angstrom: |measured - expected| for a bond of the assigned order
    double contact_fraction = 0.6;  // non-bonded pairs (beyond 1-3) closer than this fraction of the vdW sum
    PerceptionOptions perception;
    std::optional<int> charge;        // --charge (else the file's, else 0)
    std::optional<int> multiplicity;  // --multiplicity (else the file's, else none: unpaired electrons are findings)
    std::string reference_smiles;     // --smiles: the molecule the structure is meant to be (empty: none)
    double time_limit = kDefaultTimeLimit;  // seconds one structure may take (0: none); past it a LimitError
};

struct Audit {
    std::string title;
    long line = 0;                  // where the record starts in the file
    Structure structure;            // with the bonds, orders and charges used for the audit
    bool bonds_from_coordinates = false;
    bool orders_assigned = false;
    int charge = 0;                 // total charge used
    int multiplicity = 1;           // the multiplicity implied (or given)
    std::vector<Finding> findings;  // worst first
    std::vector<std::string> notes; // facts for the user that are not findings (assigned charges, ground states)
};

// Throws InputError when options.reference_smiles does not read.
Audit audit_structure(const ReadStructure& input, const AuditOptions& options = {});

}  // namespace repel
