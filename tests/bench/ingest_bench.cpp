// tests/bench/ingest_bench.cpp
// Readings/s end to end: a sender process (fork(), so the sender and the daemon do not share
// a heap or a scheduler quantum's worth of locks) sends COSE_Mac0 (HMAC 256/64) SenML CBOR
// packs of 8 channels over UDP on 127.0.0.1 to the real daemon (an in-process Service,
// synchronous=FULL, in a temp folder), keeping a window of unacknowledged packs per node and
// resending (NodeClient). Beside it, in the same run, the bare SQLite insert rate of the
// same number of rows into the same table shape (storage's pragmas, its one prepared INSERT,
// 20,000 rows per transaction). Also the count of acknowledged vs stored readings.
// The sender stands for many nodes, each of which would encode and authenticate its own pack:
// so that one process does not spend more CPU doing that for all of them than the daemon
// spends receiving, it encodes every pack before the clock starts. Each pack is still unique
// (its own seq and times), carries its own COSE_Mac0 tag, and is kept and resent until
// acknowledged (NodeClient::SendEncoded); acknowledgements are verified as a node would.
// Targets (issue 3): >= 200,000 readings/s end to end and >= 0.3 of the bare rate.
// Run on demand:
//   ingest_bench [packs per node, default 25000] [nodes, default 4] [window, default 512]
//                [folder, default the system temp folder]
#include <sqlite3.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "config/config.h"
#include "config/wall_clock.h"
#include "daemon/ingest/node_client.h"
#include "daemon/service.h"
#include "storage/database.h"
#include "storage/reading_table.h"

namespace ampledger {
namespace {

constexpr int kChannels = 8;
constexpr const char* kKeyHex = "5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed5eed";

struct Params {
  int packs_per_node = 25000;
  int nodes = 4;
  std::size_t window = 512;
};

std::string NodeId(int n) { return "bench" + std::to_string(n); }

std::string ConfigToml(const Params& p, const std::string& db_path) {
  std::string toml = R"toml(
[site]
name = "Ingest bench"
time_zone = "UTC"
nominal_volts = [230]
currency = "EUR"
)toml";
  for (int n = 0; n < p.nodes; ++n) {
    toml += "\n[[node]]\nid = \"" + NodeId(n) + "\"\nkey = \"" + kKeyHex + "\"\n";
    for (int c = 1; c <= kChannels; ++c) toml += "[[node.channel]]\nid = \"ct" + std::to_string(c) + "\"\n";
  }
  for (int n = 0; n < p.nodes; ++n) {
    for (int c = 1; c <= kChannels; ++c) {
      toml += "\n[[circuit]]\nid = \"c" + std::to_string(n) + "-" + std::to_string(c) +
              "\"\nchannels = [\"" + NodeId(n) + "/ct" + std::to_string(c) + "\"]\n";
    }
  }
  toml += "\n[storage]\npath = \"" + db_path + "\"\nsynchronous = \"full\"\n"
          "\n[ingest]\nlisten = \"127.0.0.1:0\"\nreceive_buffer_bytes = 8388608\n"
          "\n[http]\nlisten = \"127.0.0.1:0\"\nthreads = 1\n\n[log]\nlevel = \"warn\"\n";
  return toml;
}

std::string Key() {
  std::string key;
  for (int i = 0; i < 32; ++i) key.push_back(static_cast<char>(std::stoi(std::string(kKeyHex + 2 * i, 2), nullptr, 16)));
  return key;
}

// Node n's pack number `seq`: one 1-second interval of 8 channels, current, real power and
// the energy register; times start six days ago so all stay inside the resend horizon.
NodePack MakePack(int n, std::uint32_t seq, UnixMs first_end_ms) {
  NodePack pack{NodeId(n), 1, seq, 1000, {}};
  for (int c = 1; c <= kChannels; ++c) {
    ChannelSample& s = pack.samples.emplace_back();
    s.channel = "ct" + std::to_string(c);
    s.end_ms = first_end_ms + static_cast<UnixMs>(seq) * 1000;
    s.duration_ms = 1000;
    s.real_watts = 100 * c + (seq % 50);
    s.amps = *s.real_watts / 230;
    s.real_register_j = (seq + 1) * (100.0 * c + 25);
  }
  return pack;
}

// CPU seconds (user + system) this process has used so far, all threads.
double CpuSeconds() {
  rusage usage{};
  ::getrusage(RUSAGE_SELF, &usage);
  auto seconds = [](const timeval& t) { return t.tv_sec + t.tv_usec / 1e6; };
  return seconds(usage.ru_utime) + seconds(usage.ru_stime);
}

struct SenderResult {
  double seconds = 0;
  double cpu_seconds = 0;  // of the sender, while the clock ran
  std::uint64_t acked_readings = 0;
  int failed = 0;  // 1 if the sender could not finish
};

// The child: sends every pack of every node, round robin, and waits for all acknowledgements.
SenderResult RunSender(const Params& p, std::uint16_t port, UnixMs first_end_ms) {
  SenderResult result;
  std::vector<std::unique_ptr<NodeClient>> clients;
  for (int n = 0; n < p.nodes; ++n) {
    NodeClientOptions options;
    options.node = NodeId(n);
    options.key = Key();
    options.max_unacked = p.window;
    options.resend_after_ms = 500;
    options.receive_buffer_bytes = 4 << 20;  // a whole window of acknowledgements at once
    auto client = NodeClient::Open("127.0.0.1:" + std::to_string(port), options);
    if (!client.ok()) return SenderResult{0, 0, 0, 1};
    clients.push_back(std::move(*client));
  }
  const std::string key = Key();
  std::vector<std::vector<std::string>> encoded(p.nodes);
  for (int n = 0; n < p.nodes; ++n) {
    encoded[n].reserve(p.packs_per_node);
    for (int seq = 0; seq < p.packs_per_node; ++seq) {
      encoded[n].push_back(EncodePack(MakePack(n, static_cast<std::uint32_t>(seq), first_end_ms),
                                      NodeClientOptions().encoding, key));
    }
  }
  const auto started = std::chrono::steady_clock::now();
  const double cpu_started = CpuSeconds();
  for (int seq = 0; seq < p.packs_per_node; ++seq) {
    for (int n = 0; n < p.nodes; ++n) {
      // Window full: wait for acknowledgements.
      while (!clients[n]->SendEncoded(1, static_cast<std::uint32_t>(seq), encoded[n][seq]).ok()) {
        clients[n]->PollAcks(5);
        clients[n]->ResendDue(64);
      }
      clients[n]->PollAcks(0);
    }
  }
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(60);
  for (auto& client : clients) {
    while (client->unacked() > 0 && std::chrono::steady_clock::now() < deadline) {
      client->PollAcks(20);
      client->ResendDue(256);
    }
    if (client->unacked() > 0) result.failed = 1;
    result.acked_readings += client->acked() * kChannels;
  }
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  result.cpu_seconds = CpuSeconds() - cpu_started;
  return result;
}

std::int64_t CountRows(const std::string& path) {
  sqlite3* db = nullptr;
  std::int64_t count = -1;
  if (sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READONLY, nullptr) == SQLITE_OK) {
    sqlite3_stmt* statement = nullptr;
    if (sqlite3_prepare_v2(db, "SELECT count(*) FROM reading", -1, &statement, nullptr) == SQLITE_OK &&
        sqlite3_step(statement) == SQLITE_ROW) {
      count = sqlite3_column_int64(statement, 0);
    }
    sqlite3_finalize(statement);
  }
  sqlite3_close(db);
  return count;
}

