#include "index/reference_resolution.h"

#include <algorithm>
#include <string_view>
#include <tuple>

#include "index/parallel.h"

namespace shingleton {

namespace {

// The order of kinds of match: a URL revisit over an exact copy over a near one.
int ReasonRank(DropReason r) {
  switch (r) {
    case DropReason::kUrl: return 3;
    case DropReason::kReferenceExact: return 2;
    case DropReason::kReferenceNear: return 1;
    default: return 0;
  }
}

// Whether a beats b before ids are compared: better kind, then higher similarity,
// then earlier generation.
bool Outranks(const ReferenceCandidate& a, const ReferenceCandidate& b) {
  if (ReasonRank(a.reason) != ReasonRank(b.reason)) return ReasonRank(a.reason) > ReasonRank(b.reason);
  if (a.similarity != b.similarity) return a.similarity > b.similarity;
  return a.generation < b.generation;
}

// The ids of `keys` (sorted) in `store`, in order: MultiGet batches on `threads`.
StatusOr<std::vector<std::string>> ReadIds(const IndexStore& store, const std::vector<uint64_t>& keys, int threads) {
  constexpr size_t kBatch = 4096;
  std::vector<std::string> ids(keys.size());
  SHINGLETON_RETURN_IF_ERROR(ParallelFor((keys.size() + kBatch - 1) / kBatch, threads, [&](size_t b) -> Status {
    const size_t from = b * kBatch, to = std::min(keys.size(), from + kBatch);
    SHINGLETON_ASSIGN_OR_RETURN(
        std::vector<DocumentMeta> docs,
        store.GetDocuments(std::vector<uint64_t>(keys.begin() + from, keys.begin() + to)));
    for (size_t i = from; i < to; ++i) ids[i] = std::move(docs[i - from].id);
    return Status::Ok();
  }));
  return ids;
}

// Exact-copy candidates of every document from one key-order scan of each
// generation's content records, merged with the table's content hashes sorted.
Status MergeExact(const ReferenceSet& refs, const DocTable& table, ReferenceCandidates* out) {
  std::vector<std::tuple<uint64_t, uint64_t, size_t>> mine(table.size());  // (hi, lo, index)
  for (size_t i = 0; i < table.size(); ++i) {
    const auto [hi, lo] = table.content(i);
    mine[i] = {hi, lo, i};
  }
  std::sort(mine.begin(), mine.end());
  for (int g = 0; g < static_cast<int>(refs.size()); ++g) {
    size_t j = 0;
    SHINGLETON_RETURN_IF_ERROR(refs.store(g).ForEachContent([&](uint64_t hi, uint64_t lo, uint64_t key) {
      while (j < mine.size() && std::tie(std::get<0>(mine[j]), std::get<1>(mine[j])) < std::tie(hi, lo)) ++j;
      for (size_t i = j; i < mine.size() && std::get<0>(mine[i]) == hi && std::get<1>(mine[i]) == lo; ++i) {
        (*out)[std::get<2>(mine[i])].push_back({g, key, 1.0f, DropReason::kReferenceExact});
      }
      return Status::Ok();
    }));
  }
  return Status::Ok();
}

// URL revisits of every document with a normalised URL, the same way.
Status MergeUrls(const ReferenceSet& refs, const std::vector<std::string>& urls, ReferenceCandidates* out) {
  std::vector<std::pair<std::string_view, size_t>> mine;
  for (size_t i = 0; i < urls.size(); ++i) {
    if (!urls[i].empty()) mine.emplace_back(urls[i], i);
  }
  std::sort(mine.begin(), mine.end());
  for (int g = 0; g < static_cast<int>(refs.size()); ++g) {
    size_t j = 0;
    SHINGLETON_RETURN_IF_ERROR(refs.store(g).ForEachUrl([&](std::string_view url, uint64_t key) {
      while (j < mine.size() && mine[j].first < url) ++j;
      for (size_t i = j; i < mine.size() && mine[i].first == url; ++i) {
        (*out)[mine[i].second].push_back({g, key, 1.0f, DropReason::kUrl});
      }
      return Status::Ok();
    }));
  }
  return Status::Ok();
}

}  // namespace

StatusOr<ReferenceLookup> ParseReferenceLookup(const std::string& name) {
  if (name == "merge") return ReferenceLookup::kMerge;
  if (name == "point") return ReferenceLookup::kPoint;
  return Status::InvalidArgument("unknown reference lookup '" + name + "' (merge or point)");
}

Status AddNearHits(const DocTable& table, int generation, const std::vector<ReferenceHit>& hits,
                   ReferenceCandidates* candidates) {
  for (const ReferenceHit& h : hits) {
    const int64_t i = table.IndexOf(h.doc);
    if (i < 0) return Status::Corruption("reference hit for unknown document key " + std::to_string(h.doc));
    (*candidates)[static_cast<size_t>(i)].push_back({generation, h.ref, h.similarity, DropReason::kReferenceNear});
  }
  return Status::Ok();
}

StatusOr<ReferenceCandidates> LookUpNearCandidates(const ReferenceSet& refs, const DocTable& table, double threshold,
                                                   int threads) {
  ReferenceCandidates near(table.size());
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(table.size(), threads, [&](size_t i) -> Status {
    if (table.signature(i) == nullptr) {
      return Status::Internal("point lookups need the signature of document " + std::to_string(table.key(i)));
    }
    SHINGLETON_ASSIGN_OR_RETURN(near[i], refs.PointNearCandidates(table.signature(i), threshold));
    return Status::Ok();
  }));
  return near;
}

