// tests/fuzz/api_parameters_fuzz.cpp
// libFuzzer target for what the API reads from a query string before touching the database:
// the input is split like a decoded query ("from=...&to=...&step=...&format=..."), and goes
// through CheckParameters, WantsCsv, ParseTimeParameter (RFC 3339 times and local dates) in
// zones with DST changes, 30- and 45-minute offsets, ParseSeriesStep and SeriesPeriods with
// the API's point limit. Besides crashes, hangs and sanitizer reports, it stops
// (__builtin_trap) when a result breaks a promise: periods that do not tile [from, to) or
// exceed the limit, an RFC 3339 time that does not read back from its local formatting.
// Built by tests/fuzz/api_parameters_run.sh only.
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "api/api_limits.h"
#include "api/energy_series.h"
#include "api/query_parameters.h"
#include "api/rfc3339.h"

namespace {

using namespace ampledger;

void Check(bool promise) {
  if (!promise) __builtin_trap();
}

const std::vector<LocalTime>& Zones() {
  static const std::vector<LocalTime> zones = [] {
    std::vector<LocalTime> made;
    for (const char* name : {"UTC", "America/Chicago", "Australia/Lord_Howe", "Asia/Kathmandu",
                             "Pacific/Chatham", "Europe/Dublin"}) {
      made.push_back(LocalTime::ForZone(name).value());
    }
    return made;
  }();
  return zones;
}

HttpRequest RequestOf(const std::string& text) {
  HttpRequest request;
  request.path = "/v1/circuits/c1/series";
  request.accept = text;
  std::size_t begin = 0;
  while (begin <= text.size()) {
    std::size_t end = text.find('&', begin);
    if (end == std::string::npos) end = text.size();
    const std::string pair = text.substr(begin, end - begin);
    const std::size_t equals = pair.find('=');
    if (equals == std::string::npos) {
      request.query.emplace(pair, "");
    } else {
      request.query.emplace(pair.substr(0, equals), pair.substr(equals + 1));
    }
    begin = end + 1;
  }
  return request;
}

void CheckRoundTrip(std::string_view text) {
  std::optional<UnixMs> instant = ParseRfc3339(text);
  if (!instant) return;
  for (const LocalTime& zone : Zones()) Check(ParseRfc3339(FormatLocalRfc3339(zone, *instant)) == instant);
}

void CheckPeriods(const HttpRequest& request, const LocalTime& zone) {
  Result<UnixMs> from = ParseTimeParameter(request, "from", zone);
  Result<UnixMs> to = ParseTimeParameter(request, "to", zone);
  const std::string* step_text = request.Query("step");
  Result<SeriesStep> step = ParseSeriesStep(step_text == nullptr ? "hour" : *step_text);
  if (!from.ok() || !to.ok() || !step.ok() || *step == SeriesStep::kRaw) return;
  Result<std::vector<TimeRange>> periods =
      SeriesPeriods(zone, *step, *from, *to, kMaxSeriesPoints);
  if (!periods.ok()) return;
  Check(!periods->empty() && periods->size() <= static_cast<std::size_t>(kMaxSeriesPoints));
  Check(periods->front().start_ms == *from && periods->back().end_ms == *to);
  for (std::size_t k = 0; k < periods->size(); ++k) {
    Check((*periods)[k].start_ms < (*periods)[k].end_ms);
    if (k > 0) Check((*periods)[k].start_ms == (*periods)[k - 1].end_ms);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  const HttpRequest request = RequestOf(text);
  (void)CheckParameters(request, {"from", "to", "step", "format"});
  (void)WantsCsv(request);
  CheckRoundTrip(text);
  for (const auto& [name, value] : request.query) CheckRoundTrip(value);
  for (const LocalTime& zone : Zones()) CheckPeriods(request, zone);
  return 0;
}
