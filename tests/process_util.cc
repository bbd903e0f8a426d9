#include "tests/process_util.h"

#include <fcntl.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <thread>

#include "tests/test_util.h"

namespace shingleton::testing {
namespace {

using Clock = std::chrono::steady_clock;

int WaitPid(pid_t* pid, double timeout_s) {
  const auto deadline = Clock::now() + std::chrono::milliseconds(static_cast<int64_t>(timeout_s * 1000));
  while (Clock::now() < deadline) {
    int status = 0;
    pid_t r = ::waitpid(*pid, &status, WNOHANG);
    if (r == *pid) {
      *pid = -1;
      return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
  }
  return -2;  // still running
}

}  // namespace

std::string ShingletonBinary() { return std::string(SHINGLETON_BINARY_DIR) + "/bin/shingleton"; }

ChildProcess::~ChildProcess() { Kill(); }

bool ChildProcess::Start(const std::vector<std::string>& args, const std::string& log_path) {
  const std::string binary = ShingletonBinary();
  std::vector<std::string> argv_s = {binary};
  argv_s.insert(argv_s.end(), args.begin(), args.end());
  pid_ = ::fork();
  if (pid_ < 0) return false;
  if (pid_ == 0) {
    int fd = ::open(log_path.c_str(), O_WRONLY | O_CREAT | O_APPEND, 0644);
    if (fd >= 0) {
      ::dup2(fd, 1);
      ::dup2(fd, 2);
    }
    std::vector<char*> argv;
    for (auto& a : argv_s) argv.push_back(a.data());
    argv.push_back(nullptr);
    ::execv(binary.c_str(), argv.data());
    ::_exit(127);
  }
  return true;
}

int ChildProcess::Wait(double timeout_s) {
  if (pid_ <= 0) return -1;
  int rc = WaitPid(&pid_, timeout_s);
  return rc == -2 ? -1 : rc;
}

int ChildProcess::Terminate(double timeout_s) {
  if (pid_ <= 0) return -1;
  ::kill(pid_, SIGTERM);
  int rc = WaitPid(&pid_, timeout_s);
  if (rc == -2) {
    Kill();
    return -1;
  }
  return rc;
}

void ChildProcess::Kill() {
  if (pid_ <= 0) return;
  ::kill(pid_, SIGKILL);
  int status;
  ::waitpid(pid_, &status, 0);
  pid_ = -1;
}

std::string WaitForPortFile(const std::string& path, double timeout_s) {
  const auto deadline = Clock::now() + std::chrono::milliseconds(static_cast<int64_t>(timeout_s * 1000));
  while (Clock::now() < deadline) {
    std::string text = ReadFile(path);
    if (!text.empty() && text.back() == '\n') return text.substr(0, text.size() - 1);
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
  }
  return "";
}

RunResult RunShingleton(const std::vector<std::string>& args, double timeout_s) {
  TempDir dir;
  ChildProcess p;
  RunResult r;
  if (!p.Start(args, dir.File("out.log"))) return r;
  r.exit_code = p.Wait(timeout_s);
  if (p.running()) p.Kill();
  r.output = ReadFile(dir.File("out.log"));
  return r;
}

}  // namespace shingleton::testing
