// RunServer: the life of one gRPC server process.
//
// Builds the server with the given services plus the standard health service
// (grpc.health.v1, SERVING once started) and server reflection; applies message
// limits and keepalive; writes the bound address to a port file (for port 0);
// then waits for SIGTERM or SIGINT and drains: health NOT_SERVING, stop accepting,
// let in-flight calls finish (up to `drain_seconds`), run `on_drained` (flush
// stores), return OK — the process then exits 0.
//
// Thread safety: call once, from main, before starting other threads (it blocks
// SIGTERM and SIGINT so that gRPC's threads inherit the mask).
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "server/grpc_common.h"

namespace shingleton::rpc {

struct ServerOptions {
  std::string listen;       // host:port; port 0 picks a free port
  std::string port_file;    // when set, "host:port" is written here once serving
  ServerSecurity security;
  int max_message_mb = kDefaultMaxMessageMb;
  double drain_seconds = 30;
  std::string name;         // for log lines, e.g. "shard"
};

Status RunServer(const ServerOptions& options, const std::vector<grpc::Service*>& services,
                 const std::function<void()>& on_drained);

// Blocks SIGTERM and SIGINT in the calling thread (and threads it starts later).
void BlockTerminationSignals();

}  // namespace shingleton::rpc
