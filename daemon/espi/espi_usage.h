// daemon/espi/espi_usage.h
// Between ESPI series and ampledger's interval energies: an export of a circuit's or unit's
// interval energy as one ESPI series (one IntervalBlock per local day of the site), and the
// delivered-energy series of a utility's file as main-meter interval reads. Pure; any thread.
#pragma once

#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/espi/espi_feed.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/meter_interval.h"

namespace ampledger {

struct EspiSeriesOptions {
  std::string usage_point_title;  // "unit upper", "circuit kitchen"
  std::string title;              // the MeterReading's title
  int flow_direction = kEspiFlowForward;
  int interval_s = 900;  // 900 or 3600: every interval's length
  TimeRange range;        // the export's range: blocks are local days cut to it (none: 0, 0)
};

// One ESPI series of whole Wh (uom 72, multiplier 0) from `intervals` (sorted, each
// options.interval_s long; intervals without data are left out, as a gap). Values are the
// differences of the rounded running total, so each is within 1 Wh of the interval's energy
// and the series' sum is the rounded total: rounding never adds up over a long export.
// Blocks are the site's local days (23 or 25 hours on DST days), cut to options.range.
EspiSeries BuildEspiSeries(const EspiSeriesOptions& options, const LocalTime& zone,
                           const std::vector<MeterInterval>& intervals);

// The energy delivered to the site, as interval reads, from the one series of `feed` that is
// forward (flowDirection 1) interval energy (kind 12, accumulationBehaviour 4) in Wh (uom 72,
// any powerOfTenMultiplier). InvalidArgument, starting "<file_name>: ", when there is no such
// series or more than one, a reading is negative, or CheckMeterIntervals refuses the readings.
Result<std::vector<MeterInterval>> DeliveredIntervals(const EspiFeed& feed,
                                                      const std::string& file_name);

}  // namespace ampledger
