// `repel build`: reads records, builds each, writes each whole record, reports failures by record.
#include <fmt/format.h>

#include <unistd.h>

#include <atomic>
#include <cctype>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <sstream>

#include "api/front_door.hpp"
#include "commands.hpp"
#include "core/error.hpp"
#include "core/replace_file.hpp"
#include "batch/batch.hpp"
#include "input/records.hpp"
#include "mpi_driver.hpp"

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

// A file written whole or not at all (core/replace_file.hpp), or standard output when the path is empty.
class OutputFile {
public:
    explicit OutputFile(const std::string& path) : path_(path) {
        if (!path_.empty()) file_.open(path_);
    }
    void write(const std::string& text) {
        if (path_.empty()) std::fwrite(text.data(), 1, text.size(), stdout);
        else file_.write(text);
    }
    void commit() {
        if (path_.empty()) {
            if (std::fflush(stdout) != 0) throw std::runtime_error("cannot write standard output");
            return;
        }
        file_.commit();
    }

private:
    std::string path_;
    ReplaceFile file_;
};

// SIGINT / SIGTERM during a batch: stop reading, write what is built, leave the checkpoint. A second signal ends the
// process at once (the default action), and the checkpoint still makes --resume exact.
std::atomic<bool> stop_requested{false};
volatile std::sig_atomic_t stop_signal = 0;
void on_stop_signal(int sig) {
    stop_signal = sig;
    stop_requested.store(true);
    std::signal(sig, SIG_DFL);
}

class SmiSource : public batch::RecordSource {
public:
    explicit SmiSource(std::istream& in) : reader_(in) {}
    bool next(batch::Item& item) override {
        auto rec = reader_.next();
        if (!rec) return false;
        item.line = rec->line;
        item.text = std::move(rec->text);
        item.name = std::move(rec->name);
        if (reader_.too_long()) item.read_error = "line too long (more than 1 MiB)";
        return true;
    }
    std::uint64_t bytes() const override { return reader_.bytes(); }

private:
    SmiReader reader_;
};

class SdfSource : public batch::RecordSource {
public:
    explicit SdfSource(std::istream& in) : reader_(in) {}
    bool next(batch::Item& item) override {
        auto rec = reader_.next();
        if (!rec) return false;
        item.line = rec->line;
        item.text = std::move(rec->text);
        item.name = std::move(rec->title);
        if (reader_.too_long()) item.read_error = "record too long (more than 16 MiB)";
        return true;
    }
    std::uint64_t bytes() const override { return reader_.bytes(); }

private:
    SdfRecordReader reader_;
};

ConformerSettings conformer_settings(const BuildArgs& args) {
    ConformerSettings c = args.conformer_settings;
    c.count = args.conformers;
    return c;
}

// The records of an ensemble, separated as the writer separates a batch's records (one batch record per molecule).
std::string ensemble_records(const StructureWriter& writer, const std::vector<Structure>& ensemble,
                             const std::string& title) {
    std::string out;
    for (size_t k = 0; k < ensemble.size(); ++k) out += (k ? writer.separator() : "") + writer.record(ensemble[k], title);
    return out;
}

}  // namespace

void write_whole_file(const std::string& path, const std::string& text) {
    OutputFile out(path);
    out.write(text);
    out.commit();
}

int run_batch(const BuildArgs& args, const StructureWriter& writer, const BuildSettings& options);

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
    BuildSettings options;
    options.notation = args.notation;
    options.refine = args.refine;
    options.time_limit = args.time_limit;
    options.charge = args.charge;
    options.multiplicity = args.multiplicity;
    try {
        options.polyhedra = polyhedron_choices(args.polyhedra);
    } catch (const std::exception& e) {
        std::cerr << "repel build: " << e.what() << "\n";
        return 2;
    }

    Structure built;
    auto build_one = [&](const std::string& text, const std::string& name) {
        BuildSettings settings = options;
        settings.name = name;
        const std::string title = name.empty() ? text : name;
        if (args.conformers <= 0) {
            built = build(text, settings);
            return writer->record(built, title);
        }
        // An ensemble is a whole file of records even for one molecule (JSON: an array).
        const std::vector<Structure> ensemble = build_conformers(text, settings, conformer_settings(args));
        built = ensemble.front();
        return writer->begin() + ensemble_records(*writer, ensemble, title) + writer->end();
    };

    if (!args.picture.empty() && !args.input_file.empty()) {
        std::cerr << "repel build: " << kPictureBatchRefusal << "\n";
        return 2;
    }
    // A single species from the command line.
    if (args.input_file.empty()) {
        std::string record, picture;
        try {
            record = build_one(args.input, args.name);
            if (!args.picture.empty())
                picture = repel::picture(built, args.name.empty() ? args.input : args.name, args.picture_hydrogens);
        } catch (const std::exception& e) {
            std::cerr << describe_failure("repel build", args.input, e) << "\n";
            return 2;
        }
        try {
            if (!args.picture.empty()) write_whole_file(args.picture, picture);
            OutputFile out(args.output_file);
            out.write(record);  // one molecule: the record alone (a JSON object, not an array)
            out.commit();
        } catch (const std::exception& e) {
            std::cerr << "repel build: " << e.what() << "\n";
            return 2;
        }
        return 0;
    }

    // A batch.
    return run_batch(args, *writer, options);
}

