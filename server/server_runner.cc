#include "server/server_runner.h"

#include <grpcpp/ext/proto_server_reflection_plugin.h>
#include <grpcpp/health_check_service_interface.h>
#include <signal.h>
#include <spdlog/spdlog.h>

#include "index/atomic_file.h"

namespace shingleton::rpc {

void BlockTerminationSignals() {
  sigset_t set;
  sigemptyset(&set);
  sigaddset(&set, SIGTERM);
  sigaddset(&set, SIGINT);
  pthread_sigmask(SIG_BLOCK, &set, nullptr);
}

Status RunServer(const ServerOptions& o, const std::vector<grpc::Service*>& services,
                 const std::function<void()>& on_drained) {
  BlockTerminationSignals();
  SHINGLETON_ASSIGN_OR_RETURN(auto creds, MakeServerCredentials(o.security, o.listen));
  grpc::EnableDefaultHealthCheckService(true);
  grpc::reflection::InitProtoReflectionServerBuilderPlugin();
  grpc::ServerBuilder builder;
  int port = 0;
  builder.AddListeningPort(o.listen, creds, &port);
  builder.SetMaxReceiveMessageSize(o.max_message_mb << 20);
  builder.SetMaxSendMessageSize(o.max_message_mb << 20);
  builder.AddChannelArgument(GRPC_ARG_KEEPALIVE_TIME_MS, 60000);
  builder.AddChannelArgument(GRPC_ARG_KEEPALIVE_TIMEOUT_MS, 20000);
  builder.AddChannelArgument(GRPC_ARG_HTTP2_MIN_RECV_PING_INTERVAL_WITHOUT_DATA_MS, 10000);
  for (grpc::Service* s : services) builder.RegisterService(s);
  std::unique_ptr<grpc::Server> server = builder.BuildAndStart();
  if (!server || port == 0) return Status::IoError("cannot listen on " + o.listen);
  const std::string host = o.listen.substr(0, o.listen.rfind(':'));
  const std::string bound = host + ":" + std::to_string(port);
  server->GetHealthCheckService()->SetServingStatus(true);
  if (!o.port_file.empty()) SHINGLETON_RETURN_IF_ERROR(WriteFileAtomically(o.port_file, bound + "\n"));
  spdlog::info("{} serving on {}", o.name, bound);

  sigset_t set;
  sigemptyset(&set);
  sigaddset(&set, SIGTERM);
  sigaddset(&set, SIGINT);
  int sig = 0;
  sigwait(&set, &sig);
  spdlog::info("{}: signal {} received, draining", o.name, sig);
  server->GetHealthCheckService()->SetServingStatus(false);
  server->Shutdown(std::chrono::system_clock::now() +
                   std::chrono::milliseconds(static_cast<int64_t>(o.drain_seconds * 1000)));
  server->Wait();
  if (on_drained) on_drained();
  spdlog::info("{}: stopped", o.name);
  return Status::Ok();
}

}  // namespace shingleton::rpc
