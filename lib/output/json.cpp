// JSON writer: one object per structure,
//   {"name", "charge", "multiplicity", "multiplicity_reason" (only where a rule decided it: metal centres),
//    "atoms": [{"index" (1-based), "element", "x", "y", "z" (Angstrom, 6 decimals), "charge"}, ...],
//    "bonds": [{"atoms": [i, j] (1-based), "order"}, ...],
//    "conformer": {"rank", "count", "energy", "relative_energy" (kcal/mol), "rmsd_to_first" (Angstrom)} (members of a
//    conformer ensemble only), "warnings": ["...", ...]}
// laid out one atom and one bond a line so that the file reads well and diffs well. Several structures make one
// array: see writer.hpp for when a caller uses begin()/separator()/end(). Text that is not valid UTF-8 is written
// with U+FFFD in place of the bad bytes, so the document always parses.
#include <nlohmann/json.hpp>

#include "output/formats.hpp"

namespace repel::output {

namespace {

using Json = nlohmann::ordered_json;  // keeps the fields in the documented order

std::string dump(const Json& value) { return value.dump(-1, ' ', false, Json::error_handler_t::replace); }

// "  \"key\": [\n    item,\n    item\n  ]" or "  \"key\": []".
std::string array_field(const std::string& key, const std::vector<Json>& items) {
    std::string out = "  " + dump(Json(key)) + ": [";
    if (items.empty()) return out + "]";
    for (size_t k = 0; k < items.size(); ++k) out += (k == 0 ? "\n    " : ",\n    ") + dump(items[k]);
    return out + "\n  ]";
}

}  // namespace

std::string JsonWriter::record(const Structure& structure, const std::string& title) const {
    require_writable(structure, "JSON");
    const Molecule& m = structure.molecule;

    std::vector<Json> atoms;
    atoms.reserve(m.atoms.size());
    for (int i = 0; i < m.atom_count(); ++i) {
        const Eigen::Vector3d& p = structure.positions[static_cast<size_t>(i)];
        Json atom;
        atom["index"] = i + 1;
        atom["element"] = std::string(symbol_of(structure, i));
        atom["x"] = tidy(p.x(), 6);
        atom["y"] = tidy(p.y(), 6);
        atom["z"] = tidy(p.z(), 6);
        atom["charge"] = m.atoms[static_cast<size_t>(i)].charge;
        atoms.push_back(std::move(atom));
    }
    std::vector<Json> bonds;
    bonds.reserve(m.bonds.size());
    for (const Bond& b : m.bonds) {
        Json bond;
        bond["atoms"] = Json::array({b.a + 1, b.b + 1});
        bond["order"] = b.order;
        bonds.push_back(std::move(bond));
    }
    std::vector<Json> warnings(structure.warnings.begin(), structure.warnings.end());

    std::string out = "{\n";
    out += "  \"name\": " + dump(Json(title)) + ",\n";
    out += "  \"charge\": " + dump(Json(structure.charge)) + ",\n";
    out += "  \"multiplicity\": " + dump(Json(structure.multiplicity)) + ",\n";
    if (!structure.multiplicity_reason.empty())
        out += "  \"multiplicity_reason\": " + dump(Json(structure.multiplicity_reason)) + ",\n";
    if (const auto& c = structure.conformer) {
        Json conformer;
        conformer["rank"] = c->rank;
        conformer["count"] = c->count;
        conformer["energy"] = tidy(c->energy, 4);
        conformer["relative_energy"] = tidy(c->relative_energy, 4);
        conformer["rmsd_to_first"] = tidy(c->rmsd_to_first, 4);
        out += "  \"conformer\": " + dump(conformer) + ",\n";
    }
    out += array_field("atoms", atoms) + ",\n";
    out += array_field("bonds", bonds) + ",\n";
    out += array_field("warnings", warnings) + "\n";
    return out + "}\n";
}

}  // namespace repel::output
