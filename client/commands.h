// Subcommands of the `shingleton` binary. Each Add*Command registers its options
// on the CLI11 app and a callback that runs it; the exit code is stored in *rc.
#pragma once

#include <CLI/CLI.hpp>

namespace shingleton::cli {

void AddDedupCommand(CLI::App* app, int* rc);
void AddShardCommand(CLI::App* app, int* rc);
void AddCoordinatorCommand(CLI::App* app, int* rc);
void AddIngestCommand(CLI::App* app, int* rc);
void AddFinalizeCommand(CLI::App* app, int* rc);
void AddHealthCommand(CLI::App* app, int* rc);
void AddQueryCommand(CLI::App* app, int* rc);
void AddFreezeCommand(CLI::App* app, int* rc);
void AddSplitCommand(CLI::App* app, int* rc);

}  // namespace shingleton::cli