// The bare insert of the same rows: seconds taken, or a negative value on an error.
double RunBare(const Params& p, const std::string& path, UnixMs first_end_ms) {
  StorageConfig storage;
  storage.path = path;
  storage.synchronous = SyncMode::kFull;
  Result<std::unique_ptr<Database>> db = Database::Open(storage);
  if (!db.ok()) return -1;
  Result<Statement> insert = (*db)->Prepare(kInsertReadingSql);
  if (!insert.ok()) return -1;
  constexpr int kRowsPerCommit = 20000;
  int in_transaction = 0;
  const auto started = std::chrono::steady_clock::now();
  for (int seq = 0; seq < p.packs_per_node; ++seq) {
    for (int n = 0; n < p.nodes; ++n) {
      for (int c = 1; c <= kChannels; ++c) {
        if (in_transaction == 0 && !(*db)->Exec("BEGIN IMMEDIATE", "begin").ok()) return -1;
        ChannelReading r;
        r.boot = 1;
        r.end_ms = first_end_ms + static_cast<UnixMs>(seq) * 1000;
        r.duration_ms = 1000;
        r.real_watts = 100 * c + (seq % 50);
        r.apparent_va = r.real_watts;
        r.volts = 230;
        r.amps = r.real_watts / 230;
        r.real_register_j = (seq + 1) * (100.0 * c + 25);
        BindReading(*insert, r, n * kChannels + c);
        if (!insert->Run("insert").ok()) return -1;
        if (++in_transaction == kRowsPerCommit) {
          if (!(*db)->Exec("COMMIT", "commit").ok()) return -1;
          in_transaction = 0;
        }
      }
    }
  }
  if (in_transaction > 0 && !(*db)->Exec("COMMIT", "commit").ok()) return -1;
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
}

bool WriteAll(int fd, const void* data, std::size_t size) {
  return ::write(fd, data, size) == static_cast<ssize_t>(size);
}
bool ReadAll(int fd, void* data, std::size_t size) {
  return ::read(fd, data, size) == static_cast<ssize_t>(size);
}

