// daemon/meter_read_command.h
// `ampledger meter-read add|list|remove`: reads of the site's main (utility) meter, typed in
// from the meter's display or a utility bill, kept in the site's database
// (storage/main_meter_store.h) for the unmetered remainder on statements. Written through the
// command's own connection while the daemon may run (one short BEGIN IMMEDIATE per write).
// Main thread only.
#pragma once

#include <cstdint>
#include <iosfwd>
#include <optional>
#include <string>

namespace ampledger {

struct MeterReadOptions {
  std::string config_path;
  // add: either a register read (--register KWH --at TIME) or a period read
  // (--kwh KWH --from TIME --to TIME). TIME is RFC 3339 with an offset
  // ("2026-03-05T08:10:00-06:00"), or the site's local time "YYYY-MM-DD HH:MM" (also with a
  // "T"), or a date "YYYY-MM-DD" meaning its local midnight.
  std::optional<double> register_kwh;
  std::string at;
  std::optional<double> period_kwh;
  std::string from;
  std::string to;
  std::string source = "typed in";  // who or what gave the read, one line
  std::int64_t id = 0;              // remove
};

// Each returns the exit code: 0, 2 for bad options, config or a refused read (nothing is
// stored then), 1 when the database fails.
int RunMeterReadAdd(const MeterReadOptions& options, std::ostream& out, std::ostream& err);
int RunMeterReadList(const MeterReadOptions& options, std::ostream& out, std::ostream& err);
int RunMeterReadRemove(const MeterReadOptions& options, std::ostream& out, std::ostream& err);

}  // namespace ampledger
