// daemon/metering/statement.cpp
#include "daemon/metering/statement.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>

#include "daemon/metering/shares.h"

namespace ampledger {
namespace {

// Where a part of a load goes: a recipient (unit index; units.size() = the owner's part),
// the section of its statement, and for kShared the shared circuit's index in config.shared.
struct Slice {
  int recipient = 0;
  StatementSection section = StatementSection::kOwn;
  int shared = -1;
  double fraction = 1;
};

std::string Percent(double fraction) {
  char text[32];
  std::snprintf(text, sizeof text, "%.4g%%", fraction * 100);
  return text;
}

std::string Method(const ShareConfig& share, double fraction) {
  std::string rule = share.rule == ShareRule::kEqual   ? "equal shares"
                     : share.rule == ShareRule::kFixed ? "fixed shares"
                                                       : "in proportion to own use";
  return rule + ", " + Percent(fraction);
}

class StatementBuilder {
 public:
  StatementBuilder(const Config& config, const Tariff& tariff, const LocalTime& local,
                   const BillingCycle& cycle, const std::vector<CircuitSeries>& circuits,
                   const CycleReads& reads)
      : config_(config), tariff_(tariff), local_(local), cycle_(cycle), circuits_(circuits),
        reads_(reads) {}

  Result<CycleStatements> Build() {
    Status status = MakeLoads();
    if (!status.ok()) return status;
    Result<Bill> bill = ComputeBill(tariff_, local_, input_);
    if (!bill.ok()) return bill.status();
    result_.site = *bill;
    MakeSlices();
    Split();
    return result_;
  }

 private:
  int UnitCount() const { return static_cast<int>(config_.units.size()); }

  Status MakeLoads() {
    input_.cycle = cycle_;
    input_.previous_billing_kw = reads_.previous_billing_kw;
    input_.banked_kwh = reads_.banked_kwh;
    input_.carried_credit = reads_.carried_credit;
    input_.whole_cycle_days = reads_.whole_cycle_days;
    for (const CircuitSeries& series : circuits_) {
      const CircuitConfig* circuit = config_.FindCircuit(series.circuit);
      if (circuit == nullptr) {
        return Status::InvalidArgument("no circuit \"" + series.circuit + "\" in the config");
      }
      input_.loads.push_back({series.circuit, circuit->direction == Direction::kExport, false,
                              series.buckets});
    }
    // Grid import per bucket as computed from the submeters.
    std::map<UnixMs, double> net;
    for (const LoadSeries& load : input_.loads) {
      for (const CircuitBucket& bucket : load.buckets) {
        net[bucket.start_ms] += (load.is_export ? -1 : 1) * bucket.real_wh;
      }
    }
    double import_wh = 0;
    for (auto& entry : net) {
      entry.second = std::max(0.0, entry.second);
      import_wh += entry.second;
    }
    result_.submetered_import_kwh = import_wh / 1000;
    result_.main_meter_kwh = reads_.main_meter_kwh;
    if (reads_.main_meter_kwh && *reads_.main_meter_kwh > 0) {
      result_.submetered_ratio = result_.submetered_import_kwh / *reads_.main_meter_kwh;
      double remainder = *reads_.main_meter_kwh - result_.submetered_import_kwh;
      if (remainder > 0 && config_.remainder && import_wh > 0) {
        LoadSeries load{"remainder", false, true, {}};
        for (const auto& [start, wh] : net) {
          CircuitBucket bucket;
          bucket.start_ms = start;
          bucket.real_wh = wh * remainder * 1000 / import_wh;
          bucket.quality = Quality::kEstimated;
          load.buckets.push_back(bucket);
        }
        input_.loads.push_back(std::move(load));
        result_.remainder_kwh = remainder;
      }
    }
    return Status::Ok();
  }

  std::vector<double> OwnKwh() const {
    std::vector<double> own(config_.units.size(), 0);
    for (std::size_t u = 0; u < config_.units.size(); ++u) {
      for (std::size_t l = 0; l < input_.loads.size(); ++l) {
        const auto& ids = config_.units[u].circuits;
        if (std::find(ids.begin(), ids.end(), input_.loads[l].id) == ids.end()) continue;
        for (const CircuitBucket& bucket : input_.loads[l].buckets) own[u] += bucket.real_wh / 1000;
      }
    }
    return own;
  }