int Main(int argc, char** argv) {
  Params p;
  if (argc > 1) p.packs_per_node = std::stoi(argv[1]);
  if (argc > 2) p.nodes = std::stoi(argv[2]);
  if (argc > 3) p.window = static_cast<std::size_t>(std::stoul(argv[3]));
  std::filesystem::path folder =
      argc > 4 ? std::filesystem::path(argv[4]) : std::filesystem::temp_directory_path();
  folder /= "ampledger-ingest-bench-" + std::to_string(::getpid());
  std::filesystem::create_directories(folder);
  const std::string daemon_db = (folder / "daemon.db").string();
  const UnixMs first_end_ms = (WallClockMs() / 1000 - 6 * 86400) * 1000;

  // Fork first, while this process has one thread: the child then owns a clean copy.
  int to_child[2], to_parent[2];
  if (::pipe(to_child) != 0 || ::pipe(to_parent) != 0) return 1;
  const pid_t child = ::fork();
  if (child < 0) return 1;
  if (child == 0) {
    std::uint16_t port = 0;
    SenderResult result{0, 0, 0, 1};
    if (ReadAll(to_child[0], &port, sizeof port) && port != 0) result = RunSender(p, port, first_end_ms);
    const bool written = WriteAll(to_parent[1], &result, sizeof result);
    ::_exit(written ? 0 : 1);
  }

  Result<Config> config = ParseConfig(ConfigToml(p, daemon_db), (folder / "bench.toml").string());
  if (!config.ok()) {
    std::fprintf(stderr, "ingest_bench: %s\n", config.status().ToString().c_str());
    return 1;
  }
  SenderResult sent{0, 0, 0, 1};
  double daemon_cpu_seconds = 0;  // all of this process's threads: it only runs the daemon
  {
    Service service(*config);
    const Status started = service.Start();
    const std::uint16_t port = started.ok() ? service.udp_port() : 0;
    if (!WriteAll(to_child[1], &port, sizeof port)) return 1;
    if (!started.ok()) {
      std::fprintf(stderr, "ingest_bench: %s\n", started.ToString().c_str());
      return 1;
    }
    const double cpu_started = CpuSeconds();
    if (!ReadAll(to_parent[0], &sent, sizeof sent)) sent.failed = 1;
    daemon_cpu_seconds = CpuSeconds() - cpu_started;
    service.RequestStop();
    if (Status s = service.Wait(); !s.ok()) {
      std::fprintf(stderr, "ingest_bench: daemon: %s\n", s.ToString().c_str());
      return 1;
    }
  }
  int child_status = 0;
  ::waitpid(child, &child_status, 0);
  const std::int64_t stored = CountRows(daemon_db);
  const double bare_seconds = RunBare(p, (folder / "bare.db").string(), first_end_ms);
  std::filesystem::remove_all(folder);
  if (sent.failed || bare_seconds < 0) {
    std::fprintf(stderr, "ingest_bench: the %s failed\n", sent.failed ? "sender" : "bare insert");
    return 1;
  }

  const double readings = static_cast<double>(p.packs_per_node) * p.nodes * kChannels;
  const double end_to_end = sent.acked_readings / sent.seconds;
  const double bare = readings / bare_seconds;
  const double ratio = end_to_end / bare;
  std::printf("ingest_bench: %d nodes x %d packs of %d channels (i, p, energy register), "
              "COSE_Mac0 HMAC 256/64, window %zu packs per node, sender in a forked process, "
              "synchronous=FULL\n",
              p.nodes, p.packs_per_node, kChannels, p.window);
  std::printf("  end to end      %10.0f readings/s  (%.0f readings in %.2f s)  target >= 200000: %s\n",
              end_to_end, readings, sent.seconds, end_to_end >= 200000 ? "met" : "NOT met");
  std::printf("  bare insert     %10.0f readings/s  (%.2f s)\n", bare, bare_seconds);
  std::printf("  ratio           %10.3f              target >= 0.3: %s\n", ratio,
              ratio >= 0.3 ? "met" : "NOT met");
  // CPU per reading does not depend on what else the machine runs, unlike readings/s.
  std::printf("  CPU per reading %10.2f us daemon (all threads), %.2f us sender; both cores' worth: "
              "%.0f readings/s\n",
              daemon_cpu_seconds / readings * 1e6, sent.cpu_seconds / readings * 1e6,
              2 * readings / (daemon_cpu_seconds + sent.cpu_seconds));
  std::printf("  acknowledged    %10llu readings, stored %lld: %s\n",
              static_cast<unsigned long long>(sent.acked_readings), static_cast<long long>(stored),
              static_cast<std::int64_t>(sent.acked_readings) == stored ? "none lost" : "MISMATCH");
  return static_cast<std::int64_t>(sent.acked_readings) == stored ? 0 : 1;
}

}  // namespace
}  // namespace ampledger

int main(int argc, char** argv) { return ampledger::Main(argc, argv); }
