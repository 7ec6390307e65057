// storage/main_meter_intervals.h
// The main_meter_interval table: interval reads of the site's main (utility) meter, imported
// from the utility's interval data file (`ampledger meter-intervals import`), which
// reconciliation and statements use before typed-in reads (daemon/metering/meter_interval.h).
// Same threading as main_meter_store.h: prepared statements on the caller's connection; a
// write is one short BEGIN IMMEDIATE transaction that waits out the writer.
#pragma once

#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/metering/meter_interval.h"
#include "storage/database.h"

namespace ampledger {

struct IntervalImport {
  int added = 0;
  int unchanged = 0;  // already stored with the same span and energy: importing is idempotent
  int replaced = 0;   // stored with another energy, overwritten (only with replace)
};

// Stores `intervals` (checked with CheckMeterIntervals) from `source` (the file's name), all or
// nothing. An interval stored before with the same span and energy is left as it is. One
// stored with the same span and another energy is overwritten when `replace` (a utility's
// corrected data), else refused. One that overlaps a stored interval with other bounds is
// always refused. InvalidArgument naming the interval and the stored one; nothing is stored.
Result<IntervalImport> ImportMainMeterIntervals(const Database& db,
                                                std::vector<MeterInterval> intervals,
                                                const std::string& source, UnixMs added_ms,
                                                bool replace);

// The stored intervals that overlap `range`, by start.
Result<std::vector<MeterInterval>> ReadMainMeterIntervals(const Database& db, TimeRange range);

}  // namespace ampledger
