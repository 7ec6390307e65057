// tests/storage/rollup_builder_test.cpp
// The writer's incremental rollups must equal a recomputation from the raw readings, whatever
// order, duplication and batching the readings arrive in, and after restarts and crashes.
#include "storage/rollup_builder.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <future>
#include <random>

#include "storage/queries.h"
#include "storage/reading_writer.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1'772'953'200'000;  // 2026-03-08T07:00:00Z, a bucket boundary
constexpr UnixMs kGapMs = 300'000;         // SiteConfig::max_gap_seconds default

// Node "a": ct0 -> circuit "heat-pump" (registers), ct1 + ct2 -> circuit "range" (two legs,
// no registers), ct3 feeds no circuit.
Config TestConfig(const std::string& path) {
  Config config;
  config.storage.path = path;
  NodeConfig& node = config.nodes.emplace_back();
  node.id = "a";
  for (const char* id : {"ct0", "ct1", "ct2", "ct3"}) node.channels.emplace_back().id = id;
  CircuitConfig& heat_pump = config.circuits.emplace_back();
  heat_pump.id = "heat-pump";
  heat_pump.channels = {{"a", "ct0"}};
  CircuitConfig& range = config.circuits.emplace_back();
  range.id = "range";
  range.channels = {{"a", "ct1"}, {"a", "ct2"}};
  return config;
}

// About 100 minutes of 10 s readings on every channel, with lost intervals (10%), one silence
// longer than the gap limit on ct1, and a reboot of the register on ct0.
std::vector<ChannelReading> History(std::mt19937& random) {
  std::vector<ChannelReading> out;
  std::uniform_real_distribution<double> watts(0, 3000);
  std::bernoulli_distribution lost(0.1);
  double register_j = 5e6;
  std::uint32_t boot = 3;
  for (int step = 1; step <= 600; ++step) {
    UnixMs end = kT0 + step * 10'000 + 1'234;  // not aligned to buckets
    for (int channel = 0; channel < 4; ++channel) {
      ChannelReading r;
      r.channel = channel;
      r.boot = boot;
      r.end_ms = end;
      r.duration_ms = 10'000;
      r.real_watts = watts(random);
      r.apparent_va = r.real_watts * 1.1;
      r.volts = 240;
      r.amps = r.apparent_va / 240;
      r.quality = channel == 2 ? Quality::kEstimated : Quality::kMeasured;
      if (channel == 0) {
        if (step == 300) {  // reboot: a new boot, the register starts again from zero
          ++boot;
          register_j = 0;
          r.boot = boot;
        }
        register_j += r.real_watts * 10;
        r.real_register_j = register_j;
      }
      bool silent = channel == 1 && step > 200 && step < 250;  // 490 s > the gap limit
      if (!silent && !lost(random)) out.push_back(r);
    }
  }
  return out;
}

struct Store {
  Store() {
    config = TestConfig(dir.File("a.db"));
    Result<std::unique_ptr<Database>> opened = Database::Open(config.storage);
    REQUIRE(opened.ok());
    db = std::move(opened.value());
    Result<SeriesMap> registered = RegisterSeries(*db, config);
    REQUIRE(registered.ok());
    series = registered.value();
  }

  std::unique_ptr<ReadingWriter> StartWriter() {
    WriterOptions options;
    options.open_bucket_flush_ms = 0;  // write open buckets on every commit: the worst case
    Result<std::unique_ptr<ReadingWriter>> writer =
        ReadingWriter::Start(config, db.get(), series, options);
    REQUIRE(writer.ok());
    return std::move(writer.value());
  }

  // Submits `readings` in batches of random size and waits for all of them.
  void Write(ReadingWriter& writer, const std::vector<ChannelReading>& readings,
             std::mt19937& random) {
    std::uniform_int_distribution<size_t> size(1, 40);
    std::vector<std::future<Status>> results;
    for (size_t i = 0; i < readings.size();) {
      size_t n = std::min(size(random), readings.size() - i);
      ReadingBatch batch;
      batch.readings.assign(readings.begin() + i, readings.begin() + i + n);
      auto promise = std::make_shared<std::promise<Status>>();
      results.push_back(promise->get_future());
      writer.Submit(std::move(batch), [promise](const Status& s) { promise->set_value(s); });
      i += n;
    }
    for (auto& result : results) REQUIRE(result.get().ok());
  }

  // Stored rollups == recomputation from raw, for every circuit, over the whole history.
  void CheckRollupsEqualRecomputation() {
    Result<std::unique_ptr<Database>> reader = Database::OpenReader(config.storage.path);
    REQUIRE(reader.ok());
    UnixMs from = kT0 - kMsPerBucket;
    UnixMs to = kT0 + 10 * kMsPerBucket;
    for (int circuit = 0; circuit < series.CircuitCount(); ++circuit) {
      auto stored = ReadCircuitBuckets(**reader, series, circuit, from, to);
      auto fresh = RecomputeCircuitBuckets(**reader, series, circuit, from, to, kGapMs);
      REQUIRE(stored.ok());
      REQUIRE(fresh.ok());
      REQUIRE(stored->size() == fresh->size());
      for (size_t i = 0; i < fresh->size(); ++i) {
        const CircuitBucket& s = stored->at(i);
        const CircuitBucket& f = fresh->at(i);
        INFO("circuit " << circuit << " bucket " << i);
        CHECK(s.start_ms == f.start_ms);
        // Sums taken in another order differ in the last bits only.
        CHECK(s.real_wh == doctest::Approx(f.real_wh).epsilon(1e-9));
        CHECK(s.apparent_vah == doctest::Approx(f.apparent_vah).epsilon(1e-9));
        CHECK(s.min_watts == doctest::Approx(f.min_watts).epsilon(1e-9));
        CHECK(s.max_watts == doctest::Approx(f.max_watts).epsilon(1e-9));
        CHECK(s.coverage == doctest::Approx(f.coverage).epsilon(1e-12));
        CHECK(s.quality == f.quality);
      }
    }
  }

