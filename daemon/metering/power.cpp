// daemon/metering/power.cpp
#include "daemon/metering/power.h"

#include <cassert>
#include <cmath>

namespace ampledger {

double ApparentPower(double volts_rms, double amps_rms) { return volts_rms * amps_rms; }

double PowerFactor(double real_watts, double apparent_va) {
  if (apparent_va <= 0) return 0;
  return real_watts / apparent_va;
}

double NonactivePower(double real_watts, double apparent_va) {
  double squared = apparent_va * apparent_va - real_watts * real_watts;
  return squared > 0 ? std::sqrt(squared) : 0;
}

double Rms(std::span<const double> samples) {
  if (samples.empty()) return 0;
  double sum_of_squares = 0;
  for (double x : samples) sum_of_squares += x * x;
  return std::sqrt(sum_of_squares / static_cast<double>(samples.size()));
}

double AcRms(std::span<const double> samples) {
  if (samples.empty()) return 0;
  double sum = 0;
  for (double x : samples) sum += x;
  double mean = sum / static_cast<double>(samples.size());
  double sum_of_squares = 0;
  for (double x : samples) sum_of_squares += (x - mean) * (x - mean);
  return std::sqrt(sum_of_squares / static_cast<double>(samples.size()));
}

double AcRmsOfCounts(std::span<const std::int32_t> counts, double units_per_count) {
  if (counts.empty()) return 0;
  double sum = 0;
  for (std::int32_t c : counts) sum += c;
  double mean = sum / static_cast<double>(counts.size());
  double sum_of_squares = 0;
  for (std::int32_t c : counts) sum_of_squares += (c - mean) * (c - mean);
  return std::sqrt(sum_of_squares / static_cast<double>(counts.size())) * units_per_count;
}

double ActivePower(std::span<const double> volts, std::span<const double> amps) {
  assert(volts.size() == amps.size());
  if (volts.empty()) return 0;
  double sum = 0;
  for (std::size_t k = 0; k < volts.size(); ++k) sum += volts[k] * amps[k];
  return sum / static_cast<double>(volts.size());
}

}  // namespace ampledger
