// daemon/metering/bill.cpp
#include "daemon/metering/bill.h"

#include <algorithm>
#include <cmath>
#include <map>
#include <optional>

namespace ampledger {
namespace {

// Per bucket of the cycle: its rate slot, local day and time, and per load its kWh.
struct Timeline {
  std::vector<RateSlot> slots;
  std::vector<date::year_month_day> days;
  std::vector<int> minutes;
  std::vector<std::vector<double>> load_kwh;  // [load][bucket]
  std::vector<double> grid_import;            // [bucket]
  std::vector<double> grid_export;
};

class BillBuilder {
 public:
  BillBuilder(const Tariff& tariff, const LocalTime& local, const BillInput& input)
      : tariff_(tariff), config_(tariff.config()), local_(local), input_(input) {}

  Result<Bill> Build() {
    Status status = Fill();
    if (!status.ok()) return status;
    bill_.cycle = input_.cycle;
    bill_.hours = input_.cycle.range.DurationMs() / 3'600'000.0;
    bill_.days = static_cast<int>((date::sys_days{input_.cycle.next_first_day} -
                                   date::sys_days{input_.cycle.first_day}).count());
    bill_.each_line_rounded = config_.rounding.each_line;
    Net();
    EnergyLines();
    TierLines();
    AdderLines();
    FixedLines();
    DemandLines();
    ExportLine();
    MinimumLine();
    AdjustmentLines();
    CarriedLines();
    return bill_;
  }

 private:
  Micros Rounded(Micros exact) const {
    return config_.rounding.each_line ? RoundToCent(exact, config_.rounding.mode) : exact;
  }
  Micros RunningTotal() const {
    Micros sum = 0;
    for (const BillLine& line : bill_.lines) sum += line.amount;
    return sum;
  }
  void Add(BillLine line) {
    line.amount = Rounded(line.amount);
    bill_.lines.push_back(std::move(line));
  }
  std::size_t Loads() const { return input_.loads.size(); }
  // The days per-cycle quantities are spread over, and this bill's share of them.
  int CycleDays() const {
    return input_.whole_cycle_days > 0 ? input_.whole_cycle_days : bill_.days;
  }
  double CycleFraction() const {
    return CycleDays() > 0 ? static_cast<double>(bill_.days) / CycleDays() : 1;
  }
  bool IsPart() const { return input_.whole_cycle_days > 0; }
  std::string Prorated() const {
    return ", prorated " + std::to_string(bill_.days) + " of " + std::to_string(CycleDays()) +
           " days";
  }

  // Load weights over a set of buckets: each consumption load's kWh there.
  std::vector<double> WeightsWhere(const std::vector<bool>& in) const {
    std::vector<double> weights(Loads(), 0);
    for (std::size_t l = 0; l < Loads(); ++l) {
      if (input_.loads[l].is_export) continue;
      for (std::size_t b = 0; b < in.size(); ++b) {
        if (in[b]) weights[l] += timeline_.load_kwh[l][b];
      }
    }
    return weights;
  }

