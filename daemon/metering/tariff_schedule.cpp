// daemon/metering/tariff_schedule.cpp
#include "daemon/metering/tariff_schedule.h"

namespace ampledger {

Result<TariffSchedule> TariffSchedule::Create(const Config& config) {
  TariffSchedule schedule;
  const SiteConfig& site = config.site;
  if (site.tariff.empty()) return schedule;
  std::vector<std::pair<date::year_month_day, std::string>> wanted = {
      {date::year::min() / date::January / 1, site.tariff}};
  for (const TariffChange& change : site.tariff_changes) {
    wanted.emplace_back(change.from, change.tariff);
  }
  for (const auto& [from, name] : wanted) {
    const TariffFile* file = config.FindTariff(name);
    if (file == nullptr) {
      return Status::InvalidArgument("tariff \"" + name + "\" was not read with the config");
    }
    Result<Tariff> tariff = Tariff::Create(file->tariff);
    if (!tariff.ok()) return Status::InvalidArgument(file->path + ": " + tariff.status().message());
    schedule.entries_.push_back({from, name, file->path, std::move(tariff).value()});
  }
  return schedule;
}

const ScheduledTariff& TariffSchedule::InForce(date::year_month_day day) const {
  std::size_t k = 0;
  while (k + 1 < entries_.size() && entries_[k + 1].from <= day) ++k;
  return entries_[k];
}

Result<std::vector<CyclePart>> TariffSchedule::Split(const LocalTime& local,
                                                     const BillingCycle& cycle) const {
  std::vector<CyclePart> parts;
  CyclePart part{cycle, &InForce(cycle.first_day)};
  for (const ScheduledTariff& entry : entries_) {
    if (entry.from <= cycle.first_day || entry.from >= cycle.next_first_day) continue;
    Result<TimeRange> day = local.Day(entry.from);
    if (!day.ok()) return day.status();
    part.span.next_first_day = entry.from;
    part.span.range.end_ms = day->start_ms;
    parts.push_back(part);
    part = CyclePart{{entry.from, cycle.next_first_day, {day->start_ms, cycle.range.end_ms}},
                     &entry};
  }
  parts.push_back(part);
  return parts;
}

Result<std::vector<ScheduledCharges>> TariffSchedule::PriceEnergy(
    const LocalTime& local, std::span<const BucketEnergy> buckets) const {
  std::vector<std::vector<BucketEnergy>> by_tariff(entries_.size());
  for (const BucketEnergy& bucket : buckets) {
    const ScheduledTariff& tariff = InForce(local.At(bucket.start_ms).date);
    by_tariff[&tariff - entries_.data()].push_back(bucket);
  }
  std::vector<ScheduledCharges> out;
  for (std::size_t k = 0; k < entries_.size(); ++k) {
    if (by_tariff[k].empty()) continue;
    Result<std::vector<EnergyCharge>> lines = entries_[k].tariff.PriceEnergy(local, by_tariff[k]);
    if (!lines.ok()) return lines.status();
    out.push_back({&entries_[k], std::move(lines).value()});
  }
  return out;
}

}  // namespace ampledger
