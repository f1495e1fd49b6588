// The audit report: a header line per structure (atoms, where the bonds came from, charge, multiplicity), then the
// findings worst first, then the notes.
#include "check/report.hpp"

#include <fmt/format.h>

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
    return j;
}

}  // namespace repel
