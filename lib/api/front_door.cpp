// The front door (<repel/repel.hpp>): each call is the library's own steps in the one order they must run, so that
// no caller repeats (or forgets) them: read, make hydrogens explicit, then build, analyse or audit.
#include "api/front_door.hpp"

#include <fstream>
#include <sstream>

#include "assemble/ensemble.hpp"
#include "check/clean.hpp"
#include "check/report.hpp"
#include "check/report_page.hpp"
#include "core/limits.hpp"
#include "domains/metal.hpp"
#include "input/sd_molecule.hpp"
#include "output/picture.hpp"
#include "output/shape_report.hpp"
#include "output/writer.hpp"

namespace repel {

// The front door's defaults are the library's (its public header cannot include the private ones); held equal by
// tests/test_front_door.cpp (FrontDoor.DefaultsAreTheLibrarys): not a static_assert, since the settings hold
// strings, which clang 14 with GCC 12's library cannot build in a constant expression (the fuzz build).

const char* version() { return REPEL_VERSION; }

Notation notation_of(TextNotation notation) {
    switch (notation) {
        case TextNotation::smiles: return Notation::smiles;
        case TextNotation::formula: return Notation::formula;
        default: return Notation::automatic;
    }
}

BuildOptions build_options(const BuildSettings& settings) {
    BuildOptions o;
    o.refine = settings.refine;
    o.time_limit = settings.time_limit;
    o.charge = settings.charge;
    o.multiplicity = settings.multiplicity;
    o.metals.polyhedra = settings.polyhedra;
    return o;
}

AuditOptions audit_options(const CheckSettings& settings) {
    AuditOptions o;
    o.angle_rms = settings.angle_threshold;
    o.angle_worst = settings.angle_threshold;  // one limit for both, as `repel check --angle-threshold` sets them
    o.bond_deviation = settings.bond_threshold;
    o.contact_fraction = settings.contact_fraction;
    o.perception.tolerance = settings.bond_tolerance;
    o.charge = settings.charge;
    o.multiplicity = settings.multiplicity;
    o.reference_smiles = settings.reference_smiles;
    o.time_limit = settings.time_limit;
    return o;
}

Molecule read_molecule(std::string_view text, const BuildSettings& settings) {
    Molecule mol = settings.notation == TextNotation::sd_record
                       ? molecule_from_sd_record(std::string(text), settings.first_line)
                       : read_species(text, notation_of(settings.notation));
    if (!settings.name.empty()) mol.name = settings.name;
    mol.make_hydrogens_explicit();
    return mol;
}

Structure build(std::string_view text, const BuildSettings& settings) {
    return build_structure(read_molecule(text, settings), build_options(settings));
}

Structure build(Molecule molecule, const BuildSettings& settings) {
    molecule.make_hydrogens_explicit();  // adds nothing when they are explicit already
    return build_structure(molecule, build_options(settings));
}

namespace {

EnsembleOptions ensemble_options(const ConformerSettings& settings) {
    EnsembleOptions o;
    o.count = settings.count;
    o.distinct_rmsd = settings.distinct_rmsd;
    o.tries = settings.tries;
    o.seed = settings.seed;
    return o;
}

}  // namespace

std::vector<Structure> build_conformers(std::string_view text, const BuildSettings& settings,
                                        const ConformerSettings& conformers) {
    return build_ensemble(read_molecule(text, settings), build_options(settings), ensemble_options(conformers));
}

std::vector<Structure> build_conformers(Molecule molecule, const BuildSettings& settings,
                                        const ConformerSettings& conformers) {
    molecule.make_hydrogens_explicit();
    return build_ensemble(molecule, build_options(settings), ensemble_options(conformers));
}

namespace {

// Both shape() overloads (one name for both would read as recursion to tests/check_recursion.py).
Shape analyse_shape(Molecule mol, const BuildSettings& settings) {
    mol.make_hydrogens_explicit();
    std::vector<std::string> notes;
    join_separated_sandwich_ions(mol, notes);  // as build_structure does: ion-separated metallocenes are sandwiches
    MetalOptions options;
    options.polyhedra = settings.polyhedra;
    auto detail = std::make_shared<ShapeDetail>();
    bool metal = false;
    for (const Atom& a : mol.atoms) metal = metal || is_d_block_metal(a.z);
    if (metal && !options.polyhedra.empty()) {
        const MetalAnalysis metals = analyse_metals(mol, true, options);
        detail->domains = analyse_domains(mol, true, &metals);
    } else {
        if (!options.polyhedra.empty())
            throw InputError("--polyhedron names a metal atom, and this molecule has no d-block metal");
        detail->domains = analyse_domains(mol);
    }
    MoleculeDomains& d = detail->domains;
    d.warnings.insert(d.warnings.begin(), notes.begin(), notes.end());

    Shape out;
    for (const CentreDomains& c : d.atoms) {
        if (c.bonded == 1) continue;  // a terminal atom is no centre (shape_text() shows the same ones)
        CentreShape cs;
        cs.atom = c.atom;
        cs.z = mol.atoms[static_cast<size_t>(c.atom)].z;
        cs.bonded = c.bonded;
        cs.lone_pairs = c.lone_pairs;
        cs.single_electrons = c.single_electrons;
        cs.steric_number = c.steric_number;
        cs.axe = c.axe;
        cs.electron_geometry = c.electron_geometry;
        cs.shape = c.shape;
        for (const PredictedAngle& a : c.angles) cs.angles.emplace_back(a.a, a.b, a.degrees);
        out.centres.push_back(std::move(cs));
    }
    out.charge = d.charge;
    out.multiplicity = d.multiplicity;
    out.warnings = d.warnings;
    out.molecule = std::move(mol);
    out.detail = std::move(detail);
    return out;
}

}  // namespace

Shape shape(std::string_view text, const BuildSettings& settings) {
    return analyse_shape(read_molecule(text, settings), settings);
}

Shape shape(Molecule molecule, const BuildSettings& settings) { return analyse_shape(std::move(molecule), settings); }

std::string shape_text(const Shape& shape, const std::string& title) {
    if (!shape.detail) throw std::invalid_argument("shape_text: a Shape that shape() did not make");
    return shape_table(shape.molecule, shape.detail->domains, title);
}

nlohmann::json shape_json_object(const Shape& shape, const std::string& title) {
    if (!shape.detail) throw std::invalid_argument("shape_json_object: a Shape that shape() did not make");
    return shape_json(shape.molecule, shape.detail->domains, title);
}

std::string shape_json_text(const Shape& shape, const std::string& title) {
    return shape_json_object(shape, title).dump(2) + "\n";
}

namespace {

InputFormat input_format(FileFormat format) {
    switch (format) {
        case FileFormat::pdb: return InputFormat::pdb;
        case FileFormat::sdf: return InputFormat::sdf;
        default: return InputFormat::xyz;
    }
}

std::vector<StructureRecord> read_file(const std::string& path, InputFormat format) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError("cannot open " + path);
    return read_structures(in, format);
}

CheckResult check_result_of(Audit audit) {
    CheckResult r;
    r.title = audit.title;
    r.line = audit.line;
    r.structure = audit.structure;
    r.charge = audit.charge;
    r.multiplicity = audit.multiplicity;
    for (const Finding& f : audit.findings)
        r.findings.push_back({f.kind, f.atoms, f.message, f.measured, f.expected, f.unit, f.severity == Severity::error});
    r.notes = audit.notes;
    r.detail = std::make_shared<CheckDetail>(CheckDetail{std::move(audit)});
    return r;
}

Format write_format(WriteFormat format) {
    switch (format) {
        case WriteFormat::pdb: return Format::pdb;
        case WriteFormat::sdf: return Format::sdf;
        case WriteFormat::json: return Format::json;
        default: return Format::xyz;
    }
}

}  // namespace