  Status Fill() {
    const TimeRange& range = input_.cycle.range;
    if (range.start_ms % kMsPerBucket != 0 || range.end_ms % kMsPerBucket != 0) {
      return Status::InvalidArgument("billing cycle bounds are not on 15-minute boundaries");
    }
    std::size_t count = static_cast<std::size_t>(range.DurationMs() / kMsPerBucket);
    std::optional<date::year_month_day> day;
    for (std::size_t b = 0; b < count; ++b) {
      UnixMs start = range.start_ms + static_cast<UnixMs>(b) * kMsPerBucket;
      LocalMoment moment = local_.At(start);
      timeline_.slots.push_back(tariff_.At(moment.date, moment.minute_of_day));
      timeline_.days.push_back(moment.date);
      timeline_.minutes.push_back(moment.minute_of_day);
    }
    timeline_.grid_import.assign(count, 0);
    timeline_.grid_export.assign(count, 0);
    std::vector<double> net(count, 0);
    double covered = 0, measured_loads = 0, estimated_kwh = 0, real_wh = 0, apparent_vah = 0;
    bool pf_known = true;
    for (const LoadSeries& load : input_.loads) {
      std::vector<double> kwh(count, 0);
      for (const CircuitBucket& bucket : load.buckets) {
        if (bucket.start_ms % kMsPerBucket != 0 || !range.Contains(bucket.start_ms)) {
          return Status::InvalidArgument("load \"" + load.id + "\": bucket at " +
                                         std::to_string(bucket.start_ms) +
                                         " ms is not a 15-minute bucket of the cycle");
        }
        std::size_t b = static_cast<std::size_t>((bucket.start_ms - range.start_ms) / kMsPerBucket);
        kwh[b] += bucket.real_wh / 1000;
        if (!load.estimated) covered += bucket.coverage;
        if (load.is_export) continue;
        bill_.load_kwh += bucket.real_wh / 1000;
        if (load.estimated || bucket.quality == Quality::kEstimated) {
          estimated_kwh += bucket.real_wh / 1000;
        }
        if (!load.estimated && bucket.real_wh != 0) {
          if (bucket.quality == Quality::kEstimated || bucket.apparent_vah <= 0) pf_known = false;
          real_wh += bucket.real_wh;
          apparent_vah += bucket.apparent_vah;
        }
      }
      if (!load.estimated) measured_loads += 1;
      for (std::size_t b = 0; b < count; ++b) net[b] += load.is_export ? -kwh[b] : kwh[b];
      timeline_.load_kwh.push_back(std::move(kwh));
    }
    for (std::size_t b = 0; b < count; ++b) {
      timeline_.grid_import[b] = std::max(0.0, net[b]);
      timeline_.grid_export[b] = std::max(0.0, -net[b]);
      bill_.import_kwh += timeline_.grid_import[b];
      bill_.export_kwh += timeline_.grid_export[b];
    }
    if (measured_loads > 0 && count > 0) bill_.coverage = covered / (measured_loads * count);
    if (bill_.load_kwh > 0) bill_.estimated_fraction = estimated_kwh / bill_.load_kwh;
    if (pf_known && apparent_vah > 0) bill_.power_factor = std::min(1.0, real_wh / apparent_vah);
    return Status::Ok();
  }

  // Billed kWh per (season, period) after the export rule and banked kWh.
  void Net() {
    std::map<std::pair<int, int>, double> imports, exports;
    for (std::size_t b = 0; b < timeline_.slots.size(); ++b) {
      auto key = std::make_pair(timeline_.slots[b].season, timeline_.slots[b].period);
      imports[key] += timeline_.grid_import[b];
      exports[key] += timeline_.grid_export[b];
    }
    billed_ = imports;
    double surplus = 0;
    if (config_.export_rule.method == ExportMethod::kNetMetering) {
      switch (config_.export_rule.netting) {
        case Netting::kInterval:  // the grid meter already nets each interval
          surplus = bill_.export_kwh;
          break;
        case Netting::kPeriod:
          for (auto& [key, kwh] : billed_) {
            double net = kwh - exports[key];
            kwh = std::max(0.0, net);
            surplus += std::max(0.0, -net);
          }
          break;
        case Netting::kCycle: {
          double net = bill_.import_kwh - bill_.export_kwh;
          Scale(bill_.import_kwh > 0 ? std::max(0.0, net) / bill_.import_kwh : 0);
          surplus = std::max(0.0, -net);
          break;
        }
      }
      double billed = BilledTotal();
      double used = std::min(input_.banked_kwh, billed);
      if (billed > 0) Scale((billed - used) / billed);
      bill_.banked_kwh_out = input_.banked_kwh - used + surplus;
    }
    bill_.billed_kwh = BilledTotal();
  }
  void Scale(double factor) {
    for (auto& entry : billed_) entry.second *= factor;
  }
  double BilledTotal() const {
    double sum = 0;
    for (const auto& entry : billed_) sum += entry.second;
    return sum;
  }

  void EnergyLines() {
    for (const auto& [key, kwh] : billed_) {
      const Season& season = config_.rates.seasons[key.first];
      const PeriodPrice& price = season.prices[key.second];
      Micros unit_price = ToMicros(price.per_kwh);
      if (unit_price == 0 || kwh == 0) continue;
      std::vector<bool> in(timeline_.slots.size());
      for (std::size_t b = 0; b < in.size(); ++b) {
        in[b] = timeline_.slots[b].season == key.first && timeline_.slots[b].period == key.second;
      }
      std::string what = "Energy, " + price.period;
      if (config_.rates.seasons.size() > 1) what += " (" + season.name + ")";
      Add({LineKind::kEnergy, what, kwh, "kWh", unit_price, Times(kwh, unit_price),
           LineSplit::kByLoad, WeightsWhere(in)});
    }
  }

