// Contiguous blocks and claimed items on std::thread; see parallel.hpp.

#include "tacet/common/parallel.hpp"

#include <algorithm>
#include <atomic>
#include <exception>
#include <thread>
#include <vector>

#include <fmt/format.h>

namespace tacet {

std::string threads_problem(int threads) {
  if (threads < 0 || threads > kMostThreads)
    return fmt::format("--threads must be from 0 (one per core) to {}, not {}", kMostThreads, threads);
  return {};
}

int resolve_threads(int threads) {
  if (threads > 0) return threads;
  return static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
}

int block_count(std::size_t count, int workers, std::size_t least) {
  if (count == 0) return 1;
  const std::size_t most = std::max<std::size_t>(1, count / std::max<std::size_t>(1, least));
  return static_cast<int>(std::min(static_cast<std::size_t>(std::max(1, workers)), most));
}

void for_blocks(std::size_t count, int blocks,
                FunctionRef<void(int, std::size_t, std::size_t)> work) {
  const auto n = static_cast<std::size_t>(std::max(1, blocks));
  auto start = [&](std::size_t b) { return b * count / n; };
  if (n == 1) {
    work(0, 0, count);
    return;
  }
  std::vector<std::exception_ptr> failures(n);
  auto run = [&](std::size_t b) {
    try {
      work(static_cast<int>(b), start(b), start(b + 1));
    } catch (...) {
      failures[b] = std::current_exception();
    }
  };
  std::vector<std::thread> threads;
  threads.reserve(n - 1);
  for (std::size_t b = 1; b < n; ++b) threads.emplace_back(run, b);
  run(0);
  for (auto& t : threads) t.join();
  for (const auto& failure : failures)
    if (failure) std::rethrow_exception(failure);
}

void for_items(std::size_t count, int workers, FunctionRef<void(int, std::size_t)> work) {
  if (count == 0) return;
  const auto threads_wanted = std::min<std::size_t>(static_cast<std::size_t>(std::max(1, workers)), count);
  std::vector<std::exception_ptr> failures(count);
  std::atomic<std::size_t> next{0};
  auto run = [&](int worker) {
    for (std::size_t item; (item = next.fetch_add(1)) < count;) {
      try {
        work(worker, item);
      } catch (...) {
        failures[item] = std::current_exception();
      }
    }
  };
  std::vector<std::thread> threads;
  threads.reserve(threads_wanted - 1);
  for (std::size_t w = 1; w < threads_wanted; ++w) threads.emplace_back(run, static_cast<int>(w));
  run(0);
  for (auto& t : threads) t.join();
  for (const auto& failure : failures)
    if (failure) std::rethrow_exception(failure);
}

}  // namespace tacet
