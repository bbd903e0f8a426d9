// shingleton: near-duplicate detection for web-crawl corpora.
#include <CLI/CLI.hpp>

#include "client/commands.h"

int main(int argc, char** argv) {
  CLI::App app{
      "shingleton: find and remove near-duplicate documents in text corpora.\n"
      "MinHash signatures, a banded LSH index in RocksDB, verified candidates,\n"
      "union-find clusters and keep/drop manifests."};
  app.set_version_flag("--version", "shingleton 0.1.0");
  app.require_subcommand(1);
  int rc = 0;
  shingleton::cli::AddDedupCommand(&app, &rc);
  shingleton::cli::AddFreezeCommand(&app, &rc);
  shingleton::cli::AddSplitCommand(&app, &rc);
  shingleton::cli::AddShardCommand(&app, &rc);
  shingleton::cli::AddCoordinatorCommand(&app, &rc);
  shingleton::cli::AddIngestCommand(&app, &rc);
  shingleton::cli::AddFinalizeCommand(&app, &rc);
  shingleton::cli::AddQueryCommand(&app, &rc);
  shingleton::cli::AddHealthCommand(&app, &rc);
  CLI11_PARSE(app, argc, argv);
  return rc;
}
