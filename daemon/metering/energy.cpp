// daemon/metering/energy.cpp
#include "daemon/metering/energy.h"

#include <algorithm>

namespace ampledger {
namespace {

constexpr double kJoulesPerWh = 3600.0;
constexpr double kMsPerHour = 3600.0 * 1000.0;

// The register delta of rule 2, or a negative value when rule 2 does not apply.
double RegisterDelta(const std::optional<double>& previous, const std::optional<double>& current,
                     bool same_boot) {
  if (!same_boot || !previous || !current || *current < *previous) return -1;
  return *current - *previous;
}

}  // namespace

double EnergySpan::MeanWatts() const {
  return length_ms() > 0 ? real_wh * kMsPerHour / static_cast<double>(length_ms()) : 0.0;
}

EnergySpan IntervalEnergy(const ChannelReading* previous, const ChannelReading& reading,
                          UnixMs max_gap_ms) {
  if (previous != nullptr &&
      (previous->end_ms >= reading.end_ms || reading.end_ms - previous->end_ms > max_gap_ms)) {
    previous = nullptr;  // rule 1
  }
  EnergySpan span;
  span.end_ms = reading.end_ms;
  span.quality = reading.quality;

  // The reading's own interval, at most max_gap_ms, never before the previous reading's end.
  UnixMs own_ms = std::clamp<UnixMs>(reading.duration_ms, 0, max_gap_ms);
  UnixMs own_begin = reading.end_ms - own_ms;
  if (previous != nullptr) own_begin = std::max(own_begin, previous->end_ms);

  if (previous != nullptr && reading.real_register_j) {
    bool same_boot = previous->boot == reading.boot;
    double real_j = RegisterDelta(previous->real_register_j, reading.real_register_j, same_boot);
    if (real_j >= 0) {  // rule 2
      span.source = EnergySource::kRegisterDelta;
      span.begin_ms = previous->end_ms;
      span.real_wh = real_j / kJoulesPerWh;
      double apparent_j =
          RegisterDelta(previous->apparent_register_j, reading.apparent_register_j, same_boot);
      span.apparent_vah = apparent_j >= 0
                              ? apparent_j / kJoulesPerWh
                              : reading.apparent_va * span.length_ms() / kMsPerHour;
    } else if (!same_boot || *reading.real_register_j < previous->real_register_j.value_or(0)) {
      span.source = EnergySource::kRegisterRestart;  // rule 3
      span.begin_ms = own_begin;
      span.real_wh = std::max(0.0, *reading.real_register_j) / kJoulesPerWh;
      span.apparent_vah = reading.apparent_register_j
                              ? std::max(0.0, *reading.apparent_register_j) / kJoulesPerWh
                              : reading.apparent_va * span.length_ms() / kMsPerHour;
    }
    if (span.source != EnergySource::kIntegrated) {
      span.covered_ms = span.length_ms();
      return span;
    }
  }
  // Rule 4. Also reached when the previous reading has no register: nothing to subtract from.
  span.begin_ms = own_begin;
  double hours = static_cast<double>(span.length_ms()) / kMsPerHour;
  span.real_wh = std::max(0.0, reading.real_watts) * hours;
  span.apparent_vah = std::max(0.0, reading.apparent_va) * hours;
  span.covered_ms = span.length_ms();
  return span;
}

}  // namespace ampledger
