// `repel shape`: the electron-domain analysis of every centre, as a table or JSON.
#include <fmt/format.h>

#include <algorithm>
#include <fstream>
#include <iostream>

#include "api/front_door.hpp"
#include "commands.hpp"
#include "core/error.hpp"
#include "input/records.hpp"

namespace repel::app {

int run_shape(const ShapeArgs& args) {
    if (!args.picture.empty() && !args.input_file.empty()) {
        std::cerr << "repel shape: " << kPictureBatchRefusal << "\n";
        return 2;
    }
    std::string picture;
    auto analyse = [&](const std::string& text, const std::string& name, nlohmann::json* doc, std::string* table) {
        BuildSettings settings;
        settings.notation = args.notation;
        settings.name = name;
        Molecule mol = read_molecule(text, settings);
        settings.polyhedra = polyhedron_choices(args.polyhedra);
        const Shape result = shape(std::move(mol), settings);
        const std::string title = name.empty() ? text : name;
        if (doc) *doc = shape_json_object(result, title);
        if (table) *table = shape_text(result, title);
        if (!args.picture.empty()) {
            // The lobes need coordinates: the structure `repel build` would write, with this analysis's directions.
            const Structure built = build(result.molecule);
            picture = shape_picture(result, built, title, args.picture_hydrogens);
        }
    };
    if (args.input_file.empty()) {
        nlohmann::json doc;
        std::string table;
        try {
            analyse(args.input, "", args.json ? &doc : nullptr, args.json ? nullptr : &table);
        } catch (const std::exception& e) {
            std::cerr << describe_failure("repel shape", args.input, e) << "\n";
            return 2;
        }
        if (!args.picture.empty()) {
            try {
                write_whole_file(args.picture, picture);
            } catch (const std::exception& e) {
                std::cerr << "repel shape: " << e.what() << "\n";
                return 2;
            }
        }
        std::cout << (args.json ? doc.dump(2) + "\n" : table);
        return 0;
    }
    std::ifstream file;
    std::istream* in = open_input(args.input_file, file, "shape");
    if (!in) return 2;
    SmiReader reader(*in);
    nlohmann::json all = nlohmann::json::array();
    long read = 0, failed = 0;
    while (auto rec = reader.next()) {
        ++read;
        nlohmann::json doc;
        std::string table;
        try {
            if (reader.too_long()) throw std::runtime_error("line too long");
            analyse(rec->text, rec->name, args.json ? &doc : nullptr, args.json ? nullptr : &table);
        } catch (const std::exception& e) {
            ++failed;
            std::cerr << describe_failure(fmt::format("line {}", rec->line), rec->text, e) << "\n";
            continue;
        }
        if (args.json) all.push_back(doc);
        else std::cout << table << "\n";
    }
    if (args.json) std::cout << all.dump(2) << "\n";
    std::cerr << fmt::format("read {}, built {}, failed {}\n", read, read - failed, failed);
    return failed > 0 ? 1 : 0;
}

std::vector<std::pair<int, std::string>> polyhedron_choices(const std::vector<std::string>& values) {
    std::vector<std::pair<int, std::string>> out;
    for (const std::string& v : values) {
        const size_t eq = v.find('=');
        int atom = 0;
        try {
            atom = eq == std::string::npos ? 0 : std::stoi(v.substr(0, eq));
        } catch (const std::exception&) {
            atom = 0;
        }
        const std::string name = eq == std::string::npos ? std::string() : v.substr(eq + 1);
        const auto& names = polyhedron_names();
        if (atom < 1 || std::find(names.begin(), names.end(), name) == names.end()) {
            std::string list;
            for (const std::string& n : names) list += (list.empty() ? "" : ", ") + n;
            throw InputError(fmt::format("--polyhedron {}: expected ATOM=NAME, ATOM a 1-based atom number and NAME one "
                                         "of: {}",
                                         v, list));
        }
        out.emplace_back(atom - 1, name);
    }
    return out;
}

}  // namespace repel::app
