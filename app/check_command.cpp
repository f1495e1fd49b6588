// `repel check`: reads every structure of a file, audits each, prints the report (or JSON), and with --fix writes
// the cleaned structures. No chemistry here: every step is a call of the front door (<repel/repel.hpp>).
#include "check_command.hpp"

#include <fmt/format.h>

#include <iostream>
#include <sstream>

#include "api/front_door.hpp"
#include "commands.hpp"
#include "core/replace_file.hpp"

namespace repel::app {

namespace {

// The records of one file of the command line ("-": standard input, which needs --format).
std::vector<StructureRecord> read_file_arg(const std::string& path, const std::string& format_name) {
    FileFormat format = FileFormat::xyz;
    if (!format_name.empty()) {
        format = format_name == "pdb" ? FileFormat::pdb
                 : format_name == "sdf" || format_name == "mol" ? FileFormat::sdf
                 : format_name == "xyz" ? FileFormat::xyz
                 : throw InputError("--format: expected xyz, pdb or sdf, found '" + format_name + "'");
    } else if (path == "-") {
        throw InputError("reading standard input needs --format xyz|pdb|sdf");
    }
    if (path == "-") {
        std::ostringstream text;
        text << std::cin.rdbuf();
        return read_structures_text(text.str(), format);
    }
    return format_name.empty() ? read_structure_file(path) : read_structure_file(path, format);
}

}  // namespace

int run_check(const CheckArgs& args) {
    if (args.fix && args.output_file.empty()) {
        std::cerr << "repel check: --fix needs -o FILE for the cleaned structure\n";
        return 2;
    }
    if (args.files.empty()) {
        std::cerr << "repel check: give a structure file (.xyz, .pdb, .sdf, .mol)\n";
        return 2;
    }
    if (!args.settings.reference_smiles.empty()) {
        try {
            BuildSettings smiles;
            smiles.notation = TextNotation::smiles;
            (void)read_molecule(args.settings.reference_smiles, smiles);
        } catch (const std::exception& e) {
            std::cerr << describe_failure("repel check: --smiles", args.settings.reference_smiles, e) << "\n";
            return 2;
        }
    }
    // Every structure of every file, in order, with the file it came from.
    std::vector<StructureRecord> structures;
    std::vector<size_t> file_of;
    bool unreadable = false;
    for (size_t fi = 0; fi < args.files.size(); ++fi) {
        const std::string& path = args.files[fi];
        try {
            for (auto& r : read_file_arg(path, args.format)) {
                structures.push_back(std::move(r));
                file_of.push_back(fi);
            }
        } catch (const std::exception& e) {
            std::cerr << describe_failure("repel check: " + path, "", e) << "\n";
            if (args.files.size() == 1) return 2;
            unreadable = true;
        }
    }
    if (structures.empty() && unreadable) return 2;
    const bool several = args.files.size() > 1;

    nlohmann::json doc;
    if (several) doc["files"] = args.files;
    else doc["file"] = args.files.front();
    std::unique_ptr<CheckReport> page;
    if (!args.report.empty())
        page = std::make_unique<CheckReport>(several ? fmt::format("{} files", args.files.size()) : args.files.front());
    doc["structures"] = nlohmann::json::array();
    size_t total = 0, failed = 0;
    std::string text, cleaned;
    std::vector<Structure> fixed;
    std::vector<std::string> fixed_titles;
    try {
        const WriteFormat fix_format = args.fix ? write_format_of(args.output_file) : WriteFormat::xyz;
        for (size_t k = 0; k < structures.size(); ++k) {
            // One structure that cannot be audited (a limit, an unsupported element) costs only itself.
            CheckResult result;
            try {
                result = check(structures[k], args.settings);
            } catch (const std::exception& e) {
                ++failed;
                const std::string why = e.what();
                std::cerr << fmt::format("repel check: structure {} (line {}) not audited: {}\n", k + 1,
                                         structures[k].line, why);
                if (page) page->add_failure(static_cast<int>(k + 1), args.files[file_of[k]], structures[k].line, why);
                if (args.json) {
                    nlohmann::json entry = {{"line", structures[k].line}, {"error", why}};
                    if (several) entry["file"] = args.files[file_of[k]];
                    doc["structures"].push_back(entry);
                }
                else text += fmt::format("structure {} (line {}): not audited: {}\n", k + 1, structures[k].line, why);
                continue;
            }
            total += result.findings.size();
            if (page) page->add(result, static_cast<int>(k + 1), args.files[file_of[k]]);
            if (args.json) {
                nlohmann::json entry = check_json(result);
                if (several) entry["file"] = args.files[file_of[k]];
                doc["structures"].push_back(entry);
            } else {
                if (several && (k == 0 || file_of[k] != file_of[k - 1])) text += "file " + args.files[file_of[k]] + "\n";
                text += check_text(result, static_cast<int>(k + 1));
            }
            if (args.fix) {
                // Only refined structures are written; the others are named on standard error.
                FixResult c = fix(result, args.settings);
                if (c.refined) {
                    fixed.push_back(std::move(c.structure));
                    fixed_titles.push_back(result.title);
                } else {
                    std::cerr << fmt::format("repel check: structure {} (line {}) not written to {}: {}\n", k + 1,
                                             result.line, args.output_file, c.summary);
                }
                if (!args.json) text += "  cleaned: " + c.summary + "\n";
            }
        }
        if (args.fix) cleaned = write(fixed, fix_format, fixed_titles);
    } catch (const std::exception& e) {
        std::cerr << "repel check: " << e.what() << "\n";
        return 2;
    }
    doc["findings"] = total;
    if (args.json) std::cout << doc.dump(2) << "\n";
    else std::cout << text << fmt::format("{} structure{}, {} finding{}\n", structures.size(),
                                          structures.size() == 1 ? "" : "s", total, total == 1 ? "" : "s");
    if (args.fix && fixed.empty()) {
        std::cerr << "repel check: no structure could be cleaned; " << args.output_file << " not written\n";
        return 2;
    }
    if (page) {
        try {
            write_whole_file(args.report, page->html());
        } catch (const std::exception& e) {
            std::cerr << "repel check: " << e.what() << "\n";
            return 2;
        }
    }
    if (args.fix) {
        // Written whole or not at all (core/replace_file.hpp).
        try {
            replace_file(args.output_file, cleaned);
        } catch (const std::exception&) {
            std::cerr << "repel check: cannot write " << args.output_file << "\n";
            return 2;
        }
    }
    if (unreadable) return 2;
    return total > 0 || failed > 0 ? 1 : 0;
}

}  // namespace repel::app