std::vector<StructureRecord> read_structures_text(std::string_view text, FileFormat format) {
    std::istringstream in{std::string(text)};
    return read_structures(in, input_format(format));
}

std::vector<StructureRecord> read_structure_file(const std::string& path) {
    return read_file(path, input_format_from_path(path));
}

std::vector<StructureRecord> read_structure_file(const std::string& path, FileFormat format) {
    return read_file(path, input_format(format));
}

CheckResult check(const StructureRecord& record, const CheckSettings& settings) {
    return check_result_of(audit_structure(record, audit_options(settings)));
}

CheckResult check(const Structure& structure, const CheckSettings& settings) {
    // A structure in memory states its bonds, orders and charges (a built one does); without bonds, they are
    // perceived from the coordinates as for an XYZ file.
    StructureRecord r;
    r.structure = structure;
    r.title = structure.molecule.name;
    r.has_bonds = structure.molecule.bond_count() > 0;
    r.has_orders = r.has_bonds;
    r.has_charge = true;
    r.has_multiplicity = true;
    return check_result_of(audit_structure(r, audit_options(settings)));
}

std::vector<CheckResult> check_file(const std::string& path, const CheckSettings& settings) {
    const AuditOptions options = audit_options(settings);
    std::vector<CheckResult> out;
    for (const StructureRecord& r : read_file(path, input_format_from_path(path))) out.push_back(check_result_of(audit_structure(r, options)));
    return out;
}

