// tests/reference/power_reference_test.cpp
// Power quantities checked against outside references, each named beside its check.
#include <doctest/doctest.h>

#include <cmath>
#include <numbers>
#include <vector>

#include "daemon/metering/derive.h"
#include "daemon/metering/power.h"

namespace ampledger {
namespace {

// `count` samples of amplitude x sin(2 pi k / count - lag) over one whole cycle.
std::vector<double> Sine(int count, double amplitude, double lag_radians) {
  std::vector<double> samples;
  for (int k = 0; k < count; ++k) {
    samples.push_back(amplitude * std::sin(2 * std::numbers::pi * k / count - lag_radians));
  }
  return samples;
}

TEST_SUITE("reference") {
  // Source: tests/reference/data/power/IEEE1459-and-meter-accuracy.md, section 1.3,
  // "Example A - sinusoidal": V = 230 V, I = 10 A, current lagging 30 degrees:
  // S = 2300 VA, P = 1991.858 W, Q = 1150.000 var, PF = 0.86603. Definitions from section 1.1
  // and 1.2 (IEEE Std 1459-2010: S = V I, P = mean of v i, PF = P/S, N = sqrt(S^2 - P^2)).
  TEST_CASE("IEEE 1459 example A from sampled waveforms") {
    const int kSamples = 2000;  // one cycle
    std::vector<double> volts = Sine(kSamples, 230 * std::sqrt(2.0), 0);
    std::vector<double> amps = Sine(kSamples, 10 * std::sqrt(2.0), std::numbers::pi / 6);

    double v_rms = Rms(volts);
    double i_rms = Rms(amps);
    double s = ApparentPower(v_rms, i_rms);
    double p = ActivePower(volts, amps);
    CHECK(v_rms == doctest::Approx(230).epsilon(1e-9));
    CHECK(i_rms == doctest::Approx(10).epsilon(1e-9));
    CHECK(s == doctest::Approx(2300.0).epsilon(1e-7));
    CHECK(p == doctest::Approx(1991.858).epsilon(1e-6));
    CHECK(PowerFactor(p, s) == doctest::Approx(0.86603).epsilon(1e-5));
    // Sinusoidal case: the nonactive power is the reactive power Q = 1150 var.
    CHECK(NonactivePower(p, s) == doctest::Approx(1150.000).epsilon(1e-6));
  }

  // Same source, example A, through the daemon's derivation: a node that sent V, I and P.
  TEST_CASE("IEEE 1459 example A through DeriveReading") {
    ChannelSample sample;
    sample.channel = "ct1";
    sample.amps = 10;
    sample.volts = 230;
    sample.real_watts = 1991.858;
    ChannelConfig channel;
    CircuitConfig circuit;
    Result<ChannelReading> reading = DeriveReading(sample, 0, 1, channel, circuit, {230, {}});
    REQUIRE(reading.ok());
    CHECK(reading->apparent_va == doctest::Approx(2300));
    CHECK(reading->real_watts == doctest::Approx(1991.858));
    CHECK(reading->quality == Quality::kMeasured);
    CHECK(PowerFactorOf(*reading) == doctest::Approx(0.86603).epsilon(1e-5));
  }

  // Common practice (a fact of the trade, no published source here): the RMS of a sine is its
  // amplitude divided by sqrt(2). A 2 A peak sine sampled over whole cycles gives 1.414 A RMS.
  TEST_CASE("common practice: a sine's RMS is its amplitude over sqrt(2)") {
    std::vector<double> amps;
    for (int cycle = 0; cycle < 3; ++cycle) {
      std::vector<double> one = Sine(64, 2.0, 0);
      amps.insert(amps.end(), one.begin(), one.end());
    }
    CHECK(Rms(amps) == doctest::Approx(1.414).epsilon(1e-3));
    CHECK(AcRms(amps) == doctest::Approx(2.0 / std::sqrt(2.0)).epsilon(1e-12));
  }

  // Common practice: at an assumed 120 V, 1.414 A RMS is about 169.7 VA of apparent power,
  // and that is what a current-only node's reading derives to on a 120 V circuit.
  TEST_CASE("common practice: 2 A peak at an assumed 120 V is about 169.7 VA") {
    double amps_rms = Rms(Sine(128, 2.0, 0));
    CHECK(ApparentPower(120, amps_rms) == doctest::Approx(169.7).epsilon(1e-3));

    ChannelSample sample;
    sample.channel = "ct1";
    sample.amps = amps_rms;
    ChannelConfig channel;
    CircuitConfig circuit;
    Result<ChannelReading> reading = DeriveReading(sample, 0, 1, channel, circuit, {120, {}});
    REQUIRE(reading.ok());
    CHECK(reading->apparent_va == doctest::Approx(169.7).epsilon(1e-3));
    CHECK_FALSE(reading->volts_measured);
  }
}

}  // namespace
}  // namespace ampledger
