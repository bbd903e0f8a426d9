// `shingleton finalize`: asks the coordinator to resolve a job and writes the same
// keep.jsonl, drop.jsonl and summary.json as the embedded job, atomically.
#include <filesystem>
#include <iostream>
#include <memory>

#include "client/commands.h"
#include "client/job_flags.h"
#include "client/progress.h"
#include "index/manifest.h"
#include "index/reference_set.h"
#include "shingleton/v1/service.grpc.pb.h"

namespace shingleton::cli {
namespace {

struct FinalizeFlags {
  ClientFlags client;
  std::string job;
  std::string out;
  bool replace = false;
};

StatusOr<uint64_t> ParseCluster(const std::string& hex) {
  char* end = nullptr;
  const uint64_t v = std::strtoull(hex.c_str(), &end, 16);
  if (hex.size() != 16 || *end != '\0') return Status::Corruption("bad cluster label " + hex);
  return v;
}

Status Finalize(FinalizeFlags& f) {
  SHINGLETON_RETURN_IF_ERROR(ApplyClientFlags(&f.client));
  namespace fs = std::filesystem;
  std::error_code ec;
  fs::create_directories(f.out, ec);
  if (ec) return Status::IoError("cannot create " + f.out + ": " + ec.message());
  for (const char* name : {"keep.jsonl", "drop.jsonl", "summary.json"}) {
    if (fs::exists(fs::path(f.out) / name) && !f.replace) {
      return Status::AlreadyExists(f.out + "/" + name + " exists; pass --replace to overwrite");
    }
  }
  SHINGLETON_ASSIGN_OR_RETURN(auto channel, rpc::MakeChannel(f.client.coordinator, f.client.security));
  auto stub = v1::Coordinator::NewStub(channel);
  grpc::ClientContext ctx;
  rpc::PrepareContext(&ctx, f.client.security, f.client.deadline_s);
  v1::FinalizeRequest req;
  req.set_job(f.job);
  auto reader = stub->Finalize(&ctx, req);
  std::vector<ManifestRow> rows;
  std::string summary_json;
  v1::FinalizeResponse chunk;
  while (reader->Read(&chunk)) {
    for (const v1::ManifestLine& line : chunk.lines()) {
      ManifestRow r;
      r.id = line.id();
      r.duplicate_of = line.duplicate_of();
      SHINGLETON_ASSIGN_OR_RETURN(r.cluster, ParseCluster(line.cluster()));
      r.cluster_size = line.cluster_size();
      r.similarity = static_cast<float>(line.similarity());
      if (!line.kept()) r.reason = ParseDropReason(line.reason());
      r.reference = line.reference();
      rows.push_back(std::move(r));
    }
    if (!chunk.summary_json().empty()) summary_json = chunk.summary_json();
  }
  SHINGLETON_RETURN_IF_ERROR(rpc::FromGrpcStatus(reader->Finish(), "finalizing job " + f.job));
  if (summary_json.empty()) return Status::Corruption("the coordinator sent no summary");
  ManifestWriter manifests;
  SHINGLETON_RETURN_IF_ERROR(manifests.Prepare(f.out, rows));
  AtomicFile summary(f.out + "/summary.json");
  SHINGLETON_RETURN_IF_ERROR(summary.Open());
  SHINGLETON_RETURN_IF_ERROR(summary.Append(summary_json + "\n"));
  SHINGLETON_RETURN_IF_ERROR(summary.Finish());
  SHINGLETON_RETURN_IF_ERROR(manifests.Commit());
  SHINGLETON_RETURN_IF_ERROR(summary.Commit());
  uint64_t kept = 0, clusters = 0, largest = 0;
  for (const ManifestRow& r : rows) {
    if (r.kept()) ++kept;
    if (r.kept() && r.cluster_size > 1) ++clusters;
    largest = std::max<uint64_t>(largest, r.cluster_size);
  }
  std::cout << "shingleton finalize: job " << f.job << ": " << WithCommas(rows.size()) << " documents, "
            << WithCommas(kept) << " kept, " << WithCommas(rows.size() - kept) << " dropped, "
            << WithCommas(clusters) << " clusters (2+), largest " << WithCommas(largest) << "\n"
            << "  manifests: " << f.out << "/keep.jsonl, " << f.out << "/drop.jsonl, " << f.out
            << "/summary.json\n";
  return Status::Ok();
}

}  // namespace

void AddFinalizeCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<FinalizeFlags>();
  f->client.deadline_s = 3600;
  CLI::App* cmd = app->add_subcommand(
      "finalize",
      "Resolve a service job (verify every bucket on every shard, union-find, keep policy)\n"
      "and write keep.jsonl, drop.jsonl and summary.json to --out. Idempotent.");
  cmd->add_option("--job", f->job, "Job name")->required();
  cmd->add_option("-o,--out", f->out, "Output directory (created if missing)")->required();
  cmd->add_flag("--replace", f->replace, "Overwrite existing manifests in --out");
  AddClientFlags(cmd, &f->client);
  cmd->callback([f, rc] {
    Status s = Finalize(*f);
    if (!s.ok()) std::cerr << "shingleton finalize: " << s.ToString() << "\n";
    *rc = s.ok() ? 0 : 1;
  });
}

}  // namespace shingleton::cli
