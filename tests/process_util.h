// Real processes for end-to-end tests: start the `shingleton` binary with
// arguments, wait for its port file, stop it with SIGTERM and collect its exit
// code, all bounded in time. Servers only ever listen on 127.0.0.1.
#pragma once

#include <sys/types.h>

#include <string>
#include <vector>

namespace shingleton::testing {

std::string ShingletonBinary();

class ChildProcess {
 public:
  ChildProcess() = default;
  ~ChildProcess();  // SIGKILLs a process still running
  ChildProcess(const ChildProcess&) = delete;
  ChildProcess& operator=(const ChildProcess&) = delete;

  // Starts `binary args...` with stdout and stderr appended to `log_path`.
  bool Start(const std::vector<std::string>& args, const std::string& log_path);
  // Sends SIGTERM and waits up to `timeout_s`; returns the exit code, or -1 on
  // timeout (then SIGKILLs) or death by signal.
  int Terminate(double timeout_s = 20);
  // Waits up to `timeout_s` for the process to exit; returns the exit code or -1.
  int Wait(double timeout_s);
  void Kill();
  bool running() const { return pid_ > 0; }

 private:
  pid_t pid_ = -1;
};

// Waits up to `timeout_s` for a port file and returns its "host:port" line, or "".
std::string WaitForPortFile(const std::string& path, double timeout_s = 20);

// Runs the binary to completion (bounded) and returns exit code and output.
struct RunResult {
  int exit_code = -1;
  std::string output;
};
RunResult RunShingleton(const std::vector<std::string>& args, double timeout_s = 120);

}  // namespace shingleton::testing
