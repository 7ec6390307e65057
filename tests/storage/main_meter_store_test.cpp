// tests/storage/main_meter_store_test.cpp
// Main-meter reads in a real SQLite file: round trip, refusals that store nothing, removal,
// and the migration of a schema-2 database (before the table existed).
#include "storage/main_meter_store.h"

#include <doctest/doctest.h>
#include <sqlite3.h>

#include "storage/token_store.h"
#include "test_util.h"

namespace ampledger {
namespace {

using testing::QueryInt;
using testing::TempDir;

constexpr UnixMs kHour = 3'600'000;

std::unique_ptr<Database> OpenAt(const std::string& path) {
  StorageConfig storage;
  storage.path = path;
  Result<std::unique_ptr<Database>> db = Database::Open(storage);
  REQUIRE_MESSAGE(db.ok(), db.status().ToString());
  return std::move(db).value();
}

TEST_SUITE("storage") {

TEST_CASE("main meter reads round-trip, in time order") {
  TempDir dir;
  std::unique_ptr<Database> db = OpenAt(dir.File("site.db"));
  MainMeterRead later{0, MeterReadKind::kRegister, 50 * kHour, 0, 1234.5, "typed in by the owner"};
  MainMeterRead period{0, MeterReadKind::kPeriod, 40 * kHour, 10 * kHour, 310.25, "utility bill"};
  MainMeterRead earlier{0, MeterReadKind::kRegister, 20 * kHour, 0, 1200, "typed in"};
  Result<std::int64_t> first = AddMainMeterRead(*db, later, 1);
  Result<std::int64_t> second = AddMainMeterRead(*db, period, 2);
  Result<std::int64_t> third = AddMainMeterRead(*db, earlier, 3);
  REQUIRE(first.ok());
  REQUIRE(second.ok());
  REQUIRE(third.ok());
  Result<std::vector<MainMeterRead>> reads = ListMainMeterReads(*db);
  REQUIRE(reads.ok());
  REQUIRE(reads->size() == 3);
  CHECK((*reads)[0].id == *third);
  CHECK((*reads)[0].kwh == 1200);
  CHECK((*reads)[1].id == *second);
  CHECK((*reads)[1].kind == MeterReadKind::kPeriod);
  CHECK((*reads)[1].period_start_ms == 10 * kHour);
  CHECK((*reads)[1].at_ms == 40 * kHour);
  CHECK((*reads)[1].kwh == 310.25);
  CHECK((*reads)[1].source == "utility bill");
  CHECK((*reads)[2].kind == MeterReadKind::kRegister);
  CHECK((*reads)[2].source == "typed in by the owner");
  // 20 h to 50 h from the registers: 34.5 kWh.
  CHECK(MainMeterEnergy(*reads, {20 * kHour, 50 * kHour})->kwh == doctest::Approx(34.5));
}

TEST_CASE("a refused read stores nothing and keeps what was there") {
  TempDir dir;
  std::string path = dir.File("site.db");
  std::unique_ptr<Database> db = OpenAt(path);
  REQUIRE(AddMainMeterRead(*db, {0, MeterReadKind::kRegister, 10 * kHour, 0, 500, "a"}, 1).ok());
  Result<std::int64_t> backwards =
      AddMainMeterRead(*db, {0, MeterReadKind::kRegister, 20 * kHour, 0, 499, "b"}, 2);
  REQUIRE(!backwards.ok());
  CHECK(backwards.status().code() == StatusCode::kInvalidArgument);
  CHECK(QueryInt(path, "SELECT count(*) FROM main_meter_read") == 1);
  // The connection is usable afterwards: no transaction was left open.
  CHECK(AddMainMeterRead(*db, {0, MeterReadKind::kRegister, 20 * kHour, 0, 501, "c"}, 3).ok());
  CHECK(QueryInt(path, "SELECT count(*) FROM main_meter_read") == 2);
}

TEST_CASE("a read typed in by mistake can be removed") {
  TempDir dir;
  std::unique_ptr<Database> db = OpenAt(dir.File("site.db"));
  Result<std::int64_t> id =
      AddMainMeterRead(*db, {0, MeterReadKind::kRegister, kHour, 0, 99999, "typo"}, 1);
  REQUIRE(id.ok());
  CHECK(RemoveMainMeterRead(*db, *id).ok());
  CHECK(ListMainMeterReads(*db)->empty());
  Status again = RemoveMainMeterRead(*db, *id);
  CHECK(again.code() == StatusCode::kNotFound);
  CHECK(again.message() == "no main meter read " + std::to_string(*id));
}

TEST_CASE("a schema-2 database migrates to the newest schema, keeping its rows") {
  TempDir dir;
  std::string path = dir.File("old.db");
  {
    std::unique_ptr<Database> db = OpenAt(path);
    REQUIRE(InsertToken(*db, std::string(32, 'x'), "viewer", "kept", 7).ok());
  }
  // Turn it back into what a schema-2 build left: none of the later tables, user_version 2.
  sqlite3* raw = nullptr;
  REQUIRE(sqlite3_open(path.c_str(), &raw) == SQLITE_OK);
  REQUIRE(sqlite3_exec(raw,
                       "DROP TABLE main_meter_read; DROP TABLE webhook_outbox; "
                       "DROP TABLE alert_event; DROP TABLE alert; DROP TABLE rollup_day; "
                       "DROP TABLE rollup_day_zone; DROP TABLE main_meter_interval; "
                       "PRAGMA user_version = 2;",
                       nullptr, nullptr, nullptr) == SQLITE_OK);
  sqlite3_close(raw);
  CHECK(QueryInt(path, "PRAGMA user_version") == 2);

  std::unique_ptr<Database> db = OpenAt(path);
  CHECK(db->SchemaVersion().value() == kSchemaVersion);
  CHECK(QueryInt(path, "SELECT count(*) FROM api_token WHERE label = 'kept'") == 1);
  CHECK(AddMainMeterRead(*db, {0, MeterReadKind::kPeriod, 2 * kHour, kHour, 3, "bill"}, 1).ok());
  CHECK(QueryInt(path, "SELECT count(*) FROM main_meter_read") == 1);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
