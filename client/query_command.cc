// `shingleton query`: the near-duplicates of a text in a running service's job —
// "is this new page a copy, and of what?" — without changing anything.
#include <cstdio>
#include <fstream>
#include <iostream>
#include <iterator>
#include <memory>

#include "client/commands.h"
#include "client/job_flags.h"
#include "index/json_writer.h"
#include "shingleton/v1/service.grpc.pb.h"

namespace shingleton::cli {
namespace {

struct QueryFlags {
  ClientFlags client;
  std::string job;
  std::string text_file;
  double min_similarity = 0;
  uint32_t limit = 20;
  bool json = false;
};

Status Query(QueryFlags& f) {
  SHINGLETON_RETURN_IF_ERROR(ApplyClientFlags(&f.client));
  std::string text;
  if (f.text_file.empty() || f.text_file == "-") {
    text.assign(std::istreambuf_iterator<char>(std::cin), {});
  } else {
    std::ifstream in(f.text_file, std::ios::binary);
    if (!in) return Status::IoError("cannot read " + f.text_file);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  if (text.empty()) return Status::InvalidArgument("empty text");
  SHINGLETON_ASSIGN_OR_RETURN(auto channel, rpc::MakeChannel(f.client.coordinator, f.client.security));
  auto stub = v1::Coordinator::NewStub(channel);
  grpc::ClientContext ctx;
  rpc::PrepareContext(&ctx, f.client.security, f.client.deadline_s);
  v1::QueryRequest req;
  req.set_job(f.job);
  req.set_text(text);
  req.set_min_similarity(f.min_similarity);
  req.set_limit(f.limit);
  v1::QueryResponse resp;
  SHINGLETON_RETURN_IF_ERROR(rpc::FromGrpcStatus(stub->Query(&ctx, req, &resp), "query"));
  if (f.json) {
    JsonWriter w;
    w.BeginArray();
    for (const auto& c : resp.candidates()) {
      w.BeginObject();
      w.Key("id");
      w.String(c.id());
      w.Key("similarity");
      w.Double(c.similarity(), 4);
      w.Key("url");
      w.String(c.url());
      w.EndObject();
    }
    w.EndArray();
    std::cout << w.str() << "\n";
    return Status::Ok();
  }
  if (resp.candidates().empty()) {
    std::cout << "no near-duplicate in job " << f.job << "\n";
    return Status::Ok();
  }
  std::printf("%-28s %10s  %s\n", "id", "similarity", "url");
  for (const auto& c : resp.candidates()) {
    std::printf("%-28s %10.4f  %s\n", c.id().c_str(), c.similarity(), c.url().c_str());
  }
  return Status::Ok();
}

}  // namespace

void AddQueryCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<QueryFlags>();
  f->client.deadline_s = 30;
  CLI::App* cmd = app->add_subcommand(
      "query", "Find the near-duplicates of a text in a service job (estimated Jaccard), changing nothing");
  cmd->add_option("--job", f->job, "Job name")->required();
  cmd->add_option("--text-file", f->text_file, "File holding the text; - or absent reads standard input");
  cmd->add_option("--min-similarity", f->min_similarity,
                  "Smallest estimated Jaccard reported; 0 means the job's threshold")
      ->capture_default_str();
  cmd->add_option("--limit", f->limit, "Most answers shown")->capture_default_str();
  cmd->add_flag("--json", f->json, "Print a JSON array instead of a table");
  AddClientFlags(cmd, &f->client);
  cmd->callback([f, rc] {
    Status s = Query(*f);
    if (!s.ok()) std::cerr << "shingleton query: " << s.ToString() << "\n";
    *rc = s.ok() ? 0 : 1;
  });
}

}  // namespace shingleton::cli
