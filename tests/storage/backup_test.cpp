// tests/storage/backup_test.cpp
#include "storage/backup.h"

#include <doctest/doctest.h>

#include <atomic>
#include <thread>

#include "storage/reading_writer.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1'772'953'200'000;  // 2026-03-08T07:00:00Z

TEST_SUITE("storage") {

TEST_CASE("a backup taken while the writer runs opens and passes integrity_check") {
  testing::TempDir dir;
  Config config;
  config.storage.path = dir.File("live.db");
  config.storage.batch_millis = 1;
  NodeConfig& node = config.nodes.emplace_back();
  node.id = "panel";
  node.channels.emplace_back().id = "ct1";
  CircuitConfig& circuit = config.circuits.emplace_back();
  circuit.id = "kitchen";
  circuit.channels = {{"panel", "ct1"}};
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  REQUIRE(db.ok());
  Result<SeriesMap> series = RegisterSeries(**db, config);
  REQUIRE(series.ok());
  Result<std::unique_ptr<ReadingWriter>> writer =
      ReadingWriter::Start(config, db->get(), series.value());
  REQUIRE(writer.ok());

  // Keep the writer committing during the backup.
  std::atomic<bool> done{false};
  std::atomic<int> committed{0};
  std::thread feeder([&] {
    for (int i = 1; !done || i < 200; ++i) {
      ReadingBatch batch;
      for (int j = 0; j < 50; ++j) {
        ChannelReading r;
        r.channel = 0;
        r.end_ms = kT0 + (i * 50 + j) * 1000;
        r.duration_ms = 1000;
        r.real_watts = 100 + j;
        r.apparent_va = 120 + j;
        batch.readings.push_back(r);
      }
      (*writer)->Submit(std::move(batch), [&](const Status& s) { committed += s.ok(); });
      std::this_thread::sleep_for(std::chrono::milliseconds(1));
    }
  });
  while (committed < 20) std::this_thread::sleep_for(std::chrono::milliseconds(1));
  std::string copy = dir.File("copy.db");
  Status backup = BackupDatabase(config.storage.path, copy);
  done = true;
  feeder.join();
  (*writer)->Stop();
  REQUIRE(backup.ok());
  CHECK(committed > 20);

  Result<std::unique_ptr<Database>> reader = Database::OpenReader(copy);
  REQUIRE(reader.ok());
  Result<Statement> check = (*reader)->Prepare("PRAGMA integrity_check");
  REQUIRE(check.ok());
  REQUIRE(check->Step("integrity_check").value());
  CHECK(check->Text(0) == "ok");
  Result<Statement> count = (*reader)->Prepare("SELECT count(*) FROM reading");
  REQUIRE(count.ok());
  REQUIRE(count->Step("count").value());
  CHECK(count->Int(0) > 0);
  CHECK(count->Int(0) % 50 == 0);  // whole transactions only: one snapshot
  CHECK(!std::filesystem::exists(copy + ".partial"));
}

TEST_CASE("backup errors name the path") {
  testing::TempDir dir;
  Status missing = BackupDatabase(dir.File("none.db"), dir.File("copy.db"));
  CHECK(missing.code() == StatusCode::kNotFound);
  CHECK(missing.message() == dir.File("none.db") + ": no such database");

  StorageConfig storage;
  storage.path = dir.File("live.db");
  REQUIRE(Database::Open(storage).ok());
  std::string unwritable = dir.File("no-such-folder/copy.db");
  Status failed = BackupDatabase(storage.path, unwritable);
  CHECK(!failed.ok());
  CHECK(failed.message().find(unwritable + ".partial") == 0);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
