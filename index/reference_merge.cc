#include "index/reference_merge.h"

#include <algorithm>

#include "index/bands.h"
#include "index/minhash.h"

namespace shingleton {

BandKeysFn TableBandKeys(const DocTable& table, const SketchScheme& scheme) {
  return [&table, scheme](int band) -> StatusOr<BandKeys> {
    BandKeys keys(table.size());
    for (size_t i = 0; i < table.size(); ++i) {
      keys[i] = {BandBucket(table.signature(i), band, scheme.rows, scheme.seed), table.doc(i).key};
    }
    std::sort(keys.begin(), keys.end());
    return keys;
  };
}

BandKeysFn StoreBandKeys(const IndexStore& store) {
  return [&store](int band) -> StatusOr<BandKeys> {
    BandKeys keys;
    SHINGLETON_RETURN_IF_ERROR(
        store.ForEachBucket(band, 1, [&](int, uint64_t bucket, const std::vector<uint64_t>& docs) {
          for (uint64_t d : docs) keys.emplace_back(bucket, d);
          return Status::Ok();
        }));
    return keys;  // ForEachBucket visits buckets in order, members ascending
  };
}

namespace {

// Appends the (ref, doc) pairs of one band: the job's sorted keys merged with the
// generation's buckets of that band, which ForEachBucket yields in bucket order.
Status CollectBandPairs(const IndexStore& reference, int band, const BandKeys& job,
                        std::vector<std::pair<uint64_t, uint64_t>>* pairs) {
  if (job.empty()) return Status::Ok();
  size_t j = 0;
  return reference.ForEachBucket(band, 1, [&](int, uint64_t bucket, const std::vector<uint64_t>& refs) {
    while (j < job.size() && job[j].first < bucket) ++j;
    for (size_t i = j; i < job.size() && job[i].first == bucket; ++i) {
      for (uint64_t r : refs) pairs->emplace_back(r, job[i].second);
    }
    return Status::Ok();
  });
}

}  // namespace

StatusOr<std::vector<ReferenceHit>> MergeWithReference(const IndexStore& reference,
                                                       const BandKeysFn& job_keys,
                                                       const JobSignatureFn& job_signature,
                                                       double threshold) {
  const SketchScheme& scheme = reference.scheme();
  std::vector<std::pair<uint64_t, uint64_t>> pairs;  // (ref, doc)
  for (int b = 0; b < scheme.bands; ++b) {
    SHINGLETON_ASSIGN_OR_RETURN(BandKeys keys, job_keys(b));
    const size_t old = pairs.size();
    SHINGLETON_RETURN_IF_ERROR(CollectBandPairs(reference, b, keys, &pairs));
    // Sorted and unique after every band: pairs colliding in many bands count once.
    std::sort(pairs.begin() + old, pairs.end());
    std::inplace_merge(pairs.begin(), pairs.begin() + old, pairs.end());
    pairs.erase(std::unique(pairs.begin(), pairs.end()), pairs.end());
  }
  // Pairs are grouped by reference document: its signature is read once.
  std::vector<ReferenceHit> hits;
  for (size_t i = 0; i < pairs.size();) {
    const uint64_t ref = pairs[i].first;
    SHINGLETON_ASSIGN_OR_RETURN(std::vector<uint32_t> ref_sig, reference.GetSignature(ref));
    for (; i < pairs.size() && pairs[i].first == ref; ++i) {
      const uint32_t* sig = job_signature(pairs[i].second);
      if (sig == nullptr) {
        return Status::Corruption("no signature for document key " + std::to_string(pairs[i].second) +
                                  " of a posting");
      }
      const double sim = EstimateJaccard(sig, ref_sig.data(), scheme.num_hashes);
      if (sim >= threshold) hits.push_back({pairs[i].second, ref, static_cast<float>(sim)});
    }
  }
  std::sort(hits.begin(), hits.end(), [](const ReferenceHit& a, const ReferenceHit& b) {
    return a.doc != b.doc ? a.doc < b.doc : a.ref < b.ref;
  });
  return hits;
}

}  // namespace shingleton
