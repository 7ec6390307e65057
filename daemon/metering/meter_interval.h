// daemon/metering/meter_interval.h
// Interval reads of the site's main (utility) meter: the energy the meter counted over each
// of a run of short intervals (15 minutes or an hour), as a utility's interval data file
// gives them. They answer the main meter's energy over any span they cover exactly, with no
// interpolation, so reconciliation per day and statements prefer them to the few reads a
// person types in (main_meter.h). Pure; any thread may call these.
#pragma once

#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/main_meter.h"

namespace ampledger {

struct MeterInterval {
  TimeRange span;  // [start, end) in UTC
  double wh = 0;   // energy delivered to the site over the span
};

// Limits of an interval, with their reasons.
constexpr UnixMs kMaxMeterIntervalMs = 2 * 86400 * kMsPerSecond;  // daily reads on a 25 h day
                                                                  // fit; longer is a period read
constexpr double kMaxMeterIntervalWh = 1e9;  // 1 GWh in one interval: no building draws that

// InvalidArgument saying which interval is wrong when one is empty or backwards, longer than
// kMaxMeterIntervalMs, has energy that is not finite or is outside 0..kMaxMeterIntervalWh, or
// overlaps another. Sorts `intervals` by start on success.
Status CheckMeterIntervals(std::vector<MeterInterval>& intervals);

// MeterEnergy::basis of energy found from interval reads.
inline constexpr const char* kIntervalBasis = "main meter interval reads";

// The energy of `intervals` (sorted, not overlapping, as CheckMeterIntervals leaves them)
// over `range`, in kWh. An interval only partly inside the range counts in proportion to the
// part inside (its energy spread evenly, common practice as for period reads). NotFound,
// naming the first moment not covered, when the intervals leave any part of `range` out.
Result<MeterEnergy> MeterIntervalEnergy(const std::vector<MeterInterval>& intervals,
                                        TimeRange range);

// The main meter's energy over `range`: from interval reads when they cover it, else from the
// typed-in reads (MainMeterEnergy). When neither covers it, the NotFound says why for both.
Result<MeterEnergy> MainMeterEnergyFromAll(const std::vector<MeterInterval>& intervals,
                                           const std::vector<MainMeterRead>& reads,
                                           TimeRange range);

}  // namespace ampledger