  double TotalWh(int circuit) {
    Result<std::unique_ptr<Database>> reader = Database::OpenReader(config.storage.path);
    REQUIRE(reader.ok());
    auto stored = ReadCircuitBuckets(**reader, series, circuit, kT0 - kMsPerBucket,
                                     kT0 + 10 * kMsPerBucket);
    REQUIRE(stored.ok());
    double sum = 0;
    for (const CircuitBucket& b : stored.value()) sum += b.real_wh;
    return sum;
  }

  testing::TempDir dir;
  Config config;
  std::unique_ptr<Database> db;
  SeriesMap series;
};

TEST_SUITE("storage") {

TEST_CASE("rollups equal a recomputation from raw after random-order insertion with duplicates") {
  std::mt19937 random(20261201);
  std::vector<ChannelReading> history = History(random);

  Store in_order;
  {
    auto writer = in_order.StartWriter();
    in_order.Write(*writer, history, random);
  }
  in_order.CheckRollupsEqualRecomputation();

  Store shuffled;
  std::vector<ChannelReading> mixed = history;
  // Resends: a fifth of the readings again.
  for (size_t i = 0; i < history.size(); i += 5) mixed.push_back(history[i]);
  std::shuffle(mixed.begin(), mixed.end(), random);
  {
    auto writer = shuffled.StartWriter();
    shuffled.Write(*writer, mixed, random);
  }
  shuffled.CheckRollupsEqualRecomputation();
  for (int circuit = 0; circuit < 2; ++circuit) {
    CHECK(shuffled.TotalWh(circuit) == doctest::Approx(in_order.TotalWh(circuit)).epsilon(1e-9));
  }
}

TEST_CASE("late readings after a restart: the successor's register delta is redone") {
  std::mt19937 random(7);
  std::vector<ChannelReading> history = History(random);
  // Every third reading is held back and sent after a restart of the writer, late.
  std::vector<ChannelReading> first, held;
  for (size_t i = 0; i < history.size(); ++i) (i % 3 == 1 ? held : first).push_back(history[i]);
  Store store;
  {
    auto writer = store.StartWriter();
    store.Write(*writer, first, random);
  }
  store.CheckRollupsEqualRecomputation();
  double before = store.TotalWh(0);
  {
    auto writer = store.StartWriter();
    store.Write(*writer, held, random);
  }
  store.CheckRollupsEqualRecomputation();
  // Register deltas: holding readings back moved energy between intervals but the total over
  // a boot is the register's own count, so circuit 0 barely changes; it must not double.
  CHECK(store.TotalWh(0) < before * 1.5);
}

TEST_CASE("crash recovery: pending buckets are recomputed from raw at start-up") {
  std::mt19937 random(99);
  std::vector<ChannelReading> history = History(random);
  Store store;
  {
    auto writer = store.StartWriter();
    store.Write(*writer, history, random);
  }
  // A crash between commits leaves open buckets' rows behind their raw readings: simulate it
  // by damaging every pending bucket's rows and marking more buckets pending.
  REQUIRE(store.db->Exec("INSERT OR IGNORE INTO rollup_pending SELECT DISTINCT bucket FROM rollup;"
                         "UPDATE rollup SET real_wh = -1, coverage = 7",
                         "damage")
              .ok());
  { auto writer = store.StartWriter(); }
  store.CheckRollupsEqualRecomputation();
}

TEST_CASE("a gap gives coverage below 1") {
  Store store;
  std::vector<ChannelReading> readings;
  for (int step = 1; step <= 90; ++step) {  // one bucket of 10 s readings ...
    if (step > 30 && step <= 60) continue;  // ... with a 5-minute hole (no registers)
    ChannelReading r;
    r.channel = 0;
    r.end_ms = kT0 + step * 10'000;
    r.duration_ms = 10'000;
    r.real_watts = 400;
    r.apparent_va = 400;
    readings.push_back(r);
  }
  std::mt19937 random(1);
  {
    auto writer = store.StartWriter();
    store.Write(*writer, readings, random);
  }
  Result<std::unique_ptr<Database>> reader = Database::OpenReader(store.config.storage.path);
  REQUIRE(reader.ok());
  auto buckets = ReadCircuitBuckets(**reader, store.series, 0, kT0, kT0 + kMsPerBucket);
  REQUIRE(buckets.ok());
  REQUIRE(buckets->size() == 1);
  CHECK(buckets->front().coverage == doctest::Approx(600.0 / 900.0));
  CHECK(buckets->front().real_wh == doctest::Approx(400.0 * 600 / 3600));
  CHECK(buckets->front().MeanWatts() == doctest::Approx(400.0));
  // The range circuit's channels sent nothing: no row at all.
  auto range = ReadCircuitBuckets(**reader, store.series, 1, kT0, kT0 + kMsPerBucket);
  REQUIRE(range.ok());
  CHECK(range->empty());
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
