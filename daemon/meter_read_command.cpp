// daemon/meter_read_command.cpp
#include "daemon/meter_read_command.h"

#include <cstdio>
#include <ostream>

#include "api/rfc3339.h"
#include "api/site_time_text.h"
#include "config/config.h"
#include "config/wall_clock.h"
#include "daemon/site_database.h"
#include "storage/database.h"
#include "storage/main_meter_store.h"

namespace ampledger {
namespace {

// The read the options describe, or what is wrong with them.
Result<MainMeterRead> ReadFromOptions(const MeterReadOptions& options, const Config& config) {
  MainMeterRead read;
  read.source = options.source;
  if (options.source.empty() || options.source.size() > kMaxMeterSourceBytes ||
      options.source.find_first_of("\r\n") != std::string::npos) {
    return Status::InvalidArgument("--source: 1 to 200 bytes on one line");
  }
  bool as_register = options.register_kwh.has_value();
  bool as_period = options.period_kwh.has_value();
  if (as_register == as_period) {
    return Status::InvalidArgument(
        "give either --register KWH --at TIME (the meter's register) or --kwh KWH --from TIME "
        "--to TIME (energy over a period, as on a utility bill)");
  }
  const std::string& zone = config.site.time_zone;
  if (as_register) {
    if (options.at.empty() || !options.from.empty() || !options.to.empty()) {
      return Status::InvalidArgument("--register needs --at TIME, and no --from or --to");
    }
    Result<UnixMs> at = ParseSiteTime(options.at, zone);
    if (!at.ok()) return Status::InvalidArgument("--at: " + at.status().message());
    read.at_ms = *at;
    read.kwh = *options.register_kwh;
    return read;
  }
  if (options.from.empty() || options.to.empty() || !options.at.empty()) {
    return Status::InvalidArgument("--kwh needs --from TIME and --to TIME, and no --at");
  }
  Result<UnixMs> from = ParseSiteTime(options.from, zone);
  if (!from.ok()) return Status::InvalidArgument("--from: " + from.status().message());
  Result<UnixMs> to = ParseSiteTime(options.to, zone);
  if (!to.ok()) return Status::InvalidArgument("--to: " + to.status().message());
  read.kind = MeterReadKind::kPeriod;
  read.period_start_ms = *from;
  read.at_ms = *to;
  read.kwh = *options.period_kwh;
  return read;
}

}  // namespace

int RunMeterReadAdd(const MeterReadOptions& options, std::ostream& out, std::ostream& err) {
  Config config;
  std::unique_ptr<Database> db;
  if (int code = OpenSiteDatabase(options.config_path, &config, &db, err); code != 0) return code;
  Result<MainMeterRead> read = ReadFromOptions(options, config);
  if (!read.ok()) {
    err << "ampledger: meter-read add: " << read.status().message() << "\n";
    return 2;
  }
  Result<std::int64_t> id = AddMainMeterRead(*db, *read, WallClockMs());
  if (id.status().code() == StatusCode::kInvalidArgument) {
    err << "ampledger: meter-read add: refused, nothing stored: " << id.status().message()
        << "\n";
    return 2;
  }
  if (!id.ok()) {
    err << "ampledger: meter-read add: " << id.status().ToString() << "\n";
    return 1;
  }
  out << "main meter read " << *id << " stored\n";
  return 0;
}

int RunMeterReadList(const MeterReadOptions& options, std::ostream& out, std::ostream& err) {
  Config config;
  std::unique_ptr<Database> db;
  if (int code = OpenSiteDatabase(options.config_path, &config, &db, err); code != 0) return code;
  Result<LocalTime> zone = LocalTime::ForZone(config.site.time_zone);
  Result<std::vector<MainMeterRead>> reads = ListMainMeterReads(*db);
  if (!zone.ok() || !reads.ok()) {
    err << "ampledger: " << (zone.ok() ? reads.status() : zone.status()).ToString() << "\n";
    return 1;
  }
  out << "id\tkind\tfrom\tat\tkwh\tsource\n";
  for (const MainMeterRead& read : *reads) {
    char kwh[32];
    std::snprintf(kwh, sizeof kwh, "%.10g", read.kwh);
    out << read.id << "\t" << MeterReadKindName(read.kind) << "\t"
        << (read.kind == MeterReadKind::kPeriod ? FormatLocalRfc3339(*zone, read.period_start_ms)
                                                : "-")
        << "\t" << FormatLocalRfc3339(*zone, read.at_ms) << "\t" << kwh << "\t" << read.source
        << "\n";
  }
  return 0;
}

int RunMeterReadRemove(const MeterReadOptions& options, std::ostream& out, std::ostream& err) {
  Config config;
  std::unique_ptr<Database> db;
  if (int code = OpenSiteDatabase(options.config_path, &config, &db, err); code != 0) return code;
  Status removed = RemoveMainMeterRead(*db, options.id);
  if (removed.code() == StatusCode::kNotFound) {
    err << "ampledger: meter-read remove: " << removed.message() << "\n";
    return 2;
  }
  if (!removed.ok()) {
    err << "ampledger: meter-read remove: " << removed.ToString() << "\n";
    return 1;
  }
  out << "main meter read " << options.id << " removed\n";
  return 0;
}

}  // namespace ampledger
