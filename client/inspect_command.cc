// `shingleton inspect`: look at a finished job — what it dropped and why, how big
// and how tight its clusters are, the near-duplicates of a text, two documents
// side by side. Reads the embedded job's index (--index) or a coordinator's job
// (--coordinator, --job); changes nothing. The answers come from index/inspect.h
// and are rendered by index/inspect_report.h, the same code the coordinator runs.
#include <sys/ioctl.h>
#include <unistd.h>

#include <fstream>
#include <iostream>
#include <iterator>
#include <memory>

#include "client/commands.h"
#include "client/job_flags.h"
#include "index/inspect_report.h"
#include "index/normalizer.h"
#include "shingleton/v1/service.grpc.pb.h"

namespace shingleton::cli {
namespace {

struct InspectFlags {
  std::string index;
  ClientFlags client;
  std::string job;
  bool json = false;
  std::string colour = "auto";
  int width = 0;
  bool side_by_side = false;
  std::string text_file;
  std::string arg_a, arg_b;  // positional arguments
  InspectCommand command;
  CLI::App* cmd = nullptr;
};

int TerminalWidth() {
  winsize ws{};
  if (::isatty(STDOUT_FILENO) && ::ioctl(STDOUT_FILENO, TIOCGWINSZ, &ws) == 0 &&
      ws.ws_col >= 40) {
    return ws.ws_col;
  }
  return 100;
}

StatusOr<ReportStyle> StyleOf(const InspectFlags& f) {
  ReportStyle style;
  if (f.colour == "always") {
    style.colour = true;
  } else if (f.colour == "auto") {
    style.colour = ::isatty(STDOUT_FILENO) == 1;
  } else if (f.colour != "never") {
    return Status::InvalidArgument("--colour must be auto, always or never");
  }
  style.width = f.width > 0 ? f.width : TerminalWidth();
  style.side_by_side = f.side_by_side;
  return style;
}

Status ReadQueryText(InspectFlags* f) {
  if (f->command.command != "query") return Status::Ok();
  std::string& text = f->command.text;
  if (f->text_file.empty() || f->text_file == "-") {
    text.assign(std::istreambuf_iterator<char>(std::cin), {});
  } else {
    std::ifstream in(f->text_file, std::ios::binary);
    if (!in) return Status::IoError("cannot read " + f->text_file);
    text.assign(std::istreambuf_iterator<char>(in), {});
  }
  if (text.empty()) return Status::InvalidArgument("empty query text");
  return ValidateUtf8(text).WithContext(f->text_file.empty() ? "standard input"
                                                             : f->text_file);
}

// The coordinator path: Query for `query` (postings live on the shards), Inspect for the
// rest.
StatusOr<std::string> ViaCoordinator(InspectFlags& f, const ReportStyle& style) {
  SHINGLETON_RETURN_IF_ERROR(ApplyClientFlags(&f.client));
  if (f.job.empty()) return Status::InvalidArgument("--coordinator needs --job");
  SHINGLETON_ASSIGN_OR_RETURN(auto channel,
                              rpc::MakeChannel(f.client.coordinator, f.client.security));
  auto stub = v1::Coordinator::NewStub(channel);
  grpc::ClientContext ctx;
  rpc::PrepareContext(&ctx, f.client.security, f.client.deadline_s);
  const InspectCommand& c = f.command;
  if (c.command == "query") {
    v1::QueryRequest req;
    req.set_job(f.job);
    req.set_text(c.text);
    req.set_min_similarity(c.min_similarity);
    req.set_limit(static_cast<uint32_t>(c.limit));
    v1::QueryResponse resp;
    SHINGLETON_RETURN_IF_ERROR(
        rpc::FromGrpcStatus(stub->Query(&ctx, req, &resp), "query"));
    std::vector<TextQueryHit> hits;
    for (const auto& cand : resp.candidates()) {
      hits.push_back({cand.id(), cand.url(), cand.similarity(), 0, ""});
    }
    return f.json ? QueryJson(hits) + "\n" : QueryTable(hits, style);
  }
  v1::InspectRequest req;
  req.set_job(f.job);
  req.set_command(c.command);
  for (const auto& a : c.args) req.add_args(a);
  req.set_min_size(c.clusters.min_size);
  req.set_sort_by_spread(c.clusters.sort_by_spread);
  req.set_spread_below(c.clusters.spread_below);
  req.set_chains_only(c.clusters.chains_only);
  req.set_limit(static_cast<uint32_t>(c.command == "clusters" ? c.clusters.limit
                                                              : c.max_candidates));
  req.set_json(f.json);
  req.set_width(static_cast<uint32_t>(style.width));
  req.set_side_by_side(style.side_by_side);
  v1::InspectResponse resp;
  SHINGLETON_RETURN_IF_ERROR(
      rpc::FromGrpcStatus(stub->Inspect(&ctx, req, &resp), "inspect"));
  return resp.report();
}

int Run(InspectFlags& f) {
  const bool remote = f.cmd->count("--coordinator") > 0;
  for (const std::string* a : {&f.arg_a, &f.arg_b}) {
    if (!a->empty()) f.command.args.push_back(*a);
  }
  Status s = Status::Ok();
  if (remote == !f.index.empty())
    s = Status::InvalidArgument("give exactly one of --index DIR and --coordinator ADDR");
  auto style = StyleOf(f);
  if (s.ok() && !style.ok()) s = style.status();
  if (s.ok()) s = ReadQueryText(&f);
  if (!s.ok()) {
    std::cerr << "shingleton inspect " << f.command.command << ": " << s.message()
              << "\n";
    return 2;
  }
  StatusOr<std::string> out = Status::Internal("unreached");
  if (remote) {
    out = ViaCoordinator(f, style.value());
  } else {
    auto inspector = Inspector::Open(f.index);
    out = inspector.ok()
              ? RunInspection(*inspector.value(), f.command, style.value(), f.json)
              : StatusOr<std::string>(inspector.status());
  }
  if (!out.ok()) {
    std::cerr << "shingleton inspect " << f.command.command << ": "
              << out.status().ToString() << "\n";
    return 1;
  }
  std::cout << out.value();
  return 0;
}

CLI::App* AddInspection(CLI::App* parent, const std::string& name,
                        const std::string& help, int* rc,
                        std::shared_ptr<InspectFlags>* flags) {
  auto f = std::make_shared<InspectFlags>();
  f->command.command = name;
  CLI::App* cmd = parent->add_subcommand(name, help);
  f->cmd = cmd;
  cmd->add_option("--index", f->index,
                  "The index of a finished embedded job (dedup's OUT/index)")
      ->check(CLI::ExistingDirectory);
  AddClientFlags(cmd, &f->client);
  cmd->add_option("--job", f->job, "Job name on the coordinator (with --coordinator)");
  cmd->add_flag("--json", f->json,
                "Print JSON (every field) instead of a table [default: off]");
  cmd->add_option("--colour", f->colour,
                  "Colour the output: auto (only on a terminal), always or never")
      ->capture_default_str();
  cmd->add_option("--width", f->width,
                  "Output width in characters; 0 means the terminal's, or 100")
      ->capture_default_str();
  cmd->callback([f, rc] { *rc = Run(*f); });
  *flags = f;
  return cmd;
}

}  // namespace

void AddInspectCommand(CLI::App* app, int* rc) {
  CLI::App* inspect = app->add_subcommand(
      "inspect",
      "Look at a finished job without changing it: stats, clusters, one cluster, why a "
      "document\n"
      "was kept or dropped, the near-duplicates of a text, two documents compared.\n"
      "Reads --index DIR (an embedded job) or --coordinator ADDR --job NAME (a service "
      "job).");
  inspect->require_subcommand(1);
  std::shared_ptr<InspectFlags> f;

  AddInspection(
      inspect, "stats",
      "Documents, kept, dropped by reason, clusters and their sizes, chained clusters, "
      "index size on disk and per document, the sketch scheme",
      rc, &f);

  CLI::App* c = AddInspection(
      inspect, "clusters",
      "The largest clusters, or the most spread out (--sort spread): spread is "
      "the lowest estimated Jaccard of a member to its kept document",
      rc, &f);
  c->add_option("--min-size", f->command.clusters.min_size, "Smallest cluster listed")
      ->capture_default_str();
  auto* sort = c->add_option_function<std::string>(
      "--sort",
      [f](const std::string& v) { f->command.clusters.sort_by_spread = v == "spread"; },
      "size (largest first) or spread (lowest first) [default: size]");
  sort->check(CLI::IsMember({"size", "spread"}));
  c->add_option("--limit", f->command.clusters.limit, "Most clusters listed; 0 lists all")
      ->capture_default_str();
  c->add_option("--spread-below", f->command.clusters.spread_below,
                "Only clusters whose spread is below this bound [default: 2, no filter]");
  c->add_flag(
      "--chains", f->command.clusters.chains_only,
      "Only chained clusters: spread below the job's threshold (members that are not "
      "near-duplicates of their kept document; see dedup --chain-guard)");

  CLI::App* one = AddInspection(
      inspect, "cluster",
      "One cluster's members: decision, estimated Jaccard to the kept document, "
      "exact Jaccard when the texts are stored (dedup --store-text), bytes, url",
      rc, &f);
  one->add_option("ID", f->arg_a,
                  "A member's document id, or the cluster label (16 hex digits)")
      ->required();

  CLI::App* ex = AddInspection(
      inspect, "explain",
      "Why a document was kept or dropped: duplicate_of and reason, every verified "
      "edge with its estimated Jaccard and shared bands, candidates that shared a "
      "bucket but fell below the threshold, and the chain of edges to the kept "
      "document",
      rc, &f);
  ex->add_option("DOC", f->arg_a, "Document id")->required();
  ex->add_option("--candidates", f->command.max_candidates,
                 "Most rejected candidates listed")
      ->capture_default_str();

  CLI::App* q = AddInspection(
      inspect, "query",
      "The near-duplicates of any text in the index, with estimated Jaccard; "
      "changes nothing",
      rc, &f);
  q->add_option("--text-file", f->text_file,
                "File holding the text; - or absent reads standard input");
  q->add_option("--min-similarity", f->command.min_similarity,
                "Smallest estimated Jaccard reported; 0 means the job's threshold")
      ->capture_default_str();
  q->add_option("--limit", f->command.limit, "Most answers shown; 0 shows all")
      ->capture_default_str();

  CLI::App* d = AddInspection(
      inspect, "diff",
      "Two documents' normalised texts with the shingles they share marked, "
      "shingle counts and Jaccard (exact with dedup --store-text, else of the "
      "excerpts)",
      rc, &f);
  d->add_option("A", f->arg_a, "First document id")->required();
  d->add_option("B", f->arg_b, "Second document id")->required();
  d->add_flag("--side-by-side", f->side_by_side,
              "Two columns instead of one text after the other [default: off]");
}

}  // namespace shingleton::cli
