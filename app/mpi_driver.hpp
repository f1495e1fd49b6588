// The MPI driver of a batch (built with -DREPEL_MPI=ON): rank 0 reads chunks and hands them out, every other rank
// builds the chunks it is given and sends the outcomes back, and rank 0 writes them in input order through the same
// BatchOutput as the threaded driver. Without REPEL_MPI these are stubs: one rank.
#pragma once

#include <functional>

#include "batch/batch.hpp"

namespace repel::app::mpi {

void init(int* argc, char*** argv);
void finalize();
int rank();
int size();

// Rank 0: hands chunks to ranks 1..size-1 (at most two each in flight) and writes the outcomes in order.
void coordinate(batch::ChunkReader& reader, const std::function<void(batch::Chunk&)>& write);
// Ranks 1..size-1: build chunks until rank 0 says stop.
void work(const batch::BuildFn& build);
// Rank 0, when the run ends before coordinate() (a file that cannot be read): tells the other ranks to stop.
void release_workers();
// Ends every rank of the job with this status (a fatal error with work in flight).
[[noreturn]] void abort_job(int status);

}  // namespace repel::app::mpi
