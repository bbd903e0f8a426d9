// `shingleton shard` and `shingleton coordinator`: the two server processes. Each is
// RunServer() around one service from server/; main stays tiny.
#include <spdlog/spdlog.h>

#include <iostream>
#include <memory>
#include <sstream>

#include "client/commands.h"
#include "client/job_flags.h"
#include "server/coordinator_service.h"
#include "server/server_runner.h"
#include "server/shard_service.h"

namespace shingleton::cli {
namespace {

struct ShardFlags {
  ServerFlags server;
  std::string db;
  std::vector<std::string> reference_parts;
};

struct CoordinatorFlags {
  ServerFlags server;
  std::string shards;
  std::string state;
  std::string shard_ca;
  std::string shard_cert, shard_key;
  std::vector<std::string> references;
  bool url_revisits = false;
};

int Fail(const char* command, const Status& s) {
  std::cerr << "shingleton " << command << ": " << s.ToString() << "\n";
  return 1;
}

rpc::ServerOptions RunnerOptions(const ServerFlags& f, const char* name) {
  rpc::ServerOptions o;
  o.listen = f.listen;
  o.port_file = f.port_file;
  o.security = f.security;
  o.max_message_mb = f.max_message_mb;
  o.name = name;
  return o;
}

int RunShard(ShardFlags& f) {
  Status s = ApplyServerFlags(&f.server);
  if (!s.ok()) return Fail("shard", s);
  rpc::ShardService service(f.db, f.server.security.token, f.server.listen);
  for (const std::string& part : f.reference_parts) {
    s = service.AddReferencePart(part);
    if (!s.ok()) return Fail("shard", s);
  }
  s = rpc::RunServer(RunnerOptions(f.server, "shard"), {&service}, [&] { service.FlushAll(); });
  return s.ok() ? 0 : Fail("shard", s);
}

std::vector<std::string> SplitList(const std::string& text) {
  std::vector<std::string> out;
  std::stringstream ss(text);
  for (std::string item; std::getline(ss, item, ',');) {
    if (!item.empty()) out.push_back(item);
  }
  return out;
}

int RunCoordinator(CoordinatorFlags& f) {
  Status s = ApplyServerFlags(&f.server);
  if (!s.ok()) return Fail("coordinator", s);
  rpc::CoordinatorOptions o;
  o.state_dir = f.state;
  o.shards = SplitList(f.shards);
  o.token = f.server.security.token;
  o.max_message_mb = f.server.max_message_mb;
  o.shard_security.ca_file = f.shard_ca;
  o.shard_security.cert_file = f.shard_cert;
  o.shard_security.key_file = f.shard_key;
  o.shard_security.token = f.server.security.token;
  o.references = f.references;
  o.url_revisits = f.url_revisits;
  auto service = rpc::CoordinatorService::Create(o);
  if (!service.ok()) return Fail("coordinator", service.status());
  rpc::CoordinatorService* svc = service.value().get();
  s = rpc::RunServer(RunnerOptions(f.server, "coordinator"), {svc}, [svc] { svc->FlushAll(); });
  return s.ok() ? 0 : Fail("coordinator", s);
}

}  // namespace

void AddShardCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<ShardFlags>();
  CLI::App* cmd = app->add_subcommand(
      "shard",
      "Serve one index shard: the postings of the LSH buckets it owns and the signatures of\n"
      "their documents, in its own RocksDB. Stops cleanly on SIGTERM (drains, flushes, exit 0).");
  AddServerFlags(cmd, &f->server, "127.0.0.1:7410");
  cmd->add_option("--db", f->db, "Directory of this shard's RocksDB databases")->required();
  cmd->add_option("--reference-part", f->reference_parts,
                  "Serve this part of a frozen reference generation (a part-<i>-of-<N> directory "
                  "made by `shingleton reference-split`; i must be this shard's place in the "
                  "coordinator's --shards list). Opened read-only, checksum verified at start; "
                  "repeatable, one part per generation [default: none]")
      ->check(CLI::ExistingDirectory);
  cmd->callback([f, rc] { *rc = RunShard(*f); });
}

void AddCoordinatorCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<CoordinatorFlags>();
  CLI::App* cmd = app->add_subcommand(
      "coordinator",
      "Serve the coordinator: jobs, the shard map, document metadata, clusters and manifests.\n"
      "Its state survives restarts. The shard list is the shard map: keep it fixed per job.");
  AddServerFlags(cmd, &f->server, "127.0.0.1:7400");
  cmd->add_option("--shards", f->shards, "Shard addresses in shard-map order, comma-separated")
      ->required();
  cmd->add_option("--state", f->state, "Directory of the coordinator's state")->required();
  cmd->add_option("--shard-ca", f->shard_ca, "PEM CA of the shards' certificates (TLS to shards)");
  cmd->add_option("--shard-cert", f->shard_cert, "PEM client certificate presented to shards");
  cmd->add_option("--shard-key", f->shard_key, "PEM client key presented to shards");
  cmd->add_option("--reference", f->references,
                  "A frozen reference generation (shingleton freeze) every job is deduplicated "
                  "against at finalize; repeatable, earlier ones win ties. The coordinator reads its "
                  "document, URL and content records; its postings and signatures are served by "
                  "the shards (each started with --reference-part for its part of the generation, "
                  "see `shingleton reference-split`)")
      ->check(CLI::ExistingDirectory);
  cmd->add_flag("--url-revisits", f->url_revisits,
                "Drop documents whose normalised URL is in a reference generation (reason \"url\")");
  cmd->callback([f, rc] { *rc = RunCoordinator(*f); });
}

}  // namespace shingleton::cli
