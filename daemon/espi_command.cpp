// daemon/espi_command.cpp
#include "daemon/espi_command.h"

#include <cstdio>
#include <fstream>
#include <ostream>
#include <sstream>

#include "api/access.h"
#include "api/rfc3339.h"
#include "api/query_parameters.h"
#include "api/usage_export.h"
#include "config/config.h"
#include "config/wall_clock.h"
#include "daemon/espi/espi_reader.h"
#include "daemon/espi/espi_usage.h"
#include "daemon/site_database.h"
#include "storage/main_meter_intervals.h"
#include "storage/series.h"

namespace ampledger {
namespace {

Result<std::string> ReadWholeFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return Status::InvalidArgument(path + ": cannot open the file");
  in.seekg(0, std::ios::end);
  const std::streamoff size = in.tellg();
  if (size < 0) return Status::InvalidArgument(path + ": cannot read the file");
  if (static_cast<std::uint64_t>(size) > kMaxEspiFileBytes) {
    return Status::InvalidArgument(path + ": " + std::to_string(size) +
                                   " bytes is larger than the limit of " +
                                   std::to_string(kMaxEspiFileBytes) + " bytes");
  }
  in.seekg(0);
  std::string text(static_cast<size_t>(size), '\0');
  if (!in.read(text.data(), size)) return Status::InvalidArgument(path + ": cannot read the file");
  return text;
}

std::string UtcText(UnixMs instant) {
  Result<LocalTime> utc = LocalTime::ForZone("UTC");
  return utc.ok() ? FormatLocalRfc3339(*utc, instant) : std::to_string(instant);
}

// A bound as the API reads it: RFC 3339 with an offset, or a local date of the site.
Result<UnixMs> ParseBound(const std::string& text, const char* option, const LocalTime& zone) {
  HttpRequest request;
  request.query.emplace(option + 2, text);
  Result<UnixMs> instant = ParseTimeParameter(request, option + 2, zone);
  if (!instant.ok()) {
    return Status::InvalidArgument(std::string(option) + ": \"" + text +
                                   "\" is not RFC 3339 with an offset or a date YYYY-MM-DD");
  }
  return instant;
}

}  // namespace

int RunEspiImport(const EspiImportOptions& options, std::ostream& out, std::ostream& err) {
  Result<std::string> text = ReadWholeFile(options.file);
  if (!text.ok()) {
    err << "ampledger espi-import: " << text.status().message() << "\n";
    return 2;
  }
  Result<EspiFeed> feed = ReadEspiFeed(*text, options.file);
  Result<std::vector<MeterInterval>> intervals =
      feed.ok() ? DeliveredIntervals(*feed, options.file) : feed.status();
  if (!intervals.ok()) {
    err << "ampledger espi-import: " << intervals.status().message() << "\n";
    return 2;
  }
  if (intervals->empty()) {
    err << "ampledger espi-import: " << options.file << ": the file has no interval readings\n";
    return 2;
  }
  Config config;
  std::unique_ptr<Database> db;
  if (int code = OpenSiteDatabase(options.config_path, &config, &db, err); code != 0) return code;
  const TimeRange span{intervals->front().span.start_ms, intervals->back().span.end_ms};
  double wh = 0;
  for (const MeterInterval& interval : *intervals) wh += interval.wh;
  Result<IntervalImport> result = ImportMainMeterIntervals(
      *db, std::move(*intervals), options.file, WallClockMs(), options.replace);
  if (!result.ok()) {
    err << "ampledger espi-import: " << options.file << ": " << result.status().message()
        << "; nothing was imported\n";
    return result.status().code() == StatusCode::kInvalidArgument ? 2 : 1;
  }
  char kwh[32];
  std::snprintf(kwh, sizeof kwh, "%.3f", wh / 1000);
  out << options.file << ": " << UtcText(span.start_ms) << " to " << UtcText(span.end_ms) << ", "
      << kwh << " kWh delivered; " << result->added << " intervals added, "
      << result->unchanged << " already stored, " << result->replaced << " replaced\n";
  return 0;
}

int RunEspiExport(const EspiExportOptions& options, std::ostream& out, std::ostream& err) {
  const char* name = "ampledger espi-export: ";
  Result<Config> config = LoadConfig(options.config_path);
  if (!config.ok()) {
    err << name << config.status().message() << "\n";
    return 2;
  }
  if (options.unit.empty() == options.circuit.empty()) {
    err << name << "give one of --unit ID and --circuit ID\n";
    return 2;
  }
  if (options.interval_s != 900 && options.interval_s != 3600) {
    err << name << "--interval: " << options.interval_s << " is not 900 or 3600 seconds\n";
    return 2;
  }
  Result<LocalTime> zone = LocalTime::ForZone(config->site.time_zone);
  if (!zone.ok()) {
    err << name << zone.status().message() << "\n";
    return 2;
  }
  const Scope whole_site{Scope::Kind::kAdmin, ""};
  UsageSubject subject{"circuit", options.circuit, {}};
  if (!options.circuit.empty()) {
    const int circuit = VisibleCircuit(*config, whole_site, options.circuit);
    if (circuit < 0) {
      err << name << "--circuit: no circuit \"" << options.circuit << "\" in the config\n";
      return 2;
    }
    subject.circuits.push_back(circuit);
  } else {
    const int unit = VisibleUnit(*config, whole_site, options.unit);
    if (unit < 0) {
      err << name << "--unit: no unit \"" << options.unit << "\" in the config\n";
      return 2;
    }
    subject = {"unit", options.unit, {}};
    for (size_t i = 0; i < config->circuits.size(); ++i) {
      if (OwnerOfCircuit(*config, static_cast<int>(i)) == unit) {
        subject.circuits.push_back(static_cast<int>(i));
      }
    }
  }
  Result<UnixMs> from = ParseBound(options.from, "--from", *zone);
  Result<UnixMs> to = from.ok() ? ParseBound(options.to, "--to", *zone) : from;
  if (!to.ok()) {
    err << name << to.status().message() << "\n";
    return 2;
  }
  const std::string path = options.db_path.empty() ? config->storage.path : options.db_path;
  Result<std::unique_ptr<Database>> db = Database::OpenReader(path);
  if (!db.ok()) {
    err << name << db.status().message() << "\n";
    return 1;
  }
  Result<SeriesMap> series = LookUpSeries(**db, *config);
  if (!series.ok()) {
    err << name << series.status().message() << "\n";
    return 1;
  }
  Result<std::string> xml = ExportUsageEspi(**db, *series, *config, *zone, subject,
                                            {{*from, *to}, options.interval_s}, WallClockMs());
  if (!xml.ok()) {
    // The range checks are the API's; here the bounds are options.
    std::string message = xml.status().message();
    for (const char* bound : {"from", "to"}) {
      const std::string parameter = std::string("query parameter \"") + bound + "\"";
      if (message.rfind(parameter, 0) == 0) {
        message = "--" + std::string(bound) + message.substr(parameter.size());
      }
    }
    err << name << message << "\n";
    return xml.status().code() == StatusCode::kInvalidArgument ? 2 : 1;
  }
  if (options.output.empty() || options.output == "-") {
    out << *xml;
    return 0;
  }
  std::ofstream file(options.output, std::ios::binary | std::ios::trunc);
  file << *xml;
  file.close();
  if (!file) {
    err << name << options.output << ": cannot write the file\n";
    return 1;
  }
  return 0;
}

}  // namespace ampledger
