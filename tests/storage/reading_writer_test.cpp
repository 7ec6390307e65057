// tests/storage/reading_writer_test.cpp
#include "storage/reading_writer.h"

#include <doctest/doctest.h>

#include <atomic>
#include <chrono>
#include <future>
#include <thread>

#include "storage/queries.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1'772'953'200'000;  // 2026-03-08T07:00:00Z, a bucket boundary

// One node "panel": channel i feeds circuit "c<i>", plus channel "spare" that feeds none.
Config PanelConfig(const std::string& path, int circuits) {
  Config config;
  config.storage.path = path;
  NodeConfig& node = config.nodes.emplace_back();
  node.id = "panel";
  for (int i = 0; i < circuits; ++i) {
    node.channels.emplace_back().id = "ct" + std::to_string(i);
    CircuitConfig& circuit = config.circuits.emplace_back();
    circuit.id = "c" + std::to_string(i);
    circuit.channels = {{"panel", "ct" + std::to_string(i)}};
  }
  node.channels.emplace_back().id = "spare";
  return config;
}

ChannelReading Reading(int channel, UnixMs end_ms, double watts) {
  ChannelReading r;
  r.channel = channel;
  r.boot = 1;
  r.end_ms = end_ms;
  r.duration_ms = 10'000;
  r.amps = watts / 120;
  r.volts = 120;
  r.real_watts = watts;
  r.apparent_va = watts;
  return r;
}

struct Store {
  explicit Store(int circuits = 2, WriterOptions options = {}) {
    config = PanelConfig(dir.File("a.db"), circuits);
    Result<std::unique_ptr<Database>> opened = Database::Open(config.storage);
    REQUIRE(opened.ok());
    db = std::move(opened.value());
    Result<SeriesMap> registered = RegisterSeries(*db, config);
    REQUIRE(registered.ok());
    series = registered.value();
    Result<std::unique_ptr<ReadingWriter>> started =
        ReadingWriter::Start(config, db.get(), series, std::move(options));
    REQUIRE(started.ok());
    writer = std::move(started.value());
  }

  Status SubmitAndWait(ReadingBatch batch) {
    std::promise<Status> promise;
    writer->Submit(std::move(batch), [&](const Status& s) { promise.set_value(s); });
    return promise.get_future().get();
  }

  std::int64_t Count(const std::string& sql) {
    Result<std::unique_ptr<Database>> reader = Database::OpenReader(config.storage.path);
    REQUIRE(reader.ok());
    Result<Statement> s = (*reader)->Prepare(sql);
    REQUIRE(s.ok());
    REQUIRE(s->Step("count").ok());
    return s->Int(0);
  }

  testing::TempDir dir;
  Config config;
  std::unique_ptr<Database> db;
  SeriesMap series;
  std::unique_ptr<ReadingWriter> writer;
};

