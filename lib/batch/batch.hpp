// The batch machinery, kept apart from the chemistry: reading records in bounded chunks, choosing a shard, building
// chunks in parallel while keeping input order, writing whole records, and the checkpoint that makes --resume exact.
// What a record is built into is a callback (BuildFn); this folder knows nothing of molecules.
//
// Data flow (threaded driver, and the MPI driver in app/ does the same across ranks):
//   ChunkReader (serial, in order) -> build_chunk (parallel, any order) -> BatchOutput::write (serial, in order)
// A chunk holds at most max_records records and max_bytes of input text, and at most a few chunks per thread are in
// flight, so memory stays flat however long the input.
#pragma once

#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "core/replace_file.hpp"

namespace repel::batch {

// One input record as read: its 0-based index among all records of the input (before sharding), its 1-based line,
// its text (a SMILES line's molecule, or a whole SD record), its name, and an error found while reading it (a line
// too long), in which case it is reported as failed without being built.
struct Item {
    long index = 0;
    long line = 0;
    std::string text;
    std::string name;
    std::string read_error;
};

// What building one record gave: the whole output record, or the reason it failed (one line, for --errors) and a
// longer message for standard error.
struct Outcome {
    bool ok = false;
    std::string record;
    std::string reason;
    std::string message;
};

struct Chunk {
    long sequence = 0;            // 0-based number of the chunk in this run
    std::vector<Item> items;
    std::vector<Outcome> outcomes;  // one per item once built
    long consumed = 0;            // input records consumed (all shards) once this chunk was read: the resume point
    std::uint64_t bytes = 0;      // input bytes consumed once this chunk was read (progress)
};

using BuildFn = std::function<Outcome(const Item&)>;

// A source of records: SMILES lines or SD records. next() returns false at the end of the input.
class RecordSource {
public:
    virtual ~RecordSource() = default;
    virtual bool next(Item& item) = 0;
    virtual std::uint64_t bytes() const = 0;
};

// --shard K/N: record i (0-based index among the input's records) belongs to shard K (1-based) when i mod N = K - 1.
struct Shard {
    long k = 1, n = 1;
    bool contains(long index) const { return index % n == k - 1; }
};
// Parses "K/N" (1 <= K <= N); throws std::invalid_argument with the reason otherwise.
Shard parse_shard(std::string_view text);

struct ChunkLimits {
    std::size_t max_records = 64;        // records per chunk: about 50 ms of building for drug-sized molecules
    std::size_t max_bytes = 1u << 20;    // input text per chunk
};

// Cuts the source into chunks of this shard's records, skipping the first `skip` records of the input (resume).
class ChunkReader {
public:
    ChunkReader(RecordSource& source, Shard shard, long skip, ChunkLimits limits, const std::atomic<bool>* stop = nullptr)
        : source_(source), shard_(shard), skip_(skip), limits_(limits), stop_(stop) {}
    // Fills the next chunk; false when the input is exhausted (or a stop was requested) and nothing was read.
    bool next(Chunk& chunk);
    long consumed() const { return consumed_; }
    bool stopped() const { return stopped_; }

private:
    RecordSource& source_;
    Shard shard_;
    long skip_;
    ChunkLimits limits_;
    const std::atomic<bool>* stop_;
    long consumed_ = 0;
    long sequence_ = 0;
    bool stopped_ = false;
    bool ended_ = false;
};

// Builds every item of the chunk: a read error or an exception from build becomes a failed outcome.
void build_chunk(Chunk& chunk, const BuildFn& build);

// Runs read -> build -> write with `threads` worker threads (oneTBB parallel_pipeline; at most 2 chunks per thread in
// flight), calling write for every chunk in input order. Exceptions from write stop the run and propagate.
void run_threaded(ChunkReader& reader, const BuildFn& build, const std::function<void(Chunk&)>& write, int threads);

// The number of hardware threads this process may use.
int default_threads();

// Serialisation of chunks for the MPI driver (items one way, outcomes back).
std::string pack_items(const Chunk& chunk);
void unpack_items(std::string_view bytes, Chunk& chunk);
std::string pack_outcomes(const Chunk& chunk);
void unpack_outcomes(std::string_view bytes, Chunk& chunk);

// The checkpoint beside an output file: how far a run got, written atomically (temporary file, then rename) after
// every chunk was written and flushed. `identity` names the input, shard and format, so a resume with other ones is
// refused.
struct Checkpoint {
    std::string identity;
    long consumed = 0;  // input records consumed (all shards)
    long read = 0, built = 0, failed = 0;
    std::uint64_t output_bytes = 0, errors_bytes = 0;
};
void save_checkpoint(const std::string& path, const Checkpoint& checkpoint);
// Nothing when the file does not exist; throws std::runtime_error when it exists but cannot be read.
bool load_checkpoint(const std::string& path, Checkpoint& checkpoint);

// An output that is written as it goes and can be continued: `path.partial` while the run lasts (renamed to path by
// finish()), or standard output when path is empty. Writes are whole chunks through write(2).
class AppendFile {
public:
    AppendFile() = default;
    // Opens path.partial (truncated to `offset` when resuming; a missing file with offset > 0 is an error).
    void open(const std::string& path, bool resume, std::uint64_t offset);
    void open_stdout();
    ~AppendFile();
    AppendFile(const AppendFile&) = delete;
    AppendFile& operator=(const AppendFile&) = delete;
    void write(std::string_view text);
    std::uint64_t offset() const { return path_.empty() ? offset_ : file_.offset(); }
    // Flushes, closes and renames path.partial to path.
    void finish();
    bool is_file() const { return !path_.empty(); }

private:
    std::string path_;
    ReplaceFile file_;  // path.partial (kept when the run stops, for --resume)
    int fd_ = -1;       // standard output
    std::uint64_t offset_ = 0;
};

// The serial end of the pipeline: counts, output records in order with the format's begin/separator/end, the --errors
// file (line<TAB>name<TAB>reason), the checkpoint, and the progress line.
class BatchOutput {
public:
    struct Options {
        std::string output_path;     // empty: standard output (no checkpoint, no resume)
        std::string errors_path;     // empty: no --errors file
        std::string begin, separator, end;  // the writer's batch framing
        std::string identity;        // for the checkpoint
        bool resume = false;
        bool progress = false;       // draw a progress line on standard error
        std::uint64_t input_size = 0;  // bytes of the input when known (progress: time left)
        std::function<void(const std::string&)> message;  // failure messages (standard error)
        // Seconds between checkpoint writes (0: after every chunk). Between two writes a kill loses the chunks
        // written since the last one (resume rebuilds them); the checkpoint is also written on interrupt() and when
        // the object is destroyed unfinished.
        double checkpoint_interval = 1.0;
    };
    explicit BatchOutput(Options options);
    ~BatchOutput();
    BatchOutput(const BatchOutput&) = delete;
    BatchOutput& operator=(const BatchOutput&) = delete;
    // The records of the input already done by a previous run (0 when not resuming or no checkpoint).
    long records_done_before() const { return resumed_.consumed; }
    bool resumed() const { return resumed_from_checkpoint_; }
    void write(Chunk& chunk);
    // Writes the end, renames the files into place and removes the checkpoint.
    void finish();
    // Leaves the partial files and the checkpoint for --resume.
    void interrupt();
    // Records read, built and failed so far, the resumed run's included.
    long records_read() const { return counts_.read; }
    long built() const { return counts_.built; }
    long failed() const { return counts_.failed; }
    std::string checkpoint_path() const { return checkpoint_path_; }

private:
    void draw_progress(bool final);
    void save_state();
    Options options_;
    AppendFile out_, errors_;
    std::string checkpoint_path_;
    Checkpoint resumed_, counts_;
    bool resumed_from_checkpoint_ = false;
    std::uint64_t bytes_ = 0;
    double start_ = 0, last_draw_ = 0, last_save_ = 0;
    bool finished_ = false, unsaved_ = false;
    long run_read_ = 0;
    bool drawn_ = false;
};

// Text safe to show: control characters other than newline and tab, and bytes that are not valid UTF-8, become '?'.
std::string printable(std::string_view text);
// One line for a text file: printable(), with tabs, newlines and carriage returns as spaces.
std::string one_line(std::string text);

}  // namespace repel::batch
