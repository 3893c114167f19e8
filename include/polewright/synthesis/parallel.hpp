// A deterministic parallel loop: task i always writes result slot i, so the outcome does not
// depend on the number of threads or on their timing.
#pragma once

#include <atomic>
#include <functional>
#include <thread>
#include <vector>

namespace pw {

// Resolves a requested thread count: 0 means all cores.
inline int resolve_threads(int requested) {
  if (requested > 0) return requested;
  const unsigned n = std::thread::hardware_concurrency();
  return n > 0 ? static_cast<int>(n) : 1;
}

inline void parallel_for(size_t count, int threads, const std::function<void(size_t)>& body) {
  const size_t workers = std::min(count, static_cast<size_t>(std::max(1, threads)));
  if (workers <= 1) {
    for (size_t i = 0; i < count; ++i) body(i);
    return;
  }
  std::atomic<size_t> next{0};
  std::vector<std::thread> pool;
  std::vector<std::exception_ptr> errors(workers);
  for (size_t w = 0; w < workers; ++w)
    pool.emplace_back([&, w] {
      try {
        for (size_t i = next++; i < count; i = next++) body(i);
      } catch (...) {
        errors[w] = std::current_exception();
        next = count;
      }
    });
  for (std::thread& t : pool) t.join();
  for (const std::exception_ptr& e : errors)
    if (e) std::rethrow_exception(e);
}

}  // namespace pw
