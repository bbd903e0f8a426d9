#include "index/parallel.h"

#include <oneapi/tbb/global_control.h>
#include <oneapi/tbb/parallel_for.h>
#include <oneapi/tbb/task_arena.h>

#include <algorithm>
#include <vector>

namespace shingleton {

Status ParallelFor(size_t n, int threads, const std::function<Status(size_t)>& fn) {
  std::vector<Status> statuses(n);
  threads = std::max(threads, 1);
  // Allows more threads than cores when asked for (TBB would otherwise cap and warn).
  tbb::global_control allow(tbb::global_control::max_allowed_parallelism, std::max(threads, 2));
  tbb::task_arena arena(threads);
  arena.execute([&] { tbb::parallel_for(size_t{0}, n, [&](size_t i) { statuses[i] = fn(i); }); });
  for (const Status& s : statuses) SHINGLETON_RETURN_IF_ERROR(s);
  return Status::Ok();
}

}  // namespace shingleton
