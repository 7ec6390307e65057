// tests/metering/bill_test_util.h
// Helpers for bill and statement tests: tariffs and loads built from plain values.
#pragma once

#include <doctest/doctest.h>

#include <functional>
#include <string>
#include <vector>

#include "daemon/metering/bill.h"

namespace ampledger::testing {

inline LocalTime Zone(const std::string& name) {
  Result<LocalTime> zone = LocalTime::ForZone(name);
  REQUIRE(zone.ok());
  return *zone;
}

inline BillingCycle Cycle(const LocalTime& zone, int day, date::year_month month) {
  Result<BillingCycle> cycle = zone.CycleStarting(day, month);
  REQUIRE(cycle.ok());
  return *cycle;
}

inline Tariff MakeTariff(TariffConfig config) {
  Result<Tariff> tariff = Tariff::Create(std::move(config));
  REQUIRE_MESSAGE(tariff.ok(), tariff.status().ToString());
  return *tariff;
}

// One season all year with one period priced `per_kwh`.
inline TariffRates FlatRates(double per_kwh) {
  return {"flat", {{"all year", date::January / 1, date::December / 31, {{"all hours", per_kwh}},
                    {}, "all hours", std::nullopt}}, {}};
}

// A load over every bucket of `cycle`: kWh of bucket k is `kwh_of(k)`; apparent energy
// real / `power_factor`.
inline LoadSeries Load(const std::string& id, const BillingCycle& cycle,
                       const std::function<double(int)>& kwh_of, double power_factor = 1,
                       bool is_export = false) {
  LoadSeries load{id, is_export, false, {}};
  int count = static_cast<int>(cycle.range.DurationMs() / kMsPerBucket);
  for (int k = 0; k < count; ++k) {
    CircuitBucket bucket;
    bucket.start_ms = cycle.range.start_ms + k * kMsPerBucket;
    bucket.real_wh = kwh_of(k) * 1000;
    bucket.apparent_vah = bucket.real_wh / power_factor;
    bucket.coverage = 1;
    load.buckets.push_back(bucket);
  }
  return load;
}

// `total_kwh` spread evenly over the cycle.
inline LoadSeries Even(const std::string& id, const BillingCycle& cycle, double total_kwh) {
  double count = static_cast<double>(cycle.range.DurationMs() / kMsPerBucket);
  return Load(id, cycle, [=](int) { return total_kwh / count; });
}

inline Bill MakeBill(const Tariff& tariff, const LocalTime& zone, BillInput input) {
  Result<Bill> bill = ComputeBill(tariff, zone, input);
  REQUIRE_MESSAGE(bill.ok(), bill.status().ToString());
  return *bill;
}

// The amounts of a bill's lines, as "12.34" strings, in order.
inline std::vector<std::string> Amounts(const Bill& bill) {
  std::vector<std::string> amounts;
  for (const BillLine& line : bill.lines) amounts.push_back(FormatCents(line.amount));
  return amounts;
}

}  // namespace ampledger::testing
