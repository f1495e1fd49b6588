// The front door of the repel library: build 3D structures from SMILES, formulas or SD records, analyse electron
// domains, read and check structure files, and write XYZ, PDB, SDF or JSON. Every call that reads a species makes its
// hydrogens explicit itself, so no caller has to remember that step.
//
// Installed as <repel/repel.hpp>; with CMake: find_package(repel REQUIRED) and link repel::repel. The calls never
// print and never exit: bad input throws repel::InputError (message, the input line, the 1-based column; a LimitError
// for a size or time limit is one too), what repel cannot do yet throws repel::UnsupportedError.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <tuple>
#include <utility>
#include <vector>

#include <repel/error.hpp>
#include <repel/molecule.hpp>

namespace repel {

// The library's version, "MAJOR.MINOR.PATCH".
const char* version();

// ---- Building -------------------------------------------------------------------------------------------------

// How text is read as one species. automatic: SMILES first (OpenSMILES), then a single-centre formula ("XeF4",
// "SO4 2-"). sd_record: one SD (MOL) record, header to `$$$$`; its stereochemistry is taken from the drawing.
enum class TextNotation { automatic, smiles, formula, sd_record };

struct BuildSettings {
    TextNotation notation = TextNotation::automatic;
    std::string name;        // Molecule::name of the result (from text only; empty: an SD record's title, or none)
    long first_line = 1;     // sd_record: the record's 1-based line in its file, so that messages name the file's line
    bool refine = true;      // the whole-molecule refinement after assembly
    double time_limit = 60;  // wall-clock seconds per molecule (0: none); past it a LimitError
    std::optional<int> charge;        // must equal the sum of the written formal charges (InputError otherwise)
    std::optional<int> multiplicity;  // written instead of the domain analysis's; checked against the electron count
    // Polyhedra asked for at d-block centres: (0-based atom, name), the name one of polyhedron_names().
    std::vector<std::pair<int, std::string>> polyhedra;
};

// The polyhedron names BuildSettings::polyhedra accepts ("tetrahedral", "square planar", "octahedral", ...).
const std::vector<std::string>& polyhedron_names();

// Reads one species (settings.notation, settings.name, settings.first_line) with its hydrogens explicit: the
// molecule build() builds, atom order as the contract has it (atoms as written, then their hydrogens).
Molecule read_molecule(std::string_view text, const BuildSettings& settings = {});

// 3D coordinates for one species given as text (read as read_molecule does). Known weaknesses of the result are in
// Structure::warnings; charge and multiplicity come from the domain analysis unless the settings give them.
Structure build(std::string_view text, const BuildSettings& settings = {});

// The same for a molecule made in code or read elsewhere; its implicit hydrogens (Atom::hydrogens) are made explicit
// here. settings.notation, name and first_line are not used.
Structure build(Molecule molecule, const BuildSettings& settings = {});

// ---- Conformer ensembles ---------------------------------------------------------------------------------------

struct ConformerSettings {
    int count = 10;              // at most this many conformers (at least 1)
    double distinct_rmsd = 0.5;  // Angstrom: two conformers closer than this (heavy atoms, superposed) are one
    int tries = 0;               // candidates refined (0: automatic, 2 x count, at least 12)
    std::uint64_t seed = 1;      // the same text, settings and seed give the same ensemble on any thread
};

// Up to settings.count distinct conformers of one species, lowest ranking energy first, each with its ConformerInfo
// (<repel/molecule.hpp>: rank, count, energy and relative energy in kcal/mol, RMSD to the first). Candidates: the
// default build, ring systems as their other mirror image (the other chair), and rotatable bonds turned to their
// hybridisation's minima; every written stereocentre and double-bond configuration is kept. Fewer than count come
// back when the molecule has fewer distinct shapes. The time limit holds for the whole ensemble.
std::vector<Structure> build_conformers(std::string_view text, const BuildSettings& settings = {},
                                        const ConformerSettings& conformers = {});
std::vector<Structure> build_conformers(Molecule molecule, const BuildSettings& settings = {},
                                        const ConformerSettings& conformers = {});

// ---- Electron domains (shape) ---------------------------------------------------------------------------------

// One centre of the domain analysis: an atom with two or more bonded neighbours, or a lone atom.
struct CentreShape {
    int atom = -1;              // 0-based
    int z = 0;                  // atomic number
    int bonded = 0;             // X: bonded neighbours
    int lone_pairs = 0;         // E: lone pairs with a domain of their own
    int single_electrons = 0;   // unpaired electron domains
    int steric_number = 0;      // bonded + lone_pairs + single_electrons
    std::string axe;            // AXE class, "AX4E2"
    std::string electron_geometry;  // "octahedral"
    std::string shape;              // "square planar"
    // Predicted angles between bonded neighbours: (neighbour a, neighbour b, degrees), atoms 0-based.
    std::vector<std::tuple<int, int, double>> angles;
};

struct ShapeDetail;  // the library's full analysis, for shape_text() and shape_json_text()

struct Shape {
    Molecule molecule;                  // hydrogens explicit; the atoms the centres refer to
    std::vector<CentreShape> centres;   // in atom order
    int charge = 0;
    int multiplicity = 1;
    std::vector<std::string> warnings;
    std::shared_ptr<const ShapeDetail> detail;
};

// The electron-domain analysis (VSEPR/AXE, directions from the repulsion model) of every centre of one species read
// from text, or of a molecule. settings.polyhedra applies to d-block centres; refine, time_limit, charge and
// multiplicity are not used.
Shape shape(std::string_view text, const BuildSettings& settings = {});
Shape shape(Molecule molecule, const BuildSettings& settings = {});

// The analysis as a readable table (what `repel shape` prints), or as a JSON object (`repel shape --json`).
std::string shape_text(const Shape& shape, const std::string& title);
std::string shape_json_text(const Shape& shape, const std::string& title);

// ---- Structure files ------------------------------------------------------------------------------------------

enum class FileFormat { xyz, pdb, sdf };

// StructureRecord (<repel/molecule.hpp>): one structure as a file states it: atoms, positions, and whatever bonds,
// orders and charges the file gives.

// Every record of a structure file's text, or of a file (format from the extension: .xyz, .pdb/.ent,
// .sdf/.mol/.sd, unless given). Throws InputError naming the line for malformed input, and for a file that cannot be
// opened or whose extension tells no format.
std::vector<StructureRecord> read_structures_text(std::string_view text, FileFormat format);
std::vector<StructureRecord> read_structure_file(const std::string& path);
std::vector<StructureRecord> read_structure_file(const std::string& path, FileFormat format);

// ---- Checking (audit) -----------------------------------------------------------------------------------------

// The thresholds of the audit (the defaults are `repel check`'s).
struct CheckSettings {
    double angle_threshold = 15.0;  // degrees: RMS, and worst single angle, from the predicted angles of a centre
    double bond_threshold = 0.12;   // Angstrom from the expected bond length (twice that with heavier atoms)
    double contact_fraction = 0.6;  // non-bonded pairs closer than this fraction of the van der Waals sum
    double bond_tolerance = 0.45;   // Angstrom added to the covalent radii when bonds come from coordinates
    std::optional<int> charge;        // else the file's, else 0
    std::optional<int> multiplicity;  // else the file's, else none (unpaired electrons are findings)
    std::string reference_smiles;     // the molecule the structure is meant to be (empty: none)
    double time_limit = 60;           // seconds per structure (0: none); past it a LimitError
};

struct CheckFinding {
    std::string kind;         // "geometry", "planarity", "bond length", "overlap", "contact", "neighbours", ...
    std::vector<int> atoms;   // 1-based; the atom the finding is about first
    std::string message;      // one line for a person
    std::optional<double> measured, expected;
    std::string unit;         // "degrees", "angstrom", "" (a count or a charge)
    bool error = false;       // at least twice the threshold, or a broken structure (else a warning)
};

struct CheckDetail;  // the library's full audit, for check_text()

struct CheckResult {
    std::string title;
    long line = 0;
    Structure structure;                 // with the bonds, orders and charges the audit used
    int charge = 0;
    int multiplicity = 1;
    std::vector<CheckFinding> findings;  // worst first; empty for a clean structure
    std::vector<std::string> notes;      // facts that are not findings (assigned charges, ground states)
    std::shared_ptr<const CheckDetail> detail;
};

// The audit of one structure: the domain analysis applied to its coordinates, bond lengths, contacts, neighbour
// counts, valences and charge. A Structure in memory is taken with the bonds it carries (none: perceived).
CheckResult check(const StructureRecord& record, const CheckSettings& settings = {});
CheckResult check(const Structure& structure, const CheckSettings& settings = {});
// Every structure of a file, each audited.
std::vector<CheckResult> check_file(const std::string& path, const CheckSettings& settings = {});

// The audit as text for a person (what `repel check` prints for structure number `index`, 1-based), or as the JSON
// object `repel check --json` gives each structure.
std::string check_text(const CheckResult& result, int index = 1);
std::string check_json_text(const CheckResult& result);

// ---- Fixing (`repel check --fix`) -----------------------------------------------------------------------------

struct FixResult {
    Structure structure;   // same atoms in the same order, refined positions
    bool refined = false;  // false: not cleaned, the reason in summary (the structure is then the audited one)
    double rms_shift = 0;  // Angstrom, RMS movement of the atoms
    std::string summary;   // one line for a person
};

// The whole-molecule refinement started from the checked coordinates, keeping the structure's own stereochemistry.
// A structure whose findings relaxation cannot mend (an overlap, neighbour, radical, charge or multiplicity finding)
// is not refined, and neither is one past settings.time_limit (refined false, the reason in summary); a structure
// without findings is returned unchanged.
FixResult fix(const CheckResult& result, const CheckSettings& settings = {});

// ---- The check report (`repel check --report`) ------------------------------------------------------------------

class ReportPage;  // the library's page

// Many checked structures as one self-contained HTML page: a sortable summary table and, per structure, its picture
// with the flagged atoms marked, its findings and a rotatable 3D view. No network, no external script or font.
class CheckReport {
public:
    explicit CheckReport(std::string heading);
    ~CheckReport();
    CheckReport(CheckReport&&) noexcept;
    CheckReport& operator=(CheckReport&&) noexcept;
    // One checked structure; `number` is its 1-based place in the run, `file` the file it came from.
    void add(const CheckResult& result, int number, const std::string& file);
    // A structure that could not be checked: a row saying why.
    void add_failure(int number, const std::string& file, long line, const std::string& why);
    // The whole page; the same results give the same bytes.
    std::string html() const;

private:
    std::unique_ptr<ReportPage> page_;
};

// ---- Writing --------------------------------------------------------------------------------------------------

enum class WriteFormat { xyz, pdb, sdf, json };

// One whole record (JSON: one object) ending with a newline; title empty: the molecule's name. Throws
// std::runtime_error when the structure cannot be written (a non-finite coordinate, a field too narrow).
std::string write(const Structure& structure, WriteFormat format, const std::string& title = {});
// A whole file of several records (JSON: one array, "[]" when empty), each titled with its molecule's name, or with
// titles[k] when titles are given (one per structure).
std::string write(const std::vector<Structure>& structures, WriteFormat format,
                  const std::vector<std::string>& titles = {});
// The format a file name's extension asks for (.xyz, .pdb, .sdf, .mol, .json, any case); InputError otherwise.
WriteFormat write_format_of(const std::string& path);

// ---- Pictures -------------------------------------------------------------------------------------------------

// A standalone SVG drawing of a structure (`repel build --picture`); title: one line above it (empty: none).
std::string picture(const Structure& structure, const std::string& title = {}, bool hydrogens = true);
// The drawing of `repel shape --picture`: `built` (build() of shape.molecule) with every centre's lone pairs and
// single electrons from the analysis, and the centres labelled.
std::string shape_picture(const Shape& shape, const Structure& built, const std::string& title = {},
                          bool hydrogens = true);

}  // namespace repel
