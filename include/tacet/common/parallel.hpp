#pragma once
// Work split across threads so that the result never depends on the split:
// every index is computed by exactly one worker into its own slot, and the
// caller combines the slots in index order after the parallel part. No
// atomic accumulation, no shared mutable state beyond the slots.
//
// Workers are std::thread (no pool: a sweep or a band integral starts a few
// threads, each running for milliseconds at least, so starting them costs
// far less than the work; a short job runs on the calling thread alone).

#include <cstddef>
#include <string>

#include "tacet/common/function_ref.hpp"

namespace tacet {

/// The most worker threads one process may ask for (`--threads`).
inline constexpr int kMostThreads = 256;

/// The problem with a --threads value as one sentence; empty when it is valid
/// (0: one per core, up to kMostThreads).
std::string threads_problem(int threads);

/// The workers `threads` asks for: itself when above 0, else one per core
/// (at least 1).
int resolve_threads(int threads);

/// How many contiguous blocks for_blocks cuts `count` indices into: at most
/// `workers`, and none with fewer than `least` indices unless there is only
/// one (a short job stays on the calling thread).
int block_count(std::size_t count, int workers, std::size_t least);

/// Calls work(block, begin, end) for each of `blocks` contiguous blocks of
/// [0, count) (block b: [b count / B, (b + 1) count / B)), each on a thread of
/// its own; block 0 runs on the calling thread. When blocks throw, the
/// exception of the lowest block is rethrown once all have ended: a block
/// stops at its first failing index, so that is the failure a single thread
/// would meet first.
void for_blocks(std::size_t count, int blocks,
                FunctionRef<void(int block, std::size_t begin, std::size_t end)> work);

/// The same for `count` independent items claimed one at a time by
/// `workers` threads (items of very different cost: a check's specs). Every
/// item is attempted; the exception of the lowest failing item is rethrown.
void for_items(std::size_t count, int workers,
               FunctionRef<void(int worker, std::size_t item)> work);

}  // namespace tacet
