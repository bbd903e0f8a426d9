#include "index/reference_resolution.h"

#include <oneapi/tbb/global_control.h>
#include <oneapi/tbb/parallel_for.h>
#include <oneapi/tbb/task_arena.h>

#include <algorithm>
#include <functional>

namespace shingleton {

namespace {

// Runs fn(i) for i in [0, n) on `threads` threads; the first error wins.
Status ParallelFor(size_t n, int threads, const std::function<Status(size_t)>& fn) {
  std::vector<Status> errors(n);
  threads = std::max(threads, 1);
  tbb::global_control allow(tbb::global_control::max_allowed_parallelism, std::max(threads, 2));
  tbb::task_arena arena(threads);
  arena.execute([&] { tbb::parallel_for(size_t{0}, n, [&](size_t i) { errors[i] = fn(i); }); });
  for (const Status& s : errors) SHINGLETON_RETURN_IF_ERROR(s);
  return Status::Ok();
}

bool HitBefore(const NearHit& a, const NearHit& b) {
  return a.generation != b.generation ? a.generation < b.generation : a.key < b.key;
}

}  // namespace

StatusOr<ReferenceLookup> ParseReferenceLookup(const std::string& name) {
  if (name == "merge") return ReferenceLookup::kMerge;
  if (name == "point") return ReferenceLookup::kPoint;
  return Status::InvalidArgument("unknown reference lookup '" + name + "' (merge or point)");
}

Status AddShardHits(const DocTable& table, int generation, const std::vector<ReferenceHit>& hits,
                    NearHits* near) {
  for (const ReferenceHit& h : hits) {
    const int64_t i = table.IndexOf(h.doc);
    if (i < 0) return Status::Corruption("reference hit for unknown document key " + std::to_string(h.doc));
    (*near)[static_cast<size_t>(i)].push_back({generation, h.ref, h.similarity});
  }
  return Status::Ok();
}

void NormalizeNearHits(NearHits* near) {
  for (auto& list : *near) {
    std::sort(list.begin(), list.end(), HitBefore);
    list.erase(std::unique(list.begin(), list.end(),
                           [](const NearHit& a, const NearHit& b) { return !HitBefore(a, b) && !HitBefore(b, a); }),
               list.end());
  }
}

StatusOr<NearHits> FindNearHits(const ReferenceSet& refs, const DocTable& table,
                                const ReferenceMatchOptions& o) {
  NearHits near(table.size());
  if (o.lookup == ReferenceLookup::kPoint) {
    SHINGLETON_RETURN_IF_ERROR(ParallelFor(table.size(), o.threads, [&](size_t i) -> Status {
      SHINGLETON_ASSIGN_OR_RETURN(near[i], refs.PointNearHits(table.signature(i), o.threshold));
      return Status::Ok();
    }));
    return near;
  }
  const BandKeysFn keys = TableBandKeys(table, refs.scheme());
  const JobSignatureFn sig = [&table](uint64_t key) { return table.SignatureOf(key); };
  for (int g = 0; g < static_cast<int>(refs.size()); ++g) {
    SHINGLETON_ASSIGN_OR_RETURN(auto hits, MergeWithReference(refs.store(g), keys, sig, o.threshold));
    SHINGLETON_RETURN_IF_ERROR(AddShardHits(table, g, hits, &near));
  }
  NormalizeNearHits(&near);
  return near;
}

StatusOr<std::vector<ReferenceMatch>> ResolveReferences(const ReferenceSet& refs, const DocTable& table,
                                                        const std::vector<std::string>& normalized_urls,
                                                        bool url_revisits, const NearHits& near,
                                                        int threads) {
  std::vector<ReferenceMatch> matches(table.size());
  static const std::string kNoUrl;
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(table.size(), threads, [&](size_t i) -> Status {
    const std::string& url = normalized_urls.empty() ? kNoUrl : normalized_urls[i];
    SHINGLETON_ASSIGN_OR_RETURN(matches[i], refs.Resolve(table.doc(i), url, url_revisits, near[i]));
    return Status::Ok();
  }));
  return matches;
}

StatusOr<std::vector<ReferenceMatch>> MatchReferences(const ReferenceSet& refs, const DocTable& table,
                                                      const std::vector<std::string>& normalized_urls,
                                                      const ReferenceMatchOptions& o) {
  SHINGLETON_ASSIGN_OR_RETURN(NearHits near, FindNearHits(refs, table, o));
  return ResolveReferences(refs, table, normalized_urls, o.url_revisits, near, o.threads);
}

void DropEdgesOfMatched(const DocTable& table, const std::vector<ReferenceMatch>& matches,
                        std::vector<Edge>* edges) {
  edges->erase(std::remove_if(edges->begin(), edges->end(),
                              [&](const Edge& e) {
                                return matches[table.IndexOf(e.a)].found() ||
                                       matches[table.IndexOf(e.b)].found();
                              }),
               edges->end());
}

void ApplyReferenceMatches(const ReferenceSet& refs, const std::vector<ReferenceMatch>& matches,
                           std::vector<Decision>* decisions, std::vector<ManifestRow>* rows) {
  for (size_t i = 0; i < matches.size(); ++i) {
    const ReferenceMatch& m = matches[i];
    if (!m.found()) continue;
    Decision& d = (*decisions)[i];
    d.kept_key = d.cluster = m.key;
    d.for_reference = true;
    d.similarity = m.similarity;
    d.cluster_size = 1;
    ManifestRow& r = (*rows)[i];
    r.duplicate_of = m.id;
    r.cluster = m.key;
    r.cluster_size = 1;
    r.similarity = m.similarity;
    r.reason = m.reason;
    r.reference = refs.record(m.generation).name;
  }
}

}  // namespace shingleton