std::string check_text(const CheckResult& result, int index) {
    if (!result.detail) throw std::invalid_argument("check_text: a CheckResult that check() did not make");
    return audit_text(result.detail->audit, index);
}

nlohmann::json check_json(const CheckResult& result) {
    if (!result.detail) throw std::invalid_argument("check_json: a CheckResult that check() did not make");
    return audit_json(result.detail->audit);
}

std::string check_json_text(const CheckResult& result) { return check_json(result).dump(2) + "\n"; }

FixResult fix(const CheckResult& result, const CheckSettings& settings) {
    if (!result.detail) throw std::invalid_argument("fix: a CheckResult that check() did not make");
    FixResult out;
    try {
        // The audit's time limit again, for the refinement alone.
        const ScopedDeadline deadline(settings.time_limit);
        CleanResult c = clean_structure(result.detail->audit);
        out.structure = std::move(c.structure);
        out.refined = c.refined;
        out.rms_shift = c.rms_shift;
        out.summary = std::move(c.summary);
    } catch (const LimitError& e) {
        out.structure = result.structure;
        out.refined = false;
        out.summary = e.what();
    }
    return out;
}

CheckReport::CheckReport(std::string heading) : page_(std::make_unique<ReportPage>(std::move(heading))) {}
CheckReport::~CheckReport() = default;
CheckReport::CheckReport(CheckReport&&) noexcept = default;
CheckReport& CheckReport::operator=(CheckReport&&) noexcept = default;

void CheckReport::add(const CheckResult& result, int number, const std::string& file) {
    if (!result.detail) throw std::invalid_argument("CheckReport::add: a CheckResult that check() did not make");
    page_->add(result.detail->audit, number, file);
}

void CheckReport::add_failure(int number, const std::string& file, long line, const std::string& why) {
    page_->add_failure(number, file, line, why);
}

std::string CheckReport::html() const { return page_->html(); }

std::string write(const Structure& structure, WriteFormat format, const std::string& title) {
    return make_writer(write_format(format))->record(structure, title.empty() ? structure.molecule.name : title);
}

std::string write(const std::vector<Structure>& structures, WriteFormat format, const std::vector<std::string>& titles) {
    if (!titles.empty() && titles.size() != structures.size())
        throw std::invalid_argument("write: titles must be empty or one per structure");
    const auto writer = make_writer(write_format(format));
    std::string out = writer->begin();
    for (size_t k = 0; k < structures.size(); ++k) {
        if (k > 0) out += writer->separator();
        out += writer->record(structures[k], titles.empty() ? structures[k].molecule.name : titles[k]);
    }
    return out + writer->end();
}

WriteFormat write_format_of(const std::string& path) {
    switch (format_from_path(path)) {
        case Format::pdb: return WriteFormat::pdb;
        case Format::sdf: return WriteFormat::sdf;
        case Format::json: return WriteFormat::json;
        default: return WriteFormat::xyz;
    }
}

std::string picture(const Structure& structure, const std::string& title, bool hydrogens) {
    PictureOptions options;
    options.title = title;
    options.hydrogens = hydrogens;
    return picture_svg(structure, options);
}

std::string shape_picture(const Shape& shape, const Structure& built, const std::string& title, bool hydrogens) {
    if (!shape.detail) throw std::invalid_argument("shape_picture: a Shape that shape() did not make");
    return shape_picture_svg(built, shape.detail->domains, title, hydrogens);
}

}  // namespace repel
