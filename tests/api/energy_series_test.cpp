// tests/api/energy_series_test.cpp
#include "api/energy_series.h"

#include <doctest/doctest.h>

#include "api/rfc3339.h"

namespace ampledger {
namespace {

UnixMs At(const char* text) { return ParseRfc3339(text).value(); }

LocalTime Chicago() { return LocalTime::ForZone("America/Chicago").value(); }

// A bucket of `wh` with apparent energy and power bounds in fixed proportion to it.
CircuitBucket MakeBucket(UnixMs start, double wh, double coverage, Quality quality) {
  CircuitBucket b;
  b.start_ms = start;
  b.real_wh = wh;
  b.apparent_vah = wh * 1.25;
  b.min_watts = wh * 2;
  b.max_watts = wh * 6;
  b.coverage = coverage;
  b.quality = quality;
  return b;
}

TEST_SUITE("api") {
  // DST days from the IANA tz data on the machine: America/Chicago springs forward on
  // 2026-03-08 and falls back on 2026-11-01 (second Sunday of March, first of November).
  TEST_CASE("SeriesPeriods: a spring-forward day has 23 local hours, a fall-back day 25") {
    Result<std::vector<TimeRange>> spring =
        SeriesPeriods(Chicago(), SeriesStep::kHour, At("2026-03-08T00:00:00-06:00"),
                      At("2026-03-09T00:00:00-05:00"), 1000);
    REQUIRE(spring.ok());
    CHECK(spring->size() == 23);
    // 01:00 CST is followed by 03:00 CDT, one real hour later.
    CHECK((*spring)[2].start_ms == At("2026-03-08T03:00:00-05:00"));
    Result<std::vector<TimeRange>> fall =
        SeriesPeriods(Chicago(), SeriesStep::kHour, At("2026-11-01T00:00:00-05:00"),
                      At("2026-11-02T00:00:00-06:00"), 1000);
    REQUIRE(fall.ok());
    CHECK(fall->size() == 25);
    CHECK((*fall)[1].start_ms == At("2026-11-01T01:00:00-05:00"));
    CHECK((*fall)[2].start_ms == At("2026-11-01T01:00:00-06:00"));
    for (const TimeRange& hour : *fall) CHECK(hour.DurationMs() == 3600000);
  }

  TEST_CASE("SeriesPeriods: days and months follow local midnights") {
    Result<std::vector<TimeRange>> days =
        SeriesPeriods(Chicago(), SeriesStep::kDay, At("2026-03-07T00:00:00-06:00"),
                      At("2026-03-10T00:00:00-05:00"), 1000);
    REQUIRE(days.ok());
    REQUIRE(days->size() == 3);
    CHECK((*days)[0].DurationMs() == 24 * 3600000);
    CHECK((*days)[1].DurationMs() == 23 * 3600000);
    Result<std::vector<TimeRange>> months =
        SeriesPeriods(Chicago(), SeriesStep::kMonth, At("2026-01-01T00:00:00-06:00"),
                      At("2027-01-01T00:00:00-06:00"), 1000);
    REQUIRE(months.ok());
    REQUIRE(months->size() == 12);
    CHECK((*months)[1].DurationMs() == 28 * 86400000LL);           // February 2026
    CHECK((*months)[2].DurationMs() == 31 * 86400000LL - 3600000);  // March loses an hour
    Result<std::vector<TimeRange>> quarters =
        SeriesPeriods(Chicago(), SeriesStep::kQuarterHour, At("2026-03-08T00:00:00-06:00"),
                      At("2026-03-09T00:00:00-05:00"), 1000);
    REQUIRE(quarters.ok());
    CHECK(quarters->size() == 92);
  }

  TEST_CASE("SeriesPeriods refuses misaligned, reversed and oversized ranges, naming the "
            "parameter") {
    const LocalTime zone = Chicago();
    auto message = [&](SeriesStep step, const char* from, const char* to, int max_points) {
      return SeriesPeriods(zone, step, At(from), At(to), max_points).status().message();
    };
    CHECK(message(SeriesStep::kHour, "2026-03-08T00:30:00-06:00", "2026-03-09T00:00:00-05:00",
                  100) ==
          "query parameter \"from\": is not the start of a local hour in America/Chicago, as "
          "step hour needs");
    CHECK(message(SeriesStep::kDay, "2026-03-08T00:00:00-06:00", "2026-03-09T00:00:00-06:00",
                  100)
              .rfind("query parameter \"to\": is not the start of a local day", 0) == 0);
    CHECK(message(SeriesStep::kMonth, "2026-03-02T00:00:00-06:00", "2026-05-01T00:00:00-05:00",
                  100)
              .rfind("query parameter \"from\"", 0) == 0);
    CHECK(message(SeriesStep::kQuarterHour, "2026-03-08T00:07:00-06:00",
                  "2026-03-08T01:00:00-06:00", 100)
              .rfind("query parameter \"from\"", 0) == 0);
    CHECK(message(SeriesStep::kHour, "2026-03-09T00:00:00-05:00", "2026-03-08T00:00:00-06:00",
                  100) == "query parameter \"to\": must be later than \"from\"");
    CHECK(message(SeriesStep::kHour, "2026-03-09T00:00:00-05:00", "2026-03-09T00:00:00-05:00",
                  100) == "query parameter \"to\": must be later than \"from\"");
    CHECK(message(SeriesStep::kQuarterHour, "2026-03-08T00:00:00-06:00",
                  "2026-03-09T00:00:00-05:00", 91) ==
          "query parameter \"step\": the range holds more than 91 points at step 15m; use a "
          "coarser step (hour, day or month) or a shorter range");
    CHECK(SeriesPeriods(zone, SeriesStep::kQuarterHour, At("2026-03-08T00:00:00-06:00"),
                        At("2026-03-09T00:00:00-05:00"), 92)
              .ok());
    // Two centuries of hours stop at the limit rather than being generated first.
    CHECK(message(SeriesStep::kHour, "2026-01-01T00:00:00-06:00", "2226-01-01T00:00:00-06:00",
                  10000)
              .rfind("query parameter \"step\": the range holds more than 10000 points", 0) ==
          0);
  }

  TEST_CASE("SumIntoPeriods adds circuits and buckets; missing buckets count as unmeasured") {
    const UnixMs t0 = At("2026-03-08T06:00:00Z");
    std::vector<std::vector<CircuitBucket>> circuits = {
        {MakeBucket(t0, 100, 1, Quality::kMeasured),
         MakeBucket(t0 + kMsPerBucket, 50, 0.5, Quality::kDerived)},
        {MakeBucket(t0, 10, 1, Quality::kMeasured)},
    };
    std::vector<TimeRange> periods = {{t0, t0 + 2 * kMsPerBucket},
                                      {t0 + 2 * kMsPerBucket, t0 + 4 * kMsPerBucket}};
    std::vector<SeriesPoint> points = SumIntoPeriods(periods, circuits);
    REQUIRE(points.size() == 2);
    CHECK(points[0].real_wh == doctest::Approx(160));
    CHECK(points[0].apparent_vah == doctest::Approx(200));
    CHECK(points[0].coverage == doctest::Approx((1 + 0.5 + 1 + 0) / 4.0));
    CHECK(points[0].quality == Quality::kDerived);
    CHECK(points[0].min_watts == doctest::Approx(100));  // min(200 + 20, 100)
    CHECK(points[0].max_watts == doctest::Approx(660));  // max(600 + 60, 300)
    CHECK(points[0].MeanWatts() == doctest::Approx(160 * 2));  // 160 Wh over half an hour
    CHECK_FALSE(points[1].has_data);
    CHECK(points[1].real_wh == 0);
    CHECK(points[1].coverage == 0);
  }

  TEST_CASE("SumTotals of circuits' totals is SumIntoPeriods over one range, bounds aside") {
    const UnixMs t0 = At("2026-03-08T06:00:00Z");
    // A whole-day element (coverage the sum of its 96 buckets', storage/daily_rollup.h) beside
    // 15-minute buckets, a circuit with nothing, and one estimated bucket.
    const UnixMs day = 96 * kMsPerBucket;
    const std::vector<std::vector<CircuitBucket>> circuits = {
        {MakeBucket(t0, 4000, 90, Quality::kMeasured),
         MakeBucket(t0 + day, 20, 1, Quality::kMeasured)},
        {},
        {MakeBucket(t0 + day, 5, 0.25, Quality::kEstimated)},
    };
    const TimeRange range{t0, t0 + day + 2 * kMsPerBucket};
    std::vector<CircuitTotal> totals;
    for (const std::vector<CircuitBucket>& buckets : circuits) totals.push_back(TotalOf(buckets));
    CHECK_FALSE(totals[1].has_data);

    const SeriesPoint by_buckets = SumIntoPeriods({range}, circuits).front();
    const SeriesPoint by_totals = SumTotals(range, totals);
    CHECK(by_totals.real_wh == doctest::Approx(by_buckets.real_wh));
    CHECK(by_totals.apparent_vah == doctest::Approx(by_buckets.apparent_vah));
    CHECK(by_totals.coverage == doctest::Approx(by_buckets.coverage));
    CHECK(by_totals.coverage == doctest::Approx((90 + 1 + 0.25) / (98.0 * 3)));
    CHECK(by_totals.quality == by_buckets.quality);
    CHECK(by_totals.quality == Quality::kEstimated);
    CHECK(by_totals.has_data);
    CHECK(by_totals.period.start_ms == range.start_ms);
    CHECK(by_totals.period.end_ms == range.end_ms);

    // Circuits with no data at all: no data, coverage 0, as SumIntoPeriods.
    const SeriesPoint empty = SumTotals(range, {totals[1]});
    CHECK_FALSE(empty.has_data);
    CHECK(empty.coverage == 0);
    CHECK(empty.quality == SumIntoPeriods({range}, {{}}).front().quality);
  }
}

}  // namespace
}  // namespace ampledger
