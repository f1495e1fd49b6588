#include "mpi_driver.hpp"

#include <cstdlib>
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
std::string receive(int source, int tag, MPI_Status& status) {
    MPI_Probe(source, tag, MPI_COMM_WORLD, &status);
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
    bool more = true;
    auto hand_out = [&](int dest) {
        if (!more) return;
        batch::Chunk chunk;
        if (!reader.next(chunk)) {
            more = false;
            return;
        }
        send(batch::pack_items(chunk), dest, kTagWork);
        pending.emplace(chunk.sequence, std::move(chunk));
        ++in_flight;
    };
    for (int round = 0; round < 2; ++round)
        for (int w = 1; w <= workers; ++w) hand_out(w);
    while (in_flight > 0) {
        MPI_Status status;
        const std::string bytes = receive(MPI_ANY_SOURCE, kTagResult, status);
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
    release_workers();
}

void work(const batch::BuildFn& build) {
    while (true) {
        MPI_Status status;
        const std::string bytes = receive(0, MPI_ANY_TAG, status);
        if (status.MPI_TAG == kTagStop) return;
        batch::Chunk chunk;
        batch::unpack_items(bytes, chunk);
        batch::build_chunk(chunk, build);
        send(batch::pack_outcomes(chunk), 0, kTagResult);
    }
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
