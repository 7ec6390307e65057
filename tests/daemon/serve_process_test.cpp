// `ampledger serve` as a real process: start it in a temporary folder, send it datagrams,
// stop it with SIGTERM, and check it exits 0 with every acknowledged reading stored.
#include <doctest/doctest.h>
#include <fcntl.h>
#include <httplib.h>
#include <netinet/in.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <thread>

#include "config/wall_clock.h"
#include "daemon/ingest/node_client.h"
#include "test_util.h"

extern char** environ;

namespace ampledger {
namespace {

// A port the kernel just handed out and released; good enough for a test on loopback.
int FreePort(int type) {
  int fd = ::socket(AF_INET, type, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  ::bind(fd, reinterpret_cast<sockaddr*>(&address), sizeof address);
  socklen_t length = sizeof address;
  ::getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length);
  ::close(fd);
  return ntohs(address.sin_port);
}

pid_t Spawn(const std::vector<std::string>& arguments, const std::string& log_path) {
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, STDERR_FILENO, log_path.c_str(),
                                   O_WRONLY | O_CREAT | O_TRUNC, 0644);
  std::vector<char*> argv;
  for (const std::string& argument : arguments) argv.push_back(const_cast<char*>(argument.c_str()));
  argv.push_back(nullptr);
  pid_t pid = -1;
  REQUIRE(posix_spawn(&pid, argv[0], &actions, nullptr, argv.data(), environ) == 0);
  posix_spawn_file_actions_destroy(&actions);
  return pid;
}

int WaitExit(pid_t pid) {
  for (int i = 0; i < 200; ++i) {  // at most 20 s
    int status = 0;
    if (::waitpid(pid, &status, WNOHANG) == pid) return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    std::this_thread::sleep_for(std::chrono::milliseconds(100));
  }
  ::kill(pid, SIGKILL);
  ::waitpid(pid, nullptr, 0);
  return -2;
}

TEST_SUITE("daemon") {
  TEST_CASE("ampledger serve stops on SIGTERM with exit 0 and keeps every acknowledged reading") {
    testing::TempDir dir;
    const int udp_port = FreePort(SOCK_DGRAM);
    const int http_port = FreePort(SOCK_STREAM);
    const std::string key(32, '\x5a');
    testing::WriteFile(dir.File("site.toml"), R"toml(
[site]
name = "Process test"
time_zone = "Europe/Berlin"
nominal_volts = [230]
currency = "EUR"

[[node]]
id = "probe"
key = "5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a5a"
[[node.channel]]
id = "ct1"

[[circuit]]
id = "kettle"
channels = ["probe/ct1"]

[storage]
path = "site.db"

[ingest]
listen = "127.0.0.1:)toml" + std::to_string(udp_port) + R"toml("

[http]
listen = "127.0.0.1:)toml" + std::to_string(http_port) + R"toml("
)toml");
    pid_t pid = Spawn({testing::AmpledgerBinary(), "serve", "--config", dir.File("site.toml")},
                      dir.File("serve.log"));

    httplib::Client api("127.0.0.1", http_port);
    bool healthy = false;
    for (int i = 0; i < 100 && !healthy; ++i) {
      auto answer = api.Get("/v1/health");
      healthy = answer && answer->status == 200;
      if (!healthy) std::this_thread::sleep_for(std::chrono::milliseconds(100));
    }
    REQUIRE_MESSAGE(healthy, testing::ReadFile(dir.File("serve.log")));

    NodeClientOptions options;
    options.node = "probe";
    options.key = key;
    auto client = NodeClient::Open("127.0.0.1:" + std::to_string(udp_port), options);
    REQUIRE(client.ok());
    const UnixMs now = WallClockMs();
    constexpr int kPacks = 200;
    for (int i = 0; i < kPacks; ++i) {
      ChannelSample sample;
      sample.channel = "ct1";
      sample.end_ms = now - (kPacks - i) * 1000;
      sample.duration_ms = 1000;
      sample.amps = 8.7;
      REQUIRE((*client)->Send(NodePack{"probe", 1, static_cast<std::uint32_t>(i + 1), 1000, {sample}})
                  .ok());
    }
    for (int round = 0; round < 100 && (*client)->unacked() > 0; ++round) {
      (*client)->PollAcks(100);
      (*client)->ResendDue(64);
    }
    const std::uint64_t acknowledged = (*client)->acked();
    CHECK(acknowledged == kPacks);

    REQUIRE(::kill(pid, SIGTERM) == 0);
    CHECK(WaitExit(pid) == 0);
    std::string log = testing::ReadFile(dir.File("serve.log"));
    CHECK(log.find("stopped cleanly") != std::string::npos);
    CHECK(testing::QueryInt(dir.File("site.db"), "SELECT count(*) FROM reading") ==
          static_cast<std::int64_t>(acknowledged));
  }

  TEST_CASE("ampledger serve refuses a bad config with the file, line and key, exit 2") {
    testing::TempDir dir;
    testing::WriteFile(dir.File("bad.toml"), "[site]\nname = \"x\"\ntime_zone = \"Mars/Olympus\"\n");
    pid_t pid = Spawn({testing::AmpledgerBinary(), "serve", "--config", dir.File("bad.toml")},
                      dir.File("serve.log"));
    CHECK(WaitExit(pid) == 2);
    std::string log = testing::ReadFile(dir.File("serve.log"));
    CHECK(log.find(dir.File("bad.toml") + ":3: site.time_zone:") != std::string::npos);
  }
}

}  // namespace
}  // namespace ampledger
