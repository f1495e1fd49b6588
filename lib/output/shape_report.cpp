#include "output/shape_report.hpp"

#include <fmt/format.h>

#include <cmath>

#include "core/element.hpp"

namespace repel {
namespace {

bool is_centre(const CentreDomains& c) { return c.bonded >= 2 || c.bonded == 0; }

std::string atom_name(const Molecule& m, int i) {
    if (i < 0) return "H";
    return fmt::format("{}{}", element(m.atoms[static_cast<size_t>(i)].z).symbol, i + 1);
}

std::string metal_oxidation_label(const Molecule& m, const MetalCentre& mc) {
    return fmt::format("{}({:+d})", element(m.atoms[static_cast<size_t>(mc.atom)].z).symbol, mc.oxidation_state);
}

}  // namespace

std::string shape_table(const Molecule& m, const MoleculeDomains& d, const std::string& title) {
    std::string out = fmt::format("{}  charge {}  multiplicity {}\n", title, d.charge, d.multiplicity);
    out += fmt::format("{:<6} {:<4} {:>2} {:>2} {:>2} {:>2}  {:<8} {:<29} {}\n", "atom", "el", "SN", "X", "E", "e",
                       "AXE", "electron geometry", "shape");
    for (const CentreDomains& c : d.atoms) {
        if (!is_centre(c)) continue;
        out += fmt::format("{:<6} {:<4} {:>2} {:>2} {:>2} {:>2}  {:<8} {:<29} {}\n", c.atom + 1,
                           element(m.atoms[static_cast<size_t>(c.atom)].z).symbol, c.steric_number, c.bonded,
                           c.lone_pairs, c.single_electrons, c.axe, c.electron_geometry, c.shape);
    }
    for (const CentreDomains& c : d.atoms)
        if (c.delocalised_lone_pairs > 0)
            out += fmt::format("{}: {} lone pair delocalised into the neighbouring pi system (no sigma domain; not "
                               "counted in SN or E)\n",
                               atom_name(m, c.atom), c.delocalised_lone_pairs);
    for (const CentreDomains& c : d.atoms)
        if (c.p_single_electrons > 0)
            out += fmt::format("{}: single electron in the p orbital of a planar radical centre (no domain; not counted "
                               "in SN or e)\n",
                               atom_name(m, c.atom));
    bool header = false;
    for (const CentreDomains& c : d.atoms) {
        if (c.angles.empty()) continue;
        if (!header) {
            out += "predicted angles (degrees)\n";
            header = true;
        }
        std::string line = fmt::format("  {}:", atom_name(m, c.atom));
        for (const PredictedAngle& a : c.angles)
            line += fmt::format(" {}-{}-{} {:.1f}", atom_name(m, a.a), atom_name(m, c.atom), atom_name(m, a.b), a.degrees);
        out += line + "\n";
    }
    for (const MetalCentre& mc : d.metals.centres) {
        out += fmt::format("{}: {}, d{}, coordination number {}{}; {}\n", atom_name(m, mc.atom),
                           metal_oxidation_label(m, mc), mc.d_electrons, mc.coordination_number,
                           mc.sites != mc.coordination_number ? fmt::format(" ({} sites)", mc.sites) : std::string(),
                           mc.polyhedron_reason);
        out += fmt::format("  spin: {}{}\n", mc.spin_state.empty() ? std::string() : mc.spin_state + ", ", mc.spin_reason);
        for (const LigandDomain& l : mc.ligands)
            if (l.hapto()) out += fmt::format("  {}: one domain at its centroid, {:.2f} A to each atom\n", l.label, l.length);
        if (!mc.stereo_note.empty()) out += "  stereo: " + mc.stereo_note + "\n";
    }
    for (const std::string& w : d.warnings) out += "warning: " + w + "\n";
    return out;
}

nlohmann::json shape_json(const Molecule& m, const MoleculeDomains& d, const std::string& title) {
    nlohmann::json doc;
    doc["name"] = title;
    doc["charge"] = d.charge;
    doc["multiplicity"] = d.multiplicity;
    doc["unpaired_electrons"] = d.unpaired_electrons;
    if (!d.multiplicity_reason.empty()) doc["multiplicity_reason"] = d.multiplicity_reason;
    nlohmann::json centres = nlohmann::json::array();
    for (const CentreDomains& c : d.atoms) {
        if (!is_centre(c)) continue;
        nlohmann::json j;
        j["atom"] = c.atom + 1;
        j["element"] = std::string(element(m.atoms[static_cast<size_t>(c.atom)].z).symbol);
        j["steric_number"] = c.steric_number;
        j["bonded_domains"] = c.bonded;
        j["lone_pairs"] = c.lone_pairs;
        j["delocalised_lone_pairs"] = c.delocalised_lone_pairs;
        j["single_electrons"] = c.single_electrons;
        j["p_single_electrons"] = c.p_single_electrons;
        j["axe"] = c.axe;
        j["electron_geometry"] = c.electron_geometry;
        j["shape"] = c.shape;
        nlohmann::json angles = nlohmann::json::array();
        for (const PredictedAngle& a : c.angles)
            angles.push_back({{"atoms", {a.a + 1, c.atom + 1, a.b + 1}}, {"degrees", std::round(a.degrees * 100) / 100}});
        j["angles"] = angles;
        const int k = d.metals.centre_of_atom.empty() ? -1 : d.metals.centre_of_atom[static_cast<size_t>(c.atom)];
        if (k >= 0) {
            const MetalCentre& mc = d.metals.centres[static_cast<size_t>(k)];
            nlohmann::json metal;
            metal["oxidation_state"] = mc.oxidation_state;
            metal["d_electrons"] = mc.d_electrons;
            metal["coordination_number"] = mc.coordination_number;
            metal["sites"] = mc.sites;
            metal["polyhedron"] = mc.polyhedron;
            metal["polyhedron_reason"] = mc.polyhedron_reason;
            metal["unpaired_electrons"] = mc.unpaired_electrons;
            metal["spin_state"] = mc.spin_state;
            metal["spin_reason"] = mc.spin_reason;
            nlohmann::json ligands = nlohmann::json::array();
            for (const LigandDomain& l : mc.ligands) {
                nlohmann::json lj;
                nlohmann::json atoms = nlohmann::json::array();
                for (int a : l.atoms) atoms.push_back(a + 1);
                lj["atoms"] = atoms;
                lj["hapto"] = l.hapto() ? static_cast<int>(l.atoms.size()) : 1;
                lj["sites"] = l.sites;
                lj["length"] = std::round(l.length * 1000) / 1000;
                lj["label"] = l.label;
                ligands.push_back(lj);
            }
            metal["ligands"] = ligands;
            if (!mc.stereo_note.empty()) metal["stereo"] = mc.stereo_note;
            j["metal"] = metal;
        }
        centres.push_back(j);
    }
    doc["centres"] = centres;
    doc["warnings"] = d.warnings;
    return doc;
}

}  // namespace repel
