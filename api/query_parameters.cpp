// api/query_parameters.cpp
#include "api/query_parameters.h"

#include "api/rfc3339.h"

namespace ampledger {
namespace {

// "YYYY-MM-DD" with every digit present and a real calendar date (no 2026-02-30).
std::optional<date::year_month_day> ParseLocalDate(const std::string& text) {
  if (text.size() != 10 || text[4] != '-' || text[7] != '-') return std::nullopt;
  for (size_t i : {0, 1, 2, 3, 5, 6, 8, 9}) {
    if (text[i] < '0' || text[i] > '9') return std::nullopt;
  }
  const date::year_month_day day{date::year(std::stoi(text.substr(0, 4))),
                                 date::month(static_cast<unsigned>(std::stoi(text.substr(5, 2)))),
                                 date::day(static_cast<unsigned>(std::stoi(text.substr(8, 2))))};
  if (!day.ok()) return std::nullopt;
  return day;
}

}  // namespace

Result<UnixMs> ParseTimeParameter(const HttpRequest& request, const char* name,
                                  const LocalTime& zone) {
  const std::string prefix = std::string("query parameter \"") + name + "\": ";
  const std::string* text = request.Query(name);
  if (text == nullptr) {
    return Status::InvalidArgument(prefix + "required, an RFC 3339 time with a UTC offset or a "
                                            "local date (YYYY-MM-DD)");
  }
  if (request.query.count(name) > 1) {
    return Status::InvalidArgument(prefix + "given more than once");
  }
  if (std::optional<UnixMs> instant = ParseRfc3339(*text)) return *instant;
  if (std::optional<date::year_month_day> day = ParseLocalDate(*text)) {
    Result<TimeRange> range = zone.Day(*day);
    if (!range.ok()) return range.status();
    return range->start_ms;
  }
  return Status::InvalidArgument(prefix + "\"" + *text +
                                 "\" is neither an RFC 3339 time with a UTC offset (e.g. "
                                 "2026-03-08T00:00:00-06:00) nor a local date (e.g. 2026-03-08)");
}

Status CheckParameters(const HttpRequest& request, std::initializer_list<const char*> known) {
  std::string list;
  for (const char* name : known) list += (list.empty() ? "" : ", ") + std::string(name);
  for (const auto& [name, value] : request.query) {
    bool found = false;
    for (const char* candidate : known) found = found || name == candidate;
    if (!found) {
      return Status::InvalidArgument("query parameter \"" + name + "\": not known here (" + list +
                                     ")");
    }
    if (request.query.count(name) > 1) {
      return Status::InvalidArgument("query parameter \"" + name + "\": given more than once");
    }
  }
  return Status::Ok();
}

Result<bool> WantsCsv(const HttpRequest& request) {
  const std::string* format = request.Query("format");
  if (format == nullptr) return request.accept.find("text/csv") != std::string::npos;
  if (*format != "json" && *format != "csv") {
    return Status::InvalidArgument("query parameter \"format\": \"" + *format +
                                   "\" is not json or csv");
  }
  return *format == "csv";
}

}  // namespace ampledger
