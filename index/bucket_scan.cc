#include "index/bucket_scan.h"

#include <oneapi/tbb/global_control.h>
#include <oneapi/tbb/parallel_for.h>
#include <oneapi/tbb/task_arena.h>

#include <algorithm>
#include <atomic>

namespace shingleton {

StatusOr<EdgeScan> VerifyAllBuckets(const IndexStore& store, const VerifyOptions& options,
                                    const SignatureLookup& lookup, int threads) {
  const int bands = store.scheme().bands;
  BucketVerifier verifier(options, store.scheme().num_hashes, lookup);
  std::vector<std::vector<Edge>> per_band(bands);
  std::vector<Status> statuses(bands);
  std::atomic<uint64_t> comparisons{0}, buckets{0};
  threads = std::max(threads, 1);
  // Allows more threads than cores when asked for (TBB would otherwise cap and warn).
  tbb::global_control allow(tbb::global_control::max_allowed_parallelism,
                            std::max(threads, 2));
  tbb::task_arena arena(threads);
  arena.execute([&] {
    tbb::parallel_for(0, bands, [&](int band) {
      statuses[band] = store.ForEachBucket(
          band, 2, [&](int b, uint64_t, const std::vector<uint64_t>& members) {
            ++buckets;
            comparisons += verifier.Verify(b, members, &per_band[b]);
            return Status::Ok();
          });
    });
  });
  for (const Status& s : statuses) SHINGLETON_RETURN_IF_ERROR(s);
  EdgeScan out;
  for (auto& v : per_band) out.edges.insert(out.edges.end(), v.begin(), v.end());
  DeduplicateEdges(&out.edges);
  out.buckets_checked = buckets.load();
  out.comparisons = comparisons.load();
  return out;
}

}  // namespace shingleton
