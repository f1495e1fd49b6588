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
// Below this triple product of three unit bond directions a tetrahedral centre counts as drawn flat: 40% of the
// regular tetrahedron's 0.770 (a choice; a CH3 flattened onto the plane normal to its C-X bond gives 0). The audit's
// finding and --fix's judgement of a moved centre (clean.cpp) share it.
inline constexpr double kFlatTetrahedron = 0.3;
// Too short: bond_deviation times these (0.09 and 0.15 A by default). The sound structures of
// tests/external/check_audit_damage.py (102 G2 geometries and 122 GFN2-xTB optima; 2,635 light bonds) lie no further than
// 0.063 A (light) and 0.058 A (heavier) short of the expected length, while they reach +0.117 and +0.146 long.
inline constexpr double kShortBondFactor = 0.75;
inline constexpr double kHeavyShortBondFactor = 1.25;

struct AuditOptions {
    double angle_rms = 15.0;        // degrees: RMS deviation of a centre's angles from the predicted ones
    // Degrees: the largest deviation of one angle at a centre. The RMS misses one neighbour bent 20 degrees at a
    // four-coordinate centre (the other angles share it). Measured (tests/external/check_audit_damage.py): over the
    // 1,170 judged centres of its 224 sound structures (G2 and GFN2-xTB optima) the worst single angle is 13.8 degrees
    // off (an exocyclic C-C-H of G2 furan, opened by the five-membered ring); 15 keeps a margin (a choice).
    // --angle-threshold sets both.
    double angle_worst = 15.0;
    double planarity = 10.0;        // degrees: an AX3 centre (no lone pair) whose angles sum below 360 - this
    // Angstrom: |measured - expected| for a bond between atoms of the first two periods (H, B to F), the expected
    // length the domain analysis' (the one the build aims at: aromatic and resonance-shared orders, hybridisation).
    // Measured (tests/external/check_audit_g2.py, check_audit_xtb.py): the 611 such bonds of the 162 G2 geometries
    // lie within -0.067..+0.106 A of it (the extremes O2's triplet +0.106, H2 +0.097, furan's C-O +0.075); the GFN2-xTB
    // optima of 35 molecules within -0.112..+0.096 (an amidinium's C-N was -0.126 before its resonance was
    // modelled); the 2,097 such bonds of the 122 optima of check_audit_optima.py within -0.101..+0.104. 0.12 keeps
    // them clean and finds 96% of G2's such bonds moved by 0.15 A (missed where the model's own error is 0.03 A or
    // more the other way). Bonds with a heavier atom (or a Li/Be/Na.. one, or where there is no
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
    bool charge_given = false;      // by --charge or the file (--fix's advice does not suggest what was given)
    bool multiplicity_given = false;
    std::vector<Finding> findings;  // worst first
    std::vector<std::string> notes; // facts for the user that are not findings (assigned charges, ground states)
    std::vector<MetalCentreAudit> metals;  // one per d-block centre, in atom order (empty without metals)
};

// Throws InputError when options.reference_smiles does not read.
Audit audit_structure(const ReadStructure& input, const AuditOptions& options = {});

}  // namespace repel
