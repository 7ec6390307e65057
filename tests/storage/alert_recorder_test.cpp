// tests/storage/alert_recorder_test.cpp
// Alert states, events and the outbox in a real SQLite file, through the real writer:
// restarts in the middle of a hold time and of an active alert, resent readings,
// acknowledgements, silences and timer-driven silence.
#include "storage/alert_recorder.h"

#include <doctest/doctest.h>

#include <atomic>
#include <filesystem>
#include <future>

#include <nlohmann/json.hpp>

#include "storage/alert_queries.h"
#include "test_util.h"

namespace ampledger {
namespace {

constexpr UnixMs kT0 = 1'772'953'200'000;  // 2026-03-08T07:00:00Z

const char* kSite = R"(
[site]
name = "Recorder test"
time_zone = "UTC"
nominal_volts = [230]

[[node]]
id = "panel"
auth = "plain"
[[node.channel]]
id = "ct1"
[[node.channel]]
id = "ct2"

[[circuit]]
id = "heater"
channels = ["panel/ct1"]
[[circuit]]
id = "fridge"
channels = ["panel/ct2"]

[[alert]]
id = "hot"
kind = "power_above"
circuits = ["heater"]
level_watts = 2000
clear_watts = 1000
hold_seconds = 30

[[alert]]
id = "quiet"
kind = "node_silent"
missed_intervals = 1

[storage]
path = "alerts.db"
batch_millis = 5
)";

ChannelReading Reading(int channel, UnixMs end_ms, double watts, int duration_ms = 10'000) {
  ChannelReading r;
  r.channel = channel;
  r.boot = 1;
  r.end_ms = end_ms;
  r.duration_ms = duration_ms;
  r.volts = 230;
  r.amps = watts / 230;
  r.real_watts = watts;
  r.apparent_va = watts;
  return r;
}

// The database, writer and recorder of one daemon run; destroyed = stopped.
class Run {
 public:
  Run(const Config& config, std::function<UnixMs()> clock, std::vector<std::string> hooks = {},
      const TariffSchedule* tariffs = nullptr)
      : config_(config) {
    db_ = std::move(Database::Open(config.storage).value());
    SeriesMap series = RegisterSeries(*db_, config).value();
    Result<std::unique_ptr<AlertRecorder>> recorder =
        AlertRecorder::Create(config, *db_, AlertRecorderOptions{hooks, clock, tariffs});
    REQUIRE(recorder.ok());
    recorder_ = std::move(recorder).value();
    WriterOptions options;
    options.clock = clock;
    options.hook = recorder_.get();
    writer_ = std::move(ReadingWriter::Start(config, db_.get(), series, options).value());
    recorder_->Start(writer_.get());
  }
  ~Run() {
    recorder_->Stop();
    writer_->Stop();
  }

  Status Store(std::vector<ChannelReading> readings) {
    std::promise<Status> promise;
    writer_->Submit(ReadingBatch{std::move(readings), {}},
                    [&](const Status& s) { promise.set_value(s); });
    return promise.get_future().get();
  }

  AlertRecorder& recorder() { return *recorder_; }

 private:
  const Config& config_;
  std::unique_ptr<Database> db_;
  std::unique_ptr<AlertRecorder> recorder_;
  std::unique_ptr<ReadingWriter> writer_;
};

struct Fixture {
  // Without `node_silent`, the timer has nothing to do and the tests' clock decides all.
  explicit Fixture(bool node_silent = false) {
    Result<Config> parsed = ParseConfig(kSite, dir.File("site.toml"));
    REQUIRE(parsed.ok());
    config = *parsed;
    if (!node_silent) config.alerts.pop_back();
  }
  std::vector<StoredEvent> Events() {
    Result<std::unique_ptr<Database>> reader = Database::OpenReader(config.storage.path);
    REQUIRE(reader.ok());
    Result<std::vector<StoredEvent>> events = ReadEventsAfter(**reader, 0, 1000);
    REQUIRE(events.ok());
    return *events;
  }
  std::vector<ActiveAlert> Active() {
    Result<std::unique_ptr<Database>> reader = Database::OpenReader(config.storage.path);
    REQUIRE(reader.ok());
    return ReadActiveAlerts(**reader).value();
  }
  std::int64_t Count(const std::string& sql) { return testing::QueryInt(config.storage.path, sql); }

