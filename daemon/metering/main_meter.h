// daemon/metering/main_meter.h
// Reads of the site's main (utility) meter, typed in by a person, and the meter's energy over
// a span of time worked out from them. A read is either the meter's kWh register at a moment,
// or the kWh used over a period (as a utility bill states it). Pure; any thread may call these.
//
// Energy over [start, end):
//  - From register reads, when there is a read at or before `start` and one at or after `end`:
//    the register at each bound, interpolated linearly in time between the reads on either side
//    (a read exactly at a bound is used as it is), end minus start. Linear interpolation between
//    reads spreads a period's use evenly over its hours, which is how a meter read taken a day
//    off the cycle boundary is usually carried over to it (common practice).
//  - Otherwise from period reads, when together they cover every moment of [start, end): each
//    period's kWh in proportion to the part of it inside [start, end) (evenly spread again).
//  - Otherwise not covered (NotFound, saying which bound or gap is missing).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "config/status.h"
#include "daemon/metering/local_time.h"
#include "daemon/metering/reading.h"

namespace ampledger {

enum class MeterReadKind {
  kRegister,  // the meter's cumulative kWh register at `at_ms`
  kPeriod,    // kWh used over [period_start_ms, at_ms)
};

struct MainMeterRead {
  std::int64_t id = 0;  // the storage row's id; 0 before it is stored
  MeterReadKind kind = MeterReadKind::kRegister;
  UnixMs at_ms = 0;            // register: when read; period: the period's end
  UnixMs period_start_ms = 0;  // period only
  double kwh = 0;              // register: the register's value; period: the energy used
  std::string source;          // who or what gave it: "typed in by the owner", "utility bill"
};

// Limits of a read, with their reasons.
constexpr double kMaxMeterKwh = 1e9;  // 1 TWh: far above any building's register or period
constexpr std::size_t kMaxMeterSourceBytes = 200;  // `source` is a note, not a document

// Whether `read` may join `existing` (the reads already stored): values are finite and from 0
// to kMaxMeterKwh, a period ends after it starts; a register read shares its moment with no
// other register read and is not below an earlier read nor above a later one (a meter
// register only counts up; a replaced meter is not supported); a period overlaps no other
// period. InvalidArgument saying which read it conflicts with.
Status CheckNewMeterRead(const std::vector<MainMeterRead>& existing, const MainMeterRead& read);

struct MeterEnergy {
  double kwh = 0;
  std::string basis;  // how it was found: "register reads 3 and 5, interpolated", ...
};

// The main meter's energy over `range` from `reads` (any order), as the file comment says.
// NotFound when the reads do not cover the range; InvalidArgument when reads contradict each
// other (a register going backwards, overlapping periods).
Result<MeterEnergy> MainMeterEnergy(const std::vector<MainMeterRead>& reads, TimeRange range);

// "register" / "period", as the CLI and storage write them.
const char* MeterReadKindName(MeterReadKind kind);

}  // namespace ampledger
