// daemon/metering/ct_plan.h
// Sizing a current transformer's burden resistor for a node's ADC (`ampledger ct-plan`).
//
// A current-output CT with N secondary turns (one primary conductor through the core) turns a
// primary current I into a secondary current I / N. The burden resistor R turns that into a
// voltage I / N x R, which the node's ADC samples around a DC bias (a single-supply ADC cannot
// read below 0 V). The largest peak must stay inside the smaller of the two gaps bias..0 and
// bias..reference, so R = gap / peak secondary current; a standard resistor at or below it keeps
// the peak in range. Everything here is pure arithmetic on plain values; any thread may call it.
#pragma once

#include <span>
#include <string_view>

#include "config/status.h"

namespace ampledger {

// The preferred-number series of IEC 60063 for resistors: each decade holds 12, 24 or 96
// values (2, 2 and 3 significant digits).
enum class ResistorSeries { kE12, kE24, kE96 };

// "E12" / "E24" / "E96" (case-insensitive) or InvalidArgument naming the choices.
Result<ResistorSeries> ParseResistorSeries(std::string_view name);
const char* ResistorSeriesName(ResistorSeries series);

// One decade of `series` as its significant digits, ascending: {10, 12, 15, ...} for E12,
// {100, 102, 105, ...} for E96.
std::span<const int> SeriesDigits(ResistorSeries series);

// The largest value of `series` (any decade from 1 ohm to 10 Mohm) that is <= ohms, or
// InvalidArgument when ohms is below 1 ohm or not finite.
Result<double> StandardResistorAtOrBelow(ResistorSeries series, double ohms);

// The value of `series` (1 ohm to 10 Mohm) closest to `ohms` in ratio, or InvalidArgument.
Result<double> NearestStandardResistor(ResistorSeries series, double ohms);

struct CtPlanInput {
  // The CT: either its secondary turns, or its rated primary and secondary currents (RMS), from
  // which turns = primary / secondary. Give exactly one of the two (turns > 0, or both rated
  // currents > 0).
  double turns = 0;
  double rated_primary_amps = 0;
  double rated_secondary_amps = 0;

  double max_primary_amps = 0;  // the largest RMS primary current to read, > 0
  int adc_bits = 12;            // 1 to 32
  double adc_reference_volts = 3.3;
  double bias_volts = 0;        // the ADC input's DC bias; 0 means half the reference
  double nominal_volts = 230;   // the site's nominal voltage, for power per count
  ResistorSeries series = ResistorSeries::kE12;
  double bias_bottom_ohms = 10000;  // lower resistor of the bias divider (to ground)
};

struct CtPlan {
  double turns = 0;                      // secondary turns per primary turn
  double max_primary_peak_amps = 0;      // max_primary_amps x sqrt(2)
  double secondary_peak_amps = 0;        // at the largest primary current
  double secondary_rms_amps = 0;
  double swing_volts = 0;                // largest peak the ADC input can take around the bias
  double ideal_burden_ohms = 0;          // swing / secondary peak
  double burden_ohms = 0;                // standard value at or below the ideal
  double full_scale_primary_peak_amps = 0;  // primary peak that drives the ADC to its limit
  double full_scale_primary_rms_amps = 0;   // the same for a sine
  double volts_per_count = 0;            // reference / 2^bits
  double amps_per_count = 0;             // primary amps per ADC count (instantaneous sample)
  double watts_per_count = 0;            // amps_per_count x nominal volts
  double burden_watts = 0;               // dissipated at max_primary_amps
  double burden_full_scale_watts = 0;    // dissipated at the full-scale current
  double amps_per_volt = 0;              // primary amps per volt across the burden: turns / R
  double bias_volts = 0;                 // the bias asked for
  double bias_top_ohms = 0;              // divider: reference -- top -- bias -- bottom -- ground
  double bias_bottom_ohms = 0;
  double bias_actual_volts = 0;          // what the standard divider values give
  double bias_divider_amps = 0;          // current through the divider
  bool exceeds_ct_rating = false;        // max_primary_amps above rated_primary_amps
};

// Plans the burden and bias for `input`, or InvalidArgument naming the field at fault.
Result<CtPlan> PlanCt(const CtPlanInput& input);

}  // namespace ampledger
