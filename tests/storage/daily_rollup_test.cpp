// tests/storage/daily_rollup_test.cpp
// The daily rollup must equal its definition (each local day's 15-minute buckets recomputed
// from raw readings and summed) whatever order, duplication, batching and lateness the
// readings arrive with, on the days a DST change makes 23 or 25 hours long, and after the
// site's zone changes. The check itself is tests/reliability/rollup_check.h, shared with the
// reliability tools.
#include "storage/daily_rollup.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <future>
#include <random>

#include "reliability/rollup_check.h"
#include "storage/queries.h"
#include "storage/reading_writer.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr UnixMs kHourMs = 3'600'000;
constexpr UnixMs kGapMs = 300'000;  // SiteConfig::max_gap_seconds default
// America/Chicago's DST days of 2026, from the machine's IANA tz data (the US rule, second
// Sunday of March and first Sunday of November, 02:00 local): 2026-03-08 starts at 06:00Z and
// lasts 23 hours; 2026-11-01 starts at 05:00Z and lasts 25 hours. Cross-checked with Python's
// zoneinfo (a general-purpose reference library) on the same tz data.
constexpr UnixMs kSpringDayMs = 1'772'949'600'000;  // 2026-03-08T06:00:00Z
constexpr UnixMs kFallDayMs = 1'793'509'200'000;    // 2026-11-01T05:00:00Z

