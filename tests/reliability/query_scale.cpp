// tests/reliability/query_scale.cpp
// Query speed at scale. Generates `days` (default 365) of 1-minute readings for 32 circuits
// (4 nodes x 8 channels) with the daemon's own writer, then serves them with `ampledger serve`
// and asks the API for each circuit's daily energy over the whole range (step=day, local days
// of the site's zone). Beside it, in the same run, the same answer computed from the raw
// readings (every row read and summed into the API's day boundaries). Prints both times and
// their ratio (target: the API at least 100 times faster; reported, not asserted) and checks
// that the answers agree. The API's time runs until each answer has arrived whole (the median
// of five passes over the circuits); reading its JSON in this tool is printed apart.
// Also times one /v1/energy request for every circuit over the whole range.
// Run on demand (tests/reliability/run.sh runs it): query_scale AMPLEDGER_BINARY [days]
#include <httplib.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <future>
#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "api/rfc3339.h"
#include "daemon/metering/local_time.h"
#include "storage/reading_writer.h"
#include "tests/reliability/served_site.h"

namespace ampledger::reliability {
namespace {

constexpr int kNodes = 4;
constexpr UnixMs kMinuteMs = 60'000;

std::string UtcRfc3339(UnixMs ms) {
  const std::time_t seconds = static_cast<std::time_t>(ms / 1000);
  std::tm utc{};
  gmtime_r(&seconds, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

// Fills the site's database with one reading a minute per channel over [from_ms, to_ms).
bool Generate(const Config& config, UnixMs from_ms, UnixMs to_ms, std::uint64_t* rows) {
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  if (!db.ok()) return false;
  Result<SeriesMap> series = RegisterSeries(**db, config);
  if (!series.ok()) return false;
  Result<std::unique_ptr<ReadingWriter>> writer = ReadingWriter::Start(config, db->get(), *series);
  if (!writer.ok()) return false;
  std::vector<std::future<Status>> pending;
  bool ok = true;
  ReadingBatch batch;
  for (UnixMs end = from_ms + kMinuteMs; end <= to_ms && ok; end += kMinuteMs) {
    const int minute_of_day = static_cast<int>((end / kMinuteMs) % 1440);
    for (int channel = 0; channel < series->ChannelCount(); ++channel) {
      ChannelReading r;
      r.channel = channel;
      r.boot = 1;
      r.end_ms = end;
      r.duration_ms = static_cast<std::int32_t>(kMinuteMs);
      // A daily shape per circuit: a base load and an evening peak.
      r.real_watts = 20.0 * (channel % 8 + 1) +
                     (minute_of_day > 1080 && minute_of_day < 1320 ? 300.0 * (channel % 3) : 0);
      r.apparent_va = r.real_watts;
      r.volts = 230;
      r.amps = r.real_watts / 230;
      batch.readings.push_back(r);
    }
    if (batch.readings.size() >= 20000) {
      auto promise = std::make_shared<std::promise<Status>>();
      pending.push_back(promise->get_future());
      *rows += batch.readings.size();
      (*writer)->Submit(std::move(batch), [promise](const Status& s) { promise->set_value(s); });
      batch = ReadingBatch();
      // Keep the queue short: wait for the oldest submissions.
      while (pending.size() > 8) {
        ok = ok && pending.front().get().ok();
        pending.erase(pending.begin());
      }
    }
  }
  if (!batch.readings.empty()) {
    auto promise = std::make_shared<std::promise<Status>>();
    pending.push_back(promise->get_future());
    *rows += batch.readings.size();
    (*writer)->Submit(std::move(batch), [promise](const Status& s) { promise->set_value(s); });
  }
  for (auto& result : pending) ok = result.get().ok() && ok;
  (*writer)->Stop();
  return ok;
}

int Main(int argc, char** argv) {
  if (argc < 2) {
    std::fprintf(stderr, "usage: query_scale AMPLEDGER_BINARY [days]\n");
    return 2;
  }
  const std::string binary = argv[1];
  const int days = argc > 2 ? std::stoi(argv[2]) : 365;

  ServedSite site(binary, kNodes);
  Result<Config> config = LoadConfig(site.config_path());
  if (!config.ok()) return 1;
  config->storage.raw_retention_days = days + 30;  // keep every raw reading of the range
  // Whole local days: from local midnight `days` days ago to local midnight today.
  Result<LocalTime> zone = LocalTime::ForZone(config->site.time_zone);
  if (!zone.ok()) return 1;
  const date::year_month_day today = zone->At(WallClockMs()).date;
  const date::year_month_day first{date::sys_days(today) - date::days(days)};
  Result<TimeRange> last_day = zone->Day(date::year_month_day{date::sys_days(today) - date::days(1)});
  Result<TimeRange> first_day = zone->Day(first);
  if (!last_day.ok() || !first_day.ok()) return 1;
  const UnixMs from_ms = first_day->start_ms;
  const UnixMs to_ms = last_day->end_ms;
  std::uint64_t rows = 0;
  const auto generate_started = std::chrono::steady_clock::now();
  if (!Generate(*config, from_ms, to_ms, &rows)) {
    std::fprintf(stderr, "query_scale: generating the readings failed\n");
    return 1;
  }
  const double generate_seconds = std::chrono::duration<double>(
                                      std::chrono::steady_clock::now() - generate_started)
                                      .count();
  const std::string token = site.CreateToken("viewer");
  if (token.empty() || !site.Start()) {
    std::fprintf(stderr, "query_scale: the daemon did not start:\n%s\n",
                 ReadText(site.log_path()).c_str());
    return 1;
  }

  // The API: every circuit's daily energy over the range.
  httplib::Client api("127.0.0.1", site.http_port());
  api.set_bearer_token_auth(token);
  api.set_read_timeout(std::chrono::seconds(120));
  // One connection for every request, as a dashboard's browser keeps one (httplib::Client
  // otherwise sends Connection: close and connects again for each).
  api.set_keep_alive(true);
  // Timed: the requests, each until its whole body has arrived. Reading the JSON is the
  // client's work, not the API's; it is timed apart below. The same requests are made
  // kApiPasses times and the median pass is compared (the first pays for opening reader
  // connections and warming their caches; a single pass of ~40 ms moves with whatever else
  // the machine does).
  constexpr int kApiPasses = 5;
  std::vector<std::string> bodies;
  std::vector<double> pass_seconds;
  bool api_ok = true;
  for (int pass = 0; pass < kApiPasses && api_ok; ++pass) {
    bodies.clear();
    const auto api_started = std::chrono::steady_clock::now();
    for (const CircuitConfig& circuit : config->circuits) {
      auto answer = api.Get("/v1/circuits/" + circuit.id + "/series?step=day&from=" +
                            UtcRfc3339(from_ms) + "&to=" + UtcRfc3339(to_ms));
      if (!answer || answer->status != 200) {
        std::fprintf(stderr, "query_scale: %s: %s\n", circuit.id.c_str(),
                     answer ? answer->body.c_str() : "no answer");
        api_ok = false;
        break;
      }
      bodies.push_back(std::move(answer->body));
    }
    pass_seconds.push_back(
        std::chrono::duration<double>(std::chrono::steady_clock::now() - api_started).count());
  }
  std::vector<double> sorted_passes = pass_seconds;
  std::sort(sorted_passes.begin(), sorted_passes.end());
  const double api_seconds = sorted_passes[sorted_passes.size() / 2];
  std::map<std::string, std::vector<double>> api_wh;  // circuit -> Wh per day
  std::vector<UnixMs> day_starts;                      // the API's local day boundaries
  const auto parse_started = std::chrono::steady_clock::now();
  for (std::size_t c = 0; c < bodies.size(); ++c) {
    nlohmann::json body = nlohmann::json::parse(bodies[c]);
    std::vector<double>& wh = api_wh[config->circuits[c].id];
    for (const nlohmann::json& point : body["points"]) {
      wh.push_back(point["energy_wh"].get<double>());
      if (day_starts.size() < body["points"].size()) {
        day_starts.push_back(ParseRfc3339(point["start"].get<std::string>()).value_or(0));
      }
    }
  }
  const double parse_seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - parse_started).count();
  // Every circuit's energy over the whole range in one /v1/energy request.
  const auto energy_started = std::chrono::steady_clock::now();
  auto energy = api.Get("/v1/energy?from=" + UtcRfc3339(from_ms) + "&to=" + UtcRfc3339(to_ms));
  const double energy_seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - energy_started).count();
  const bool energy_ok = energy && energy->status == 200;
  const int exit_code = site.Stop();

  // The same from raw readings: read every row, place it in its day, sum its energy (each
  // reading's own 1-minute interval: rule 4 of daemon/metering/energy.h for back-to-back
  // readings without a register).
  std::map<int, std::vector<double>> raw_wh;  // channel id -> Wh per day
  const auto raw_started = std::chrono::steady_clock::now();
  {
    Result<std::unique_ptr<Database>> db = Database::OpenReader(site.db_path());
    Result<Statement> scan =
        db.ok() ? (*db)->Prepare("SELECT t_end, channel, real_w, duration_ms FROM reading")
                : Result<Statement>(db.status());
    while (scan.ok()) {
      Result<bool> row = scan->Step("scan");
      if (!row.ok() || !*row) break;
      const UnixMs end = scan->Int(0);
      const UnixMs begin = end - scan->Int(3);
      auto day = std::upper_bound(day_starts.begin(), day_starts.end(), begin);
      if (day == day_starts.begin()) continue;
      std::vector<double>& wh = raw_wh[static_cast<int>(scan->Int(1))];
      wh.resize(day_starts.size());
      wh[static_cast<std::size_t>(day - day_starts.begin() - 1)] +=
          scan->Double(2) * static_cast<double>(end - begin) / 3'600'000.0;
    }
  }
  const double raw_seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - raw_started).count();

