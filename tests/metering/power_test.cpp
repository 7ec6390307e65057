// tests/metering/power_test.cpp
#include "daemon/metering/power.h"

#include <doctest/doctest.h>

#include <cmath>
#include <numbers>
#include <vector>

namespace ampledger {
namespace {

// `count` samples of offset + amplitude x sin(2 pi k / count + phase) over one whole cycle.
std::vector<double> Sine(int count, double amplitude, double phase, double offset = 0) {
  std::vector<double> samples;
  for (int k = 0; k < count; ++k) {
    samples.push_back(offset + amplitude * std::sin(2 * std::numbers::pi * k / count + phase));
  }
  return samples;
}

TEST_SUITE("metering") {
  TEST_CASE("apparent power is V_rms x I_rms") {
    CHECK(ApparentPower(120, 10) == doctest::Approx(1200));
    CHECK(ApparentPower(0, 10) == 0);
  }

  TEST_CASE("power factor is P / S and 0 without apparent power") {
    CHECK(PowerFactor(900, 1000) == doctest::Approx(0.9));
    CHECK(PowerFactor(-900, 1000) == doctest::Approx(-0.9));
    CHECK(PowerFactor(5, 0) == 0);
  }

  TEST_CASE("nonactive power is zero when P exceeds S by measurement error") {
    CHECK(NonactivePower(3, 5) == doctest::Approx(4));
    CHECK(NonactivePower(1001, 1000) == 0);
  }

  TEST_CASE("RMS of an empty waveform is zero") {
    CHECK(Rms({}) == 0);
    CHECK(AcRms({}) == 0);
    CHECK(AcRmsOfCounts({}, 0.01) == 0);
    CHECK(ActivePower({}, {}) == 0);
  }

  TEST_CASE("RMS of a constant is the constant; its AC part is zero") {
    std::vector<double> dc(100, 2.5);
    CHECK(Rms(dc) == doctest::Approx(2.5));
    CHECK(AcRms(dc) == doctest::Approx(0).epsilon(1e-12));
  }

  TEST_CASE("AC RMS removes an ADC's mid-scale bias") {
    // 12-bit ADC biased at 2048 counts, 1000 counts peak: the bias would dominate plain RMS.
    std::vector<double> biased = Sine(400, 1000, 0.3, 2048);
    std::vector<std::int32_t> counts;
    for (double x : biased) counts.push_back(static_cast<std::int32_t>(std::lround(x)));
    double expected_counts = 1000 / std::sqrt(2.0);
    CHECK(AcRms(biased) == doctest::Approx(expected_counts).epsilon(1e-9));
    CHECK(Rms(biased) > 2000);
    // Rounding to whole counts moves the result by well under one count.
    CHECK(AcRmsOfCounts(counts, 0.05) == doctest::Approx(expected_counts * 0.05).epsilon(1e-3));
  }

  TEST_CASE("active power of in-phase and quadrature waveforms") {
    std::vector<double> volts = Sine(360, 170, 0);
    std::vector<double> in_phase = Sine(360, 10, 0);
    std::vector<double> quadrature = Sine(360, 10, std::numbers::pi / 2);
    CHECK(ActivePower(volts, in_phase) == doctest::Approx(170 * 10 / 2.0));
    CHECK(std::fabs(ActivePower(volts, quadrature)) < 1e-9);
  }
}

}  // namespace
}  // namespace ampledger