  void MakeSlices() {
    std::vector<double> own = OwnKwh();
    for (std::size_t u = 0; u < config_.units.size(); ++u) {
      UnitStatement statement;
      statement.unit_id = config_.units[u].id;
      statement.unit_name = config_.units[u].name.empty() ? config_.units[u].id
                                                          : config_.units[u].name;
      statement.own_kwh = own[u];
      result_.units.push_back(statement);
    }
    result_.units.push_back({"", "Not assigned to a unit", {}, 0, 0, 0});
    share_fractions_.resize(config_.shared.size());
    for (std::size_t k = 0; k < config_.shared.size(); ++k) {
      share_fractions_[k] = ShareFractions(config_.shared[k].split, config_.units, own);
    }
    if (config_.remainder) {
      remainder_fractions_ = ShareFractions(*config_.remainder, config_.units, own);
    }
    for (const LoadSeries& load : input_.loads) {
      std::vector<Slice> slices;
      if (load.estimated) {
        for (int u = 0; u < UnitCount(); ++u) {
          if (remainder_fractions_[u] > 0) {
            slices.push_back({u, StatementSection::kRemainder, -1, remainder_fractions_[u]});
          }
        }
      } else if (!load.is_export) {
        for (int u = 0; u < UnitCount() && slices.empty(); ++u) {
          const auto& ids = config_.units[u].circuits;
          if (std::find(ids.begin(), ids.end(), load.id) != ids.end()) {
            slices.push_back({u, StatementSection::kOwn, -1, 1});
          }
        }
        for (std::size_t k = 0; k < config_.shared.size() && slices.empty(); ++k) {
          if (config_.shared[k].circuit != load.id) continue;
          for (int u = 0; u < UnitCount(); ++u) {
            if (share_fractions_[k][u] > 0) {
              slices.push_back({u, StatementSection::kShared, static_cast<int>(k),
                                share_fractions_[k][u]});
            }
          }
        }
        if (slices.empty()) slices.push_back({UnitCount(), StatementSection::kOwn, -1, 1});
      }
      load_slices_.push_back(std::move(slices));
    }
  }

  // The parts of `line` for each slice, with the slices they go to.
  void SplitLine(const BillLine& line, Micros quantum) {
    std::vector<Slice> slices;
    std::vector<double> weights;
    std::string method;
    if (line.split == LineSplit::kByLoad) {
      for (std::size_t l = 0; l < load_slices_.size(); ++l) {
        for (const Slice& slice : load_slices_[l]) {
          slices.push_back(slice);
          weights.push_back(line.weights[l] * slice.fraction);
        }
      }
      double sum = 0;
      for (double weight : weights) sum += weight;
      if (sum <= 0) slices.clear();  // nothing to weigh by: split equally below
    }
    int recipients = UnitCount() > 0 ? UnitCount() : 1;
    if (slices.empty() && line.split != LineSplit::kByAmount) {
      weights.clear();
      for (int u = 0; u < recipients; ++u) {
        slices.push_back({u, StatementSection::kCommon, -1, 1});
        weights.push_back(1);
      }
      method = "equal split among " + std::to_string(recipients) +
               (recipients == 1 ? " unit" : " units");
    } else if (slices.empty()) {
      Micros sign = running_site_ < 0 ? -1 : 1;
      for (std::size_t r = 0; r < result_.units.size(); ++r) {
        slices.push_back({static_cast<int>(r), StatementSection::kCommon, -1, 1});
        weights.push_back(std::max<double>(0, static_cast<double>(sign * result_.units[r].total)));
      }
      method = "in proportion to the amount owed";
    }
    std::vector<Micros> parts = Apportion(line.amount, quantum, weights);
    double weight_sum = 0;
    for (double weight : weights) weight_sum += weight;
    // Gather per recipient and section (and shared circuit).
    std::map<std::pair<int, std::pair<int, int>>, std::pair<Micros, double>> gathered;
    for (std::size_t k = 0; k < slices.size(); ++k) {
      auto key = std::make_pair(slices[k].recipient,
                                std::make_pair(static_cast<int>(slices[k].section), slices[k].shared));
      gathered[key].first += parts[k];
      gathered[key].second += weight_sum > 0 ? weights[k] / weight_sum : 0;
    }
    for (const auto& [key, part] : gathered) {
      UnitStatement& statement = result_.units[key.first];
      auto section = static_cast<StatementSection>(key.second.first);
      statement.total += part.first;
      double quantity = line.quantity * part.second;
      if (section == StatementSection::kOwn || section == StatementSection::kCommon) {
        if (part.first == 0 && (section == StatementSection::kCommon || quantity == 0)) continue;
        StatementLine out{section, line.description, method, quantity, line.unit,
                          line.unit_price, part.first};
        if (section == StatementSection::kCommon && line.split == LineSplit::kEqual) {
          out.quantity = line.quantity;  // the whole charge's days or cycles; amount is the share
        }
        if (line.unit == "%") out.quantity = line.quantity;
        statement.lines.push_back(out);
      } else {
        // One line per shared circuit (or the remainder): energy quantities add up only on
        // energy lines; money adds on every line.
        StatementLine& out = SharedLine(statement, section, key.second.second, key.first);
        out.amount += part.first;
      }
    }
    running_site_ += line.amount;
  }

