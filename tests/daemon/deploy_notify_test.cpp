// tests/daemon/deploy_notify_test.cpp
// The contract deploy/ampledger.service relies on, kept by the real binary with the packaged
// example config: started the way systemd starts a Type=notify service with WatchdogSec
// (NOTIFY_SOCKET and WATCHDOG_USEC in its environment), `ampledger serve` sends READY=1, then
// WATCHDOG=1 at least every half watchdog period, and on SIGTERM STOPPING=1 and exit code 0.
// Real process, real Unix datagram socket standing in for systemd's, sockets on loopback.
#include <doctest/doctest.h>
#include <fcntl.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <string>
#include <thread>
#include <vector>

#include "test_util.h"

extern char** environ;

namespace ampledger {
namespace {

using Clock = std::chrono::steady_clock;
using testing::AmpledgerBinary;
using testing::ReadFile;
using testing::SourceDir;
using testing::TempDir;
using testing::WriteFile;

// Where systemd's notification socket would be: receives the daemon's sd_notify datagrams.
class NotifySocket {
 public:
  explicit NotifySocket(const std::string& path) {
    fd_ = ::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0);
    sockaddr_un address{};
    address.sun_family = AF_UNIX;
    REQUIRE(path.size() < sizeof address.sun_path);
    std::strncpy(address.sun_path, path.c_str(), sizeof address.sun_path - 1);
    REQUIRE(::bind(fd_, reinterpret_cast<sockaddr*>(&address), sizeof address) == 0);
    timeval timeout{0, 100'000};
    ::setsockopt(fd_, SOL_SOCKET, SO_RCVTIMEO, &timeout, sizeof timeout);
  }
  ~NotifySocket() { ::close(fd_); }

  // The next message, or "" after 100 ms without one.
  std::string Receive() {
    char buffer[512];
    ssize_t length = ::recv(fd_, buffer, sizeof buffer, 0);
    return length > 0 ? std::string(buffer, length) : std::string();
  }

  // Waits up to `limit` for a message equal to `wanted`; counts WATCHDOG=1 seen meanwhile.
  bool WaitFor(const std::string& wanted, std::chrono::milliseconds limit, int* watchdogs) {
    Clock::time_point end = Clock::now() + limit;
    while (Clock::now() < end) {
      std::string message = Receive();
      if (message == "WATCHDOG=1" && watchdogs != nullptr) ++*watchdogs;
      if (message == wanted) return true;
    }
    return false;
  }

 private:
  int fd_ = -1;
};

std::string Replace(std::string text, const std::string& from, const std::string& to) {
  size_t at = text.find(from);
  REQUIRE_MESSAGE(at != std::string::npos, from);
  return text.replace(at, from.size(), to);
}

std::string Output(const std::string& command) {
  std::string output;
  FILE* pipe = ::popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  char buffer[4096];
  size_t count;
  while ((count = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) output.append(buffer, count);
  REQUIRE(::pclose(pipe) == 0);
  return output;
}

TEST_SUITE("daemon") {
  TEST_CASE("deploy: serve with the packaged config speaks sd_notify as the unit expects") {
    TempDir dir;
    // The packaged config, with the database and both listeners moved into the test's reach.
    std::string config = dir.File("ampledger.toml");
    std::string text = ReadFile(SourceDir() / "deploy" / "ampledger.toml");
    text = Replace(text, "path = \"/var/lib/ampledger/ampledger.db\"",
                   "path = \"" + dir.File("ampledger.db") + "\"");
    text = Replace(text, "listen = \"0.0.0.0:4717\"", "listen = \"127.0.0.1:0\"");
    text = Replace(text, "listen = \"127.0.0.1:8417\"", "listen = \"127.0.0.1:0\"");
    WriteFile(config, text);
    // The guide's steps: add a node, paste its snippet, add a circuit.
    std::string added =
        Output(AmpledgerBinary() + " node add --config " + config + " --id porch --channels 2");
    WriteFile(config, text + "\n" + added.substr(added.find("[[node]]")) +
                          "\n[[circuit]]\nid = \"porch-lights\"\nchannels = [\"porch/ct1\"]\n");

    NotifySocket systemd(dir.File("notify"));
    std::string notify_env = "NOTIFY_SOCKET=" + dir.File("notify");
    std::string watchdog_env = "WATCHDOG_USEC=400000";  // pings expected every 200 ms
    std::vector<char*> env;
    for (char** variable = environ; *variable != nullptr; ++variable) {
      if (std::strncmp(*variable, "NOTIFY_SOCKET=", 14) != 0 &&
          std::strncmp(*variable, "WATCHDOG_", 9) != 0) {
        env.push_back(*variable);
      }
    }
    env.push_back(notify_env.data());
    env.push_back(watchdog_env.data());
    env.push_back(nullptr);

    std::string binary = AmpledgerBinary();
    std::string log = dir.File("serve.log");
    std::vector<std::string> arguments = {binary, "serve", "--config", config};
    std::vector<char*> argv;
    for (std::string& argument : arguments) argv.push_back(argument.data());
    argv.push_back(nullptr);
    posix_spawn_file_actions_t actions;
    posix_spawn_file_actions_init(&actions);
    posix_spawn_file_actions_addopen(&actions, STDERR_FILENO, log.c_str(),
                                     O_WRONLY | O_CREAT | O_TRUNC, 0644);
    pid_t pid = -1;
    REQUIRE(posix_spawn(&pid, binary.c_str(), &actions, nullptr, argv.data(), env.data()) == 0);
    posix_spawn_file_actions_destroy(&actions);

    bool ready = systemd.WaitFor("READY=1", std::chrono::seconds(15), nullptr);
    int watchdogs = 0;
    if (ready) {
      // In 1.5 s at one ping per 200 ms: about 7; at least 4 even on a busy machine.
      systemd.WaitFor("never sent", std::chrono::milliseconds(1500), &watchdogs);
    }
    ::kill(pid, SIGTERM);
    bool stopping = systemd.WaitFor("STOPPING=1", std::chrono::seconds(20), nullptr);
    int status = 0;
    REQUIRE(::waitpid(pid, &status, 0) == pid);

    INFO("serve log:\n" << ReadFile(log));
    CHECK(ready);
    CHECK(watchdogs >= 4);
    CHECK(stopping);
    CHECK(WIFEXITED(status));
    CHECK(WEXITSTATUS(status) == 0);
    CHECK(std::filesystem::exists(dir.File("ampledger.db")));
  }
}

}  // namespace
}  // namespace ampledger
