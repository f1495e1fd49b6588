// `repel check`: reads every structure of a file, audits each, prints the report (or JSON), and with --fix writes
// the cleaned structures. No chemistry here: lib/check does the work.
#include "check_command.hpp"

#include <fmt/format.h>

#include <fstream>
#include <iostream>
#include <sstream>

#include "check/audit.hpp"
#include "check/clean.hpp"
#include "check/report.hpp"
#include "check/report_page.hpp"
#include "commands.hpp"
#include "core/error.hpp"
#include "core/limits.hpp"
#include "core/replace_file.hpp"
#include "input/smiles.hpp"
#include "input/structure_reader.hpp"
#include "output/writer.hpp"

namespace repel::app {

int run_check(const CheckArgs& args) {
    if (args.fix && args.output_file.empty()) {
        std::cerr << "repel check: --fix needs -o FILE for the cleaned structure\n";
        return 2;
    }
    if (args.files.empty()) {
        std::cerr << "repel check: give a structure file (.xyz, .pdb, .sdf, .mol)\n";
        return 2;
    }
    if (!args.smiles.empty()) {
        try {
            (void)read_smiles(args.smiles);
        } catch (const std::exception& e) {
            std::cerr << describe_failure("repel check: --smiles", args.smiles, e) << "\n";
            return 2;
        }
    }
    // Every structure of every file, in order, with the file it came from.
    std::vector<ReadStructure> structures;
    std::vector<size_t> file_of;
    bool unreadable = false;
    for (size_t fi = 0; fi < args.files.size(); ++fi) {
        const std::string& path = args.files[fi];
        try {
            InputFormat format = InputFormat::xyz;
            if (!args.format.empty()) {
                format = args.format == "pdb" ? InputFormat::pdb
                         : args.format == "sdf" || args.format == "mol" ? InputFormat::sdf
                         : args.format == "xyz" ? InputFormat::xyz
                         : throw InputError("--format: expected xyz, pdb or sdf, found '" + args.format + "'");
            } else if (path == "-") {
                throw InputError("reading standard input needs --format xyz|pdb|sdf");
            } else {
                format = input_format_from_path(path);
            }
            std::vector<ReadStructure> read;
            if (path == "-") {
                read = read_structures(std::cin, format);
            } else {
                std::ifstream in(path, std::ios::binary);
                if (!in) throw InputError("cannot open " + path);
                read = read_structures(in, format);
            }
            for (auto& r : read) {
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

    AuditOptions options;
    options.angle_rms = args.angle_threshold;
    options.angle_worst = args.angle_threshold;  // the same limit for the worst single angle (audit.hpp)
    options.bond_deviation = args.bond_deviation;
    options.contact_fraction = args.contact_fraction;
    options.perception.tolerance = args.tolerance;
    options.charge = args.charge;
    options.multiplicity = args.multiplicity;
    options.reference_smiles = args.smiles;
    options.time_limit = args.time_limit;

    nlohmann::json doc;
    if (several) doc["files"] = args.files;
    else doc["file"] = args.files.front();
    std::unique_ptr<ReportPage> page;
    if (!args.report.empty())
        page = std::make_unique<ReportPage>(several ? fmt::format("{} files", args.files.size()) : args.files.front());
    doc["structures"] = nlohmann::json::array();
    size_t total = 0, written = 0, failed = 0;
    std::string text, cleaned;
    std::unique_ptr<StructureWriter> writer;
    try {
        if (args.fix) writer = make_writer(format_from_path(args.output_file));
        if (writer) cleaned += writer->begin();
        for (size_t k = 0; k < structures.size(); ++k) {
            // One structure that cannot be audited (a limit, an unsupported element) costs only itself.
            Audit audit;
            try {
                audit = audit_structure(structures[k], options);
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
            total += audit.findings.size();
            if (page) page->add(audit, static_cast<int>(k + 1), args.files[file_of[k]]);
            if (args.json) {
                nlohmann::json entry = audit_json(audit);
                if (several) entry["file"] = args.files[file_of[k]];
                doc["structures"].push_back(entry);
            } else {
                if (several && (k == 0 || file_of[k] != file_of[k - 1])) text += "file " + args.files[file_of[k]] + "\n";
                text += audit_text(audit, static_cast<int>(k + 1));
            }
            if (writer) {
                // Only refined structures are written; the others are named on standard error.
                CleanResult c;
                try {
                    const ScopedDeadline deadline(args.time_limit);
                    c = clean_structure(audit);
                } catch (const LimitError& e) {
                    c.refined = false;
                    c.summary = e.what();
                }
                if (c.refined) {
                    if (written > 0) cleaned += writer->separator();
                    cleaned += writer->record(c.structure, audit.title);
                    ++written;
                } else {
                    std::cerr << fmt::format("repel check: structure {} (line {}) not written to {}: {}\n", k + 1,
                                             audit.line, args.output_file, c.summary);
                }
                if (!args.json) text += "  cleaned: " + c.summary + "\n";
            }
        }
        if (writer) cleaned += writer->end();
    } catch (const std::exception& e) {
        std::cerr << "repel check: " << e.what() << "\n";
        return 2;
    }
    doc["findings"] = total;
    if (args.json) std::cout << doc.dump(2) << "\n";
    else std::cout << text << fmt::format("{} structure{}, {} finding{}\n", structures.size(),
                                          structures.size() == 1 ? "" : "s", total, total == 1 ? "" : "s");
    if (writer && written == 0) {
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
    if (writer) {
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
