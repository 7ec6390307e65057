// daemon/metering/ct_plan.cpp
#include "daemon/metering/ct_plan.h"

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <numbers>
#include <string>

namespace ampledger {
namespace {

// IEC 60063 significant digits per decade. Taken from memory of the standard's tables; the
// tests check E96 against the series' defining formula and E12/E24 against their known
// departures from it.
constexpr std::array<int, 12> kE12 = {10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82};
constexpr std::array<int, 24> kE24 = {10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
                                      33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91};
constexpr std::array<int, 96> kE96 = {
    100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130, 133, 137, 140, 143,
    147, 150, 154, 158, 162, 165, 169, 174, 178, 182, 187, 191, 196, 200, 205, 210,
    215, 221, 226, 232, 237, 243, 249, 255, 261, 267, 274, 280, 287, 294, 301, 309,
    316, 324, 332, 340, 348, 357, 365, 374, 383, 392, 402, 412, 422, 432, 442, 453,
    464, 475, 487, 499, 511, 523, 536, 549, 562, 576, 590, 604, 619, 634, 649, 665,
    681, 698, 715, 732, 750, 768, 787, 806, 825, 845, 866, 887, 909, 931, 953, 976};

// Resistor values offered: 1 ohm to 10 Mohm, the range of ordinary through-hole and SMD parts.
constexpr double kMinOhms = 1;
constexpr double kMaxOhms = 10e6;

// Every value of `series` from kMinOhms to kMaxOhms, calling visit(ohms) in ascending order.
template <typename Visit>
void ForEachValue(ResistorSeries series, Visit visit) {
  std::span<const int> digits = SeriesDigits(series);
  const double digit_scale = digits.front();  // 10 or 100: digits of the 1..10 ohm decade
  for (double decade = kMinOhms; decade < kMaxOhms; decade *= 10) {
    for (int digit : digits) visit(decade * digit / digit_scale);
  }
  visit(kMaxOhms);
}

Status CheckResistance(double ohms) {
  if (!std::isfinite(ohms) || ohms < kMinOhms || ohms > 1e12) {
    return Status::InvalidArgument("resistance " + std::to_string(ohms) +
                                   " ohm is outside 1 ohm to 1 Tohm");
  }
  return Status::Ok();
}

Status Positive(const char* name, double value) {
  if (std::isfinite(value) && value > 0) return Status::Ok();
  return Status::InvalidArgument(std::string(name) + ": expected a number above 0, got " +
                                 std::to_string(value));
}

Status CheckInput(const CtPlanInput& input) {
  bool by_turns = input.turns != 0;
  bool by_rating = input.rated_primary_amps != 0 || input.rated_secondary_amps != 0;
  if (by_turns == by_rating) {
    return Status::InvalidArgument(
        "give the CT's turns, or its rated-primary-amps and rated-secondary-amps, not both");
  }
  if (by_turns) {
    if (Status s = Positive("turns", input.turns); !s.ok()) return s;
  } else {
    if (Status s = Positive("rated-primary-amps", input.rated_primary_amps); !s.ok()) return s;
    if (Status s = Positive("rated-secondary-amps", input.rated_secondary_amps); !s.ok()) return s;
  }
  if (Status s = Positive("max-primary-amps", input.max_primary_amps); !s.ok()) return s;
  if (input.adc_bits < 1 || input.adc_bits > 32) {
    return Status::InvalidArgument("adc-bits: expected 1 to 32, got " +
                                   std::to_string(input.adc_bits));
  }
  if (Status s = Positive("adc-reference-volts", input.adc_reference_volts); !s.ok()) return s;
  if (Status s = Positive("nominal-volts", input.nominal_volts); !s.ok()) return s;
  if (Status s = Positive("bias-bottom-ohms", input.bias_bottom_ohms); !s.ok()) return s;
  if (input.bias_volts != 0 &&
      !(input.bias_volts > 0 && input.bias_volts < input.adc_reference_volts)) {
    return Status::InvalidArgument("bias-volts: expected above 0 and below the reference (" +
                                   std::to_string(input.adc_reference_volts) + " V), got " +
                                   std::to_string(input.bias_volts));
  }
  return Status::Ok();
}

}  // namespace

Result<ResistorSeries> ParseResistorSeries(std::string_view name) {
  std::string upper;
  for (char c : name) upper += static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
  if (upper == "E12") return ResistorSeries::kE12;
  if (upper == "E24") return ResistorSeries::kE24;
  if (upper == "E96") return ResistorSeries::kE96;
  return Status::InvalidArgument("resistor series: expected E12, E24 or E96, got \"" +
                                 std::string(name) + "\"");
}

const char* ResistorSeriesName(ResistorSeries series) {
  switch (series) {
    case ResistorSeries::kE12: return "E12";
    case ResistorSeries::kE24: return "E24";
    case ResistorSeries::kE96: return "E96";
  }
  return "?";
}

std::span<const int> SeriesDigits(ResistorSeries series) {
  switch (series) {
    case ResistorSeries::kE12: return kE12;
    case ResistorSeries::kE24: return kE24;
    case ResistorSeries::kE96: return kE96;
  }
  return {};
}

Result<double> StandardResistorAtOrBelow(ResistorSeries series, double ohms) {
  if (Status s = CheckResistance(ohms); !s.ok()) return s;
  double best = 0;
  // A relative tolerance lets an exact series value (110 computed as 1.65 / 0.015) match
  // itself despite rounding in the last bit.
  ForEachValue(series, [&](double value) {
    if (value <= ohms * (1 + 1e-9)) best = value;
  });
  return best;
}

Result<double> NearestStandardResistor(ResistorSeries series, double ohms) {
  if (Status s = CheckResistance(ohms); !s.ok()) return s;
  double best = 0;
  double best_distance = INFINITY;
  ForEachValue(series, [&](double value) {
    double distance = std::abs(std::log(value / ohms));
    if (distance < best_distance) {
      best = value;
      best_distance = distance;
    }
  });
  return best;
}

Result<CtPlan> PlanCt(const CtPlanInput& input) {
  if (Status s = CheckInput(input); !s.ok()) return s;
  CtPlan plan;
  plan.turns = input.turns != 0 ? input.turns
                                : input.rated_primary_amps / input.rated_secondary_amps;
  plan.exceeds_ct_rating =
      input.rated_primary_amps > 0 && input.max_primary_amps > input.rated_primary_amps;

  // A sine's peak is its RMS value times sqrt(2); the plan assumes sinusoidal current, and
  // the tool's output says so (distorted currents have higher crest factors).
  plan.max_primary_peak_amps = input.max_primary_amps * std::numbers::sqrt2;
  plan.secondary_peak_amps = plan.max_primary_peak_amps / plan.turns;
  plan.secondary_rms_amps = input.max_primary_amps / plan.turns;

  const double reference = input.adc_reference_volts;
  plan.bias_volts = input.bias_volts != 0 ? input.bias_volts : reference / 2;
  plan.swing_volts = std::min(plan.bias_volts, reference - plan.bias_volts);
  plan.ideal_burden_ohms = plan.swing_volts / plan.secondary_peak_amps;
  Result<double> burden = StandardResistorAtOrBelow(input.series, plan.ideal_burden_ohms);
  if (!burden.ok()) {
    return Status::InvalidArgument(
        "the ideal burden (" + std::to_string(plan.ideal_burden_ohms) +
        " ohm) is below 1 ohm: choose a CT with more turns or a lower max-primary-amps");
  }
  plan.burden_ohms = *burden;

  plan.full_scale_primary_peak_amps = plan.swing_volts / plan.burden_ohms * plan.turns;
  plan.full_scale_primary_rms_amps = plan.full_scale_primary_peak_amps / std::numbers::sqrt2;
  plan.volts_per_count = reference / std::ldexp(1.0, input.adc_bits);
  plan.amps_per_volt = plan.turns / plan.burden_ohms;
  plan.amps_per_count = plan.volts_per_count * plan.amps_per_volt;
  plan.watts_per_count = plan.amps_per_count * input.nominal_volts;
  plan.burden_watts = plan.secondary_rms_amps * plan.secondary_rms_amps * plan.burden_ohms;
  double full_scale_secondary_rms = plan.full_scale_primary_rms_amps / plan.turns;
  plan.burden_full_scale_watts =
      full_scale_secondary_rms * full_scale_secondary_rms * plan.burden_ohms;

  // Bias divider: bias = reference x bottom / (top + bottom), so top = bottom x (ref - bias) /
  // bias; the top is the standard value nearest that (either side is fine for a bias).
  plan.bias_bottom_ohms = input.bias_bottom_ohms;
  double ideal_top = input.bias_bottom_ohms * (reference - plan.bias_volts) / plan.bias_volts;
  Result<double> top = NearestStandardResistor(input.series, ideal_top);
  if (!top.ok()) return top.status().WithContext("bias divider top resistor");
  plan.bias_top_ohms = *top;
  plan.bias_actual_volts =
      reference * plan.bias_bottom_ohms / (plan.bias_top_ohms + plan.bias_bottom_ohms);
  plan.bias_divider_amps = reference / (plan.bias_top_ohms + plan.bias_bottom_ohms);
  return plan;
}

}  // namespace ampledger
