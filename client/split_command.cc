// `shingleton reference-split`: cuts a frozen generation into one part per shard.
#include <iostream>
#include <memory>

#include "client/commands.h"
#include "client/progress.h"
#include "index/reference_parts.h"

namespace shingleton::cli {
namespace {

struct SplitFlags {
  std::string reference;
  std::string out;
  uint32_t shards = 0;
};

Status Split(const SplitFlags& f) {
  SHINGLETON_ASSIGN_OR_RETURN(std::vector<PartRecord> parts, SplitGeneration(f.reference, f.shards, f.out));
  std::cout << "shingleton reference-split: generation " << parts.front().generation << " -> "
            << parts.size() << " parts in " << f.out << "\n";
  for (const PartRecord& p : parts) {
    std::cout << "  " << PartDirName(p.part, p.parts) << ": " << WithCommas(p.postings) << " postings, "
              << WithCommas(p.signatures) << " signatures, checksum " << p.checksum << "\n";
  }
  std::cout << "Start shard i (its place in the coordinator's --shards list, from 0) with\n"
               "  --reference-part "
            << f.out << "/" << PartDirName(0, f.shards).replace(5, 1, "<i>") << "\n";
  return Status::Ok();
}

}  // namespace

void AddSplitCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<SplitFlags>();
  CLI::App* cmd = app->add_subcommand(
      "reference-split",
      "Cut a frozen reference generation into the parts the shards of a service serve:\n"
      "part i holds the generation's postings of the buckets shard i owns and the\n"
      "signatures of their documents. The generation itself is only read.");
  cmd->add_option("--reference", f->reference, "The frozen generation (made by `shingleton freeze`)")
      ->required()
      ->check(CLI::ExistingDirectory);
  cmd->add_option("--shards", f->shards, "Number of shards of the service (the length of its --shards list)")
      ->required()
      ->check(CLI::Range(1u, 4096u));
  cmd->add_option("--to", f->out, "Directory of the parts (must not exist): part-<i>-of-<N>/ each")
      ->required();
  cmd->callback([f, rc] {
    Status s = Split(*f);
    if (!s.ok()) std::cerr << "shingleton reference-split: " << s.ToString() << "\n";
    *rc = s.ok() ? 0 : 1;
  });
}

}  // namespace shingleton::cli
