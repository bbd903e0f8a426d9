// `shingleton health`: asks a server's standard health service (grpc.health.v1)
// whether it is serving. Exit 0 when SERVING, 1 otherwise — usable from scripts,
// deploy/local-cluster.sh and exec probes.
#include <iostream>
#include <memory>

#include "client/commands.h"
#include "client/job_flags.h"
#include "grpc/health/v1/health.grpc.pb.h"

namespace shingleton::cli {
namespace {

struct HealthFlags {
  ClientFlags client;
  std::string service;
  bool quiet = false;
};

int RunHealth(HealthFlags& f) {
  Status s = ApplyClientFlags(&f.client);
  if (!s.ok()) {
    std::cerr << "shingleton health: " << s.message() << "\n";
    return 2;
  }
  auto channel = rpc::MakeChannel(f.client.coordinator, f.client.security);
  if (!channel.ok()) {
    std::cerr << "shingleton health: " << channel.status().message() << "\n";
    return 2;
  }
  auto stub = grpc::health::v1::Health::NewStub(channel.value());
  grpc::ClientContext ctx;
  rpc::PrepareContext(&ctx, f.client.security, f.client.deadline_s);
  grpc::health::v1::HealthCheckRequest req;
  req.set_service(f.service);
  grpc::health::v1::HealthCheckResponse resp;
  grpc::Status st = stub->Check(&ctx, req, &resp);
  if (!st.ok()) {
    if (!f.quiet) std::cerr << f.client.coordinator << ": " << st.error_message() << "\n";
    return 1;
  }
  const bool serving = resp.status() == grpc::health::v1::HealthCheckResponse::SERVING;
  if (!f.quiet) {
    std::cout << f.client.coordinator << ": "
              << grpc::health::v1::HealthCheckResponse::ServingStatus_Name(resp.status()) << "\n";
  }
  return serving ? 0 : 1;
}

}  // namespace

void AddHealthCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<HealthFlags>();
  f->client.deadline_s = 5;
  CLI::App* cmd = app->add_subcommand(
      "health", "Check a shard or coordinator with the standard gRPC health service (exit 0 if SERVING)");
  AddClientFlags(cmd, &f->client);
  cmd->get_option("--coordinator")->description("Server address (host:port), shard or coordinator");
  cmd->add_option("--service", f->service, "Service name to ask about; empty means the whole server");
  cmd->add_flag("-q,--quiet", f->quiet, "Print nothing; only the exit code tells");
  cmd->callback([f, rc] { *rc = RunHealth(*f); });
}

}  // namespace shingleton::cli