  void TierLines() {
    for (const TierTable& table : config_.tiers) {
      int season = 0;
      while (config_.rates.seasons[season].name != table.season) ++season;
      double kwh = 0;
      for (const auto& [key, energy] : billed_) {
        if (key.first == season) kwh += energy;
      }
      int season_days = 0;
      for (date::sys_days d{input_.cycle.first_day}; d < date::sys_days{input_.cycle.next_first_day};
           d += date::days{1}) {
        date::year_month_day ymd{d};
        if (tariff_.SeasonOf(ymd.month() / ymd.day()) == season) ++season_days;
      }
      if (season_days == 0) continue;
      double scale = static_cast<double>(season_days) /
                     (config_.prorate_tiers ? config_.prorate_days : CycleDays());
      std::vector<bool> in(timeline_.slots.size());
      for (std::size_t b = 0; b < in.size(); ++b) in[b] = timeline_.slots[b].season == season;
      std::vector<double> weights = WeightsWhere(in);
      double below = 0;  // kWh billed in earlier blocks
      for (std::size_t k = 0; k < table.blocks.size() && kwh > below; ++k) {
        const TierBlock& block = table.blocks[k];
        double size = block.kwh * scale;
        double in_block = block.kwh == 0 ? kwh - below : std::min(size, kwh - below);
        std::string what = "Tier " + std::to_string(k + 1);
        what += block.kwh == 0 ? " (above " + Kwh(below) + " kWh)"
                               : " (next " + Kwh(size) + " kWh)";
        if (config_.rates.seasons.size() > 1) what += ", " + table.season;
        Micros unit_price = ToMicros(block.per_kwh);
        Add({LineKind::kTier, what, in_block, "kWh", unit_price, Times(in_block, unit_price),
             LineSplit::kByLoad, weights});
        below += in_block;
      }
    }
  }
  static std::string Kwh(double kwh) {
    char text[32];
    std::snprintf(text, sizeof text, "%.4g", kwh);
    return text;
  }

  void AdderLines() {
    std::vector<double> weights = WeightsWhere(std::vector<bool>(timeline_.slots.size(), true));
    for (const EnergyAdder& adder : config_.adders) {
      Micros unit_price = ToMicros(adder.per_kwh);
      Add({LineKind::kAdder, adder.name, bill_.billed_kwh, "kWh", unit_price,
           Times(bill_.billed_kwh, unit_price), LineSplit::kByLoad, weights});
    }
  }

  void FixedLines() {
    for (const FixedCharge& fixed : config_.fixed) {
      Micros unit_price = ToMicros(fixed.amount);
      bool daily = fixed.per == FixedPer::kDay;
      double quantity = daily ? bill_.days : CycleFraction();
      Add({LineKind::kFixed, daily || !IsPart() ? fixed.name : fixed.name + Prorated(), quantity, daily ? "day" : "cycle", unit_price,
           Times(quantity, unit_price), LineSplit::kEqual, {}});
    }
  }

  bool Counts(const DemandCharge& demand, std::size_t b) const {
    const RateSlot& slot = timeline_.slots[b];
    const Season& season = config_.rates.seasons[slot.season];
    if (!demand.seasons.empty() &&
        std::find(demand.seasons.begin(), demand.seasons.end(), season.name) ==
            demand.seasons.end()) {
      return false;
    }
    if (!demand.periods.empty() &&
        std::find(demand.periods.begin(), demand.periods.end(),
                  season.prices[slot.period].period) == demand.periods.end()) {
      return false;
    }
    if (demand.window) {
      const RateWindow& window = *demand.window;
      int minute = timeline_.minutes[b];
      bool inside = window.start_minute < window.end_minute
                        ? window.start_minute <= minute && minute < window.end_minute
                        : minute >= window.start_minute || minute < window.end_minute;
      if (!inside || !(window.day_kinds & DayKindBit(slot.day_kind))) return false;
    }
    return true;
  }

