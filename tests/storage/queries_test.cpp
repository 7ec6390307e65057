// tests/storage/queries_test.cpp
#include "storage/queries.h"

#include <doctest/doctest.h>

#include <future>

#include "storage/reading_writer.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1'772'953'200'000;  // 2026-03-08T07:00:00Z, a bucket boundary

struct Fixture {
  Fixture() {
    config.storage.path = dir.File("a.db");
    NodeConfig& node = config.nodes.emplace_back();
    node.id = "panel";
    for (const char* id : {"ct1", "ct2", "ct3"}) node.channels.emplace_back().id = id;
    CircuitConfig& oven = config.circuits.emplace_back();
    oven.id = "oven";
    oven.channels = {{"panel", "ct1"}};
    CircuitConfig& lights = config.circuits.emplace_back();
    lights.id = "lights";
    lights.channels = {{"panel", "ct2"}};
    db = std::move(Database::Open(config.storage).value());
    series = RegisterSeries(*db, config).value();
    // Two buckets of 60 s readings: oven 1200 W, lights 60 W; ct3 one early reading.
    ReadingBatch batch;
    for (int step = 1; step <= 30; ++step) {
      for (int channel = 0; channel < 2; ++channel) {
        ChannelReading r;
        r.channel = channel;
        r.end_ms = kT0 + step * 60'000;
        r.duration_ms = 60'000;
        r.real_watts = r.apparent_va = channel == 0 ? 1200 : 60;
        batch.readings.push_back(r);
      }
    }
    ChannelReading spare;
    spare.channel = 2;
    spare.end_ms = kT0 + 1000;
    spare.duration_ms = 1000;
    batch.readings.push_back(spare);
    auto writer = std::move(ReadingWriter::Start(config, db.get(), series).value());
    std::promise<Status> stored;
    writer->Submit(std::move(batch), [&](const Status& s) { stored.set_value(s); });
    REQUIRE(stored.get_future().get().ok());
    writer->Stop();
    reader = std::move(Database::OpenReader(config.storage.path).value());
  }

  testing::TempDir dir;
  Config config;
  std::unique_ptr<Database> db;
  SeriesMap series;
  std::unique_ptr<Database> reader;
};

TEST_SUITE("storage") {

TEST_CASE("buckets of a circuit over [from, to)") {
  Fixture f;
  auto buckets = ReadCircuitBuckets(*f.reader, f.series, 0, kT0, kT0 + 2 * kMsPerBucket);
  REQUIRE(buckets.ok());
  REQUIRE(buckets->size() == 2);
  CHECK(buckets->at(0).start_ms == kT0);
  CHECK(buckets->at(0).real_wh == doctest::Approx(1200.0 * 15 / 60));  // 1.2 kW for 15 min
  CHECK(buckets->at(0).coverage == doctest::Approx(1.0));
  CHECK(buckets->at(1).start_ms == kT0 + kMsPerBucket);
  // `to` is exclusive.
  auto first = ReadCircuitBuckets(*f.reader, f.series, 0, kT0, kT0 + kMsPerBucket);
  REQUIRE(first.ok());
  CHECK(first->size() == 1);
  auto both = ReadBucketsForCircuits(*f.reader, f.series, {1, 0}, kT0, kT0 + 2 * kMsPerBucket);
  REQUIRE(both.ok());
  REQUIRE(both->size() == 2);
  CHECK(both->at(0).at(0).real_wh == doctest::Approx(60.0 * 15 / 60));
  CHECK(both->at(1).at(0).real_wh == buckets->at(0).real_wh);
}

TEST_CASE("raw readings of a channel with a limit, and the latest reading per channel") {
  Fixture f;
  auto raw = ReadChannelReadings(*f.reader, f.series, 1, kT0, kT0 + kMsPerBucket, 5);
  REQUIRE(raw.ok());
  REQUIRE(raw->size() == 5);
  CHECK(raw->at(0).end_ms == kT0 + 60'000);
  CHECK(raw->at(4).end_ms == kT0 + 5 * 60'000);
  CHECK(raw->at(0).real_watts == 60);
  auto all = ReadChannelReadings(*f.reader, f.series, 1, kT0, kT0 + kMsPerBucket, 1000);
  REQUIRE(all.ok());
  CHECK(all->size() == 14);  // ends at 1..14 minutes; 15 min is the next bucket's start

  auto latest = ReadLatestReadings(*f.reader, f.series, kT0);
  REQUIRE(latest.ok());
  REQUIRE(latest->size() == 3);
  CHECK(latest->at(0).end_ms == kT0 + 30 * 60'000);
  CHECK(latest->at(2).end_ms == kT0 + 1000);
  // `since` bounds the search: the early ct3 reading is not found after it.
  auto recent = ReadLatestReadings(*f.reader, f.series, kT0 + 60'000);
  REQUIRE(recent.ok());
  CHECK(recent->size() == 2);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
