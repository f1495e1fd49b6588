// `repel build`: reads records, builds each, writes each whole record, reports failures by record.
#include <fmt/format.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <sstream>

#include "assemble/build.hpp"
#include "commands.hpp"
#include "core/error.hpp"
#include "input/records.hpp"

namespace repel::app {

std::string describe_failure(const std::string& where, const std::string& text, const std::exception& e) {
    if (const auto* ie = dynamic_cast<const InputError*>(&e)) {
        InputError filled = ie->text().empty() ? InputError(ie->what(), text, ie->column()) : *ie;
        return where + ": " + filled.describe();
    }
    return where + ": " + e.what();
}

std::istream* open_input(const std::string& path, std::ifstream& file, const char* command) {
    if (path == "-") return &std::cin;
    file.open(path, std::ios::binary);
    if (!file) {
        std::cerr << "repel " << command << ": cannot read " << path << "\n";
        return nullptr;
    }
    return &file;
}

namespace {

// One line of the --errors file: the reason on one line.
std::string one_line(std::string s) {
    for (char& c : s)
        if (c == '\n' || c == '\t' || c == '\r') c = ' ';
    return s;
}

// Writes to a temporary file beside the target and renames it at the end, so that a file is never left half written.
class OutputFile {
public:
    explicit OutputFile(const std::string& path) : path_(path) {
        if (path_.empty()) return;
        tmp_ = path_ + ".partial";
        file_.open(tmp_, std::ios::binary | std::ios::trunc);
        if (!file_) throw std::runtime_error(fmt::format("cannot write {}", path_));
    }
    void write(const std::string& text) {
        if (path_.empty()) {
            std::fwrite(text.data(), 1, text.size(), stdout);
        } else {
            file_ << text;
        }
    }
    bool commit() {
        if (path_.empty()) return std::fflush(stdout) == 0;
        file_.close();
        if (!file_) return false;
        std::error_code ec;
        std::filesystem::rename(tmp_, path_, ec);
        return !ec;
    }
    ~OutputFile() {
        if (!path_.empty() && std::filesystem::exists(tmp_)) std::filesystem::remove(tmp_);
    }

private:
    std::string path_, tmp_;
    std::ofstream file_;
};

}  // namespace

int run_build(const BuildArgs& args) {
    std::unique_ptr<StructureWriter> writer;
    try {
        Format format = !args.format.empty()         ? format_from_name(args.format)
                        : !args.output_file.empty() ? format_from_path(args.output_file)
                                                    : Format::xyz;
        writer = make_writer(format);
    } catch (const std::exception& e) {
        std::cerr << "repel build: " << e.what() << "\n";
        return 2;
    }
    BuildOptions options;
    options.refine = args.refine;
    options.time_limit = args.time_limit;

    auto build_one = [&](const std::string& text, const std::string& name) {
        Molecule mol = read_species(text, args.notation);
        mol.name = name;
        mol.make_hydrogens_explicit();
        Structure s = build_structure(mol, options);
        return writer->record(s, name.empty() ? text : name);
    };

    // A single species from the command line.
    if (args.input_file.empty()) {
        std::string record;
        try {
            record = build_one(args.input, args.name);
        } catch (const std::exception& e) {
            std::cerr << describe_failure("repel build", args.input, e) << "\n";
            return 2;
        }
        try {
            OutputFile out(args.output_file);
            out.write(record);  // one molecule: the record alone (a JSON object, not an array)
            if (!out.commit()) throw std::runtime_error("cannot write " + args.output_file);
        } catch (const std::exception& e) {
            std::cerr << "repel build: " << e.what() << "\n";
            return 2;
        }
        return 0;
    }

    // A batch.
    std::ifstream file;
    std::istream* in = open_input(args.input_file, file, "build");
    if (!in) return 2;
    std::unique_ptr<OutputFile> out;
    std::ofstream errors;
    try {
        out = std::make_unique<OutputFile>(args.output_file);
        if (!args.errors_file.empty()) {
            errors.open(args.errors_file, std::ios::trunc);
            if (!errors) throw std::runtime_error("cannot write " + args.errors_file);
        }
    } catch (const std::exception& e) {
        std::cerr << "repel build: " << e.what() << "\n";
        return 2;
    }
    long read = 0, built = 0, failed = 0;
    SmiReader reader(*in);
    bool first = true;
    out->write(writer->begin());
    while (auto rec = reader.next()) {
        ++read;
        std::string record;
        std::string reason;
        if (reader.too_long()) {
            reason = "line too long";
        } else {
            try {
                record = build_one(rec->text, rec->name);
            } catch (const std::exception& e) {
                reason = describe_failure(fmt::format("line {}{}", rec->line, rec->name.empty() ? "" : " (" + rec->name + ")"),
                                          rec->text, e);
                std::cerr << reason << "\n";
                std::string short_reason = e.what();
                if (const auto* ie = dynamic_cast<const InputError*>(&e); ie && ie->column() > 0)
                    short_reason = fmt::format("column {}: {}", ie->column(), e.what());
                reason = short_reason;
            }
        }
        if (!reason.empty()) {
            ++failed;
            if (errors) errors << rec->line << '\t' << one_line(rec->name) << '\t' << one_line(reason) << '\n';
            continue;
        }
        if (!first) out->write(writer->separator());
        first = false;
        out->write(record);
        ++built;
    }
    out->write(writer->end());
    if (!out->commit()) {
        std::cerr << "repel build: cannot write " << args.output_file << "\n";
        return 2;
    }
    std::cerr << fmt::format("read {}, built {}, failed {}\n", read, built, failed);
    return failed > 0 ? 1 : 0;
}

}  // namespace repel::app
