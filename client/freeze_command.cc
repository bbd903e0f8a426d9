// `shingleton freeze`: turns a finished job into a frozen reference generation.
#include <iostream>
#include <memory>

#include "client/commands.h"
#include "client/progress.h"
#include "index/reference_set.h"

namespace shingleton::cli {
namespace {

struct FreezeFlags {
  std::string from;
  std::string index;
  FreezeOptions options;
};

Status Freeze(FreezeFlags& f) {
  f.options.index_path = f.index.empty() ? f.from + "/index" : f.index;
  SHINGLETON_ASSIGN_OR_RETURN(GenerationRecord rec, FreezeGeneration(f.options));
  std::cout << "shingleton freeze: generation " << rec.name << ": " << WithCommas(rec.documents)
            << " documents -> " << f.options.out_dir << "\n"
            << "  scheme:   " << rec.scheme << "\n"
            << "  checksum: " << rec.checksum << " (XXH3-128 of " << f.options.out_dir << "/db)\n";
  return Status::Ok();
}

}  // namespace

void AddFreezeCommand(CLI::App* app, int* rc) {
  auto f = std::make_shared<FreezeFlags>();
  CLI::App* cmd = app->add_subcommand(
      "freeze",
      "Turn a finished dedup job into a frozen reference generation: by default only its\n"
      "kept documents, as a compact read-only RocksDB database with a generation record\n"
      "(name, scheme, documents, creation time, checksum). Later jobs use it with\n"
      "`dedup --reference`.");
  cmd->add_option("--from", f->from, "The finished job's output directory (its --out)")->required();
  cmd->add_option("--index", f->index, "The job's index, if not FROM/index");
  cmd->add_option("--to", f->options.out_dir, "Directory of the new generation (must not exist)")
      ->required();
  cmd->add_option("--name", f->options.name, "Generation name [default: the --to directory's name]");
  cmd->add_flag("--all", f->options.all_documents, "Include the dropped documents too");
  cmd->callback([f, rc] {
    Status s = Freeze(*f);
    if (!s.ok()) std::cerr << "shingleton freeze: " << s.ToString() << "\n";
    *rc = s.ok() ? 0 : 1;
  });
}

}  // namespace shingleton::cli
