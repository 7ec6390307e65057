// tests/metering/bucket_test.cpp
#include "daemon/metering/bucket.h"

#include <doctest/doctest.h>

#include <map>

namespace ampledger {
namespace {

// 2026-03-08T07:00:00Z: a multiple of 15 minutes (1772953200 s).
constexpr UnixMs kBucket = 1'772'953'200'000;

EnergySpan Span(UnixMs begin, UnixMs end, double wh, Quality q = Quality::kMeasured) {
  EnergySpan s;
  s.begin_ms = begin;
  s.end_ms = end;
  s.real_wh = wh;
  s.apparent_vah = wh * 2;
  s.covered_ms = end - begin;
  s.quality = q;
  return s;
}

std::map<UnixMs, ChannelBucket> Spread(const std::vector<EnergySpan>& spans) {
  std::map<UnixMs, ChannelBucket> out;
  for (const EnergySpan& span : spans) {
    SpreadOverBuckets(span, [&](UnixMs b, double f, UnixMs overlap) { out[b].Add(span, f, overlap); });
  }
  return out;
}

TEST_SUITE("metering") {

TEST_CASE("bucket starts are 15-minute UTC boundaries, also before 1970") {
  CHECK(kBucket % kMsPerBucket == 0);
  CHECK(BucketStart(kBucket) == kBucket);
  CHECK(BucketStart(kBucket + kMsPerBucket - 1) == kBucket);
  CHECK(BucketStart(-1) == -kMsPerBucket);
}

TEST_CASE("a span crossing a bucket boundary is split in proportion to time") {
  // 60 s ending 15 s into the next bucket: 45 s before the boundary, 15 s after.
  auto buckets = Spread({Span(kBucket + kMsPerBucket - 45'000, kBucket + kMsPerBucket + 15'000, 4)});
  REQUIRE(buckets.size() == 2);
  CHECK(buckets[kBucket].real_wh == doctest::Approx(3.0));
  CHECK(buckets[kBucket + kMsPerBucket].real_wh == doctest::Approx(1.0));
  CHECK(buckets[kBucket].covered_ms == 45'000);
  CHECK(buckets[kBucket + kMsPerBucket].apparent_vah == doctest::Approx(2.0));
  // Both halves saw the same mean power: 4 Wh in 60 s = 240 W.
  CHECK(buckets[kBucket].max_watts == doctest::Approx(240.0));
}

TEST_CASE("a gap in the bucket gives coverage below 1; min, max and quality over spans") {
  auto buckets = Spread({Span(kBucket, kBucket + 300'000, 10),  // 120 W for 5 min
                         Span(kBucket + 600'000, kBucket + 900'000, 40, Quality::kEstimated)});
  ChannelBucket& b = buckets[kBucket];
  CHECK(b.covered_ms == 600'000);
  CircuitBucket circuit = CombineChannels(kBucket, {&b}, 1);
  CHECK(circuit.coverage == doctest::Approx(2.0 / 3.0));
  CHECK(circuit.real_wh == doctest::Approx(50.0));
  CHECK(circuit.min_watts == doctest::Approx(120.0));
  CHECK(circuit.max_watts == doctest::Approx(480.0));
  CHECK(circuit.quality == Quality::kEstimated);
  // 50 Wh over 10 measured minutes.
  CHECK(circuit.MeanWatts() == doctest::Approx(300.0));
}

TEST_CASE("empty bucket: no spans, nothing measured") {
  ChannelBucket empty;
  CircuitBucket circuit = CombineChannels(kBucket, {&empty}, 1);
  CHECK(circuit.coverage == 0.0);
  CHECK(circuit.real_wh == 0.0);
  CHECK(circuit.MeanWatts() == 0.0);
  CHECK(Spread({Span(kBucket, kBucket, 0)}).empty());
}

TEST_CASE("a circuit of two channels sums energy and averages coverage per channel") {
  auto a = Spread({Span(kBucket, kBucket + kMsPerBucket, 25)});
  auto b = Spread({Span(kBucket, kBucket + kMsPerBucket / 2, 5)});
  CircuitBucket circuit = CombineChannels(kBucket, {&a[kBucket], &b[kBucket]}, 2);
  CHECK(circuit.real_wh == doctest::Approx(30.0));
  CHECK(circuit.coverage == doctest::Approx(0.75));
  CHECK(circuit.min_watts == doctest::Approx(100.0 + 40.0));  // sum of the channels' minima
  // A missing second channel counts as unmeasured.
  CHECK(CombineChannels(kBucket, {&a[kBucket], nullptr}, 2).coverage == doctest::Approx(0.5));
}

TEST_CASE("a restart with no interval goes whole into the bucket of its end") {
  auto buckets = Spread({Span(kBucket + kMsPerBucket, kBucket + kMsPerBucket, 2)});
  REQUIRE(buckets.size() == 1);
  CHECK(buckets.begin()->first == kBucket);
  CHECK(buckets.begin()->second.real_wh == doctest::Approx(2.0));
  CHECK(buckets.begin()->second.covered_ms == 0);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
