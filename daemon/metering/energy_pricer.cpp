// daemon/metering/energy_pricer.cpp
#include "daemon/metering/energy_pricer.h"

#include <algorithm>

#include "daemon/metering/bucket.h"

namespace ampledger {

EnergyPricer::EnergyPricer(const TariffSchedule& schedule, LocalTime local)
    : schedule_(&schedule), local_(std::move(local)) {}

double EnergyPricer::PricePerKwh(UnixMs bucket_start_ms) {
  if (bucket_start_ms != cached_bucket_ms_) {
    const Tariff& tariff = schedule_->InForce(local_.At(bucket_start_ms).date).tariff;
    const RateSlot slot = tariff.AtInstant(local_, bucket_start_ms);
    cached_price_ = tariff.rates().seasons[slot.season].prices[slot.period].per_kwh;
    cached_bucket_ms_ = bucket_start_ms;
  }
  return cached_price_;
}

double EnergyPricer::Cost(UnixMs start_ms, UnixMs end_ms, double wh) {
  if (end_ms <= start_ms) return wh / 1000 * PricePerKwh(BucketStart(start_ms));
  const double span_ms = static_cast<double>(end_ms - start_ms);
  double cost = 0;
  for (UnixMs bucket = BucketStart(start_ms); bucket < end_ms; bucket += kMsPerBucket) {
    const UnixMs overlap = std::min(end_ms, bucket + kMsPerBucket) - std::max(start_ms, bucket);
    cost += wh / 1000 * (static_cast<double>(overlap) / span_ms) * PricePerKwh(bucket);
  }
  return cost;
}

}  // namespace ampledger
