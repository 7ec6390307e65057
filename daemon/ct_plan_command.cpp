// daemon/ct_plan_command.cpp
#include "daemon/ct_plan_command.h"

#include <cstdio>
#include <ostream>
#include <string>

namespace ampledger {
namespace {

// printf-style formatting into a std::string, for aligned numeric columns.
template <typename... Args>
std::string Format(const char* format, Args... args) {
  char buffer[256];
  std::snprintf(buffer, sizeof buffer, format, args...);
  return buffer;
}

// Ohms with an SI prefix, e.g. "100 ohm", "4.7 kohm", "1 Mohm".
std::string Ohms(double ohms) {
  if (ohms >= 1e6) return Format("%.4g Mohm", ohms / 1e6);
  if (ohms >= 1e3) return Format("%.4g kohm", ohms / 1e3);
  return Format("%.4g ohm", ohms);
}

constexpr const char* kCautions =
    "Cautions\n"
    "  - Never open-circuit a CT secondary while its primary carries current: without its\n"
    "    burden a CT can develop a dangerous voltage and be destroyed. Fit the burden (or\n"
    "    connect the node) first, clamp the CT on last, and unclamp it first.\n"
    "  - Pass one conductor through the core. Hot and neutral together read zero, since\n"
    "    their currents cancel.\n"
    "  - Work inside a panel is for qualified people (a licensed electrician wherever local\n"
    "    codes require one), under local electrical codes and the utility's rules, which\n"
    "    come before anything printed here. Use a CT rated for the circuit's current and\n"
    "    insulation voltage, and check its datasheet's largest allowed burden.\n";

}  // namespace

std::string DescribeCtPlan(const CtPlanInput& input, const CtPlan& plan) {
  std::string text;
  text += "Current transformer\n";
  text += Format("  turns ratio                 1:%g\n", plan.turns);
  text += Format("  largest primary current     %g A RMS, %.4g A peak (sine)\n",
                 input.max_primary_amps, plan.max_primary_peak_amps);
  text += Format("  secondary current           %.4g mA RMS, %.4g mA peak\n",
                 plan.secondary_rms_amps * 1e3, plan.secondary_peak_amps * 1e3);
  text += "ADC input\n";
  text += Format("  %d bits, %g V reference, bias %g V: +/- %g V around the bias\n",
                 input.adc_bits, input.adc_reference_volts, plan.bias_volts, plan.swing_volts);
  text += "Burden resistor\n";
  text += Format("  ideal                       %.4g ohm\n", plan.ideal_burden_ohms);
  text += "  " + std::string(ResistorSeriesName(input.series)) +
          " value at or below       " + Ohms(plan.burden_ohms) + "\n";
  text += Format("  dissipation                 %.3g mW at %g A, %.3g mW at full scale\n",
                 plan.burden_watts * 1e3, input.max_primary_amps,
                 plan.burden_full_scale_watts * 1e3);
  text += "Resulting range and resolution\n";
  text += Format("  full scale                  %.4g A RMS (%.4g A peak)\n",
                 plan.full_scale_primary_rms_amps, plan.full_scale_primary_peak_amps);
  text += Format("  per ADC count               %.4g mV, %.4g A, %.4g W at %g V\n",
                 plan.volts_per_count * 1e3, plan.amps_per_count, plan.watts_per_count,
                 input.nominal_volts);
  text += "Bias divider (reference -- top -- ADC bias -- bottom -- ground)\n";
  text += "  top " + Ohms(plan.bias_top_ohms) + ", bottom " + Ohms(plan.bias_bottom_ohms) +
          Format(": %.4g V, %.3g uA through it; decouple the bias point with a capacitor\n",
                 plan.bias_actual_volts, plan.bias_divider_amps * 1e6);
  text += "Calibration constant for the node's firmware\n";
  std::string per_volt = Format("amps_per_volt = %.6g", plan.amps_per_volt);
  std::string per_count = Format("amps_per_count = %.6g", plan.amps_per_count);
  text += Format("  %-28s# primary A per V across the burden (turns / ohms)\n", per_volt.c_str());
  text += Format("  %-28s# the same per ADC count\n", per_count.c_str());
  text += "  In ampledger's config, start the channel at gain = 1 and set rated_amps to the\n"
          "  CT's rating; `ampledger calibrate` refines the gain against a reference.\n";
  if (plan.exceeds_ct_rating) {
    text += Format("Warning: %g A is above the CT's rated %g A; choose a larger CT.\n",
                   input.max_primary_amps, input.rated_primary_amps);
  }
  text += "The plan assumes a sinusoidal current: a distorted one (electronic loads) has\n"
          "higher peaks for the same RMS and may clip; leave headroom for it.\n";
  text += kCautions;
  return text;
}

int RunCtPlan(const CtPlanOptions& options, std::ostream& out, std::ostream& err) {
  Result<ResistorSeries> series = ParseResistorSeries(options.series_name);
  if (!series.ok()) {
    err << "ampledger ct-plan: " << series.status().message() << "\n";
    return 2;
  }
  CtPlanInput input = options.input;
  input.series = *series;
  Result<CtPlan> plan = PlanCt(input);
  if (!plan.ok()) {
    err << "ampledger ct-plan: " << plan.status().message() << "\n";
    return 2;
  }
  out << DescribeCtPlan(input, *plan);
  return 0;
}

}  // namespace ampledger
