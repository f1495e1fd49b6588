// The batch machinery on its own (lib/batch): shards, chunking, order under threads, serialisation for MPI, the
// checkpoint, and resuming an output file at the checkpointed offset. No chemistry: the build step is a stand-in.
#include <gtest/gtest.h>
#include <unistd.h>

#include <chrono>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <thread>

#include "batch/batch.hpp"
#include "input/records.hpp"

using namespace repel;
using namespace repel::batch;

namespace {

// Records "r0", "r1", ... one a line.
class CountingSource : public RecordSource {
public:
    explicit CountingSource(long n) : n_(n) {}
    bool next(Item& item) override {
        if (at_ >= n_) return false;
        item = Item{};
        item.line = at_ + 1;
        item.text = "r" + std::to_string(at_);
        item.name = "name" + std::to_string(at_);
        ++at_;
        bytes_ += item.text.size() + 1;
        return true;
    }
    std::uint64_t bytes() const override { return bytes_; }

private:
    long n_, at_ = 0;
    std::uint64_t bytes_ = 0;
};

std::vector<std::string> run_all(long n, Shard shard, long skip, int threads, ChunkLimits limits = {}) {
    CountingSource src(n);
    ChunkReader reader(src, shard, skip, limits);
    std::vector<std::string> written;
    BuildFn build = [](const Item& item) {
        // Uneven work so that chunks finish out of order under threads.
        if (item.index % 7 == 0) std::this_thread::sleep_for(std::chrono::microseconds(200));
        if (item.index % 13 == 5) throw std::runtime_error("bad " + item.text);
        return Outcome{true, item.text + "\n", {}, {}};
    };
    run_threaded(reader, build, [&](Chunk& c) {
        for (size_t i = 0; i < c.items.size(); ++i)
            written.push_back(c.outcomes[i].ok ? c.outcomes[i].record : "FAILED " + c.outcomes[i].reason);
    }, threads);
    return written;
}

std::string slurp(const std::string& path) {
    std::ifstream f(path, std::ios::binary);
    std::ostringstream s;
    s << f.rdbuf();
    return s.str();
}

std::string temp_dir() {
    auto dir = std::filesystem::temp_directory_path() / ("repel_test_batch_" + std::to_string(::getpid()));
    std::filesystem::create_directories(dir);
    return dir.string();
}

}  // namespace

TEST(Shard, ParsesKOfNAndRefusesTheRest) {
    EXPECT_EQ(parse_shard("1/1").k, 1);
    EXPECT_EQ(parse_shard("3/4").n, 4);
    for (const char* bad : {"0/4", "5/4", "4", "a/b", "1/0", "-1/2", "1/2/3", ""}) EXPECT_THROW(parse_shard(bad), std::invalid_argument) << bad;
    Shard s{2, 3};
    EXPECT_FALSE(s.contains(0));
    EXPECT_TRUE(s.contains(1));
    EXPECT_TRUE(s.contains(4));
}

TEST(ChunkReader, ChunksAreBoundedInRecordsAndBytes) {
    CountingSource src(1000);
    ChunkReader reader(src, {}, 0, ChunkLimits{10, 1u << 20});
    Chunk c;
    long total = 0, chunks = 0;
    while (reader.next(c)) {
        EXPECT_LE(c.items.size(), 10u);
        EXPECT_EQ(c.sequence, chunks);
        total += static_cast<long>(c.items.size());
        ++chunks;
    }
    EXPECT_EQ(total, 1000);
    CountingSource src2(1000);
    ChunkReader by_bytes(src2, {}, 0, ChunkLimits{1000, 30});  // "r0" + "name0" is 7 bytes: the 5th reaches 30
    ASSERT_TRUE(by_bytes.next(c));
    EXPECT_EQ(c.items.size(), 5u);
}

TEST(ChunkReader, ShardsAndSkipPickTheRightIndices) {
    CountingSource src(20);
    ChunkReader reader(src, Shard{2, 3}, 7, ChunkLimits{4, 1u << 20});
    std::vector<long> got;
    Chunk c;
    while (reader.next(c))
        for (auto& it : c.items) got.push_back(it.index);
    EXPECT_EQ(got, (std::vector<long>{7, 10, 13, 16, 19}));
    EXPECT_EQ(reader.consumed(), 20);
}

TEST(RunThreaded, OutputOrderIsInputOrderForAnyThreadCount) {
    const auto one = run_all(2000, {}, 0, 1, ChunkLimits{8, 1u << 20});
    ASSERT_EQ(one.size(), 2000u);
    EXPECT_EQ(one[5], "FAILED bad r5");
    EXPECT_EQ(one[6], "r6\n");
    for (int threads : {2, 3, 8}) EXPECT_EQ(run_all(2000, {}, 0, threads, ChunkLimits{8, 1u << 20}), one) << threads;
}

TEST(RunThreaded, ShardsTakenRoundRobinGiveTheFullRun) {
    const auto full = run_all(503, {}, 0, 2);
    std::vector<std::vector<std::string>> parts;
    for (long k = 1; k <= 4; ++k) parts.push_back(run_all(503, Shard{k, 4}, 0, 2));
    std::vector<std::string> merged;
    for (size_t i = 0; i < full.size(); ++i) merged.push_back(parts[i % 4][i / 4]);
    EXPECT_EQ(merged, full);
}