void ShareWithCopies(const DocTable& table, const std::vector<Edge>& exact_edges, ReferenceCandidates* c) {
  for (const Edge& e : exact_edges) {
    const int64_t a = table.IndexOf(e.a), b = table.IndexOf(e.b);
    if (a < 0 || b < 0) continue;
    auto& la = (*c)[static_cast<size_t>(a)];
    auto& lb = (*c)[static_cast<size_t>(b)];
    if (la.empty() == lb.empty()) continue;  // both have theirs (or neither has any)
    if (la.empty()) {
      la = lb;
    } else {
      lb = la;
    }
  }
}

Status AddExactCandidates(const ReferenceSet& refs, const DocTable& table,
                          const std::vector<std::string>& normalized_urls, const ReferenceMatchOptions& o,
                          ReferenceCandidates* candidates) {
  const bool urls = o.url_revisits && !normalized_urls.empty();
  if (o.lookup == ReferenceLookup::kPoint) {
    static const std::string kNoUrl;
    return ParallelFor(table.size(), o.threads, [&](size_t i) {
      return refs.PointExactCandidates(table.doc(i), urls ? normalized_urls[i] : kNoUrl, urls, &(*candidates)[i]);
    });
  }
  // The two merges side by side (on 2 or more threads); URL candidates then follow
  // the exact ones, as if run in turn.
  ReferenceCandidates by_url(urls ? table.size() : 0);
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(urls ? 2 : 1, o.threads, [&](size_t part) {
    return part == 0 ? MergeExact(refs, table, candidates) : MergeUrls(refs, normalized_urls, &by_url);
  }));
  for (size_t i = 0; i < by_url.size(); ++i) {
    (*candidates)[i].insert((*candidates)[i].end(), by_url[i].begin(), by_url[i].end());
  }
  return Status::Ok();
}

StatusOr<std::vector<ReferenceMatch>> ResolveReferences(const ReferenceSet& refs,
                                                        const ReferenceCandidates& candidates, int threads) {
  const size_t n = candidates.size();
  // 1. The finalists of each document: best kind, highest similarity, earliest
  //    generation (no read needed); their keys, distinct.
  std::vector<std::vector<ReferenceCandidate>> finalists(n);
  SHINGLETON_RETURN_IF_ERROR(ParallelFor(n, threads, [&](size_t i) -> Status {
    const ReferenceCandidate* top = nullptr;
    for (const ReferenceCandidate& c : candidates[i]) {
      if (c.generation < 0 || c.generation >= static_cast<int>(refs.size()) || ReasonRank(c.reason) == 0) {
        return Status::InvalidArgument("reference candidate of generation " + std::to_string(c.generation) + " of " +
                                       std::to_string(refs.size()) + " (reason " + DropReasonName(c.reason) + ")");
      }
      if (top == nullptr || Outranks(c, *top)) top = &c;
    }
    if (top == nullptr) return Status::Ok();
    for (const ReferenceCandidate& c : candidates[i]) {
      if (!Outranks(*top, c)) finalists[i].push_back(c);
    }
    std::sort(finalists[i].begin(), finalists[i].end(),
              [](const ReferenceCandidate& a, const ReferenceCandidate& b) { return a.key < b.key; });
    finalists[i].erase(std::unique(finalists[i].begin(), finalists[i].end(),
                                   [](const ReferenceCandidate& a, const ReferenceCandidate& b) { return a.key == b.key; }),
                       finalists[i].end());
    return Status::Ok();
  }));
  // 2. The ids of every finalist, by sorted batches of reads per generation.
  std::vector<std::vector<uint64_t>> keys(refs.size());
  for (const auto& f : finalists) {
    for (const ReferenceCandidate& c : f) keys[c.generation].push_back(c.key);
  }
  std::vector<std::vector<std::string>> ids(refs.size());
  for (size_t g = 0; g < refs.size(); ++g) {
    std::sort(keys[g].begin(), keys[g].end());
    keys[g].erase(std::unique(keys[g].begin(), keys[g].end()), keys[g].end());
    SHINGLETON_ASSIGN_OR_RETURN(ids[g], ReadIds(refs.store(static_cast<int>(g)), keys[g], threads));
  }
  // 3. Of the finalists, the smallest id.
  std::vector<ReferenceMatch> matches(n);
  for (size_t i = 0; i < n; ++i) {
    for (const ReferenceCandidate& c : finalists[i]) {
      const auto& k = keys[c.generation];
      const std::string& id = ids[c.generation][std::lower_bound(k.begin(), k.end(), c.key) - k.begin()];
      if (!matches[i].found() || id < matches[i].id) matches[i] = {c.generation, c.key, id, c.similarity, c.reason};
    }
  }
  return matches;
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