int run_batch(const BuildArgs& args, const StructureWriter& writer, const BuildSettings& options) {
    const bool mpi_run = mpi::size() > 1;
    const bool root = mpi::rank() == 0;
    std::string input_format = args.input_format;
    if (input_format.empty()) {
        std::string ext = std::filesystem::path(args.input_file).extension().string();
        for (char& c : ext) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
        input_format = (ext == ".sdf" || ext == ".sd" || ext == ".mol") ? "sdf" : "smi";
    }
    const bool sdf = input_format == "sdf";

    // What one record is built into: the chemistry, behind the batch machinery's callback.
    batch::BuildFn build = [&](const batch::Item& item) -> batch::Outcome {
        batch::Outcome o;
        try {
            BuildSettings settings = options;
            if (sdf) settings.notation = TextNotation::sd_record;
            settings.name = item.name;
            settings.first_line = item.line;
            const std::string title =
                item.name.empty() ? (sdf ? std::string("record ") + std::to_string(item.index + 1) : item.text) : item.name;
            if (args.conformers > 0)
                o.record = ensemble_records(writer, build_conformers(item.text, settings, conformer_settings(args)), title);
            else
                o.record = writer.record(repel::build(item.text, settings), title);
            o.ok = true;
        } catch (const std::exception& e) {
            const std::string where =
                fmt::format("line {}{}", item.line, item.name.empty() ? "" : " (" + item.name + ")");
            o.message = describe_failure(where, sdf ? std::string() : item.text, e);
            o.reason = e.what();
            if (const auto* ie = dynamic_cast<const InputError*>(&e); ie && ie->column() > 0 && !sdf)
                o.reason = fmt::format("column {}: {}", ie->column(), e.what());
        }
        return o;
    };
    if (mpi_run && !root) {
        mpi::work(build);
        return 0;
    }

    batch::Shard shard;
    try {
        if (!args.shard.empty()) shard = batch::parse_shard(args.shard);
    } catch (const std::exception& e) {
        std::cerr << "repel build: " << e.what() << "\n";
        mpi::release_workers();
        return 2;
    }
    std::ifstream file;
    std::istream* in = open_input(args.input_file, file, "build");
    if (!in) {
        mpi::release_workers();
        return 2;
    }
    std::uint64_t input_size = 0;
    if (args.input_file != "-") {
        std::error_code ec;
        input_size = std::filesystem::file_size(args.input_file, ec);
        if (ec) input_size = 0;
    }
    batch::BatchOutput::Options out_options;
    out_options.output_path = args.output_file;
    out_options.errors_path = args.errors_file;
    out_options.begin = writer.begin();
    out_options.separator = writer.separator();
    out_options.end = writer.end();
    out_options.identity = fmt::format("input={} input-format={} shard={}/{} format={} refine={}", args.input_file,
                                       input_format, shard.k, shard.n, args.format.empty() ? std::filesystem::path(args.output_file).extension().string() : args.format,
                                       options.refine ? 1 : 0);
    if (args.conformers > 0)  // a resume with other ensemble options would mix two kinds of output
        out_options.identity += fmt::format(" conformers={} conformer-rmsd={} conformer-tries={} conformer-seed={}",
                                            args.conformers, args.conformer_settings.distinct_rmsd,
                                            args.conformer_settings.tries, args.conformer_settings.seed);
    out_options.resume = args.resume;
    out_options.progress = args.progress && isatty(STDERR_FILENO);
    out_options.input_size = input_size;
    out_options.message = [](const std::string& m) { std::cerr << m << "\n"; };
    std::unique_ptr<batch::BatchOutput> out;
    try {
        out = std::make_unique<batch::BatchOutput>(out_options);
    } catch (const std::exception& e) {
        std::cerr << "repel build: " << e.what() << "\n";
        mpi::release_workers();
        return 2;
    }
    if (out->resumed())
        std::cerr << fmt::format("repel build: resuming after input record {} ({} built, {} failed so far)\n",
                                 out->records_done_before(), out->built(), out->failed());

    std::unique_ptr<batch::RecordSource> source;
    if (sdf) source = std::make_unique<SdfSource>(*in);
    else source = std::make_unique<SmiSource>(*in);
    batch::ChunkReader reader(*source, shard, out->records_done_before(), batch::ChunkLimits{}, &stop_requested);

    stop_requested = false;
    auto old_int = std::signal(SIGINT, on_stop_signal);
    auto old_term = std::signal(SIGTERM, on_stop_signal);
    auto write = [&](batch::Chunk& chunk) { out->write(chunk); };
    try {
        if (mpi_run) {
            try {
                mpi::coordinate(reader, write);
            } catch (const std::exception& e) {
                std::cerr << "repel build: " << e.what() << "\n";
                mpi::abort_job(2);
            }
        } else {
            batch::run_threaded(reader, build, write, args.threads > 0 ? args.threads : batch::default_threads());
        }
        if (reader.stopped()) {
            out->interrupt();
            std::signal(SIGINT, old_int);
            std::signal(SIGTERM, old_term);
            std::cerr << fmt::format("repel build: interrupted (signal {}) after input record {}; every record "
                                     "written is whole{}\n",
                                     static_cast<int>(stop_signal), reader.consumed(),
                                     args.output_file.empty() ? ""
                                                              : "; run the same command with --resume to continue");
            std::cerr << fmt::format("read {}, built {}, failed {}\n", out->records_read(), out->built(), out->failed());
            return 2;
        }
        out->finish();
    } catch (const std::exception& e) {
        std::signal(SIGINT, old_int);
        std::signal(SIGTERM, old_term);
        out->interrupt();
        std::cerr << "repel build: " << e.what() << "\n";
        return 2;
    }
    std::signal(SIGINT, old_int);
    std::signal(SIGTERM, old_term);
    std::cerr << fmt::format("read {}, built {}, failed {}\n", out->records_read(), out->built(), out->failed());
    return out->failed() > 0 ? 1 : 0;
}

}  // namespace repel::app