  testing::TempDir dir;
  Config config;
  std::atomic<UnixMs> now{kT0};
  std::function<UnixMs()> clock = [this] { return now.load(); };
};

// A daily cost budget of 1.00 on "heater", priced by a flat 0.25 a kWh (our test prices).
struct CostFixture {
  CostFixture() {
    std::filesystem::create_directory(dir.path() / "tariffs");
    testing::WriteFile(dir.path() / "tariffs" / "flat.toml",
                       "name = \"Flat\"\n[[season]]\nname = \"all year\"\nfrom = \"01-01\"\n"
                       "to = \"12-31\"\ndefault_period = \"any\"\n"
                       "[[season.period]]\nname = \"any\"\nprice = 0.25\n");
    const std::string text = std::string(kSite).replace(
        std::string(kSite).find("nominal_volts"), 0, "tariff = \"flat\"\n") +
        "[[alert]]\nid = \"spend\"\nkind = \"budget\"\ncircuits = [\"heater\"]\n"
        "budget_period = \"day\"\nbudget_cost = 1.00\n";
    Result<Config> parsed = ParseConfig(text, dir.File("site.toml"));
    REQUIRE_MESSAGE(parsed.ok(), parsed.status().ToString());
    config = *parsed;
    config.alerts.erase(config.alerts.begin(), config.alerts.begin() + 2);  // "spend" alone
    schedule = TariffSchedule::Create(config).value();
  }
  // `watts` on the heater's channel over the `hours` hours that end `end_h` hours after
  // midnight UTC of kT0's day (2026-03-08).
  static ChannelReading Heater(double end_h, double hours, double watts) {
    const UnixMs midnight = kT0 - 7 * 3'600'000;
    return Reading(0, midnight + static_cast<UnixMs>(end_h * 3'600'000), watts,
                   static_cast<int>(hours * 3'600'000));
  }
  std::vector<StoredEvent> Events() {
    Result<std::unique_ptr<Database>> reader = Database::OpenReader(config.storage.path);
    REQUIRE(reader.ok());
    return ReadEventsAfter(**reader, 0, 1000).value();
  }
  testing::TempDir dir;
  Config config;
  TariffSchedule schedule;
  std::function<UnixMs()> clock = [] { return kT0; };
};

TEST_SUITE("storage") {
  TEST_CASE("alert recorder: a cost budget counts across restarts, each reading once") {
    CostFixture f;
    {
      Run run(f.config, f.clock, {}, &f.schedule);
      REQUIRE(run.Store({CostFixture::Heater(8, 8, 100)}).ok());  // 0.8 kWh: 0.20
    }
    CHECK(f.Events().empty());  // projects 0.60 for the day
    {
      Run run(f.config, f.clock, {}, &f.schedule);
      // 0.20 kept + 0.25 = 0.45 by 09:00 projects 1.20: on course. Without the stored 0.20
      // it would project 0.67 and say nothing.
      REQUIRE(run.Store({CostFixture::Heater(9, 1, 1000)}).ok());
      // Resent readings are stored once and priced once; 0.50 more makes 0.95, within budget
      // (counted twice they would pass it).
      REQUIRE(run.Store({CostFixture::Heater(8, 8, 100), CostFixture::Heater(9, 1, 1000)}).ok());
      REQUIRE(run.Store({CostFixture::Heater(10, 1, 2000)}).ok());
    }
    {
      Run run(f.config, f.clock, {}, &f.schedule);  // a restart during the active alert
      REQUIRE(run.Store({CostFixture::Heater(11, 1, 200)}).ok());  // exactly 1.00: not over
      CHECK(f.Events().size() == 1);
      REQUIRE(run.Store({CostFixture::Heater(12, 1, 4)}).ok());  // 1.001: over
      REQUIRE(run.Store({CostFixture::Heater(24 + 1, 1, 100)}).ok());  // the next day
    }
    std::vector<StoredEvent> events = f.Events();
    REQUIRE(events.size() == 3);
    CHECK(events[0].kind == "raised");
    CHECK(events[0].reason == "on course to exceed");
    CHECK(events[0].at_ms == kT0 + 2 * 3'600'000);
    CHECK(events[1].kind == "changed");
    CHECK(events[1].reason == "budget exceeded");
    CHECK(events[1].at_ms == kT0 + 5 * 3'600'000);
    CHECK(events[2].kind == "cleared");
    CHECK(events[2].at_ms == kT0 + 17 * 3'600'000);  // midnight UTC of 2026-03-09
    nlohmann::json values = nlohmann::json::parse(events[2].value_json);
    CHECK(values["used_cost"].get<double>() == doctest::Approx(1.001));
    CHECK(values["budget_cost"] == 1.0);
    CHECK(values["used_kwh"].get<double>() == doctest::Approx(4.004));
  }

  TEST_CASE("alert recorder: a restart in the middle of a hold time neither loses nor doubles") {
    Fixture f;
    {
      Run run(f.config, f.clock);
      REQUIRE(run.Store({Reading(0, kT0 + 10'000, 2500)}).ok());
      REQUIRE(run.Store({Reading(0, kT0 + 20'000, 2500)}).ok());
    }
    CHECK(f.Events().empty());
    CHECK(f.Count("SELECT count(*) FROM alert WHERE rule = 'hot' AND state LIKE "
                  "'phase=holding since=1772953200000 %'") == 1);
    {
      Run run(f.config, f.clock);
      // A resend of what was stored before the restart is not evaluated again.
      REQUIRE(run.Store({Reading(0, kT0 + 10'000, 2500), Reading(0, kT0 + 20'000, 2500)}).ok());
      CHECK(f.Events().empty());
      REQUIRE(run.Store({Reading(0, kT0 + 30'000, 2600)}).ok());  // held 30 s across the restart
    }
    std::vector<StoredEvent> events = f.Events();
    REQUIRE(events.size() == 1);
    CHECK(events[0].kind == "raised");
    CHECK(events[0].rule == "hot");
    CHECK(events[0].subject == "circuit:heater");
    CHECK(events[0].at_ms == kT0 + 30'000);
    CHECK(events[0].value_json ==
          "{\"watts\":2600,\"level_watts\":2000,\"peak_watts\":2600,\"since\":1772953200000,"
          "\"held_s\":30}");
  }

  TEST_CASE("alert recorder: a restart during an active alert clears it once") {
    Fixture f;
    {
      Run run(f.config, f.clock);
      REQUIRE(run.Store({Reading(0, kT0 + 10'000, 2500), Reading(0, kT0 + 20'000, 2500),
                         Reading(0, kT0 + 30'000, 2500)})
                  .ok());
    }
    REQUIRE(f.Active().size() == 1);
    CHECK(f.Active()[0].raised_ms == kT0 + 30'000);
    {
      Run run(f.config, f.clock);
      REQUIRE(run.Store({Reading(0, kT0 + 40'000, 1500)}).ok());  // in the band: still raised
      CHECK(f.Active().size() == 1);
    }
    {
      Run run(f.config, f.clock);
      REQUIRE(run.Store({Reading(0, kT0 + 50'000, 900)}).ok());
      REQUIRE(run.Store({Reading(0, kT0 + 60'000, 800)}).ok());
    }
    std::vector<StoredEvent> events = f.Events();
    REQUIRE(events.size() == 2);
    CHECK(events[0].kind == "raised");
    CHECK(events[1].kind == "cleared");
    CHECK(events[1].id > events[0].id);
    CHECK(f.Active().empty());
  }

  TEST_CASE("alert recorder: acknowledge needs an active alert; a new raise needs a new one") {
    Fixture f;
    Run run(f.config, f.clock);
    Status calm = run.recorder().Acknowledge("hot", "circuit:heater", "admin");
    CHECK(calm.code() == StatusCode::kNotFound);
    CHECK(calm.message() == "no active alert \"hot\" for circuit:heater");
    CHECK(run.recorder().Acknowledge("nope", "circuit:heater", "admin").code() ==
          StatusCode::kNotFound);
    REQUIRE(run.Store({Reading(0, kT0 + 10'000, 2500), Reading(0, kT0 + 40'000, 2500)}).ok());
    f.now = kT0 + 45'000;
    CHECK(run.recorder().Acknowledge("hot", "circuit:heater", "token 3 (admin)").ok());
    CHECK(run.recorder().Acknowledge("hot", "circuit:heater", "token 3 (admin)").ok());
    std::vector<ActiveAlert> active = f.Active();
    REQUIRE(active.size() == 1);
    CHECK(active[0].acked_ms == kT0 + 45'000);
    CHECK(active[0].acked_by == "token 3 (admin)");
    CHECK(active[0].condition.kind == "raised");
    std::vector<StoredEvent> events = f.Events();
    REQUIRE(events.size() == 2);  // the second acknowledgement changed nothing
    CHECK(events[1].kind == "acknowledged");
    CHECK(events[1].by == "token 3 (admin)");
    REQUIRE(run.Store({Reading(0, kT0 + 50'000, 100), Reading(0, kT0 + 90'000, 2500),
                       Reading(0, kT0 + 120'000, 2500)})
                .ok());
    active = f.Active();
    REQUIRE(active.size() == 1);
    CHECK(active[0].acked_ms == 0);
  }

  TEST_CASE("alert recorder: silenced events are recorded but not queued for webhooks") {
    Fixture f;
    Run run(f.config, f.clock, {"phone", "hub"});
    CHECK(run.recorder().Silence("hot", "circuit:fridge", 60'000, "admin").code() ==
          StatusCode::kNotFound);
    CHECK(run.recorder().Silence("hot", "circuit:heater", 60'000, "admin").ok());
    REQUIRE(run.Store({Reading(0, kT0 + 10'000, 2500), Reading(0, kT0 + 40'000, 2500)}).ok());
    f.now = kT0 + 61'000;
    REQUIRE(run.Store({Reading(0, kT0 + 50'000, 500)}).ok());
    std::vector<StoredEvent> events = f.Events();
    // silenced, raised (while silenced), cleared (after the silence)
    REQUIRE(events.size() == 3);
    CHECK(events[0].kind == "silenced");
    CHECK(events[0].silenced);
    CHECK(events[1].kind == "raised");
    CHECK(events[1].silenced);
    CHECK(events[2].kind == "cleared");
    CHECK_FALSE(events[2].silenced);
    CHECK(f.Count("SELECT count(*) FROM webhook_outbox") == 2);
    CHECK(f.Count("SELECT count(*) FROM webhook_outbox WHERE event = " +
                  std::to_string(events[2].id)) == 2);
  }

  TEST_CASE("alert recorder: a silent node is raised by the timer, no reading needed") {
    Fixture f(true);
    std::function<UnixMs()> wall = [] { return static_cast<UnixMs>(
        std::chrono::duration_cast<std::chrono::milliseconds>(
            std::chrono::system_clock::now().time_since_epoch()).count()); };
    Run run(f.config, wall);
    const UnixMs start = wall();
    REQUIRE(run.Store({Reading(1, start, 90, 200)}).ok());  // reports every 0.2 s
    Result<std::int64_t> newest = run.recorder().feed().WaitAfter(
        0, EventFeed::Clock::now() + std::chrono::seconds(10), 4);
    REQUIRE(newest.ok());
    REQUIRE(*newest == 1);
    std::vector<StoredEvent> events = f.Events();
    REQUIRE(events.size() == 1);
    CHECK(events[0].kind == "silent");
    CHECK(events[0].subject == "node:panel");
    CHECK(events[0].at_ms - start > 200);
    REQUIRE(run.Store({Reading(1, wall(), 90, 200)}).ok());
    events = f.Events();
    REQUIRE(events.size() == 2);
    CHECK(events[1].kind == "back");
  }

  TEST_CASE("alert recorder: a damaged stored state is Corruption naming rule and subject") {
    Fixture f;
    { Run run(f.config, f.clock); REQUIRE(run.Store({Reading(0, kT0, 10)}).ok()); }
    {
      std::unique_ptr<Database> db = std::move(Database::Open(f.config.storage).value());
      REQUIRE(db->Exec("UPDATE alert SET state = 'phase=dozing'", "damage").ok());
      Result<std::unique_ptr<AlertRecorder>> recorder =
          AlertRecorder::Create(f.config, *db, AlertRecorderOptions{});
      REQUIRE_FALSE(recorder.ok());
      CHECK(recorder.status().code() == StatusCode::kCorruption);
      CHECK(recorder.status().message().find(": alert \"hot\" for circuit:heater: alert state: "
                                             "field \"phase\" does not read") !=
            std::string::npos);
    }
  }
}

}  // namespace
}  // namespace ampledger
