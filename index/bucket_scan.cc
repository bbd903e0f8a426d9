#include "index/bucket_scan.h"

#include <oneapi/tbb/global_control.h>
#include <oneapi/tbb/parallel_for.h>
#include <oneapi/tbb/task_arena.h>

#include <algorithm>
#include <atomic>
#include <functional>

namespace shingleton {

namespace {

// Runs fn(band) for every band on `threads` threads; returns the first error by band.
Status ForEachBandParallel(int bands, int threads, const std::function<Status(int)>& fn) {
  std::vector<Status> statuses(bands);
  threads = std::max(threads, 1);
  // Allows more threads than cores when asked for (TBB would otherwise cap and warn).
  tbb::global_control allow(tbb::global_control::max_allowed_parallelism, std::max(threads, 2));
  tbb::task_arena arena(threads);
  arena.execute([&] { tbb::parallel_for(0, bands, [&](int band) { statuses[band] = fn(band); }); });
  for (const Status& s : statuses) SHINGLETON_RETURN_IF_ERROR(s);
  return Status::Ok();
}

}  // namespace

Status ForEachKeyInSharedBuckets(const IndexStore& store, int threads,
                                 const std::function<void(uint64_t key)>& mark) {
  return ForEachBandParallel(store.scheme().bands, threads, [&](int band) {
    return store.ForEachBucket(band, 2, [&](int, uint64_t, const std::vector<uint64_t>& members) {
      for (uint64_t key : members) mark(key);
      return Status::Ok();
    });
  });
}

StatusOr<EdgeScan> VerifyAllBuckets(const IndexStore& store, const VerifyOptions& options,
                                    const SignatureLookup& lookup, int threads) {
  const int bands = store.scheme().bands;
  BucketVerifier verifier(options, store.scheme().num_hashes, lookup);
  std::vector<std::vector<Edge>> per_band(bands);
  std::atomic<uint64_t> comparisons{0}, buckets{0};
  SHINGLETON_RETURN_IF_ERROR(ForEachBandParallel(bands, threads, [&](int band) {
    return store.ForEachBucket(band, 2, [&](int b, uint64_t, const std::vector<uint64_t>& members) {
      ++buckets;
      comparisons += verifier.Verify(b, members, &per_band[b]);
      return Status::Ok();
    });
  }));
  EdgeScan out;
  for (auto& v : per_band) out.edges.insert(out.edges.end(), v.begin(), v.end());
  DeduplicateEdges(&out.edges);
  out.buckets_checked = buckets.load();
  out.comparisons = comparisons.load();
  return out;
}

}  // namespace shingleton
