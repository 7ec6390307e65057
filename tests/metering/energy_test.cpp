// tests/metering/energy_test.cpp
#include "daemon/metering/energy.h"

#include <doctest/doctest.h>

namespace ampledger {
namespace {

constexpr UnixMs kGap = 300 * kMsPerSecond;  // SiteConfig::max_gap_seconds default
constexpr UnixMs kT0 = 1'780'000'200'000;    // an arbitrary instant in 2026

ChannelReading Reading(UnixMs end_ms, double watts, std::optional<double> register_j,
                       std::uint32_t boot = 1, std::int32_t duration_ms = 10'000) {
  ChannelReading r;
  r.channel = 0;
  r.boot = boot;
  r.end_ms = end_ms;
  r.duration_ms = duration_ms;
  r.real_watts = watts;
  r.apparent_va = watts * 1.25;
  r.real_register_j = register_j;
  return r;
}

TEST_SUITE("metering") {

TEST_CASE("register delta: energy of (previous end, end], across lost datagrams") {
  ChannelReading previous = Reading(kT0, 100, 36'000);
  // Two 10 s datagrams were lost: the register still counts their energy.
  ChannelReading reading = Reading(kT0 + 30'000, 100, 36'000 + 3 * 3600);
  EnergySpan span = IntervalEnergy(&previous, reading, kGap);
  CHECK(span.source == EnergySource::kRegisterDelta);
  CHECK(span.begin_ms == kT0);
  CHECK(span.end_ms == kT0 + 30'000);
  CHECK(span.real_wh == doctest::Approx(3.0));  // 3 * 3600 J = 3 Wh (1 Wh = 3600 J by definition)
  CHECK(span.covered_ms == 30'000);
  CHECK(span.MeanWatts() == doctest::Approx(360.0));
  // No apparent register: mean apparent power times the span.
  CHECK(span.apparent_vah == doctest::Approx(125.0 * 30 / 3600));
}

TEST_CASE("register reboot: a register lower than before in the same boot counts from zero") {
  ChannelReading previous = Reading(kT0, 100, 900'000);
  ChannelReading reading = Reading(kT0 + 10'000, 100, 1'800);
  EnergySpan span = IntervalEnergy(&previous, reading, kGap);
  CHECK(span.source == EnergySource::kRegisterRestart);
  CHECK(span.real_wh == doctest::Approx(0.5));  // energy since boot, never negative
  CHECK(span.begin_ms == kT0);                  // the reading's own 10 s interval
  CHECK(span.covered_ms == 10'000);
}

TEST_CASE("register new boot: counts from the new value even when it is higher") {
  ChannelReading previous = Reading(kT0, 100, 3'600, /*boot=*/4);
  ChannelReading reading = Reading(kT0 + 10'000, 100, 7'200, /*boot=*/5);
  EnergySpan span = IntervalEnergy(&previous, reading, kGap);
  CHECK(span.source == EnergySource::kRegisterRestart);
  CHECK(span.real_wh == doctest::Approx(2.0));
}

TEST_CASE("first reading of a channel: no baseline, so mean power over its interval") {
  EnergySpan span = IntervalEnergy(nullptr, Reading(kT0, 360, 1e9), kGap);
  CHECK(span.source == EnergySource::kIntegrated);
  CHECK(span.begin_ms == kT0 - 10'000);
  CHECK(span.real_wh == doctest::Approx(1.0));  // 360 W for 10 s = 3600 J = 1 Wh
}

TEST_CASE("no register: mean power times duration, never across a gap longer than the limit") {
  ChannelReading previous = Reading(kT0, 100, std::nullopt);
  SUBCASE("within the limit: only the reading's own interval") {
    EnergySpan span = IntervalEnergy(&previous, Reading(kT0 + 60'000, 720, std::nullopt), kGap);
    CHECK(span.begin_ms == kT0 + 50'000);
    CHECK(span.real_wh == doctest::Approx(2.0));
    CHECK(span.covered_ms == 10'000);  // the 40 s before it stay unmeasured
  }
  SUBCASE("a reading whose interval is longer than the limit is cut to the limit") {
    ChannelReading reading = Reading(kT0 + 3'600'000, 720, std::nullopt, 1, 600'000);
    EnergySpan span = IntervalEnergy(&previous, reading, kGap);
    CHECK(span.length_ms() == kGap);
    CHECK(span.real_wh == doctest::Approx(720.0 * 300 / 3600));
  }
  SUBCASE("overlapping the previous reading: the overlap is not counted twice") {
    ChannelReading reading = Reading(kT0 + 5'000, 720, std::nullopt);
    EnergySpan span = IntervalEnergy(&previous, reading, kGap);
    CHECK(span.begin_ms == kT0);
    CHECK(span.real_wh == doctest::Approx(1.0));
  }
}

TEST_CASE("register across a gap longer than the limit: the silence is not filled") {
  ChannelReading previous = Reading(kT0, 100, 36'000);
  ChannelReading reading = Reading(kT0 + kGap + 1, 360, 36'000 + 1e6);
  EnergySpan span = IntervalEnergy(&previous, reading, kGap);
  CHECK(span.source == EnergySource::kIntegrated);
  CHECK(span.covered_ms == 10'000);
  CHECK(span.real_wh == doctest::Approx(1.0));
}

TEST_CASE("previous register missing: integrate, do not subtract from nothing") {
  ChannelReading previous = Reading(kT0, 100, std::nullopt);
  EnergySpan span = IntervalEnergy(&previous, Reading(kT0 + 10'000, 360, 5e6), kGap);
  CHECK(span.source == EnergySource::kIntegrated);
  CHECK(span.real_wh == doctest::Approx(1.0));
}

TEST_CASE("apparent register delta is used when both readings carry one") {
  ChannelReading previous = Reading(kT0, 100, 0);
  previous.apparent_register_j = 1000;
  ChannelReading reading = Reading(kT0 + 10'000, 100, 3600);
  reading.apparent_register_j = 1000 + 7200;
  reading.quality = Quality::kDerived;
  EnergySpan span = IntervalEnergy(&previous, reading, kGap);
  CHECK(span.apparent_vah == doctest::Approx(2.0));
  CHECK(span.quality == Quality::kDerived);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