  void DemandLines() {
    for (std::size_t c = 0; c < config_.demand.size(); ++c) {
      const DemandCharge& demand = config_.demand[c];
      // Intervals aligned on the local clock: (local date, minute / interval) -> kWh.
      std::map<std::pair<int, int>, double> intervals;
      std::map<std::pair<int, int>, std::vector<std::size_t>> members;
      for (std::size_t b = 0; b < timeline_.slots.size(); ++b) {
        if (!Counts(demand, b)) continue;
        auto key = std::make_pair(static_cast<int>(date::sys_days{timeline_.days[b]}
                                                        .time_since_epoch().count()),
                                  timeline_.minutes[b] / demand.interval_minutes);
        intervals[key] += timeline_.grid_import[b];
        members[key].push_back(b);
      }
      double measured = 0;
      std::pair<int, int> peak{};
      for (const auto& [key, kwh] : intervals) {
        double kw = kwh * 60 / demand.interval_minutes;
        if (kw > measured) {
          measured = kw;
          peak = key;
        }
      }
      std::string what = demand.name + ": measured " + Kwh(measured) + " kW";
      double billing = measured;
      if (demand.power_factor != PowerFactorMethod::kNone && bill_.power_factor > 0 &&
          bill_.power_factor < demand.power_factor_target) {
        double pf = bill_.power_factor;
        billing *= demand.power_factor == PowerFactorMethod::kAddDifference
                       ? 1 + (demand.power_factor_target - pf)
                       : demand.power_factor_target / pf;
        what += " at power factor " + Kwh(pf);
      }
      if (demand.ratchet_cycles > 0 && c < input_.previous_billing_kw.size()) {
        const std::vector<double>& previous = input_.previous_billing_kw[c];
        double highest = 0;
        for (std::size_t k = 0; k < previous.size() && k < std::size_t(demand.ratchet_cycles); ++k) {
          highest = std::max(highest, previous[k]);
        }
        double ratchet = highest * demand.ratchet_percent / 100;
        if (ratchet > billing) {
          billing = ratchet;
          what += ", ratchet " + Kwh(demand.ratchet_percent) + "% of " + Kwh(highest) + " kW";
        }
      }
      if (demand.minimum_kw > billing) {
        billing = demand.minimum_kw;
        what += ", minimum " + Kwh(demand.minimum_kw) + " kW";
      }
      bill_.billing_demand_kw.push_back(billing);
      Micros unit_price = ToMicros(demand.per_kw);
      Micros amount = std::max(Times(billing, unit_price), ToMicros(demand.minimum_amount));
      if (IsPart()) {
        billing *= CycleFraction();
        amount = Times(CycleFraction(), amount);
        what += Prorated();
      }
      std::vector<bool> in(timeline_.slots.size(), false);
      if (measured > 0) {
        for (std::size_t b : members[peak]) in[b] = true;
      } else {
        in.assign(in.size(), true);
      }
      Add({LineKind::kDemand, what, billing, "kW", unit_price, amount, LineSplit::kByLoad,
           WeightsWhere(in)});
    }
  }

  void ExportLine() {
    if (config_.export_rule.method != ExportMethod::kNetBilling || bill_.export_kwh == 0) return;
    Micros unit_price = -ToMicros(config_.export_rule.per_kwh);
    Add({LineKind::kExportCredit, "Export credit", bill_.export_kwh, "kWh", unit_price,
         Times(bill_.export_kwh, unit_price), LineSplit::kByLoad,
         WeightsWhere(std::vector<bool>(timeline_.slots.size(), true))});
  }

  void MinimumLine() {
    Micros minimum = Times(CycleFraction(), ToMicros(config_.minimum_bill));
    Micros total = RunningTotal();
    if (minimum == 0 || total >= minimum) return;
    Add({LineKind::kMinimum, "Minimum bill top-up (minimum " + FormatCents(minimum) + ")", 1,
         "cycle", minimum - total, minimum - total, LineSplit::kEqual, {}});
  }

  void AdjustmentLines() {
    for (const PercentAdjustment& adjustment : config_.adjustments) {
      Micros base = RunningTotal();
      if (base <= 0) continue;
      Add({LineKind::kAdjustment, adjustment.name + " on " + FormatCents(base), adjustment.percent,
           "%", ToMicros(adjustment.percent), PercentOf(base, adjustment.percent),
           LineSplit::kByAmount, {}});
    }
  }

  void CarriedLines() {
    Micros total = RunningTotal();
    if (input_.carried_credit > 0 && total > 0) {
      Micros used = std::min(input_.carried_credit, total);
      Add({LineKind::kCarried, "Credit carried in", 1, "cycle", -used, -used,
           LineSplit::kByAmount, {}});
      bill_.credit_carried_out = input_.carried_credit - used;
      total -= used;
    } else {
      bill_.credit_carried_out = input_.carried_credit;
    }
    if (total < 0) {
      Add({LineKind::kCarried, "Credit carried to the next cycle", 1, "cycle", -total, -total,
           LineSplit::kByAmount, {}});
      bill_.credit_carried_out += -total;
    }
    total = RunningTotal();
    bill_.total = config_.rounding.each_line ? total : RoundToCent(total, config_.rounding.mode);
  }

  const Tariff& tariff_;
  const TariffConfig& config_;
  const LocalTime& local_;
  const BillInput& input_;
  Timeline timeline_;
  std::map<std::pair<int, int>, double> billed_;  // (season, period) -> kWh
  Bill bill_;
};

}  // namespace

Result<Bill> ComputeBill(const Tariff& tariff, const LocalTime& local, const BillInput& input) {
  return BillBuilder(tariff, local, input).Build();
}

}  // namespace ampledger
