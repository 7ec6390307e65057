#include "daemon/demo_loads.h"

#include <cmath>
#include <cstdint>
#include <numbers>

namespace ampledger {

namespace {

// A repeatable pseudo-random number in [0, 1) for (seed, step): a 64-bit mix (splitmix64).
double Noise(std::uint64_t seed, std::int64_t step) {
  std::uint64_t x = seed * 0x9E3779B97F4A7C15ull + static_cast<std::uint64_t>(step);
  x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9ull;
  x = (x ^ (x >> 27)) * 0x94D049BB133111EBull;
  x ^= x >> 31;
  return static_cast<double>(x >> 11) / 9007199254740992.0;
}

std::uint64_t SeedOf(const std::string& text) {
  std::uint64_t hash = 1469598103934665603ull;  // FNV-1a
  for (unsigned char c : text) hash = (hash ^ c) * 1099511628211ull;
  return hash;
}

bool Between(int minute, int from, int to) { return from <= minute && minute < to; }

struct Clock {
  int minute;        // local minute of the day
  unsigned weekday;  // 0 = Sunday
  std::int64_t day;  // days since 1970 (local)
  UnixMs instant;
};

// A refrigerator: the compressor runs about a third of the time.
DemoLoad Fridge(std::uint64_t seed, const Clock& clock) {
  std::int64_t cycle_minutes = 55 + static_cast<int>(Noise(seed, clock.day) * 10);
  std::int64_t into = (clock.instant / 60000 + static_cast<std::int64_t>(seed % 40)) % cycle_minutes;
  if (into < 18) return {115 + 10 * Noise(seed, clock.instant / 10000), 0.82};
  return {4, 0.6};
}

DemoLoad Kitchen(std::uint64_t seed, const Clock& clock) {
  double watts = 12;  // clocks and chargers
  if (Between(clock.minute, 7 * 60, 7 * 60 + 6) && Noise(seed, clock.day) < 0.9) watts += 1450;
  if (Between(clock.minute, 18 * 60, 18 * 60 + 50)) {
    watts += 900 + 400 * Noise(seed, clock.instant / 120000);  // oven element cycling
  }
  return {watts, 0.99};
}

DemoLoad Lights(std::uint64_t seed, const Clock& clock, double evening_watts) {
  if (Between(clock.minute, 6 * 60 + 30, 8 * 60)) return {evening_watts * 0.5, 0.95};
  if (Between(clock.minute, 17 * 60, 23 * 60 + static_cast<int>(30 * Noise(seed, clock.day)))) {
    return {evening_watts, 0.95};
  }
  return {3, 0.9};
}

// A heat-pump water heater: the compressor after morning and evening showers, and on
// Sundays the resistive backup element for twenty minutes (it trips the demo's alert).
DemoLoad WaterHeater(std::uint64_t seed, const Clock& clock) {
  int shift = static_cast<int>(20 * Noise(seed, clock.day));
  if (clock.weekday == 0 && Between(clock.minute, 8 * 60 + shift, 8 * 60 + 20 + shift)) {
    return {4500, 1.0};
  }
  if (Between(clock.minute, 7 * 60 + shift, 8 * 60 + 30 + shift) ||
      Between(clock.minute, 19 * 60 + shift, 21 * 60 + shift)) {
    return {520 + 40 * Noise(seed, clock.instant / 30000), 0.9};
  }
  return {6, 0.7};
}

// A mini-split heating in winter: modulates with the hour, harder at night.
DemoLoad MiniSplit(std::uint64_t seed, const Clock& clock) {
  double hour = clock.minute / 60.0;
  double demand = 0.55 + 0.35 * std::cos((hour - 4.0) / 24.0 * 2 * std::numbers::pi);
  double watts = 250 + 900 * demand + 80 * Noise(seed, clock.instant / 60000);
  return {watts, 0.96};
}

// Laundry days: Wednesday and Saturday mornings. The washer runs 10:00-10:50; the dryer
// 11:00-11:55 with its heating element cycling over the drum motor.
bool LaundryDay(const Clock& clock) { return clock.weekday == 3 || clock.weekday == 6; }

DemoLoad Washer(std::uint64_t seed, const Clock& clock) {
  if (!LaundryDay(clock) || !Between(clock.minute, 10 * 60, 10 * 60 + 50)) return {1, 0.5};
  bool spinning = Between(clock.minute, 10 * 60 + 40, 10 * 60 + 50);
  return {spinning ? 650.0 : 320 + 120 * Noise(seed, clock.instant / 20000), 0.78};
}

DemoLoad Dryer(const Clock& clock) {
  if (!LaundryDay(clock) || !Between(clock.minute, 11 * 60, 11 * 60 + 55)) return {0, 1.0};
  bool element_on = (clock.instant / 1000 / 150) % 3 != 2;  // 5 minutes on, 2.5 off
  return {element_on ? 4800.0 : 280.0, element_on ? 0.99 : 0.75};
}

// Rooftop solar in a Chicago winter: a half sine between about 07:15 and 16:30 local time,
// dimmed by passing cloud.
DemoLoad Solar(std::uint64_t seed, const Clock& clock) {
  const double sunrise = 7 * 60 + 15, sunset = 16 * 60 + 30;
  if (clock.minute <= sunrise || clock.minute >= sunset) return {0, 1.0};
  double sun = std::sin((clock.minute - sunrise) / (sunset - sunrise) * std::numbers::pi);
  double cloud = 0.55 + 0.45 * Noise(seed, clock.instant / 600000);
  return {3800 * sun * cloud, 0.99};
}

}  // namespace

DemoLoad DemoCircuitLoad(const std::string& circuit_id, UnixMs instant, const LocalTime& local) {
  LocalMoment moment = local.At(instant);
  Clock clock{moment.minute_of_day, moment.weekday.c_encoding(),
              date::sys_days(moment.date).time_since_epoch().count(), instant};
  std::uint64_t seed = SeedOf(circuit_id);
  if (circuit_id.ends_with("-fridge")) return Fridge(seed, clock);
  if (circuit_id.ends_with("-kitchen")) return Kitchen(seed, clock);
  if (circuit_id.ends_with("-lights")) {
    return Lights(seed, clock, circuit_id == "hall-lights" ? 45 : 140);
  }
  if (circuit_id.ends_with("-water-heater")) return WaterHeater(seed, clock);
  if (circuit_id.ends_with("-minisplit")) return MiniSplit(seed, clock);
  if (circuit_id == "laundry-washer") return Washer(seed, clock);
  if (circuit_id == "laundry-dryer") return Dryer(clock);
  if (circuit_id == "solar") return Solar(seed, clock);
  return {};
}

}  // namespace ampledger
