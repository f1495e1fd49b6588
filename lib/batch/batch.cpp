#include "batch/batch.hpp"

#include "core/replace_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <fmt/format.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <stdexcept>
#include <tbb/global_control.h>
#include <tbb/info.h>
#include <tbb/parallel_pipeline.h>
#include <tbb/task_arena.h>

namespace repel::batch {

std::string printable(std::string_view in) {
    std::string out;
    out.reserve(in.size());
    for (size_t i = 0; i < in.size();) {
        const auto c = static_cast<unsigned char>(in[i]);
        if (c < 0x80) {
            out += (c < 0x20 && c != '\n' && c != '\t') || c == 0x7f ? '?' : static_cast<char>(c);
            ++i;
            continue;
        }
        // A valid UTF-8 sequence is kept whole; any other byte becomes '?'.
        const size_t len = (c & 0xe0) == 0xc0 ? 2 : (c & 0xf0) == 0xe0 ? 3 : (c & 0xf8) == 0xf0 ? 4 : 0;
        bool ok = len > 0 && i + len <= in.size() && c >= 0xc2 && c <= 0xf4;
        for (size_t k = 1; ok && k < len; ++k) ok = (static_cast<unsigned char>(in[i + k]) & 0xc0) == 0x80;
        if (ok) {
            out.append(in.substr(i, len));
            i += len;
        } else {
            out += '?';
            ++i;
        }
    }
    return out;
}

std::string one_line(std::string s) {
    s = printable(s);
    for (char& c : s)
        if (c == '\n' || c == '\t' || c == '\r') c = ' ';
    return s;
}

Shard parse_shard(std::string_view text) {
    const size_t slash = text.find('/');
    auto number = [&](std::string_view s) -> long {
        if (s.empty() || s.size() > 9) return -1;
        long v = 0;
        for (char c : s) {
            if (c < '0' || c > '9') return -1;
            v = v * 10 + (c - '0');
        }
        return v;
    };
    if (slash == std::string_view::npos)
        throw std::invalid_argument(fmt::format("--shard {}: expected K/N, the K-th of N slices (1 <= K <= N)", text));
    Shard s{number(text.substr(0, slash)), number(text.substr(slash + 1))};
    if (s.k < 1 || s.n < 1 || s.k > s.n)
        throw std::invalid_argument(fmt::format("--shard {}: expected K/N with 1 <= K <= N", text));
    return s;
}

bool ChunkReader::next(Chunk& chunk) {
    chunk.items.clear();
    chunk.outcomes.clear();
    size_t bytes = 0;
    while (!ended_ && chunk.items.size() < limits_.max_records && bytes < limits_.max_bytes) {
        if (stop_ && stop_->load(std::memory_order_relaxed)) {
            stopped_ = true;
            break;
        }
        Item item;
        if (!source_.next(item)) {
            ended_ = true;
            break;
        }
        item.index = consumed_++;
        if (item.index < skip_ || !shard_.contains(item.index)) continue;
        bytes += item.text.size() + item.name.size();
        chunk.items.push_back(std::move(item));
    }
    chunk.consumed = consumed_;
    chunk.bytes = source_.bytes();
    chunk.sequence = sequence_;
    if (chunk.items.empty()) return false;
    ++sequence_;
    return true;
}

void build_chunk(Chunk& chunk, const BuildFn& build) {
    chunk.outcomes.clear();
    chunk.outcomes.reserve(chunk.items.size());
    for (const Item& item : chunk.items) {
        if (!item.read_error.empty()) {
            chunk.outcomes.push_back(Outcome{false, {}, item.read_error, fmt::format("line {}: {}", item.line, item.read_error)});
            continue;
        }
        try {
            chunk.outcomes.push_back(build(item));
        } catch (const std::exception& e) {
            chunk.outcomes.push_back(Outcome{false, {}, e.what(), fmt::format("line {}: {}", item.line, e.what())});
        }
    }
}

int default_threads() { return std::max(1, tbb::info::default_concurrency()); }

void run_threaded(ChunkReader& reader, const BuildFn& build, const std::function<void(Chunk&)>& write, int threads) {
    threads = std::max(1, threads);
    // The arena caps the workers; global_control keeps oneTBB from starting more threads than asked for.
    tbb::global_control limit(tbb::global_control::max_allowed_parallelism, static_cast<size_t>(threads));
    tbb::task_arena arena(threads);
    arena.execute([&] {
        tbb::parallel_pipeline(
            static_cast<size_t>(2 * threads),
            tbb::make_filter<void, std::shared_ptr<Chunk>>(
                tbb::filter_mode::serial_in_order,
                [&](tbb::flow_control& fc) -> std::shared_ptr<Chunk> {
                    auto chunk = std::make_shared<Chunk>();
                    if (!reader.next(*chunk)) {
                        fc.stop();
                        return nullptr;
                    }
                    return chunk;
                }) &
                tbb::make_filter<std::shared_ptr<Chunk>, std::shared_ptr<Chunk>>(
                    tbb::filter_mode::parallel,
                    [&](std::shared_ptr<Chunk> chunk) {
                        build_chunk(*chunk, build);
                        return chunk;
                    }) &
                tbb::make_filter<std::shared_ptr<Chunk>, void>(tbb::filter_mode::serial_in_order,
                                                               [&](std::shared_ptr<Chunk> chunk) { write(*chunk); }));
    });
}

// ---- serialisation: length-prefixed strings and 64-bit integers, little-endian as the host (ranks of one job run
// the same build on the same kind of machine).
namespace {
void put_int(std::string& out, std::int64_t v) { out.append(reinterpret_cast<const char*>(&v), sizeof v); }
void put_str(std::string& out, const std::string& s) {
    put_int(out, static_cast<std::int64_t>(s.size()));
    out += s;
}
struct Cursor {
    std::string_view in;
    size_t at = 0;
    std::int64_t get_int() {
        if (at + sizeof(std::int64_t) > in.size()) throw std::runtime_error("truncated chunk message");
        std::int64_t v;
        std::memcpy(&v, in.data() + at, sizeof v);
        at += sizeof v;
        return v;
    }
    std::string get_str() {
        const auto n = static_cast<size_t>(get_int());
        if (at + n > in.size()) throw std::runtime_error("truncated chunk message");
        std::string s(in.substr(at, n));
        at += n;
        return s;
    }
};
}  // namespace

std::string pack_items(const Chunk& chunk) {
    std::string out;
    put_int(out, chunk.sequence);
    put_int(out, static_cast<std::int64_t>(chunk.items.size()));
    for (const Item& it : chunk.items) {
        put_int(out, it.index);
        put_int(out, it.line);
        put_str(out, it.text);
        put_str(out, it.name);
        put_str(out, it.read_error);
    }
    return out;
}

void unpack_items(std::string_view bytes, Chunk& chunk) {
    Cursor c{bytes};
    chunk.sequence = c.get_int();
    chunk.items.resize(static_cast<size_t>(c.get_int()));
    for (Item& it : chunk.items) {
        it.index = c.get_int();
        it.line = c.get_int();
        it.text = c.get_str();
        it.name = c.get_str();
        it.read_error = c.get_str();
    }
}

std::string pack_outcomes(const Chunk& chunk) {
    std::string out;
    put_int(out, chunk.sequence);
    put_int(out, static_cast<std::int64_t>(chunk.outcomes.size()));
    for (const Outcome& o : chunk.outcomes) {
        put_int(out, o.ok ? 1 : 0);
        put_str(out, o.record);
        put_str(out, o.reason);
        put_str(out, o.message);
    }
    return out;
}

void unpack_outcomes(std::string_view bytes, Chunk& chunk) {
    Cursor c{bytes};
    chunk.sequence = c.get_int();
    chunk.outcomes.resize(static_cast<size_t>(c.get_int()));
    for (Outcome& o : chunk.outcomes) {
        o.ok = c.get_int() != 0;
        o.record = c.get_str();
        o.reason = c.get_str();
        o.message = c.get_str();
    }
}

// ---- checkpoint
void save_checkpoint(const std::string& path, const Checkpoint& cp) {
    // Written whole or not at all (core/replace_file): a checkpoint is never read half-written.
    std::ostringstream text;
    text << "repel-checkpoint 1\n"
         << "identity " << one_line(cp.identity) << "\n"
         << "consumed " << cp.consumed << "\n"
         << "read " << cp.read << "\nbuilt " << cp.built << "\nfailed " << cp.failed << "\n"
         << "output_bytes " << cp.output_bytes << "\nerrors_bytes " << cp.errors_bytes << "\n";
    try {
        replace_file(path, text.str());
    } catch (const std::runtime_error& e) {
        throw std::runtime_error("cannot write the checkpoint " + path + ": " + e.what());
    }
}

bool load_checkpoint(const std::string& path, Checkpoint& cp) {
    std::ifstream f(path);
    if (!f) return false;
    std::string line;
    if (!std::getline(f, line) || line != "repel-checkpoint 1")
        throw std::runtime_error("the checkpoint " + path + " is not one this version of repel wrote");
    int fields = 0;
    while (std::getline(f, line)) {
        const size_t sp = line.find(' ');
        if (sp == std::string::npos) continue;
        const std::string key = line.substr(0, sp), value = line.substr(sp + 1);
        ++fields;
        if (key == "identity") cp.identity = value;
        else if (key == "consumed") cp.consumed = std::stol(value);
        else if (key == "read") cp.read = std::stol(value);
        else if (key == "built") cp.built = std::stol(value);
        else if (key == "failed") cp.failed = std::stol(value);
        else if (key == "output_bytes") cp.output_bytes = std::stoull(value);
        else if (key == "errors_bytes") cp.errors_bytes = std::stoull(value);
        else --fields;
    }
    if (fields != 7) throw std::runtime_error("the checkpoint " + path + " is incomplete");
    return true;
}

// ---- files
void AppendFile::open(const std::string& path, bool resume, std::uint64_t offset) {
    path_ = path;
    if (resume) file_.resume(path, offset);
    else file_.open(path, ReplaceFile::Unfinished::keep);
}

void AppendFile::open_stdout() {
    path_.clear();
    fd_ = STDOUT_FILENO;
}

AppendFile::~AppendFile() = default;

void AppendFile::write(std::string_view text) {
    if (!path_.empty()) {
        file_.write(text);
        return;
    }
    while (!text.empty()) {
        const ssize_t n = ::write(fd_, text.data(), text.size());
        if (n < 0) {
            if (errno == EINTR) continue;
            throw std::runtime_error(fmt::format("cannot write standard output: {}", std::strerror(errno)));
        }
        text.remove_prefix(static_cast<size_t>(n));
        offset_ += static_cast<std::uint64_t>(n);
    }
}

void AppendFile::finish() {
    if (path_.empty()) return;
    file_.commit();
}

// ---- the ordered writer
namespace {
double seconds_now() {
    return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}
std::string clock_text(double s) {
    const long t = static_cast<long>(s + 0.5);
    if (t >= 3600) return fmt::format("{}:{:02}:{:02}", t / 3600, t / 60 % 60, t % 60);
    return fmt::format("{}:{:02}", t / 60, t % 60);
}
}  // namespace

BatchOutput::BatchOutput(Options options) : options_(std::move(options)) {
    start_ = seconds_now();
    last_draw_ = start_ - 1;  // the first chunk draws the line at once
    const bool to_file = !options_.output_path.empty();
    if (to_file) checkpoint_path_ = options_.output_path + ".checkpoint";
    if (options_.resume && !to_file) throw std::runtime_error("--resume needs -o FILE (standard output cannot be continued)");
    if (options_.resume && load_checkpoint(checkpoint_path_, resumed_)) {
        if (resumed_.identity != one_line(options_.identity))
            throw std::runtime_error(fmt::format("cannot resume: {} belongs to another run ({}), not this one ({})",
                                                 checkpoint_path_, resumed_.identity, one_line(options_.identity)));
        resumed_from_checkpoint_ = true;
    }
    const bool cont = resumed_from_checkpoint_;
    if (to_file) out_.open(options_.output_path, cont, resumed_.output_bytes);
    else out_.open_stdout();
    if (!options_.errors_path.empty()) errors_.open(options_.errors_path, cont && resumed_.errors_bytes > 0, resumed_.errors_bytes);
    counts_ = resumed_;
    counts_.identity = one_line(options_.identity);
    if (!cont) {
        out_.write(options_.begin);
        if (to_file) {
            counts_.output_bytes = out_.offset();
            unsaved_ = true;
            save_state();
        }
    }
}

void BatchOutput::write(Chunk& chunk) {
    std::string text, errors;
    for (size_t i = 0; i < chunk.items.size(); ++i) {
        const Item& item = chunk.items[i];
        const Outcome& o = chunk.outcomes[i];
        ++counts_.read;
        ++run_read_;
        if (o.ok) {
            if (counts_.built > 0) text += options_.separator;
            text += o.record;
            ++counts_.built;
        } else {
            ++counts_.failed;
            errors += fmt::format("{}\t{}\t{}\n", item.line, one_line(item.name), one_line(o.reason));
            if (options_.message) {
                if (drawn_) std::fputs("\r\033[K", stderr);
                drawn_ = false;
                options_.message(printable(o.message));
            }
        }
    }
    out_.write(text);
    if (!options_.errors_path.empty()) errors_.write(errors);
    counts_.consumed = chunk.consumed;
    bytes_ = chunk.bytes;
    counts_.output_bytes = out_.offset();
    counts_.errors_bytes = options_.errors_path.empty() ? 0 : errors_.offset();
    unsaved_ = true;
    if (out_.is_file() && seconds_now() - last_save_ >= options_.checkpoint_interval) save_state();
    if (options_.progress) draw_progress(false);
}

// The counts and byte lengths describe only what write(2) has already handed to the kernel, so the files are at
// least as long as the checkpoint says whenever it is read.
void BatchOutput::save_state() {
    if (!out_.is_file() || !unsaved_) return;
    save_checkpoint(checkpoint_path_, counts_);
    unsaved_ = false;
    last_save_ = seconds_now();
}

BatchOutput::~BatchOutput() {
    if (finished_) return;
    try {
        save_state();
    } catch (const std::exception&) {
        // The last checkpoint written stays valid: resume starts from there.
    }
}

void BatchOutput::draw_progress(bool final) {
    const double now = seconds_now();
    if (!final && now - last_draw_ < 0.25) return;
    last_draw_ = now;
    const double elapsed = std::max(1e-9, now - start_);
    const double rate = static_cast<double>(run_read_) / elapsed;
    std::string left;
    if (options_.input_size > 0 && bytes_ > 0) {
        const double fraction = std::min(1.0, static_cast<double>(bytes_) / static_cast<double>(options_.input_size));
        if (fraction > 0 && fraction < 1) left = fmt::format(", {} left", clock_text(elapsed * (1 - fraction) / fraction));
        left = fmt::format(", {:.0f}%", 100 * fraction) + left;
    }
    std::fputs(fmt::format("\r\033[K{} done, {:.0f}/s{}, {} failed", counts_.read, rate, left, counts_.failed).c_str(),
               stderr);
    std::fflush(stderr);
    drawn_ = true;
}

void BatchOutput::finish() {
    out_.write(options_.end);
    out_.finish();
    if (!options_.errors_path.empty()) errors_.finish();
    finished_ = true;
    if (!checkpoint_path_.empty()) std::filesystem::remove(checkpoint_path_);
    if (drawn_) std::fputs("\r\033[K", stderr);
    drawn_ = false;
}

void BatchOutput::interrupt() {
    try {
        save_state();
    } catch (const std::exception&) {
        // The last checkpoint written stays valid.
    }
    if (drawn_) std::fputs("\r\033[K", stderr);
    drawn_ = false;
}

}  // namespace repel::batch
