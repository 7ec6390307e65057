// daemon/metering/cycle_statements.cpp
#include "daemon/metering/cycle_statements.h"

#include <algorithm>

namespace ampledger {
namespace {

std::string DayText(date::year_month_day day) {
  return date::format("%F", date::sys_days{day});
}

date::year_month_day LastDay(const BillingCycle& span) {
  return date::year_month_day{date::sys_days{span.next_first_day} - date::days{1}};
}

// The buckets of `circuits` that start inside `range`.
std::vector<CircuitSeries> Within(const std::vector<CircuitSeries>& circuits, TimeRange range) {
  std::vector<CircuitSeries> out;
  for (const CircuitSeries& series : circuits) {
    CircuitSeries& part = out.emplace_back();
    part.circuit = series.circuit;
    for (const CircuitBucket& bucket : series.buckets) {
      if (range.Contains(bucket.start_ms)) part.buckets.push_back(bucket);
    }
  }
  return out;
}

void Mark(std::string* description, const std::string& label) { *description += " " + label; }

// Adds `part` (one part of the cycle, its lines marked with `label`) to `whole`.
void Append(CycleStatements part, const std::string& label, CycleStatements* whole) {
  Bill& site = whole->site;
  const Bill& from = part.site;
  double hours_before = site.hours;
  double load_before = site.load_kwh;
  for (BillLine line : from.lines) {
    Mark(&line.description, label);
    site.lines.push_back(std::move(line));
  }
  site.days += from.days;
  site.hours += from.hours;
  site.total += from.total;
  site.credit_carried_out = from.credit_carried_out;
  site.banked_kwh_out = from.banked_kwh_out;
  site.load_kwh += from.load_kwh;
  site.import_kwh += from.import_kwh;
  site.export_kwh += from.export_kwh;
  site.billed_kwh += from.billed_kwh;
  site.billing_demand_kw = from.billing_demand_kw;  // the latest tariff's, for its ratchets
  auto weighted = [](double a, double wa, double b, double wb) {
    return wa + wb > 0 ? (a * wa + b * wb) / (wa + wb) : 0;
  };
  site.coverage = weighted(site.coverage, hours_before, from.coverage, from.hours);
  site.estimated_fraction =
      weighted(site.estimated_fraction, load_before, from.estimated_fraction, from.load_kwh);
  site.power_factor = site.power_factor > 0 && from.power_factor > 0
                          ? weighted(site.power_factor, load_before, from.power_factor,
                                     from.load_kwh)
                          : (hours_before == 0 ? from.power_factor : 0);
  site.each_line_rounded = site.each_line_rounded && from.each_line_rounded;
  for (UnitStatement& unit : part.units) {
    UnitStatement* target = nullptr;
    for (UnitStatement& existing : whole->units) {
      if (existing.unit_id == unit.unit_id) target = &existing;
    }
    if (target == nullptr) {
      target = &whole->units.emplace_back();
      target->unit_id = unit.unit_id;
      target->unit_name = unit.unit_name;
    }
    for (StatementLine& line : unit.lines) {
      Mark(&line.description, label);
      target->lines.push_back(std::move(line));
    }
    target->total += unit.total;
    target->own_kwh += unit.own_kwh;
    target->shared_kwh += unit.shared_kwh;
  }
  whole->submetered_import_kwh += part.submetered_import_kwh;
  whole->remainder_kwh += part.remainder_kwh;
}

}  // namespace

Result<CycleStatements> ComputeCycleStatements(const Config& config,
                                               const TariffSchedule& schedule,
                                               const LocalTime& local, const BillingCycle& cycle,
                                               const std::vector<CircuitSeries>& circuits,
                                               const std::vector<MainMeterRead>& meter_reads,
                                               const CycleReads& carried,
                                               const std::vector<MeterInterval>& meter_intervals) {
  if (schedule.empty()) {
    return Status::InvalidArgument("the site has no tariff (site.tariff in the config)");
  }
  Result<std::vector<CyclePart>> parts = schedule.Split(local, cycle);
  if (!parts.ok()) return parts.status();
  // The main meter's energy is used only when its reads cover the whole cycle.
  Result<MeterEnergy> whole_meter =
      MainMeterEnergyFromAll(meter_intervals, meter_reads, cycle.range);
  CycleReads reads = carried;
  reads.main_meter_kwh.reset();
  if (whole_meter.ok()) reads.main_meter_kwh = whole_meter->kwh;

  if (parts->size() == 1) {
    Result<CycleStatements> result =
        ComputeStatements(config, parts->front().tariff->tariff, local, cycle, circuits, reads);
    if (!result.ok()) return result;
    const ScheduledTariff& tariff = *parts->front().tariff;
    result->tariffs.push_back(
        {tariff.name, tariff.tariff.rates().name, cycle.first_day, LastDay(cycle)});
    result->main_meter_basis =
        whole_meter.ok() ? whole_meter->basis : whole_meter.status().message();
    return result;
  }

  CycleStatements whole;
  whole.site.cycle = cycle;
  whole.site.each_line_rounded = true;
  int cycle_days =
      static_cast<int>((date::sys_days{cycle.next_first_day} - date::sys_days{cycle.first_day})
                           .count());
  for (const CyclePart& part : *parts) {
    CycleReads part_reads = reads;
    if (whole_meter.ok()) {
      // From the source the whole cycle's energy came from, so the parts add up to it.
      Result<MeterEnergy> meter = whole_meter->basis == kIntervalBasis
                                      ? MeterIntervalEnergy(meter_intervals, part.span.range)
                                      : MainMeterEnergy(meter_reads, part.span.range);
      if (!meter.ok()) return meter.status();  // covered as a whole, so covered in parts
      part_reads.main_meter_kwh = meter->kwh;
    }
    part_reads.whole_cycle_days = cycle_days;
    Result<CycleStatements> result = ComputeStatements(
        config, part.tariff->tariff, local, part.span, Within(circuits, part.span.range),
        part_reads);
    if (!result.ok()) return result;
    reads.banked_kwh = result->site.banked_kwh_out;
    reads.carried_credit = result->site.credit_carried_out;
    std::string label = "[" + DayText(part.span.first_day) + " to " + DayText(LastDay(part.span)) +
                        "]";
    whole.tariffs.push_back({part.tariff->name, part.tariff->tariff.rates().name,
                             part.span.first_day, LastDay(part.span)});
    Append(std::move(result).value(), label, &whole);
  }
  for (UnitStatement& unit : whole.units) {
    std::stable_sort(unit.lines.begin(), unit.lines.end(),
                     [](const StatementLine& a, const StatementLine& b) {
                       return a.section < b.section;
                     });
  }
  whole.main_meter_kwh = reads.main_meter_kwh;
  whole.main_meter_basis = whole_meter.ok() ? whole_meter->basis : whole_meter.status().message();
  if (whole.main_meter_kwh && *whole.main_meter_kwh > 0) {
    whole.submetered_ratio = whole.submetered_import_kwh / *whole.main_meter_kwh;
  }
  return whole;
}

}  // namespace ampledger