// Node "a": ct0 -> "heat-pump" (with a register), ct1 + ct2 -> "range", ct3 feeds none.
Config TestConfig(const std::string& path, const std::string& zone) {
  Config config;
  config.storage.path = path;
  config.site.time_zone = zone;
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

// 2-minute readings on every channel over the three days around `day_ms`, 10% lost, a
// silence longer than the gap limit on ct1, and a register reboot on ct0.
std::vector<ChannelReading> ThreeDays(UnixMs day_ms, std::mt19937& random) {
  std::vector<ChannelReading> out;
  std::uniform_real_distribution<double> watts(0, 3000);
  std::bernoulli_distribution lost(0.1);
  double register_j = 7e6;
  std::uint32_t boot = 1;
  const UnixMs first = day_ms - 26 * kHourMs;
  for (int step = 1; step <= 3 * 24 * 30 + 60; ++step) {
    const UnixMs end = first + step * 120'000 + 777;  // not on bucket boundaries
    for (int channel = 0; channel < 4; ++channel) {
      ChannelReading r;
      r.channel = channel;
      r.boot = boot;
      r.end_ms = end;
      r.duration_ms = 120'000;
      r.real_watts = watts(random);
      r.apparent_va = r.real_watts * 1.2;
      r.volts = 120;
      r.amps = r.apparent_va / 120;
      r.quality = channel == 2 ? Quality::kEstimated : Quality::kMeasured;
      if (channel == 0) {
        if (step == 1000) {
          ++boot;
          register_j = 0;
          r.boot = boot;
        }
        register_j += r.real_watts * 120;
        r.real_register_j = register_j;
      }
      const bool silent = channel == 1 && step > 400 && step < 420;
      if (!silent && !lost(random)) out.push_back(r);
    }
  }
  return out;
}

struct Site {
  explicit Site(const std::string& zone) { Open(zone); }

  void Open(const std::string& zone) {
    config = TestConfig(dir.File("site.db"), zone);
    db.reset();
    Result<std::unique_ptr<Database>> opened = Database::Open(config.storage);
    REQUIRE(opened.ok());
    db = std::move(opened.value());
    Result<SeriesMap> registered = RegisterSeries(*db, config);
    REQUIRE(registered.ok());
    series = registered.value();
  }

  // Starts a writer, submits `readings` in batches of random size, waits, stops it.
  void Write(const std::vector<ChannelReading>& readings, std::mt19937& random) {
    WriterOptions options;
    options.open_bucket_flush_ms = 0;  // write open buckets on every commit: the worst case
    Result<std::unique_ptr<ReadingWriter>> writer =
        ReadingWriter::Start(config, db.get(), series, options);
    REQUIRE(writer.ok());
    std::uniform_int_distribution<size_t> size(1, 300);
    std::vector<std::future<Status>> results;
    for (size_t i = 0; i < readings.size();) {
      const size_t n = std::min(size(random), readings.size() - i);
      ReadingBatch batch;
      batch.readings.assign(readings.begin() + i, readings.begin() + i + n);
      auto promise = std::make_shared<std::promise<Status>>();
      results.push_back(promise->get_future());
      (*writer)->Submit(std::move(batch), [promise](const Status& s) { promise->set_value(s); });
      i += n;
    }
    for (auto& result : results) REQUIRE(result.get().ok());
  }

  reliability::RollupCheck Check(UnixMs around_ms) {
    Result<LocalTime> zone = LocalTime::ForZone(config.site.time_zone);
    REQUIRE(zone.ok());
    return reliability::CompareDailyRollups(*db, series, *zone, around_ms - 2 * 24 * kHourMs,
                                            around_ms + 3 * 24 * kHourMs, kGapMs);
  }

  std::int64_t Int(const std::string& sql) {
    Result<Statement> query = db->Prepare(sql);
    REQUIRE(query.ok());
    Result<bool> row = query->Step(sql);
    REQUIRE(row.ok());
    REQUIRE(*row);
    return query->Int(0);
  }

  testing::TempDir dir;
  Config config;
  std::unique_ptr<Database> db;
  SeriesMap series;
};

TEST_SUITE("storage") {

TEST_CASE("daily rollups equal a recomputation across both DST days, shuffled, doubled, late") {
  for (UnixMs day : {kSpringDayMs, kFallDayMs}) {
    INFO("day starting " << day);
    std::mt19937 random(static_cast<std::uint32_t>(day / 1000));
    std::vector<ChannelReading> history = ThreeDays(day, random);
    std::vector<ChannelReading> mixed = history;
    for (size_t i = 0; i < history.size(); i += 4) mixed.push_back(history[i]);  // resends
    std::shuffle(mixed.begin(), mixed.end(), random);
    // A seventh held back and sent late, after a restart of the writer.
    std::vector<ChannelReading> first, late;
    for (size_t i = 0; i < mixed.size(); ++i) (i % 7 == 3 ? late : first).push_back(mixed[i]);

    Site site("America/Chicago");
    site.Write(first, random);
    reliability::RollupCheck before_late = site.Check(day);
    CHECK(before_late.buckets >= 3 * 2);  // at least three days of two circuits
    CHECK(before_late.mismatches == 0);
    site.Write(late, random);
    reliability::RollupCheck after_late = site.Check(day);
    CHECK(after_late.buckets == before_late.buckets);
    CHECK(after_late.mismatches == 0);

    // The DST day's row spans its 23 or 25 hours (IANA tz data, see kSpringDayMs).
    const UnixMs hours = day == kSpringDayMs ? 23 : 25;
    CHECK(site.Int("SELECT day_end - day FROM rollup_day WHERE day = " + std::to_string(day) +
                   " LIMIT 1") == hours * kHourMs);
  }
}

TEST_CASE("a change of the site's zone rebuilds the daily rollup for the new zone's days") {
  std::mt19937 random(5);
  Site site("America/Chicago");
  site.Write(ThreeDays(kSpringDayMs, random), random);
  CHECK(site.Check(kSpringDayMs).mismatches == 0);

  site.Open("Europe/Vienna");
  site.Write({}, random);  // a writer's start rebuilds
  // Vienna's midnight is 23:00Z in March (UTC+1; IANA tz data).
  CHECK(site.Int("SELECT count(*) FROM rollup_day WHERE (day - 82800000) % 86400000 != 0") == 0);
  reliability::RollupCheck vienna = site.Check(kSpringDayMs);
  CHECK(vienna.buckets >= 3 * 2);
  CHECK(vienna.mismatches == 0);
  Result<Statement> zone = site.db->Prepare("SELECT zone FROM rollup_day_zone");
  REQUIRE(zone.ok());
  REQUIRE(zone->Step("zone").value());
  CHECK(zone->Text(0) == "Europe/Vienna");
}

TEST_CASE("days and buckets read together sum to the buckets alone, with partial end days") {
  std::mt19937 random(8);
  Site site("America/Chicago");
  site.Write(ThreeDays(kFallDayMs, random), random);
  Result<LocalTime> zone = LocalTime::ForZone("America/Chicago");
  REQUIRE(zone.ok());
  // From 10:15 local of the day before to 07:30 local of the day after: one whole day inside.
  const UnixMs from = kFallDayMs - 24 * kHourMs + 15 * kHourMs + 15 * 60'000;
  const UnixMs to = kFallDayMs + 25 * kHourMs + 13 * kHourMs + 30 * 60'000;
  auto mixed = ReadDaysAndBucketsForCircuits(*site.db, site.series, *zone, {0, 1}, from, to);
  auto buckets = ReadBucketsForCircuits(*site.db, site.series, {0, 1}, from, to);
  REQUIRE(mixed.ok());
  REQUIRE(buckets.ok());
  for (int c = 0; c < 2; ++c) {
    double mixed_wh = 0, mixed_coverage = 0, bucket_wh = 0, bucket_coverage = 0;
    for (const CircuitBucket& b : (*mixed)[c]) {
      mixed_wh += b.real_wh;
      mixed_coverage += b.coverage;
    }
    for (const CircuitBucket& b : (*buckets)[c]) {
      bucket_wh += b.real_wh;
      bucket_coverage += b.coverage;
    }
    CHECK(mixed_wh == doctest::Approx(bucket_wh).epsilon(1e-12));
    CHECK(mixed_coverage == doctest::Approx(bucket_coverage).epsilon(1e-12));
    // The 25-hour day is one element instead of 100.
    CHECK((*mixed)[c].size() + 99 == (*buckets)[c].size());
  }
}

TEST_CASE("with no daily rollup of the reader's zone, the reader sums 15-minute buckets") {
  std::mt19937 random(9);
  Site site("America/Chicago");
  site.Write(ThreeDays(kSpringDayMs, random), random);
  Result<LocalTime> other = LocalTime::ForZone("Asia/Tokyo");
  REQUIRE(other.ok());
  const UnixMs from = kSpringDayMs - 24 * kHourMs, to = kSpringDayMs + 47 * kHourMs;
  auto mixed = ReadDaysAndBucketsForCircuits(*site.db, site.series, *other, {0}, from, to);
  auto buckets = ReadBucketsForCircuits(*site.db, site.series, {0}, from, to);
  REQUIRE(mixed.ok());
  REQUIRE(buckets.ok());
  CHECK((*mixed)[0].size() == (*buckets)[0].size());
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