  StatementLine& SharedLine(UnitStatement& statement, StatementSection section, int shared,
                            int recipient) {
    std::string name;
    std::string method;
    if (section == StatementSection::kShared) {
      const CircuitConfig* circuit = config_.FindCircuit(config_.shared[shared].circuit);
      name = "Shared circuit: " + (circuit->name.empty() ? circuit->id : circuit->name);
      method = Method(config_.shared[shared].split, share_fractions_[shared][recipient]);
    } else {
      name = "Unmetered remainder (main meter - submeters, estimated)";
      method = Method(*config_.remainder, remainder_fractions_[recipient]);
    }
    for (StatementLine& line : statement.lines) {
      if (line.section == section && line.description == name) return line;
    }
    double kwh = 0;
    for (std::size_t l = 0; l < input_.loads.size(); ++l) {
      for (const Slice& slice : load_slices_[l]) {
        if (slice.recipient == recipient && slice.section == section && slice.shared == shared) {
          for (const CircuitBucket& bucket : input_.loads[l].buckets) {
            kwh += bucket.real_wh / 1000 * slice.fraction;
          }
        }
      }
    }
    statement.shared_kwh += kwh;
    statement.lines.push_back({section, name, method, kwh, "kWh", 0, 0});
    return statement.lines.back();
  }

  void Split() {
    const Bill& bill = result_.site;
    Micros quantum = bill.each_line_rounded ? kMicrosPerCent : 1;
    for (const BillLine& line : bill.lines) SplitLine(line, quantum);
    if (!bill.each_line_rounded) RoundTotals();
    // Own lines first, then shared, remainder and common: stable by section.
    for (UnitStatement& statement : result_.units) {
      std::stable_sort(statement.lines.begin(), statement.lines.end(),
                       [](const StatementLine& a, const StatementLine& b) {
                         return a.section < b.section;
                       });
    }
    UnitStatement& owner = result_.units.back();
    if (owner.lines.empty() && owner.total == 0) result_.units.pop_back();
  }

  // Totals to the cent that still add up to the site total: largest remainder again.
  void RoundTotals() {
    std::vector<double> fractions;
    Micros floors = 0;
    for (UnitStatement& statement : result_.units) {
      Micros floor = statement.total >= 0 ? statement.total / kMicrosPerCent * kMicrosPerCent
                                          : -((-statement.total + kMicrosPerCent - 1) /
                                              kMicrosPerCent * kMicrosPerCent);
      fractions.push_back(static_cast<double>(statement.total - floor));
      statement.total = floor;
      floors += floor;
    }
    std::vector<Micros> extra = Apportion(result_.site.total - floors, kMicrosPerCent, fractions);
    for (std::size_t k = 0; k < extra.size(); ++k) {
      UnitStatement& statement = result_.units[k];
      statement.total += extra[k];
      Micros lines = 0;
      for (const StatementLine& line : statement.lines) lines += line.amount;
      if (lines != statement.total) {  // the lines are in micro-units: show the rounding
        statement.lines.push_back({StatementSection::kCommon, "Rounding to the cent",
                                   "largest remainder", 1, "cycle", 0, statement.total - lines});
      }
    }
  }

  const Config& config_;
  const Tariff& tariff_;
  const LocalTime& local_;
  const BillingCycle& cycle_;
  const std::vector<CircuitSeries>& circuits_;
  const CycleReads& reads_;
  BillInput input_;
  CycleStatements result_;
  std::vector<std::vector<Slice>> load_slices_;
  std::vector<std::vector<double>> share_fractions_;
  std::vector<double> remainder_fractions_;
  Micros running_site_ = 0;
};

}  // namespace

Result<CycleStatements> ComputeStatements(const Config& config, const Tariff& tariff,
                                          const LocalTime& local, const BillingCycle& cycle,
                                          const std::vector<CircuitSeries>& circuits,
                                          const CycleReads& reads) {
  return StatementBuilder(config, tariff, local, cycle, circuits, reads).Build();
}

}  // namespace ampledger
