#include "index/bucket_scan.h"

#include <algorithm>
#include <atomic>
#include <iterator>

#include "index/parallel.h"

namespace shingleton {

StatusOr<BandPostings> ReadBandPostings(const IndexStore& store, int band) {
  BandPostings postings;
  SHINGLETON_RETURN_IF_ERROR(store.ReadBand(band, &postings));
  return postings;
}

size_t SharedBuckets::buckets() const {
  size_t n = 0;
  for (const auto& s : starts) n += s.empty() ? 0 : s.size() - 1;
  return n;
}

std::vector<uint64_t> SharedBuckets::Keys() const {
  // Sorted per band, then pairwise unions (repeats dropped at every step).
  std::vector<std::vector<uint64_t>> level;
  for (const auto& m : members) {
    level.push_back(m);
    std::sort(level.back().begin(), level.back().end());  // distinct within a band
  }
  while (level.size() > 1) {
    std::vector<std::vector<uint64_t>> next;
    for (size_t i = 0; i < level.size(); i += 2) {
      if (i + 1 == level.size()) {
        next.push_back(std::move(level[i]));
        break;
      }
      next.emplace_back();
      next.back().reserve(level[i].size() + level[i + 1].size());
      std::set_union(level[i].begin(), level[i].end(), level[i + 1].begin(), level[i + 1].end(),
                     std::back_inserter(next.back()));
    }
    level = std::move(next);
  }
  return level.empty() ? std::vector<uint64_t>() : std::move(level[0]);
}

StatusOr<SharedBuckets> ScanBands(const IndexStore& store, int threads, const BandVisitor& visit) {
  const int bands = store.scheme().bands;
  SharedBuckets shared;
  shared.members.resize(bands);
  shared.starts.resize(bands);
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(bands, threads, [&](size_t b) -> Status {
    SHINGLETON_ASSIGN_OR_RETURN(BandPostings postings, ReadBandPostings(store, static_cast<int>(b)));
    auto& members = shared.members[b];
    auto& starts = shared.starts[b];
    for (size_t i = 0; i < postings.size();) {
      size_t j = i + 1;
      while (j < postings.size() && postings[j].first == postings[i].first) ++j;
      if (j - i >= 2) {
        if (starts.empty()) starts.push_back(0);
        for (size_t x = i; x < j; ++x) members.push_back(postings[x].second);
        starts.push_back(static_cast<uint32_t>(members.size()));
      }
      i = j;
    }
    return visit ? visit(static_cast<int>(b), postings) : Status::Ok();
  }));
  return shared;
}

Status ReadSignaturesInOrder(const IndexStore& store, const std::vector<uint64_t>& keys, int threads,
                             const std::function<Status(uint64_t, const uint32_t*)>& fn) {
  const size_t k = static_cast<size_t>(store.scheme().num_hashes);
  constexpr size_t kChunk = 4096;
  const size_t chunks = (keys.size() + kChunk - 1) / kChunk, group = 4 * static_cast<size_t>(std::max(threads, 1));
  for (size_t first = 0; first < chunks; first += group) {  // a group of batches in memory at a time
    const size_t count = std::min(group, chunks - first);
    std::vector<std::vector<uint32_t>> sigs(count);
    std::vector<std::vector<char>> found(count);
    SHINGLETON_RETURN_IF_ERROR(ParallelFor(count, threads, [&](size_t c) {
      const size_t from = (first + c) * kChunk, to = std::min(keys.size(), from + kChunk);
      return store.GetSignatures(std::vector<uint64_t>(keys.begin() + from, keys.begin() + to), &sigs[c], &found[c]);
    }));
    for (size_t c = 0; c < count; ++c) {
      const size_t from = (first + c) * kChunk;
      for (size_t j = 0; j < found[c].size(); ++j) {
        if (!found[c][j]) {
          return Status::Corruption("no signature for document key " + std::to_string(keys[from + j]) + " in " +
                                    store.path());
        }
        SHINGLETON_RETURN_IF_ERROR(fn(keys[from + j], &sigs[c][j * k]));
      }
    }
  }
  return Status::Ok();
}

StatusOr<EdgeScan> VerifySharedBuckets(const SharedBuckets& shared, const VerifyOptions& options, int num_hashes,
                                       const SignatureLookup& lookup, int threads) {
  const size_t bands = shared.members.size();
  BucketVerifier verifier(options, num_hashes, lookup);
  std::vector<std::vector<Edge>> per_band(bands);
  std::atomic<uint64_t> comparisons{0};
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(bands, threads, [&](size_t b) -> Status {
    const auto& starts = shared.starts[b];
    std::vector<uint64_t> bucket;
    uint64_t n = 0;
    for (size_t j = 0; j + 1 < starts.size(); ++j) {
      bucket.assign(shared.members[b].begin() + starts[j], shared.members[b].begin() + starts[j + 1]);
      n += verifier.Verify(static_cast<int>(b), bucket, &per_band[b]);
    }
    comparisons += n;
    return Status::Ok();
  }));
  EdgeScan out;
  size_t total = 0;
  for (const auto& v : per_band) total += v.size();
  out.edges.reserve(total);  // one allocation, not a doubling series of fresh pages
  for (auto& v : per_band) out.edges.insert(out.edges.end(), v.begin(), v.end());
  DeduplicateEdges(&out.edges);
  out.buckets_checked = shared.buckets();
  out.comparisons = comparisons.load();
  return out;
}

}  // namespace shingleton
