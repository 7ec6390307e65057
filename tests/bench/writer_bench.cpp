// tests/bench/writer_bench.cpp
// The writer's cost beside a bare SQLite insert of the same rows, in the same run:
//  1. home-like load: 50 circuits, one reading per second each, one commit per second
//     (simulated time, so an hour takes seconds): bytes written per stored reading, rollups
//     included (write_bytes of /proc/self/io, after a final checkpoint so nothing is left in
//     the WAL uncounted);
//  2. full speed: readings/s through ReadingWriter vs one prepared INSERT in big
//     transactions, same pragmas, same table.
// Targets (the foundation issue): <= 600 bytes per stored reading; >= 0.5 of the bare rate.
// Run on demand, on the disk the daemon will use:
//   writer_bench [folder, default the system temp folder] [simulated seconds, default 3600]
#include <chrono>
#include <cstdio>
#include <deque>
#include <filesystem>
#include <fstream>
#include <future>
#include <random>
#include <string>
#include <vector>

#include "storage/database.h"
#include "storage/reading_table.h"
#include "storage/reading_writer.h"
#include "storage/series.h"

namespace ampledger {
namespace {

constexpr int kCircuits = 50;
constexpr UnixMs kStart = 1'772'953'200'000;  // 2026-03-08T07:00:00Z

std::int64_t WriteBytes() {
  std::ifstream io("/proc/self/io");
  std::string key;
  std::int64_t value = 0;
  while (io >> key >> value) {
    if (key == "write_bytes:") return value;
  }
  return -1;
}

double Seconds(std::chrono::steady_clock::time_point since) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - since).count();
}

Config BenchConfig(const std::string& path) {
  Config config;
  config.storage.path = path;
  // Five nodes of ten channels, each channel one circuit.
  for (int n = 0; n < kCircuits / 10; ++n) {
    NodeConfig& node = config.nodes.emplace_back();
    node.id = "node" + std::to_string(n);
    for (int c = 0; c < 10; ++c) {
      node.channels.emplace_back().id = "ct" + std::to_string(c);
      CircuitConfig& circuit = config.circuits.emplace_back();
      circuit.id = "circuit-" + std::to_string(n) + "-" + std::to_string(c);
      circuit.channels = {{node.id, node.channels.back().id}};
    }
  }
  return config;
}

// The readings of second `second` (1 s interval, a cumulative register per channel).
std::vector<ChannelReading> Second(std::int64_t second, std::vector<double>& registers,
                                   std::mt19937& random) {
  std::uniform_real_distribution<double> watts(0, 2000);
  std::vector<ChannelReading> out(kCircuits);
  for (int c = 0; c < kCircuits; ++c) {
    ChannelReading& r = out[c];
    r.channel = c;
    r.boot = 1;
    r.end_ms = kStart + second * 1000;
    r.duration_ms = 1000;
    r.real_watts = watts(random);
    r.apparent_va = r.real_watts * 1.08;
    r.volts = 120;
    r.amps = r.apparent_va / 120;
    r.frequency_hz = 60.0;
    registers[c] += r.real_watts;
    r.real_register_j = registers[c];
    r.apparent_register_j = registers[c] * 1.08;
  }
  return out;
}

Status Checkpoint(const Database& db) {
  return db.Exec("PRAGMA wal_checkpoint(TRUNCATE)", "checkpoint");
}

struct Figures {
  double seconds = 0;
  std::int64_t rows = 0;
  std::int64_t bytes = 0;
};

// The writer over `seconds` simulated seconds: one commit per second, or at full speed.
Result<Figures> RunWriter(const std::string& path, std::int64_t seconds, bool full_speed) {
  Config config = BenchConfig(path);
  // Home-like: each second's readings are one batch committed at once (one commit per
  // second); the writer's batch_millis wait would only stretch the simulated second.
  if (!full_speed) config.storage.batch_millis = 0;
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  if (!db.ok()) return db.status();
  Result<SeriesMap> series = RegisterSeries(**db, config);
  if (!series.ok()) return series.status();
  std::mt19937 random(1);
  std::vector<double> registers(kCircuits, 0);
  std::int64_t bytes_before = WriteBytes();
  auto started = std::chrono::steady_clock::now();
  {
    Result<std::unique_ptr<ReadingWriter>> writer =
        ReadingWriter::Start(config, db->get(), series.value());
    if (!writer.ok()) return writer.status();
    std::deque<std::future<Status>> pending;
    for (std::int64_t s = 1; s <= seconds; ++s) {
      auto promise = std::make_shared<std::promise<Status>>();
      pending.push_back(promise->get_future());
      (*writer)->Submit({Second(s, registers, random), {}},
                        [promise](const Status& status) { promise->set_value(status); });
      // Home-like: wait for each second's commit, as ingest acknowledges each datagram.
      // Full speed: keep up to 40,000 readings in flight.
      while (!pending.empty() && (!full_speed || pending.size() >= 800)) {
        if (Status status = pending.front().get(); !status.ok()) return status;
        pending.pop_front();
      }
    }
    for (auto& p : pending) {
      if (Status status = p.get(); !status.ok()) return status;
    }
    (*writer)->Stop();
  }
  if (Status s = Checkpoint(**db); !s.ok()) return s;
  return Figures{Seconds(started), seconds * kCircuits, WriteBytes() - bytes_before};
}