TEST_SUITE("storage") {

TEST_CASE("inserting the same readings twice changes nothing") {
  Store store;
  ReadingBatch batch;
  for (int i = 1; i <= 30; ++i) batch.readings.push_back(Reading(i % 3, kT0 + i * 10'000, 100.0 * i));
  CHECK(store.SubmitAndWait(batch).ok());
  store.writer->Stop();
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(store.config.storage.path);
  REQUIRE(reader.ok());
  auto before = ReadCircuitBuckets(**reader, store.series, 0, kT0, kT0 + kMsPerBucket);
  REQUIRE(before.ok());
  REQUIRE(before->size() == 1);

  // A second writer on the same file, as after a restart: the resend is acknowledged and
  // nothing changes.
  Result<std::unique_ptr<ReadingWriter>> second =
      ReadingWriter::Start(store.config, store.db.get(), store.series);
  REQUIRE(second.ok());
  store.writer = std::move(second.value());
  CHECK(store.SubmitAndWait(batch).ok());
  store.writer->Stop();
  CHECK(store.Count("SELECT count(*) FROM reading") == 30);
  auto after = ReadCircuitBuckets(**reader, store.series, 0, kT0, kT0 + kMsPerBucket);
  REQUIRE(after.ok());
  REQUIRE(after->size() == 1);
  CHECK(after->front().real_wh == before->front().real_wh);
  CHECK(after->front().coverage == before->front().coverage);
}

TEST_CASE("every field of a reading is stored") {
  Store store;
  ChannelReading r = Reading(1, kT0 + 5'000, 812.5);
  r.boot = 77;
  r.duration_ms = 5'000;
  r.amps = 3.5;
  r.volts = 232.1;
  r.volts_measured = true;
  r.apparent_va = 812.35 + 10;
  r.quality = Quality::kDerived;
  r.frequency_hz = 49.98;
  r.real_register_j = 123456.5;
  r.apparent_register_j = 234567.25;
  CHECK(store.SubmitAndWait({{r}, {}}).ok());
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(store.config.storage.path);
  REQUIRE(reader.ok());
  auto stored = ReadChannelReadings(**reader, store.series, 1, kT0, kT0 + kMsPerBucket, 10);
  REQUIRE(stored.ok());
  REQUIRE(stored->size() == 1);
  const ChannelReading& s = stored->front();
  CHECK(s.channel == 1);
  CHECK(s.boot == 77);
  CHECK(s.end_ms == r.end_ms);
  CHECK(s.duration_ms == 5'000);
  CHECK(s.amps == 3.5);
  CHECK(s.volts == 232.1);
  CHECK(s.volts_measured);
  CHECK(s.real_watts == 812.5);
  CHECK(s.apparent_va == r.apparent_va);
  CHECK(s.quality == Quality::kDerived);
  CHECK(s.frequency_hz == r.frequency_hz);
  CHECK(s.real_register_j == r.real_register_j);
  CHECK(s.apparent_register_j == r.apparent_register_j);
}

TEST_CASE("node states are stored with the readings and loaded back") {
  Store store;
  std::string window("\x01\x00\xff window", 10);
  CHECK(store.SubmitAndWait({{Reading(0, kT0, 1)}, {{"panel", window}}}).ok());
  CHECK(store.SubmitAndWait({{}, {{"panel", "newer"}, {"garage", "g"}}}).ok());
  Result<std::vector<NodeState>> states = LoadNodeStates(*store.db);
  REQUIRE(states.ok());
  REQUIRE(states->size() == 2);
  CHECK(states->at(0).node == "garage");
  CHECK(states->at(1).blob == "newer");
}

TEST_CASE("Stop writes every queued batch before it returns") {
  Config unused;
  WriterOptions options;
  Store store(2, options);
  // Restart with batches that would wait a minute.
  store.writer->Stop();
  store.config.storage.batch_millis = 60'000;
  store.config.storage.batch_rows = 1'000'000;
  Result<std::unique_ptr<ReadingWriter>> slow =
      ReadingWriter::Start(store.config, store.db.get(), store.series);
  REQUIRE(slow.ok());
  std::atomic<int> ok{0};
  for (int i = 0; i < 5; ++i) {
    (*slow)->Submit({{Reading(0, kT0 + i * 10'000, 50)}, {}},
                    [&](const Status& s) { ok += s.ok() ? 1 : 0; });
  }
  CHECK(ok == 0);
  (*slow)->Stop();
  CHECK(ok == 5);
  CHECK(store.Count("SELECT count(*) FROM reading") == 5);
  Status late;
  (*slow)->Submit({{Reading(0, kT0, 1)}, {}}, [&](const Status& s) { late = s; });
  CHECK(late.code() == StatusCode::kUnavailable);
}

TEST_CASE("a channel index outside the config is refused before queueing") {
  Store store;
  Status status;
  store.writer->Submit({{Reading(99, kT0, 1)}, {}}, [&](const Status& s) { status = s; });
  CHECK(status.code() == StatusCode::kInvalidArgument);
  CHECK(store.writer->Health().ok());
}

TEST_CASE("a full queue refuses with Unavailable; memory stays bounded") {
  WriterOptions options;
  options.max_queued_rows = 10;
  Store store(1, options);
  store.writer->Stop();
  store.config.storage.batch_millis = 60'000;
  Result<std::unique_ptr<ReadingWriter>> slow =
      ReadingWriter::Start(store.config, store.db.get(), store.series, options);
  REQUIRE(slow.ok());
  std::vector<Status> results;
  std::mutex mu;
  for (int i = 0; i < 4; ++i) {
    ReadingBatch batch;
    for (int j = 0; j < 4; ++j) batch.readings.push_back(Reading(0, kT0 + (i * 4 + j) * 1000, 1));
    (*slow)->Submit(std::move(batch), [&](const Status& s) {
      std::lock_guard<std::mutex> lock(mu);
      results.push_back(s);
    });
  }
  REQUIRE(results.size() == 2);  // the third and fourth batch: 12 and 16 rows > 10
  CHECK(results[0].code() == StatusCode::kUnavailable);
  (*slow)->Stop();
  REQUIRE(results.size() == 4);
  CHECK(results[2].ok());
  CHECK(results[3].ok());
}

TEST_CASE("errors are sticky: after a failed write nothing is acknowledged") {
  Store store(1);
  CHECK(store.SubmitAndWait({{Reading(0, kT0, 1)}, {}}).ok());
  // A tiny page budget: the next big batch cannot fit (SQLITE_FULL).
  Result<Statement> pages = store.db->Prepare("PRAGMA page_count");
  REQUIRE(pages.ok());
  REQUIRE(pages->Step("page_count").ok());
  std::int64_t page_count = pages->Int(0);
  pages->Reset();
  REQUIRE(store.db->Exec("PRAGMA max_page_count = " + std::to_string(page_count + 2), "limit")
              .ok());
  ReadingBatch big;
  for (int i = 1; i <= 5000; ++i) big.readings.push_back(Reading(0, kT0 + i * 1000, i));
  Status failed = store.SubmitAndWait(big);
  CHECK(!failed.ok());
  CHECK(store.writer->Health().code() == failed.code());
  CHECK(store.writer->Health().message() == failed.message());
  CHECK(failed.message().find(store.config.storage.path) == 0);
  // A small batch that would fit is refused all the same, with the same Status.
  Status after = store.SubmitAndWait({{Reading(0, kT0 + 10'000'000, 1)}, {}});
  CHECK(after.message() == failed.message());
  store.writer->Stop();
  CHECK(store.Count("SELECT count(*) FROM reading") == 1);
}

TEST_CASE("a full disk is not sticky: once space returns, writing resumes") {
  WriterOptions options;
  options.retry_after_ms = 1000;
  Store store(1, options);
  CHECK(store.SubmitAndWait({{Reading(0, kT0, 1)}, {}}).ok());
  Result<Statement> pages = store.db->Prepare("PRAGMA page_count");
  REQUIRE(pages.ok());
  REQUIRE(pages->Step("page_count").ok());
  const std::int64_t page_count = pages->Int(0);
  pages->Reset();
  // max_page_count stands in for the disk: SQLite answers SQLITE_FULL either way. The writer
  // thread is idle until its retry, so setting it here does not race with it.
  REQUIRE(store.db->Exec("PRAGMA max_page_count = " + std::to_string(page_count + 2), "limit")
              .ok());
  ReadingBatch big;
  for (int i = 1; i <= 5000; ++i) big.readings.push_back(Reading(0, kT0 + i * 1000, i));
  Status failed = store.SubmitAndWait(big);
  REQUIRE(failed.code() == StatusCode::kUnavailable);
  REQUIRE(store.db->Exec("PRAGMA max_page_count = 1073741823", "space returns").ok());
  CHECK(store.writer->Health().code() == StatusCode::kUnavailable);

  for (int i = 0; i < 100 && !store.writer->Health().ok(); ++i) {
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  REQUIRE(store.writer->Health().ok());
  CHECK(store.SubmitAndWait(big).ok());  // what the nodes resend
  store.writer->Stop();
  CHECK(store.Count("SELECT count(*) FROM reading") == 5001);
  // The rollups recovered from disk carry on exactly: the hour's energy equals the readings'.
  double expected_wh = 1.0 * 10 / 3600;  // the first reading: 1 W over its own 10 s
  for (int i = 1; i <= 5000; ++i) expected_wh += i * 1.0 / 3600;  // i W over the 1 s since
  CHECK(store.Count("SELECT count(*) FROM rollup") > 0);
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(store.config.storage.path);
  REQUIRE(reader.ok());
  auto buckets = ReadCircuitBuckets(**reader, store.series, 0, kT0 - kMsPerBucket,
                                    kT0 + 10 * kMsPerBucket);
  REQUIRE(buckets.ok());
  double stored_wh = 0;
  for (const CircuitBucket& b : buckets.value()) stored_wh += b.real_wh;
  CHECK(stored_wh == doctest::Approx(expected_wh).epsilon(1e-9));
}

TEST_CASE("retention deletes only raw readings older than the limit; rollups stay") {
  const UnixMs now = kT0 + 500LL * 86'400'000;
  WriterOptions options;
  options.clock = [now] { return now; };
  options.retention_batch_rows = 7;  // several small passes
  options.retention_every_ms = 5;
  Store store(1, options);
  ReadingBatch batch;
  UnixMs old_start = now - 401LL * 86'400'000;
  UnixMs new_start = now - 399LL * 86'400'000;
  for (int i = 1; i <= 50; ++i) batch.readings.push_back(Reading(0, old_start + i * 10'000, 100));
  for (int i = 1; i <= 20; ++i) batch.readings.push_back(Reading(0, new_start + i * 10'000, 100));
  CHECK(store.SubmitAndWait(batch).ok());
  auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(10);
  while (store.Count("SELECT count(*) FROM reading") > 20 &&
         std::chrono::steady_clock::now() < deadline) {
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  // A reading arriving late into the deleted range must not recompute the old bucket from
  // the raws that are left (none): the rollup is the record now.
  CHECK(store.SubmitAndWait({{Reading(0, old_start + 505'000, 100)}, {}}).ok());
  store.writer->Stop();
  CHECK(store.Count("SELECT count(*) FROM reading WHERE t_end > " + std::to_string(new_start)) ==
        20);
  CHECK(store.Count("SELECT min(t_end) FROM reading WHERE t_end > " +
                    std::to_string(new_start - 86'400'000)) == new_start + 10'000);
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(store.config.storage.path);
  REQUIRE(reader.ok());
  auto old = ReadCircuitBuckets(**reader, store.series, 0, old_start, old_start + kMsPerBucket);
  REQUIRE(old.ok());
  REQUIRE(old->size() == 1);
  CHECK(old->front().real_wh == doctest::Approx(50 * 100.0 * 10 / 3600));  // 50 readings kept
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
