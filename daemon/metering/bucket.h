// daemon/metering/bucket.h
// Energy rollups in 15-minute UTC buckets (kMsPerBucket). Every UTC offset in use since 1980
// is a multiple of 15 minutes, so local hours, days and 15/30-minute demand intervals compose
// from these buckets exactly. Pure values and functions; any thread may call them.
//
// A channel's EnergySpans are spread over the buckets they overlap in proportion to the
// overlap (a span of constant mean power). A circuit's bucket combines its channels' buckets.
#pragma once

#include <functional>
#include <vector>

#include "daemon/metering/energy.h"

namespace ampledger {

// The start of the bucket holding instant `t` (floor, also for times before 1970).
UnixMs BucketStart(UnixMs t);

// One channel's sums over one bucket. Add() only ever grows it, so spans may arrive in any
// order; a span's contribution cannot be taken back (storage recomputes instead).
struct ChannelBucket {
  double real_wh = 0;
  double apparent_vah = 0;
  UnixMs covered_ms = 0;
  double min_watts = 0;  // of the mean power of the spans overlapping the bucket
  double max_watts = 0;
  Quality quality = Quality::kMeasured;  // the worst of the spans
  bool empty = true;                     // no span has touched this bucket

  // Adds `fraction` of `span` (its part inside this bucket, covering `overlap_ms`).
  void Add(const EnergySpan& span, double fraction, UnixMs overlap_ms);
};

// Calls `add(bucket_start, fraction, overlap_ms)` for each bucket `span` overlaps, in time
// order. An empty span that carries energy (a register restart with no interval) goes whole
// into the bucket holding its end instant, with no coverage.
void SpreadOverBuckets(const EnergySpan& span,
                       const std::function<void(UnixMs, double, UnixMs)>& add);

// One circuit over one bucket, as stored and served.
struct CircuitBucket {
  UnixMs start_ms = 0;
  double real_wh = 0;
  double apparent_vah = 0;
  // For a circuit of one channel: the least and greatest mean power of the spans in the
  // bucket. For several channels: the sums of the channels' minima and maxima, which bound
  // the circuit's own least and greatest power.
  double min_watts = 0;
  double max_watts = 0;
  double coverage = 0;  // measured time / bucket length, averaged over the circuit's channels
  Quality quality = Quality::kMeasured;

  // Mean real power over the measured time, W; 0 when nothing was measured.
  double MeanWatts() const;
};

// Combines the buckets of a circuit's `channel_count` channels (those in `channels` that are
// not empty; missing channels count as unmeasured). Precondition: channel_count >= 1.
CircuitBucket CombineChannels(UnixMs start_ms, const std::vector<const ChannelBucket*>& channels,
                              int channel_count);

}  // namespace ampledger
