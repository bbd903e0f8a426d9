#include "index/reference_resolution.h"

#include <oneapi/tbb/global_control.h>
#include <oneapi/tbb/parallel_for.h>
#include <oneapi/tbb/task_arena.h>

#include <algorithm>

namespace shingleton {

StatusOr<std::vector<ReferenceMatch>> MatchReferences(const ReferenceSet& refs, const DocTable& table,
                                                      const std::vector<std::string>& normalized_urls,
                                                      double threshold, bool url_revisits, int threads) {
  std::vector<ReferenceMatch> matches(table.size());
  std::vector<Status> errors(table.size());
  threads = std::max(threads, 1);
  tbb::global_control allow(tbb::global_control::max_allowed_parallelism, std::max(threads, 2));
  tbb::task_arena arena(threads);
  arena.execute([&] {
    tbb::parallel_for(size_t{0}, table.size(), [&](size_t i) {
      static const std::string kNoUrl;
      const std::string& url = normalized_urls.empty() ? kNoUrl : normalized_urls[i];
      auto m = refs.Match(table.doc(i), table.signature(i), url, threshold, url_revisits);
      if (m.ok()) {
        matches[i] = std::move(m).value();
      } else {
        errors[i] = m.status();
      }
    });
  });
  for (const Status& s : errors) SHINGLETON_RETURN_IF_ERROR(s);
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
