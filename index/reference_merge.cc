#include "index/reference_merge.h"

#include <algorithm>
#include <utility>

#include "index/minhash.h"
#include "index/parallel.h"

namespace shingleton {
namespace {

using Pair = std::pair<uint64_t, uint64_t>;  // (ref, doc)

constexpr size_t kVerifyBatch = 8192;  // candidate pairs verified per signature batch

// Signatures of `keys` (sorted, distinct) from `store`, num_hashes values each, in
// key order (one thread: the caller already runs batches in parallel).
Status ReadSignatures(const IndexStore& store, const std::vector<uint64_t>& keys, std::vector<uint32_t>* sigs) {
  const size_t k = static_cast<size_t>(store.scheme().num_hashes);
  sigs->clear();
  sigs->reserve(keys.size() * k);
  return ReadSignaturesInOrder(store, keys, 1, [&](uint64_t, const uint32_t* sig) {
    sigs->insert(sigs->end(), sig, sig + k);
    return Status::Ok();
  });
}

size_t Position(const std::vector<uint64_t>& sorted, uint64_t key) {
  return static_cast<size_t>(std::lower_bound(sorted.begin(), sorted.end(), key) - sorted.begin());
}

// Verifies pairs[from, to) (sorted by ref) on signatures read in two MultiGets.
Status VerifyPairs(const IndexStore& reference, const IndexStore& job, const std::vector<Pair>& pairs,
                   size_t from, size_t to, double threshold, std::vector<ReferenceHit>* hits) {
  const int k = job.scheme().num_hashes;
  std::vector<uint64_t> refs, docs;
  for (size_t i = from; i < to; ++i) {
    if (refs.empty() || refs.back() != pairs[i].first) refs.push_back(pairs[i].first);
    docs.push_back(pairs[i].second);
  }
  std::sort(docs.begin(), docs.end());
  docs.erase(std::unique(docs.begin(), docs.end()), docs.end());
  std::vector<uint32_t> ref_sigs, doc_sigs;
  SHINGLETON_RETURN_IF_ERROR(ReadSignatures(reference, refs, &ref_sigs));
  SHINGLETON_RETURN_IF_ERROR(ReadSignatures(job, docs, &doc_sigs));
  for (size_t i = from; i < to; ++i) {
    const uint32_t* r = &ref_sigs[Position(refs, pairs[i].first) * k];
    const uint32_t* d = &doc_sigs[Position(docs, pairs[i].second) * k];
    const double sim = EstimateJaccard(d, r, k);
    if (sim >= threshold) hits->push_back({pairs[i].second, pairs[i].first, static_cast<float>(sim)});
  }
  return Status::Ok();
}

}  // namespace

ReferenceMerger::ReferenceMerger(const IndexStore& reference, const IndexStore& job, double threshold,
                                 const KeySet* settled)
    : reference_(reference), job_(job), threshold_(threshold), settled_(settled),
      per_band_(reference.scheme().bands) {}

Status ReferenceMerger::AddBand(int band, const BandPostings& mine) {
  if (band < 0 || band >= static_cast<int>(per_band_.size())) {
    return Status::InvalidArgument("band " + std::to_string(band) + " of " + std::to_string(per_band_.size()));
  }
  std::vector<Pair>& pairs = per_band_[band];
  if (mine.empty()) return Status::Ok();
  SHINGLETON_ASSIGN_OR_RETURN(const BandPostings theirs, ReadBandPostings(reference_, band));
  // Both sorted by bucket: every bucket present in both gives its (ref, doc) pairs.
  size_t i = 0, j = 0;
  while (i < mine.size() && j < theirs.size()) {
    const uint64_t bucket = mine[i].first;
    if (bucket < theirs[j].first) {
      ++i;
      continue;
    }
    if (theirs[j].first < bucket) {
      ++j;
      continue;
    }
    size_t end = j;
    while (end < theirs.size() && theirs[end].first == bucket) ++end;
    for (; i < mine.size() && mine[i].first == bucket; ++i) {
      const uint64_t doc = mine[i].second;
      if (settled_ && settled_->contains(doc)) continue;
      for (size_t r = j; r < end; ++r) pairs.emplace_back(theirs[r].second, doc);
    }
    j = end;
  }
  std::sort(pairs.begin(), pairs.end());  // distinct: one bucket per document and band
  return Status::Ok();
}

StatusOr<std::vector<ReferenceHit>> ReferenceMerger::Finish(int threads) {
  // Pairs colliding in several bands count once; grouped by reference document.
  std::vector<Pair> pairs;
  for (auto& p : per_band_) {
    pairs.insert(pairs.end(), p.begin(), p.end());
    std::vector<Pair>().swap(p);
  }
  std::sort(pairs.begin(), pairs.end());
  pairs.erase(std::unique(pairs.begin(), pairs.end()), pairs.end());
  const size_t batches = (pairs.size() + kVerifyBatch - 1) / kVerifyBatch;
  std::vector<std::vector<ReferenceHit>> per_batch(batches);
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(batches, threads, [&](size_t i) {
    return VerifyPairs(reference_, job_, pairs, i * kVerifyBatch, std::min(pairs.size(), (i + 1) * kVerifyBatch),
                       threshold_, &per_batch[i]);
  }));
  std::vector<ReferenceHit> hits;
  for (const auto& h : per_batch) hits.insert(hits.end(), h.begin(), h.end());
  std::sort(hits.begin(), hits.end(), [](const ReferenceHit& a, const ReferenceHit& b) {
    return a.doc != b.doc ? a.doc < b.doc : a.ref < b.ref;
  });
  return hits;
}

StatusOr<std::vector<ReferenceHit>> MergeWithReference(const IndexStore& reference, const IndexStore& job,
                                                       double threshold, int threads) {
  const SketchScheme& scheme = reference.scheme();
  if (job.scheme() != scheme) {
    return Status::Mismatch("the job at " + job.path() + " and the reference at " + reference.path() +
                            " have different sketch schemes (" + job.scheme().DescribeDifference(scheme) + ")");
  }
  ReferenceMerger merger(reference, job, threshold);
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(scheme.bands, threads, [&](size_t b) -> Status {
    SHINGLETON_ASSIGN_OR_RETURN(BandPostings postings, ReadBandPostings(job, static_cast<int>(b)));
    return merger.AddBand(static_cast<int>(b), postings);
  }));
  return merger.Finish(threads);
}

}  // namespace shingleton
