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
inline constexpr double kHeavyBondFactor = 2.0;  // see AuditOptions::bond_deviation

struct AuditOptions {
    double angle_rms = 15.0;        // degrees: RMS deviation of a centre's angles from the predicted ones
    double planarity = 10.0;        // degrees: an AX3 centre (no lone pair) whose angles sum below 360 - this
    // Angstrom: |measured - expected| for a bond between atoms of the first two periods (H, B to F), the expected
    // length the domain analysis' (the one the build aims at: aromatic and resonance-shared orders, hybridisation).
    // Measured (tests/external/check_audit_g2.py, check_audit_xtb.py): the 611 such bonds of the 162 G2 geometries
    // lie within -0.067..+0.106 A of it (the extremes O2's triplet +0.106, H2 +0.097, furan's C-O +0.075); the GFN2-xTB
    // optima of 35 molecules within -0.112..+0.096 (but an amidinium's C-N, -0.126: its resonance is not in the
    // model). 0.12 keeps them clean and finds 96% of G2's such bonds moved by 0.15 A (missed where the model's own
    // error is 0.03 A or more the other way). Bonds with a heavier atom (or a Li/Be/Na.. one, or where there is no
    // analysis) take kHeavyBondFactor times it: G2 spreads to +0.22 A there (Si2's triplet), xtb to +0.137 (ClF3's
    // axial Cl-F).
    double bond_deviation = 0.12;
    double contact_fraction = 0.6;  // non-bonded pairs (beyond 1-3) closer than this fraction of the vdW sum
    // Metal centres. The continuous shape measure (0..100) of the polyhedron against the model's, past which a
    // centre whose nearest ideal polyhedron is not the model's is a finding. Measured (tests/test_check_metals.cpp,
    // tests/external/check_audit_metals.py): repel's own builds of 18 complexes 0.00-0.03 (but [Co(en)3]3+, built
    // as a trigonal prism: 12.0, a true finding); GFN2-xTB optima of 19 complexes 0.00-0.30 (cisplatin 0.28,
    // [Co(en)3]3+ 0.30); damaged: a Cl of cisplatin turned 45 deg out of the plane 4.96 (nearest SS-4), cisplatin
    // made tetrahedral 33.3, an octahedron twisted into a trigonal prism 16.9. 3.0 is ten times the worst optimum and
    // about the point where a ligand turned out of a square plane makes it a seesaw (a choice).
    double metal_shape = 3.0;
    // Angstrom, |measured - expected| of a bond to a d-block metal against the model's length
    // (domains/metal_lengths.cpp). GFN2-xTB optima of the same 19 complexes: -0.149..+0.184 A (the extremes the
    // Jahn-Teller axis of [Cu(H2O)6]2+, which GFN2 places otherwise than the model, then the Pt-N bonds trans to Cl in
    // cisplatin, +0.13, a trans influence the model leaves out); 0.3 A keeps more than that spread, since crystal
    // structures spread wider still (a choice).
    double metal_bond_deviation = 0.3;
    PerceptionOptions perception;
    std::optional<int> charge;        // --charge (else the file's, else 0)
    std::optional<int> multiplicity;  // --multiplicity (else the file's, else none: unpaired electrons are findings)
    std::string reference_smiles;     // --smiles: the molecule the structure is meant to be (empty: none)
    double time_limit = kDefaultTimeLimit;  // seconds one structure may take (0: none); past it a LimitError
};

// A d-block centre as measured and as the model has it.
struct MetalCentreAudit {
    int atom = -1;                     // 0-based
    int coordination_number = 0;       // ligand domains, a hapto ligand once (at the centroid of its atoms)
    int oxidation_state = 0;           // ionic model (domains/metal.hpp)
    int d_electrons = 0;
    int unpaired_electrons = 0;
    std::string model_polyhedron;      // the model's ("square planar", "sandwich", ...)
    std::string model_reason;          // why (MetalCentre::polyhedron_reason)
    std::string polyhedron;            // the ideal polyhedron of that coordination number nearest the measured one
    std::string symbol;                // its IUPAC symbol ("SP-4"), or Alvarez's label
    double shape_measure = -1;         // CShM against it (0 ideal .. 100); -1 when not measured (CN outside 2..9)
    double model_shape_measure = -1;   // CShM against the model's own ligand directions; -1 when not measured
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
    std::vector<MetalCentreAudit> metals;  // one per d-block centre, in atom order (empty without metals)
};

// Throws InputError when options.reference_smiles does not read.
Audit audit_structure(const ReadStructure& input, const AuditOptions& options = {});

}  // namespace repel
