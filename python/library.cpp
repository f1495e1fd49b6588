// The Python module's calls into the library (see library.hpp), through the front door <repel/repel.hpp>. The few
// private headers left give what the front door does not offer: element symbols and the input limits the file
// readers keep (core/), the output format names of the command line (output/writer.hpp) and the per-atom unpaired
// electrons of the domain analysis (domains/).
#include "library.hpp"

#include <repel/repel.hpp>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <nlohmann/json.hpp>
#include <thread>

#include "core/element.hpp"
#include "core/limits.hpp"
#include "domains/domains.hpp"
#include "domains/metal.hpp"
#include "input/line_reader.hpp"
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

WriteFormat write_format(Format f) {
    switch (f) {
        case Format::pdb: return WriteFormat::pdb;
        case Format::sdf: return WriteFormat::sdf;
        case Format::json: return WriteFormat::json;
        default: return WriteFormat::xyz;
    }
}

TextNotation text_notation(const std::string& notation) {
    if (notation == "auto") return TextNotation::automatic;
    if (notation == "smiles") return TextNotation::smiles;
    if (notation == "formula") return TextNotation::formula;
    throw InputError("unknown notation '" + notation + "': expected 'auto', 'smiles' or 'formula'");
}

// The plain data of a structure; title is what the writers put in a file.
Built built_of(Structure structure, const std::string& name, const std::string& title) {
    Built b;
    const size_t n = structure.molecule.atoms.size();
    b.numbers.reserve(n);
    b.elements.reserve(n);
    b.positions.reserve(3 * n);
    for (size_t i = 0; i < n; ++i) {
        const int z = structure.molecule.atoms[i].z;
        b.numbers.push_back(z);
        b.elements.emplace_back(element(z).symbol);
        for (int k = 0; k < 3; ++k) b.positions.push_back(structure.positions[i][k]);
    }
    for (const Bond& bond : structure.molecule.bonds) {
        b.bonds.push_back(bond.a);
        b.bonds.push_back(bond.b);
        b.bonds.push_back(bond.order);
    }
    b.charge = structure.charge;
    b.multiplicity = structure.multiplicity;
    b.warnings = structure.warnings;
    b.name = name;
    b.title = title;
    if (const auto& c = structure.conformer) {
        b.conformer_rank = c->rank;
        b.conformer_count = c->count;
        b.conformer_energy = c->energy;
        b.conformer_relative_energy = c->relative_energy;
        b.conformer_rmsd_to_first = c->rmsd_to_first;
    }
    b.structure = std::make_shared<const Structure>(std::move(structure));
    return b;
}

}  // namespace

namespace {

BuildSettings settings_of(const BuildRequest& request) {
    BuildSettings settings;
    settings.notation = text_notation(request.notation);
    settings.name = request.name;
    settings.refine = request.refine;
    settings.charge = request.charge;
    settings.multiplicity = request.multiplicity;
    return settings;
}

}  // namespace

Built build(const BuildRequest& request) {
    return built_of(repel::build(request.text, settings_of(request)), request.name,
                    request.name.empty() ? request.text : request.name);
}

std::vector<Built> build_conformers(const BuildRequest& request, int count, double rmsd, int tries,
                                    unsigned long long seed) {
    ConformerSettings c;
    c.count = count;
    c.distinct_rmsd = rmsd;
    c.tries = tries;
    c.seed = seed;
    std::vector<Built> out;
    for (Structure& s : repel::build_conformers(request.text, settings_of(request), c))
        out.push_back(built_of(std::move(s), request.name, request.name.empty() ? request.text : request.name));
    return out;
}

std::vector<Outcome> build_many(const std::vector<BuildRequest>& requests, unsigned threads) {
    std::vector<Outcome> out(requests.size());
    // Each worker takes the next record: one slow molecule does not hold up a whole share of the others.
    std::atomic<size_t> next{0};
    auto work = [&] {
        for (size_t k = next++; k < requests.size(); k = next++) {
            Outcome& o = out[k];
            try {
                o.built = build(requests[k]);
            } catch (const LimitError& e) {
                o.failure = {"LimitError", e.what(), e.column()};
            } catch (const InputError& e) {
                o.failure = {"InputError", e.what(), e.column()};
            } catch (const UnsupportedError& e) {
                o.failure = {"UnsupportedError", e.what(), 0};
            } catch (const std::bad_alloc&) {
                o.failure = {"MemoryError", "out of memory", 0};
            } catch (const std::exception& e) {
                o.failure = {"RuntimeError", e.what(), 0};
            }
        }
    };
    const size_t n = std::min<size_t>(std::max(threads, 1U), requests.size());
    if (n <= 1) {
        work();
        return out;
    }
    std::vector<std::thread> pool;
    pool.reserve(n - 1);
    for (size_t t = 1; t < n; ++t) pool.emplace_back(work);
    work();
    for (std::thread& t : pool) t.join();
    return out;
}