// The bare insert: same pragmas and table, one prepared INSERT, `per_commit` seconds of
// readings per transaction.
Result<Figures> RunBare(const std::string& path, std::int64_t seconds, std::int64_t per_commit) {
  StorageConfig storage;
  storage.path = path;
  Result<std::unique_ptr<Database>> db = Database::Open(storage);
  if (!db.ok()) return db.status();
  Result<Statement> insert = (*db)->Prepare(kInsertReadingSql);
  if (!insert.ok()) return insert.status();
  std::mt19937 random(1);
  std::vector<double> registers(kCircuits, 0);
  std::int64_t bytes_before = WriteBytes();
  auto started = std::chrono::steady_clock::now();
  for (std::int64_t s = 1; s <= seconds; s += per_commit) {
    if (Status st = (*db)->Exec("BEGIN IMMEDIATE", "begin"); !st.ok()) return st;
    for (std::int64_t t = s; t < s + per_commit && t <= seconds; ++t) {
      for (const ChannelReading& r : Second(t, registers, random)) {
        BindReading(*insert, r, r.channel + 1);
        if (Status st = insert->Run("insert"); !st.ok()) return st;
      }
    }
    if (Status st = (*db)->Exec("COMMIT", "commit"); !st.ok()) return st;
  }
  if (Status s = Checkpoint(**db); !s.ok()) return s;
  return Figures{Seconds(started), seconds * kCircuits, WriteBytes() - bytes_before};
}

// Time spent making the rows themselves, subtracted from neither side: printed so the
// reader can judge.
double GenerationSeconds(std::int64_t seconds) {
  std::mt19937 random(1);
  std::vector<double> registers(kCircuits, 0);
  auto started = std::chrono::steady_clock::now();
  std::size_t sink = 0;
  for (std::int64_t s = 1; s <= seconds; ++s) sink += Second(s, registers, random).size();
  return sink > 0 ? Seconds(started) : 0;
}

int Main(int argc, char** argv) {
  std::filesystem::path folder =
      argc > 1 ? std::filesystem::path(argv[1]) : std::filesystem::temp_directory_path();
  std::int64_t home_seconds = argc > 2 ? std::stoll(argv[2]) : 3600;
  std::int64_t full_seconds = 20'000;  // 1,000,000 readings
  folder /= "ampledger-writer-bench-" + std::to_string(::getpid());
  std::filesystem::create_directories(folder);
  auto path = [&](const char* name) { return (folder / name).string(); };

  std::printf("writer_bench: %d circuits, 1 reading/s each, synchronous=FULL, folder %s\n",
              kCircuits, folder.c_str());
  Result<Figures> home = RunWriter(path("home-writer.db"), home_seconds, false);
  Result<Figures> home_bare = RunBare(path("home-bare.db"), home_seconds, 1);
  Result<Figures> full = RunWriter(path("full-writer.db"), full_seconds, true);
  Result<Figures> full_bare = RunBare(path("full-bare.db"), full_seconds, 2000);
  std::filesystem::remove_all(folder);
  for (const Result<Figures>* r : {&home, &home_bare, &full, &full_bare}) {
    if (!r->ok()) {
      std::fprintf(stderr, "writer_bench: %s\n", r->status().ToString().c_str());
      return 1;
    }
  }
  auto per_row = [](const Figures& f) { return static_cast<double>(f.bytes) / f.rows; };
  auto rate = [](const Figures& f) { return f.rows / f.seconds; };
  std::printf("home-like load (%lld simulated s, one commit per s, %lld readings):\n",
              static_cast<long long>(home_seconds), static_cast<long long>(home->rows));
  std::printf("  writer incl. rollups: %8.1f bytes written per reading  (target <= 600),"
              " %8.0f readings/s\n", per_row(*home), rate(*home));
  std::printf("  bare insert:          %8.1f bytes written per reading,"
              "                    %8.0f readings/s\n", per_row(*home_bare), rate(*home_bare));
  std::printf("full speed (%lld readings):\n", static_cast<long long>(full->rows));
  std::printf("  writer incl. rollups: %10.0f readings/s  (%.1f bytes/reading)\n", rate(*full),
              per_row(*full));
  std::printf("  bare insert:          %10.0f readings/s  (%.1f bytes/reading)\n",
              rate(*full_bare), per_row(*full_bare));
  std::printf("  ratio writer/bare:    %10.2f  (target >= 0.5)\n", rate(*full) / rate(*full_bare));
  std::printf("  (making the rows alone takes %.2f s of each full-speed run)\n",
              GenerationSeconds(full_seconds));
  return 0;
}

}  // namespace
}  // namespace ampledger

int main(int argc, char** argv) { return ampledger::Main(argc, argv); }
