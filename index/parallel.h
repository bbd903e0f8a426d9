// ParallelFor: runs fn(i) for i in [0, n) on a private TBB arena of `threads`
// threads (at least 1) and returns the first error by index, so the status a
// caller sees does not depend on scheduling.
//
// Thread safety: fn is called concurrently for distinct i.
#pragma once

#include <cstddef>
#include <functional>

#include "index/status.h"

namespace shingleton {

Status ParallelFor(size_t n, int threads, const std::function<Status(size_t i)>& fn);

}  // namespace shingleton
