#include "mpi_driver.hpp"

#include <chrono>
#include <cstdlib>
#include <thread>
#include <list>
#include <map>

#ifdef REPEL_WITH_MPI
#include <mpi.h>
#endif

namespace repel::app::mpi {

#ifdef REPEL_WITH_MPI
namespace {
constexpr int kTagWork = 1, kTagResult = 2, kTagStop = 3;
bool released = false;

void send(const std::string& bytes, int dest, int tag) {
    MPI_Send(bytes.data(), static_cast<int>(bytes.size()), MPI_BYTE, dest, tag, MPI_COMM_WORLD);
}

// Sends without blocking, so that two ranks each sending a large message (past the eager limit) to the other never
// wait for each other: rank 0 handing out a chunk while the worker returns outcomes. The buffers live until the
// sends complete; finished ones are dropped on every call.
class Outbox {
public:
    void post(std::string bytes, int dest, int tag) {
        sends_.push_back({std::move(bytes), MPI_REQUEST_NULL});
        Sent& s = sends_.back();
        MPI_Isend(s.bytes.data(), static_cast<int>(s.bytes.size()), MPI_BYTE, dest, tag, MPI_COMM_WORLD, &s.request);
        tidy();
    }
    void tidy() {
        for (auto it = sends_.begin(); it != sends_.end();) {
            int done = 0;
            MPI_Test(&it->request, &done, MPI_STATUS_IGNORE);
            it = done ? sends_.erase(it) : std::next(it);
        }
    }
    void wait_all() {
        for (Sent& s : sends_) MPI_Wait(&s.request, MPI_STATUS_IGNORE);
        sends_.clear();
    }

private:
    struct Sent {
        std::string bytes;
        MPI_Request request;
    };
    std::list<Sent> sends_;
};
// Waits for a message by polling with short sleeps: a blocking MPI_Probe spins a whole core in Open MPI, which rank 0
// (waiting most of the time) would take from the ranks that build.
std::string receive(int source, int tag, MPI_Status& status, Outbox& outbox) {
    for (int flag = 0;;) {
        outbox.tidy();
        MPI_Iprobe(source, tag, MPI_COMM_WORLD, &flag, &status);
        if (flag) break;
        std::this_thread::sleep_for(std::chrono::microseconds(200));
    }
    int count = 0;
    MPI_Get_count(&status, MPI_BYTE, &count);
    std::string bytes(static_cast<size_t>(count), '\0');
    MPI_Recv(bytes.data(), count, MPI_BYTE, status.MPI_SOURCE, status.MPI_TAG, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
    return bytes;
}
}  // namespace

void init(int* argc, char*** argv) { MPI_Init(argc, argv); }
void finalize() { MPI_Finalize(); }
int rank() {
    int r = 0;
    MPI_Comm_rank(MPI_COMM_WORLD, &r);
    return r;
}
int size() {
    int s = 1;
    MPI_Comm_size(MPI_COMM_WORLD, &s);
    return s;
}

void release_workers() {
    if (released) return;
    released = true;
    for (int r = 1; r < size(); ++r) send(std::string(), r, kTagStop);
}

[[noreturn]] void abort_job(int status) {
    MPI_Abort(MPI_COMM_WORLD, status);
    std::exit(status);
}

void coordinate(batch::ChunkReader& reader, const std::function<void(batch::Chunk&)>& write) {
    const int workers = size() - 1;
    std::map<long, batch::Chunk> pending;  // handed out, waiting for outcomes (the items stay here for the writer)
    std::map<long, batch::Chunk> done;     // outcomes back, waiting for their turn to be written
    long next_to_write = 0;
    int in_flight = 0;
    Outbox outbox;
    bool more = true;
    auto hand_out = [&](int dest) {
        if (!more) return;
        batch::Chunk chunk;
        if (!reader.next(chunk)) {
            more = false;
            return;
        }
        outbox.post(batch::pack_items(chunk), dest, kTagWork);
        pending.emplace(chunk.sequence, std::move(chunk));
        ++in_flight;
    };
    for (int round = 0; round < 2; ++round)
        for (int w = 1; w <= workers; ++w) hand_out(w);
    while (in_flight > 0) {
        MPI_Status status;
        const std::string bytes = receive(MPI_ANY_SOURCE, kTagResult, status, outbox);
        batch::Chunk outcomes;
        batch::unpack_outcomes(bytes, outcomes);
        auto it = pending.find(outcomes.sequence);
        if (it == pending.end()) abort_job(2);
        batch::Chunk chunk = std::move(it->second);
        pending.erase(it);
        chunk.outcomes = std::move(outcomes.outcomes);
        --in_flight;
        hand_out(status.MPI_SOURCE);
        done.emplace(chunk.sequence, std::move(chunk));
        for (auto d = done.find(next_to_write); d != done.end(); d = done.find(next_to_write)) {
            write(d->second);
            done.erase(d);
            ++next_to_write;
        }
    }
    outbox.wait_all();
    release_workers();
}

void work(const batch::BuildFn& build) {
    Outbox outbox;
    while (true) {
        MPI_Status status;
        const std::string bytes = receive(0, MPI_ANY_TAG, status, outbox);
        if (status.MPI_TAG == kTagStop) break;
        batch::Chunk chunk;
        batch::unpack_items(bytes, chunk);
        batch::build_chunk(chunk, build);
        outbox.post(batch::pack_outcomes(chunk), 0, kTagResult);
    }
    outbox.wait_all();
}

#else

void init(int*, char***) {}
void finalize() {}
int rank() { return 0; }
int size() { return 1; }
void coordinate(batch::ChunkReader&, const std::function<void(batch::Chunk&)>&) {}
void work(const batch::BuildFn&) {}
void release_workers() {}
[[noreturn]] void abort_job(int status) { std::exit(status); }

#endif

}  // namespace repel::app::mpi
