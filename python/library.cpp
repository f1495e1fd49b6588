// The Python module's calls into the library (see library.hpp): the same steps as app/build_command.cpp and
// app/shape_command.cpp for one species.
#include "repel/repel.hpp"
#include "library.hpp"

#include <algorithm>
#include <cmath>
#include <nlohmann/json.hpp>

#include <fstream>

#include "assemble/build.hpp"
#include "check/audit.hpp"
#include "core/error.hpp"
#include "core/limits.hpp"
#include "input/line_reader.hpp"
#include "input/structure_reader.hpp"
#include "core/element.hpp"
#include "domains/domains.hpp"
#include "domains/metal.hpp"
#include "input/species.hpp"
#include "output/shape_report.hpp"
#include "output/writer.hpp"

namespace repel::python {

namespace {

std::string format_name(Format f) {
    switch (f) {
        case Format::xyz: return "xyz";
        case Format::pdb: return "pdb";
        case Format::sdf: return "sdf";
        case Format::json: return "json";
    }
    return "xyz";
}

}  // namespace

Built build(const BuildRequest& request) {
    Molecule mol = read_species(request.text);
    mol.name = request.name;
    mol.make_hydrogens_explicit();
    BuildOptions options;
    options.refine = request.refine;
    options.charge = request.charge;
    options.multiplicity = request.multiplicity;
    auto structure = std::make_shared<Structure>(build_structure(mol, options));

    Built b;
    const Structure& s = *structure;
    const size_t n = s.molecule.atoms.size();
    b.numbers.reserve(n);
    b.elements.reserve(n);
    b.positions.reserve(3 * n);
    for (size_t i = 0; i < n; ++i) {
        const int z = s.molecule.atoms[i].z;
        b.numbers.push_back(z);
        b.elements.emplace_back(element(z).symbol);
        for (int k = 0; k < 3; ++k) b.positions.push_back(s.positions[i][k]);
    }
    for (const Bond& bond : s.molecule.bonds) {
        b.bonds.push_back(bond.a);
        b.bonds.push_back(bond.b);
        b.bonds.push_back(bond.order);
    }
    b.charge = s.charge;
    b.multiplicity = s.multiplicity;
    b.warnings = s.warnings;
    b.name = request.name;
    b.title = request.name.empty() ? request.text : request.name;
    b.structure = std::move(structure);
    return b;
}

std::string write_text(const Built& built, const std::string& format) {
    return make_writer(format_from_name(format))->record(*built.structure, built.title);
}

std::string format_for_path(const std::string& path) { return format_name(format_from_path(path)); }

std::vector<double> unpaired_per_atom(const Built& built) {
    const Molecule& mol = built.structure->molecule;
    const size_t n = mol.atoms.size();
    const int total = built.multiplicity - 1;
    std::vector<double> out(n, 0.0);
    if (total <= 0 || n == 0) return out;
    try {
        const MoleculeDomains d = analyse_domains(mol, false);
        int sum = 0;
        for (size_t i = 0; i < n && i < d.atoms.size(); ++i) {
            const int e = d.atoms[i].single_electrons + d.atoms[i].p_single_electrons;
            out[i] = e;
            sum += e;
        }
        for (const MetalCentre& c : d.metals.centres)
            if (c.atom >= 0 && static_cast<size_t>(c.atom) < n) {
                out[static_cast<size_t>(c.atom)] += c.unpaired_electrons;
                sum += c.unpaired_electrons;
            }
        if (sum == total) return out;
    } catch (const std::exception&) {
        // The analysis of the built graph failed (a hapto ligand's bonds): spread the total below.
    }
    std::fill(out.begin(), out.end(), 0.0);
    size_t heavy = 0;
    for (const Atom& a : mol.atoms) heavy += a.z > 1 ? 1 : 0;
    for (size_t i = 0; i < n; ++i)
        if (heavy == 0 || mol.atoms[i].z > 1)
            out[i] = static_cast<double>(total) / static_cast<double>(heavy == 0 ? n : heavy);
    return out;
}

std::string shape_json_text(const std::string& text, const std::string& name) {
    Molecule mol = read_species(text);
    mol.name = name;
    mol.make_hydrogens_explicit();
    std::vector<std::string> notes;
    join_separated_sandwich_ions(mol, notes);  // as build does: ion-separated metallocenes are sandwiches
    MoleculeDomains d = analyse_domains(mol);
    d.warnings.insert(d.warnings.begin(), notes.begin(), notes.end());
    nlohmann::json doc = shape_json(mol, d, name.empty() ? text : name);
    // The command line numbers atoms from 1; Python indexes from 0.
    for (nlohmann::json& c : doc["centres"]) {
        c["atom"] = c["atom"].get<int>() - 1;
        for (nlohmann::json& a : c["angles"])
            for (nlohmann::json& i : a["atoms"]) i = i.get<int>() - 1;
        if (c.contains("metal"))
            for (nlohmann::json& l : c["metal"]["ligands"])
                for (nlohmann::json& i : l["atoms"]) i = i.get<int>() - 1;
    }
    return doc.dump();
}

namespace {

CheckResult audit_one(const ReadStructure& input, const CheckRequest& request) {
    CheckResult r;
    r.title = input.title;
    r.line = input.line;
    AuditOptions options;
    options.charge = request.charge;
    options.multiplicity = request.multiplicity;
    Audit audit;
    try {
        audit = audit_structure(input, options);
    } catch (const std::exception& e) {
        r.error = e.what();  // as `repel check`: one structure that cannot be audited costs only itself
        return r;
    }
    r.charge = audit.charge;
    r.multiplicity = audit.multiplicity;
    r.notes = audit.notes;
    for (const Finding& f : audit.findings) {
        CheckFinding out;
        out.kind = f.kind;
        for (int a : f.atoms) out.atoms.push_back(a - 1);  // Finding::atoms are 1-based
        out.message = f.message;
        out.measured = f.measured;
        out.expected = f.expected;
        out.unit = f.unit;
        out.severity = f.severity == Severity::error ? "error" : "warning";
        r.findings.push_back(std::move(out));
    }
    return r;
}

}  // namespace

std::vector<CheckResult> check_file(const std::string& path, const CheckRequest& request) {
    const InputFormat format = input_format_from_path(path);
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError("cannot open " + path);
    std::vector<CheckResult> out;
    for (const ReadStructure& r : read_structures(in, format)) out.push_back(audit_one(r, request));
    return out;
}

CheckResult check_atoms(const std::vector<int>& numbers, const std::vector<double>& positions, const std::string& title,
                        const CheckRequest& request) {
    if (positions.size() != 3 * numbers.size())
        throw InputError("positions must have one row of x, y, z per atom");
    // The limits the file readers keep (core/limits.hpp, input/line_reader.hpp), so the audit sees what it would
    // from a file.
    if (numbers.size() > static_cast<size_t>(kMaxAtoms))
        throw LimitError("more than " + std::to_string(kMaxAtoms) + " atoms");
    for (size_t i = 0; i < positions.size(); ++i)
        if (!std::isfinite(positions[i]) || std::abs(positions[i]) > input::kMaxCoordinate)
            throw InputError("atom " + std::to_string(i / 3) + ": a coordinate is not a finite number within +-1e7 A");
    ReadStructure input;
    input.title = title;
    for (size_t i = 0; i < numbers.size(); ++i) {
        if (numbers[i] < 1 || numbers[i] > kMaxElement)
            throw InputError("atom " + std::to_string(i) + ": atomic number " + std::to_string(numbers[i]) +
                             " is not an element H..Rn");
        Atom a;
        a.z = numbers[i];
        input.structure.molecule.add_atom(a);
        input.structure.positions.emplace_back(positions[3 * i], positions[3 * i + 1], positions[3 * i + 2]);
    }
    if (request.charge) {
        input.structure.charge = *request.charge;
        input.has_charge = true;
    }
    return audit_one(input, request);
}

std::string version() { return repel::version(); }

}  // namespace repel::python
