// The audit report: a header line per structure (atoms, where the bonds came from, charge, multiplicity), then the
// findings worst first, then the notes.
#include "check/report.hpp"

#include <fmt/format.h>

#include "core/element.hpp"

namespace repel {
namespace {

const char* severity_name(Severity s) { return s == Severity::error ? "error" : "warning"; }

}  // namespace

std::string audit_text(const Audit& a, int index) {
    const Molecule& m = a.structure.molecule;
    std::string out = fmt::format("structure {}{} (line {}): {} atoms, {} bonds{}, charge {}, multiplicity {}\n", index,
                                  a.title.empty() ? "" : " '" + a.title + "'", a.line, m.atom_count(), m.bond_count(),
                                  a.bonds_from_coordinates ? " (perceived from coordinates)"
                                  : a.orders_assigned      ? " (orders assigned)"
                                                           : "",
                                  a.charge, a.multiplicity);
    if (a.findings.empty()) out += "  no findings\n";
    else out += fmt::format("  {} finding{}:\n", a.findings.size(), a.findings.size() == 1 ? "" : "s");
    for (const Finding& f : a.findings) out += fmt::format("  {:<7} {:<12} {}\n", severity_name(f.severity), f.kind, f.message);
    for (const MetalCentreAudit& c : a.metals) {
        const std::string who = fmt::format("{}{}", element(m.atoms[static_cast<size_t>(c.atom)].z).symbol, c.atom + 1);
        if (c.shape_measure < 0) {
            out += fmt::format("  metal {}: oxidation state {:+d}, d{}, {} ligand domain{}; model {}; no shape measure "
                               "(defined for 2 to 9 ligands)\n",
                               who, c.oxidation_state, c.d_electrons, c.coordination_number,
                               c.coordination_number == 1 ? "" : "s", c.model_polyhedron);
            continue;
        }
        out += fmt::format("  metal {}: oxidation state {:+d}, d{}, {}-coordinate: {} ({}, CShM {:.2f}); model {}{}\n",
                           who, c.oxidation_state, c.d_electrons, c.coordination_number, c.polyhedron, c.symbol,
                           c.shape_measure, c.model_polyhedron,
                           c.model_shape_measure >= 0 ? fmt::format(" (CShM {:.2f})", c.model_shape_measure) : "");
    }
    for (const std::string& note : a.notes) out += "  note: " + note + "\n";
    return out;
}

nlohmann::json audit_json(const Audit& a) {
    const Molecule& m = a.structure.molecule;
    nlohmann::json j;
    j["title"] = a.title;
    j["line"] = a.line;
    j["atoms"] = m.atom_count();
    j["bonds"] = m.bond_count();
    j["bonds_from_coordinates"] = a.bonds_from_coordinates;
    j["orders_assigned"] = a.orders_assigned;
    j["charge"] = a.charge;
    j["multiplicity"] = a.multiplicity;
    nlohmann::json findings = nlohmann::json::array();
    for (const Finding& f : a.findings) {
        nlohmann::json x;
        x["kind"] = f.kind;
        x["atoms"] = f.atoms;
        x["message"] = f.message;
        x["severity"] = severity_name(f.severity);
        if (f.measured) x["measured"] = *f.measured;
        if (f.expected) x["expected"] = *f.expected;
        if (!f.unit.empty()) x["unit"] = f.unit;
        findings.push_back(x);
    }
    j["findings"] = findings;
    j["notes"] = a.notes;
    nlohmann::json charges = nlohmann::json::array();
    for (int i = 0; i < m.atom_count(); ++i)
        if (m.atoms[static_cast<size_t>(i)].charge != 0)
            charges.push_back({{"atom", i + 1}, {"charge", m.atoms[static_cast<size_t>(i)].charge}});
    j["formal_charges"] = charges;
    // Only with metals, so that the JSON of other structures stays as it was.
    if (!a.metals.empty()) {
        nlohmann::json metals = nlohmann::json::array();
        for (const MetalCentreAudit& c : a.metals) {
            nlohmann::json x;
            x["atom"] = c.atom + 1;
            x["element"] = std::string(element(m.atoms[static_cast<size_t>(c.atom)].z).symbol);
            x["coordination_number"] = c.coordination_number;
            x["oxidation_state"] = c.oxidation_state;
            x["d_electrons"] = c.d_electrons;
            x["unpaired_electrons"] = c.unpaired_electrons;
            // The measured polyhedron: the nearest ideal of that coordination number and its CShM (null when the
            // coordination number is outside 2..9).
            x["polyhedron"] = c.shape_measure >= 0 ? nlohmann::json(c.polyhedron) : nlohmann::json(nullptr);
            x["polyhedron_symbol"] = c.shape_measure >= 0 ? nlohmann::json(c.symbol) : nlohmann::json(nullptr);
            x["shape_measure"] = c.shape_measure >= 0 ? nlohmann::json(c.shape_measure) : nlohmann::json(nullptr);
            x["model_polyhedron"] = c.model_polyhedron;
            x["model_reason"] = c.model_reason;
            x["model_shape_measure"] =
                c.model_shape_measure >= 0 ? nlohmann::json(c.model_shape_measure) : nlohmann::json(nullptr);
            metals.push_back(x);
        }
        j["metal_centres"] = metals;
    }
    return j;
}

}  // namespace repel