TEST(Pack, ItemsAndOutcomesSurviveTheRoundTrip) {
    Chunk c;
    c.sequence = 42;
    c.items = {Item{3, 4, "C(=O)O", "acid", ""}, Item{5, 9, std::string("\0\xff", 2), "", "line too long"}};
    c.outcomes = {Outcome{true, "rec\n", "", ""}, Outcome{false, "", "why", "line 9: why"}};
    Chunk d;
    unpack_items(pack_items(c), d);
    ASSERT_EQ(d.items.size(), 2u);
    EXPECT_EQ(d.sequence, 42);
    EXPECT_EQ(d.items[1].text, std::string("\0\xff", 2));
    EXPECT_EQ(d.items[1].read_error, "line too long");
    EXPECT_EQ(d.items[0].line, 4);
    unpack_outcomes(pack_outcomes(c), d);
    ASSERT_EQ(d.outcomes.size(), 2u);
    EXPECT_TRUE(d.outcomes[0].ok);
    EXPECT_EQ(d.outcomes[1].message, "line 9: why");
    EXPECT_THROW(unpack_items(pack_items(c).substr(0, 20), d), std::runtime_error);
}

TEST(Checkpoint, SavesAndLoads) {
    const std::string path = temp_dir() + "/cp";
    Checkpoint cp{"input=x shard=1/1", 120, 100, 90, 10, 123456789012ull, 77};
    save_checkpoint(path, cp);
    Checkpoint back;
    ASSERT_TRUE(load_checkpoint(path, back));
    EXPECT_EQ(back.identity, cp.identity);
    EXPECT_EQ(back.consumed, 120);
    EXPECT_EQ(back.output_bytes, 123456789012ull);
    EXPECT_EQ(back.errors_bytes, 77u);
    EXPECT_FALSE(load_checkpoint(path + ".missing", back));
    std::ofstream(path) << "something else\n";
    EXPECT_THROW(load_checkpoint(path, back), std::runtime_error);
}

// A run cut short after some chunks (as a killed job leaves it, plus a half record past the checkpoint) and resumed
// gives the same files as one run straight through.
TEST(BatchOutput, ResumeContinuesAtTheCheckpointByteForByte) {
    const std::string dir = temp_dir();
    auto options = [&](const std::string& name, bool resume) {
        BatchOutput::Options o;
        o.output_path = dir + "/" + name + ".json";
        o.errors_path = dir + "/" + name + ".tsv";
        o.begin = "[\n";
        o.separator = ",\n";
        o.end = "]\n";
        o.identity = "test";
        o.resume = resume;
        return o;
    };
    BuildFn build = [](const Item& item) {
        if (item.index % 5 == 3) return Outcome{false, {}, "bad", "bad"};
        return Outcome{true, "{\"" + item.text + "\": 1}\n", {}, {}};
    };
    {
        CountingSource src(100);
        BatchOutput out(options("straight", false));
        ChunkReader reader(src, {}, out.records_done_before(), ChunkLimits{7, 1u << 20});
        run_threaded(reader, build, [&](Chunk& c) { out.write(c); }, 2);
        out.finish();
        EXPECT_EQ(out.records_read(), 100);
        EXPECT_EQ(out.failed(), 20);
    }
    {
        CountingSource src(100);
        BatchOutput out(options("cut", false));
        ChunkReader reader(src, {}, 0, ChunkLimits{7, 1u << 20});
        Chunk c;
        for (int i = 0; i < 4 && reader.next(c); ++i) {
            build_chunk(c, build);
            out.write(c);
        }
    }  // no finish(): the partial files and the checkpoint stay
    std::ofstream(dir + "/cut.json.partial", std::ios::app) << "{\"half a rec";
    std::ofstream(dir + "/cut.tsv.partial", std::ios::app) << "99\thalf";
    {
        CountingSource src(100);
        BatchOutput out(options("cut", true));
        EXPECT_TRUE(out.resumed());
        EXPECT_EQ(out.records_done_before(), 28);
        ChunkReader reader(src, {}, out.records_done_before(), ChunkLimits{7, 1u << 20});
        run_threaded(reader, build, [&](Chunk& c) { out.write(c); }, 2);
        out.finish();
        EXPECT_EQ(out.records_read(), 100);
        EXPECT_EQ(out.built(), 80);
    }
    EXPECT_EQ(slurp(dir + "/cut.json"), slurp(dir + "/straight.json"));
    EXPECT_EQ(slurp(dir + "/cut.tsv"), slurp(dir + "/straight.tsv"));
    EXPECT_FALSE(std::filesystem::exists(dir + "/cut.json.checkpoint"));
    // A checkpoint of another run is refused.
    {
        BatchOutput out(options("other", false));
    }
    auto o = options("other", true);
    o.identity = "another input";
    EXPECT_THROW(BatchOutput{o}, std::runtime_error);
    std::filesystem::remove_all(dir);
}

TEST(SdfRecordReader, SplitsRecordsWithTheirFirstLines) {
    std::istringstream in("first\n x\n\nM  END\n$$$$\n\n blank title\n\nM  END\n$$$$\nlast\nM  END\n\n\n");
    SdfRecordReader r(in);
    auto a = r.next();
    ASSERT_TRUE(a);
    EXPECT_EQ(a->line, 1);
    EXPECT_EQ(a->title, "first");
    EXPECT_EQ(a->text, "first\n x\n\nM  END\n$$$$\n");
    auto b = r.next();
    ASSERT_TRUE(b);
    EXPECT_EQ(b->line, 6);
    EXPECT_EQ(b->title, "");
    auto c = r.next();
    ASSERT_TRUE(c);
    EXPECT_EQ(c->line, 11);
    EXPECT_EQ(c->title, "last");
    EXPECT_FALSE(r.next());
}