  // Compare: the i-th circuit feeds on the i-th channel (channel ids in config order).
  int compared = 0, differ = 0;
  std::vector<std::vector<double>> raw_by_channel;
  for (auto& [id, wh] : raw_wh) raw_by_channel.push_back(wh);
  for (std::size_t c = 0; c < config->circuits.size() && c < raw_by_channel.size(); ++c) {
    const std::vector<double>& a = api_wh[config->circuits[c].id];
    const std::vector<double>& r = raw_by_channel[c];
    for (std::size_t d = 0; d < a.size() && d < r.size(); ++d) {
      ++compared;
      if (std::fabs(a[d] - r[d]) > 1e-6 * std::max(1.0, std::fabs(r[d]))) ++differ;
    }
  }
  const double ratio = api_seconds > 0 ? raw_seconds / api_seconds : 0;
  const bool ok = api_ok && energy_ok && exit_code == 0 && compared == static_cast<int>(config->circuits.size()) *
                                                             static_cast<int>(day_starts.size()) &&
                  differ == 0 && compared > 0;

  std::printf("### Query scale (`query_scale %s %d`)\n\n", binary.c_str(), days);
  std::printf("- %d days of 1-minute readings for %zu circuits: %llu readings, written by the "
              "daemon's writer in %.1f s\n",
              days, config->circuits.size(), static_cast<unsigned long long>(rows),
              generate_seconds);
  std::printf("- daily energy per circuit over the range through the API (%zu requests of %zu "
              "days, each until its whole answer arrived): %.3f s, the median of %zu passes "
              "(",
              config->circuits.size(), day_starts.size(), api_seconds, pass_seconds.size());
  for (std::size_t pass = 0; pass < pass_seconds.size(); ++pass) {
    std::printf("%s%.3f", pass == 0 ? "" : ", ", pass_seconds[pass]);
  }
  std::printf(" s in order)\n");
  std::printf("  (reading their JSON in this tool, not counted: %.3f s)\n", parse_seconds);
  std::printf("- the same from every raw reading in the same run: %.3f s\n", raw_seconds);
  std::printf("- /v1/energy, every circuit over the whole range, one request: %.3f s (%s)\n",
              energy_seconds, energy_ok ? "200" : "FAILED");
  std::printf("- ratio %.0fx (target >= 100x: %s); %d day totals compared, %d differ\n", ratio,
              ratio >= 100 ? "met" : "NOT met", compared, differ);
  std::printf("- result: %s\n\n", ok ? "PASS" : "FAIL");
  return ok ? 0 : 1;
}

}  // namespace
}  // namespace ampledger::reliability

int main(int argc, char** argv) { return ampledger::reliability::Main(argc, argv); }
