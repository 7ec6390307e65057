// daemon/metering/bucket.cpp
#include "daemon/metering/bucket.h"

#include <algorithm>

namespace ampledger {

UnixMs BucketStart(UnixMs t) {
  UnixMs r = t % kMsPerBucket;
  return t - (r < 0 ? r + kMsPerBucket : r);
}

void ChannelBucket::Add(const EnergySpan& span, double fraction, UnixMs overlap_ms) {
  real_wh += span.real_wh * fraction;
  apparent_vah += span.apparent_vah * fraction;
  covered_ms += overlap_ms;
  double watts = span.MeanWatts();
  min_watts = empty ? watts : std::min(min_watts, watts);
  max_watts = empty ? watts : std::max(max_watts, watts);
  quality = empty ? span.quality : Worse(quality, span.quality);
  empty = false;
}

void SpreadOverBuckets(const EnergySpan& span,
                       const std::function<void(UnixMs, double, UnixMs)>& add) {
  UnixMs length = span.length_ms();
  if (length <= 0) {
    if (span.real_wh > 0 || span.apparent_vah > 0) add(BucketStart(span.end_ms - 1), 1.0, 0);
    return;
  }
  for (UnixMs b = BucketStart(span.begin_ms); b < span.end_ms; b += kMsPerBucket) {
    UnixMs overlap = std::min(span.end_ms, b + kMsPerBucket) - std::max(span.begin_ms, b);
    // The whole span in one bucket gets fraction exactly 1, so sums stay exact there.
    add(b, overlap == length ? 1.0 : static_cast<double>(overlap) / length, overlap);
  }
}

double CircuitBucket::MeanWatts() const {
  double measured_hours = coverage * kMsPerBucket / 3.6e6;
  return measured_hours > 0 ? real_wh / measured_hours : 0.0;
}

CircuitBucket CombineChannels(UnixMs start_ms, const std::vector<const ChannelBucket*>& channels,
                              int channel_count) {
  CircuitBucket out;
  out.start_ms = start_ms;
  UnixMs covered = 0;
  for (const ChannelBucket* c : channels) {
    if (c == nullptr || c->empty) continue;
    out.real_wh += c->real_wh;
    out.apparent_vah += c->apparent_vah;
    out.min_watts += c->min_watts;
    out.max_watts += c->max_watts;
    out.quality = Worse(out.quality, c->quality);
    covered += c->covered_ms;
  }
  out.coverage = static_cast<double>(covered) / (static_cast<double>(kMsPerBucket) * channel_count);
  return out;
}

}  // namespace ampledger