std::string write_text(const Built& built, const std::string& format) {
    return write(*built.structure, write_format(format_from_name(format)), built.title);
}

std::string format_for_path(const std::string& path) { return format_name(format_from_path(path)); }

std::vector<double> unpaired_per_atom(const Built& built) {
    const Molecule& mol = built.structure->molecule;
    const size_t n = mol.atoms.size();
    const int total = built.multiplicity - 1;
    std::vector<double> out(n, 0.0);
    if (total <= 0 || n == 0) return out;
    try {
        // The front door's shape() has no p-orbital single electrons nor a metal's unpaired d electrons.
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
    BuildSettings settings;
    settings.name = name;
    nlohmann::json doc = nlohmann::json::parse(repel::shape_json_text(shape(text, settings), name.empty() ? text : name));
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

// A reference SMILES that cannot be read is a bad argument of the whole call, said with its caret, rather than the
// same error for every structure.
void read_reference(const CheckRequest& request) {
    if (request.smiles.empty()) return;
    try {
        read_molecule(request.smiles, {.notation = TextNotation::smiles});
    } catch (const InputError& e) {
        throw InputError(std::string("smiles: ") + e.what(), request.smiles, e.column());
    }
}

CheckSettings check_settings(const CheckRequest& request) {
    CheckSettings settings;
    settings.charge = request.charge;
    settings.multiplicity = request.multiplicity;
    settings.reference_smiles = request.smiles;
    return settings;
}

CheckResult audit_one(const StructureRecord& input, const CheckRequest& request) {
    CheckResult r;
    r.title = input.title;
    r.line = input.line;
    repel::CheckResult audit;
    try {
        audit = check(input, check_settings(request));
    } catch (const std::exception& e) {
        r.error = e.what();  // as `repel check`: one structure that cannot be audited costs only itself
        return r;
    }
    r.charge = audit.charge;
    r.multiplicity = audit.multiplicity;
    r.notes = audit.notes;
    for (const repel::CheckFinding& f : audit.findings) {
        CheckFinding out;
        out.kind = f.kind;
        for (int a : f.atoms) out.atoms.push_back(a - 1);  // the library's finding atoms are 1-based
        out.message = f.message;
        out.measured = f.measured;
        out.expected = f.expected;
        out.unit = f.unit;
        out.severity = f.error ? "error" : "warning";
        r.findings.push_back(std::move(out));
    }
    if (request.fix) {
        // As `repel check --fix`: a structure past the time limit is reported, not written.
        FixResult c = fix(audit, check_settings(request));
        r.fix_summary = c.summary;
        if (c.refined) r.fixed = built_of(std::move(c.structure), input.title, input.title);
    }
    return r;
}

}  // namespace

std::vector<CheckResult> check_file(const std::string& path, const CheckRequest& request) {
    read_reference(request);
    std::vector<CheckResult> out;
    for (const StructureRecord& r : read_structure_file(path)) out.push_back(audit_one(r, request));
    return out;
}

CheckResult check_atoms(const std::vector<int>& numbers, const std::vector<double>& positions, const std::string& title,
                        const CheckRequest& request) {
    read_reference(request);
    if (positions.size() != 3 * numbers.size())
        throw InputError("positions must have one row of x, y, z per atom");
    // The limits the file readers keep (core/limits.hpp, input/line_reader.hpp), so the audit sees what it would
    // from a file.
    if (numbers.size() > static_cast<size_t>(kMaxAtoms))
        throw LimitError("more than " + std::to_string(kMaxAtoms) + " atoms");
    for (size_t i = 0; i < positions.size(); ++i)
        if (!std::isfinite(positions[i]) || std::abs(positions[i]) > input::kMaxCoordinate)
            throw InputError("atom " + std::to_string(i / 3) + ": a coordinate is not a finite number within +-1e7 A");
    StructureRecord input;
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
