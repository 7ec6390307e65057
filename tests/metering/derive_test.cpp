// tests/metering/derive_test.cpp
#include "daemon/metering/derive.h"

#include <doctest/doctest.h>

#include <limits>

namespace ampledger {
namespace {

ChannelSample Amps(double amps) {
  ChannelSample sample;
  sample.channel = "ct1";
  sample.end_ms = 1'800'000'000'000;
  sample.duration_ms = 10'000;
  sample.amps = amps;
  return sample;
}

ChannelReading Derive(const ChannelSample& sample, const ChannelConfig& channel,
                      const CircuitConfig& circuit, VoltageReference voltage = {120, {}}) {
  Result<ChannelReading> reading = DeriveReading(sample, 3, 7, channel, circuit, voltage);
  REQUIRE(reading.ok());
  return *reading;
}

TEST_SUITE("metering") {
  TEST_CASE("current alone derives apparent power and an estimated real power") {
    CircuitConfig circuit;
    circuit.assumed_power_factor = 0.8;
    ChannelReading reading = Derive(Amps(10), ChannelConfig{}, circuit);
    CHECK(reading.channel == 3);
    CHECK(reading.boot == 7);
    CHECK(reading.end_ms == 1'800'000'000'000);
    CHECK(reading.duration_ms == 10'000);
    CHECK(reading.volts == 120);
    CHECK_FALSE(reading.volts_measured);
    CHECK(reading.apparent_va == doctest::Approx(1200));
    CHECK(reading.real_watts == doctest::Approx(960));
    CHECK(reading.quality == Quality::kEstimated);
    CHECK(PowerFactorOf(reading) == doctest::Approx(0.8));
  }

  TEST_CASE("measured real power is kept and marked measured") {
    ChannelSample sample = Amps(10);
    sample.volts = 118;
    sample.real_watts = 1000;
    sample.frequency_hz = 60.01;
    ChannelReading reading = Derive(sample, ChannelConfig{}, CircuitConfig{});
    CHECK(reading.volts == 118);
    CHECK(reading.volts_measured);
    CHECK(reading.apparent_va == doctest::Approx(1180));
    CHECK(reading.real_watts == doctest::Approx(1000));
    CHECK(reading.quality == Quality::kMeasured);
    CHECK(reading.frequency_hz == 60.01);
  }

  TEST_CASE("a node's power factor without real power gives derived real power") {
    ChannelSample sample = Amps(5);
    sample.power_factor = 0.9;
    ChannelReading reading = Derive(sample, ChannelConfig{}, CircuitConfig{});
    CHECK(reading.real_watts == doctest::Approx(540));
    CHECK(reading.quality == Quality::kDerived);
  }

  TEST_CASE("the node's apparent power is preferred to V x I") {
    ChannelSample sample = Amps(5);
    sample.apparent_va = 590;
    CircuitConfig circuit;
    circuit.assumed_power_factor = 0.5;
    ChannelReading reading = Derive(sample, ChannelConfig{}, circuit);
    CHECK(reading.apparent_va == doctest::Approx(590));
    CHECK(reading.real_watts == doctest::Approx(295));
    CHECK(reading.quality == Quality::kEstimated);
  }

  TEST_CASE("current is derived from apparent power when the node sent none") {
    ChannelSample sample;
    sample.channel = "ct1";
    sample.apparent_va = 600;
    ChannelReading reading = Derive(sample, ChannelConfig{}, CircuitConfig{});
    CHECK(reading.amps == doctest::Approx(5));
    CHECK(reading.apparent_va == doctest::Approx(600));
  }

  TEST_CASE("voltage: sample, then the pack's voltage_from channel, then nominal") {
    ChannelSample sample = Amps(1);
    CHECK(Derive(sample, ChannelConfig{}, CircuitConfig{}, {230, {}}).volts == 230);
    ChannelReading from_pack = Derive(sample, ChannelConfig{}, CircuitConfig{}, {230, 228.5});
    CHECK(from_pack.volts == 228.5);
    CHECK(from_pack.volts_measured);
    sample.volts = 231;
    CHECK(Derive(sample, ChannelConfig{}, CircuitConfig{}, {230, 228.5}).volts == 231);
  }

  TEST_CASE("nominal voltage: the circuit's, else the site's first") {
    SiteConfig site;
    site.nominal_volts = {120, 240};
    CircuitConfig circuit;
    CHECK(ResolveNominalVolts(circuit, site) == 120);
    circuit.nominal_volts = 240;
    CHECK(ResolveNominalVolts(circuit, site) == 240);
  }

  TEST_CASE("gain scales current, power and registers but not voltage") {
    ChannelSample sample = Amps(10);
    sample.volts = 120;
    sample.real_watts = 1000;
    sample.apparent_va = 1200;
    sample.real_register_j = 3.6e6;
    sample.apparent_register_j = 4.0e6;
    ChannelConfig channel;
    channel.gain = 1.05;
    ChannelReading reading = Derive(sample, channel, CircuitConfig{});
    CHECK(reading.amps == doctest::Approx(10.5));
    CHECK(reading.volts == 120);
    CHECK(reading.real_watts == doctest::Approx(1050));
    CHECK(reading.apparent_va == doctest::Approx(1260));
    CHECK(*reading.real_register_j == doctest::Approx(3.78e6));
    CHECK(*reading.apparent_register_j == doctest::Approx(4.2e6));
  }

  TEST_CASE("noise floor: current below it reads zero, and so does power") {
    ChannelConfig channel;
    channel.noise_floor_amps = 0.05;
    ChannelSample sample = Amps(0.049);
    sample.real_watts = 1.5;
    sample.real_register_j = 12345;
    ChannelReading reading = Derive(sample, channel, CircuitConfig{});
    CHECK(reading.amps == 0);
    CHECK(reading.real_watts == 0);
    CHECK(reading.apparent_va == 0);
    CHECK(reading.quality == Quality::kMeasured);
    CHECK(PowerFactorOf(reading) == 0);
    // The register is the node's running count; it passes through so energy stays continuous.
    CHECK(*reading.real_register_j == 12345);
  }

  TEST_CASE("noise floor: current exactly at the floor is kept") {
    ChannelConfig channel;
    channel.noise_floor_amps = 0.05;
    ChannelReading reading = Derive(Amps(0.05), channel, CircuitConfig{});
    CHECK(reading.amps == doctest::Approx(0.05));
    CHECK(reading.apparent_va == doctest::Approx(6));
  }

  TEST_CASE("noise floor: compared with the calibrated current") {
    ChannelConfig channel;
    channel.noise_floor_amps = 0.05;
    channel.gain = 1.25;
    // 0.045 A raw is 0.05625 A after gain: above the floor.
    CHECK(Derive(Amps(0.045), channel, CircuitConfig{}).amps == doctest::Approx(0.05625));
    channel.gain = 0.8;
    // 0.06 A raw is 0.048 A after gain: below it.
    CHECK(Derive(Amps(0.06), channel, CircuitConfig{}).amps == 0);
  }

  TEST_CASE("noise floor: a current-only reading below it is zero and not estimated") {
    ChannelConfig channel;
    channel.noise_floor_amps = 0.1;
    CircuitConfig circuit;
    circuit.assumed_power_factor = 0.7;
    ChannelReading reading = Derive(Amps(0.02), channel, circuit);
    CHECK(reading.real_watts == 0);
    CHECK(reading.quality == Quality::kDerived);
  }

  TEST_CASE("sign: a consumption CT clamped backwards reads as positive power") {
    ChannelSample sample = Amps(8);
    sample.volts = 120;
    sample.real_watts = -900;
    sample.apparent_va = -960;
    sample.power_factor = -0.94;
    sample.real_register_j = -7.2e6;
    ChannelReading reading = Derive(sample, ChannelConfig{}, CircuitConfig{});
    CHECK(reading.real_watts == doctest::Approx(900));
    CHECK(reading.apparent_va == doctest::Approx(960));
    CHECK(reading.quality == Quality::kMeasured);
    CHECK(*reading.real_register_j == doctest::Approx(7.2e6));
    CHECK(PowerFactorOf(reading) == doctest::Approx(0.9375));
  }

  TEST_CASE("sign: an export circuit stores positive power; the direction says export") {
    CircuitConfig solar;
    solar.direction = Direction::kExport;
    ChannelSample sample = Amps(20);
    sample.volts = 240;
    sample.real_watts = -4700;
    ChannelReading reading = Derive(sample, ChannelConfig{}, solar);
    CHECK(reading.real_watts == doctest::Approx(4700));
    CHECK(reading.apparent_va == doctest::Approx(4800));
  }

  TEST_CASE("sign: a negative node power factor counts by magnitude") {
    ChannelSample sample = Amps(10);
    sample.power_factor = -0.5;
    ChannelReading reading = Derive(sample, ChannelConfig{}, CircuitConfig{});
    CHECK(reading.real_watts == doctest::Approx(600));
    CHECK(reading.quality == Quality::kDerived);
  }

  TEST_CASE("split phase: a 120 V nominal leg becomes 240 V with the same current") {
    CircuitConfig dryer;
    dryer.one_leg_of_split_phase = true;
    ChannelReading reading = Derive(Amps(20), ChannelConfig{}, dryer, {120, {}});
    CHECK(reading.volts == 240);
    CHECK(reading.amps == doctest::Approx(20));
    CHECK(reading.apparent_va == doctest::Approx(4800));
  }

  TEST_CASE("split phase: a measured leg voltage and the node's powers are doubled") {
    CircuitConfig dryer;
    dryer.one_leg_of_split_phase = true;
    ChannelSample sample = Amps(20);
    sample.volts = 121.5;
    sample.real_watts = 2400;
    sample.real_register_j = 1.0e6;
    ChannelReading reading = Derive(sample, ChannelConfig{}, dryer);
    CHECK(reading.volts == doctest::Approx(243));
    CHECK(reading.volts_measured);
    CHECK(reading.real_watts == doctest::Approx(4800));
    CHECK(reading.apparent_va == doctest::Approx(4860));
    CHECK(*reading.real_register_j == doctest::Approx(2.0e6));
  }

  TEST_CASE("split phase: a line-to-line voltage is kept as it is") {
    CircuitConfig dryer;
    dryer.one_leg_of_split_phase = true;
    CHECK(Derive(Amps(20), ChannelConfig{}, dryer, {240, {}}).volts == 240);
    ChannelSample sample = Amps(20);
    sample.volts = 238;
    sample.real_watts = 4700;
    ChannelReading reading = Derive(sample, ChannelConfig{}, dryer, {120, {}});
    CHECK(reading.volts == 238);
    CHECK(reading.real_watts == doctest::Approx(4700));
  }

  TEST_CASE("split phase: the leg limit itself is still a leg") {
    CircuitConfig dryer;
    dryer.one_leg_of_split_phase = true;
    CHECK(Derive(Amps(1), ChannelConfig{}, dryer, {kMaxLegVolts, {}}).volts == 2 * kMaxLegVolts);
  }

  TEST_CASE("legs: a 240 V circuit with a CT on each leg gives each channel 120 V") {
    CircuitConfig circuit;
    circuit.channels = {{"n", "ct4"}, {"n", "ct5"}};
    circuit.assumed_power_factor = 1.0;
    // 18.75 A through a 4500 W, 240 V element: each leg's CT reads 18.75 A at 120 V.
    ChannelReading leg = Derive(Amps(18.75), ChannelConfig{}, circuit, {240, {}});
    CHECK(leg.volts == 120);
    CHECK(leg.real_watts == doctest::Approx(2250));  // the two legs sum to 4500 W
    ChannelSample measured = Amps(18.75);
    measured.volts = 242;  // a line-to-line measurement is shared the same way
    CHECK(Derive(measured, ChannelConfig{}, circuit).volts == 121);
    measured.volts = 121;  // a leg measurement is already a leg
    CHECK(Derive(measured, ChannelConfig{}, circuit).volts == 121);
  }

  TEST_CASE("apparent power is raised to a measured real power above it") {
    ChannelSample sample = Amps(10);
    sample.real_watts = 1250;  // nominal 120 V x 10 A = 1200 VA: the real voltage was higher
    ChannelReading reading = Derive(sample, ChannelConfig{}, CircuitConfig{});
    CHECK(reading.apparent_va == doctest::Approx(1250));
    CHECK(PowerFactorOf(reading) == 1.0);
  }

  TEST_CASE("bad samples are refused with the channel and value named") {
    ChannelConfig channel;
    CircuitConfig circuit;
    ChannelSample empty;
    empty.channel = "ct4";
    Result<ChannelReading> none = DeriveReading(empty, 0, 0, channel, circuit, {120, {}});
    REQUIRE_FALSE(none.ok());
    CHECK(none.status().code() == StatusCode::kInvalidArgument);
    CHECK(none.status().message() == "channel \"ct4\": neither current nor power was sent");

    ChannelSample negative = Amps(-1);
    CHECK(DeriveReading(negative, 0, 0, channel, circuit, {120, {}}).status().message() ==
          "channel \"ct1\": current -1.000000 is negative");

    ChannelSample not_finite = Amps(1);
    not_finite.real_watts = std::numeric_limits<double>::quiet_NaN();
    CHECK(DeriveReading(not_finite, 0, 0, channel, circuit, {120, {}}).status().message() ==
          "channel \"ct1\": real power is not a finite number");

    CHECK(DeriveReading(Amps(1), 0, 0, channel, circuit, {120, -5.0}).status().message() ==
          "channel \"ct1\": reference voltage -5.000000 is negative");
  }
}

}  // namespace
}  // namespace ampledger
