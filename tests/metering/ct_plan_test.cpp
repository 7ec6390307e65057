// tests/metering/ct_plan_test.cpp
#include "daemon/metering/ct_plan.h"

#include <doctest/doctest.h>

#include <cmath>
#include <numbers>
#include <set>
#include <vector>

#include "daemon/metering/power.h"

namespace ampledger {
namespace {

std::vector<int> Digits(ResistorSeries series) {
  std::span<const int> digits = SeriesDigits(series);
  return {digits.begin(), digits.end()};
}

// The geometric value an E-series is built on: 10^(i/n) with `figures` significant digits.
int GeometricDigits(int i, int n, int figures) {
  return static_cast<int>(std::lround(std::pow(10.0, figures - 1 + static_cast<double>(i) / n)));
}

// The worked case of the trade: 2000 turns, 30 A peak primary (21.21 A RMS), 3.3 V ADC biased
// at 1.65 V, 12 bits.
CtPlanInput TradeExample() {
  CtPlanInput input;
  input.turns = 2000;
  input.max_primary_amps = 30 / std::numbers::sqrt2;
  input.adc_bits = 12;
  input.adc_reference_volts = 3.3;
  input.bias_volts = 1.65;
  input.nominal_volts = 230;
  input.series = ResistorSeries::kE12;
  return input;
}

TEST_SUITE("metering") {
  // IEC 60063 E12 and E24 values, written here from memory of the standard's tables (as in
  // daemon/metering/ct_plan.cpp; this is a second, independent writing of them).
  TEST_CASE("ct_plan: E12 and E24 series are the IEC 60063 values (from memory)") {
    CHECK(Digits(ResistorSeries::kE12) ==
          std::vector<int>{10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82});
    CHECK(Digits(ResistorSeries::kE24) ==
          std::vector<int>{10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
                           33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91});
  }

  // IEC 60063 builds each series on 10^(i/n) rounded; E24 (and E12, its every other value)
  // keep older rounded values at known places. The departures are from memory of the standard:
  // 27 30 33 36 39 43 47 82 in E24, where the formula gives 26 29 32 35 38 42 46 83.
  TEST_CASE("ct_plan: E24 departs from 10^(i/24) exactly at the known historical values") {
    std::vector<int> e24 = Digits(ResistorSeries::kE24);
    std::set<int> departures;
    for (int i = 0; i < 24; ++i) {
      if (e24[i] != GeometricDigits(i, 24, 2)) departures.insert(e24[i]);
    }
    CHECK(departures == std::set<int>{27, 30, 33, 36, 39, 43, 47, 82});
    std::vector<int> e12 = Digits(ResistorSeries::kE12);
    for (int i = 0; i < 12; ++i) CHECK(e12[i] == e24[2 * i]);
  }

  // IEC 60063: E96 values are 10^(i/96) rounded to three significant figures, with no
  // departures (the formula is the standard's definition; that E96 has none is from memory).
  TEST_CASE("ct_plan: E96 is 10^(i/96) to three figures") {
    std::vector<int> e96 = Digits(ResistorSeries::kE96);
    REQUIRE(e96.size() == 96);
    for (int i = 0; i < 96; ++i) CHECK(e96[i] == GeometricDigits(i, 96, 3));
  }

  TEST_CASE("ct_plan: standard resistor at or below, across decades") {
    CHECK(*StandardResistorAtOrBelow(ResistorSeries::kE12, 110) == doctest::Approx(100));
    CHECK(*StandardResistorAtOrBelow(ResistorSeries::kE24, 110) == doctest::Approx(110));
    CHECK(*StandardResistorAtOrBelow(ResistorSeries::kE12, 23.33) == doctest::Approx(22));
    CHECK(*StandardResistorAtOrBelow(ResistorSeries::kE96, 23.33) == doctest::Approx(23.2));
    CHECK(*StandardResistorAtOrBelow(ResistorSeries::kE12, 9.99) == doctest::Approx(8.2));
    CHECK(*StandardResistorAtOrBelow(ResistorSeries::kE12, 1) == doctest::Approx(1));
    CHECK(*StandardResistorAtOrBelow(ResistorSeries::kE12, 5e7) == doctest::Approx(10e6));
    CHECK(!StandardResistorAtOrBelow(ResistorSeries::kE12, 0.9).ok());
    CHECK(!StandardResistorAtOrBelow(ResistorSeries::kE12, NAN).ok());
    CHECK(*NearestStandardResistor(ResistorSeries::kE12, 10000) == doctest::Approx(10000));
    CHECK(*NearestStandardResistor(ResistorSeries::kE12, 4500) == doctest::Approx(4700));
  }

  TEST_CASE("ct_plan: series names parse in either case") {
    CHECK(*ParseResistorSeries("e96") == ResistorSeries::kE96);
    CHECK(std::string(ResistorSeriesName(*ParseResistorSeries("E24"))) == "E24");
    Result<ResistorSeries> bad = ParseResistorSeries("E6");
    REQUIRE(!bad.ok());
    CHECK(bad.status().message() == "resistor series: expected E12, E24 or E96, got \"E6\"");
  }

  TEST_CASE("ct_plan: the trade's worked case (common practice)") {
    Result<CtPlan> plan = PlanCt(TradeExample());
    REQUIRE(plan.ok());
    // common practice: a CT with 2000 turns gives 15 mA peak at 30 A peak primary.
    CHECK(plan->secondary_peak_amps == doctest::Approx(0.015));
    // common practice: for a 3.3 V ADC biased at 1.65 V the ideal burden is 110 ohm, and the
    // nearest lower E12 value is 100 ohm.
    CHECK(plan->swing_volts == doctest::Approx(1.65));
    CHECK(plan->ideal_burden_ohms == doctest::Approx(110));
    CHECK(plan->burden_ohms == doctest::Approx(100));
    // common practice: a 12-bit ADC at 3.3 V resolves about 0.806 mV per count.
    CHECK(plan->volts_per_count == doctest::Approx(0.806e-3).epsilon(0.001));
    // common practice: a sine's RMS is its amplitude over sqrt(2).
    CHECK(plan->secondary_rms_amps == doctest::Approx(0.015 / std::sqrt(2.0)));
  }

  TEST_CASE("ct_plan: full scale follows from the standard burden") {
    Result<CtPlan> plan = PlanCt(TradeExample());
    REQUIRE(plan.ok());
    // 100 ohm instead of 110: the ADC reaches 1.65 V at 16.5 mA, i.e. 33 A peak primary.
    CHECK(plan->full_scale_primary_peak_amps == doctest::Approx(33));
    CHECK(plan->full_scale_primary_peak_amps >= plan->max_primary_peak_amps);
    // The full-scale RMS checked against an independently computed RMS of a sampled sine
    // (daemon/metering/power.h Rms) of that amplitude.
    std::vector<double> sine;
    for (int k = 0; k < 360; ++k) {
      sine.push_back(plan->full_scale_primary_peak_amps * std::sin(2 * std::numbers::pi * k / 360));
    }
    CHECK(plan->full_scale_primary_rms_amps == doctest::Approx(Rms(sine)));
    CHECK(plan->amps_per_volt == doctest::Approx(20));  // 2000 turns / 100 ohm
    CHECK(plan->amps_per_count == doctest::Approx(3.3 / 4096 * 20));
    CHECK(plan->watts_per_count == doctest::Approx(3.3 / 4096 * 20 * 230));
    // I^2 R with the secondary RMS current: (0.015 / sqrt 2)^2 x 100 = 11.25 mW.
    CHECK(plan->burden_watts == doctest::Approx(0.01125));
    CHECK(plan->burden_full_scale_watts == doctest::Approx(0.0165 * 0.0165 / 2 * 100));
  }

  TEST_CASE("ct_plan: rated currents give the turns; a current above the rating is flagged") {
    CtPlanInput input;
    input.rated_primary_amps = 100;
    input.rated_secondary_amps = 0.05;
    input.max_primary_amps = 100;
    Result<CtPlan> plan = PlanCt(input);
    REQUIRE(plan.ok());
    CHECK(plan->turns == doctest::Approx(2000));
    CHECK(plan->secondary_peak_amps == doctest::Approx(0.05 * std::sqrt(2.0)));
    CHECK(plan->ideal_burden_ohms == doctest::Approx(1.65 / (0.05 * std::sqrt(2.0))));
    CHECK(plan->burden_ohms == doctest::Approx(22));
    CHECK(!plan->exceeds_ct_rating);
    input.max_primary_amps = 120;
    CHECK(PlanCt(input)->exceeds_ct_rating);
  }

  TEST_CASE("ct_plan: bias divider") {
    CtPlanInput input = TradeExample();
    Result<CtPlan> plan = PlanCt(input);
    REQUIRE(plan.ok());
    CHECK(plan->bias_top_ohms == doctest::Approx(10000));
    CHECK(plan->bias_bottom_ohms == doctest::Approx(10000));
    CHECK(plan->bias_actual_volts == doctest::Approx(1.65));
    CHECK(plan->bias_divider_amps == doctest::Approx(3.3 / 20000));

    // Bias left at 0 means half the reference.
    input.bias_volts = 0;
    CHECK(PlanCt(input)->bias_volts == doctest::Approx(1.65));

    // An off-centre bias: the swing is the smaller gap, and the divider is unequal.
    input.bias_volts = 1.1;
    input.series = ResistorSeries::kE24;
    plan = PlanCt(input);
    REQUIRE(plan.ok());
    CHECK(plan->swing_volts == doctest::Approx(1.1));
    CHECK(plan->ideal_burden_ohms == doctest::Approx(1.1 / 0.015));
    CHECK(plan->bias_top_ohms == doctest::Approx(20000));  // 10k x 2.2 / 1.1
    CHECK(plan->bias_actual_volts == doctest::Approx(1.1));
  }

  TEST_CASE("ct_plan: bad input names the field") {
    CtPlanInput input = TradeExample();
    input.rated_primary_amps = 100;
    CHECK(PlanCt(input).status().message() ==
          "give the CT's turns, or its rated-primary-amps and rated-secondary-amps, not both");
    input = TradeExample();
    input.turns = 0;
    CHECK(!PlanCt(input).ok());
    input = TradeExample();
    input.max_primary_amps = -1;
    CHECK(PlanCt(input).status().message().starts_with("max-primary-amps: expected a number"));
    input = TradeExample();
    input.adc_bits = 0;
    CHECK(PlanCt(input).status().message() == "adc-bits: expected 1 to 32, got 0");
    input = TradeExample();
    input.bias_volts = 3.3;
    CHECK(PlanCt(input).status().message().starts_with("bias-volts: expected above 0"));
    input = TradeExample();
    input.turns = 5;  // 21 A through 5 turns: the burden would be a fraction of an ohm
    CHECK(PlanCt(input).status().message().find("below 1 ohm") != std::string::npos);
  }
}

}  // namespace
}  // namespace ampledger
