// tests/storage/main_meter_intervals_test.cpp
// Main-meter interval reads in a real SQLite file: round trip, idempotent re-import,
// conflicting values refused or replaced, overlaps of other shapes refused, all or nothing.
#include "storage/main_meter_intervals.h"

#include <doctest/doctest.h>

#include "test_util.h"

namespace ampledger {
namespace {

using testing::QueryInt;
using testing::TempDir;

constexpr UnixMs kT0 = 1800000000000;  // 2027-01-15T08:00:00Z
constexpr UnixMs kQuarter = 900000;

std::unique_ptr<Database> OpenAt(const std::string& path) {
  StorageConfig storage;
  storage.path = path;
  Result<std::unique_ptr<Database>> db = Database::Open(storage);
  REQUIRE_MESSAGE(db.ok(), db.status().ToString());
  return std::move(db).value();
}

std::vector<MeterInterval> Quarters(int count, double wh) {
  std::vector<MeterInterval> intervals;
  for (int i = 0; i < count; ++i) {
    intervals.push_back({{kT0 + i * kQuarter, kT0 + (i + 1) * kQuarter}, wh + i});
  }
  return intervals;
}

TEST_SUITE("storage") {

TEST_CASE("an import stores every interval once; importing it again changes nothing") {
  TempDir dir;
  std::unique_ptr<Database> db = OpenAt(dir.File("a.db"));
  Result<IntervalImport> first = ImportMainMeterIntervals(*db, Quarters(8, 100), "day.xml", 1, false);
  REQUIRE(first.ok());
  CHECK(first->added == 8);
  Result<IntervalImport> again = ImportMainMeterIntervals(*db, Quarters(8, 100), "day.xml", 2, false);
  REQUIRE(again.ok());
  CHECK(again->added == 0);
  CHECK(again->unchanged == 8);
  CHECK(QueryInt(dir.File("a.db"), "SELECT count(*) FROM main_meter_interval") == 8);
  CHECK(QueryInt(dir.File("a.db"), "SELECT max(added_ms) FROM main_meter_interval") == 1);

  Result<std::vector<MeterInterval>> read =
      ReadMainMeterIntervals(*db, {kT0 + kQuarter / 2, kT0 + 2 * kQuarter});
  REQUIRE(read.ok());
  REQUIRE(read->size() == 2);  // the interval the range starts inside counts
  CHECK((*read)[0].span.start_ms == kT0);
  CHECK((*read)[1].wh == 101);
}

TEST_CASE("another value for a stored interval is refused, or replaced when asked") {
  TempDir dir;
  std::unique_ptr<Database> db = OpenAt(dir.File("a.db"));
  REQUIRE(ImportMainMeterIntervals(*db, Quarters(4, 100), "first.xml", 1, false).ok());
  std::vector<MeterInterval> corrected = Quarters(6, 100);
  corrected[2].wh = 5;
  Result<IntervalImport> refused = ImportMainMeterIntervals(*db, corrected, "fixed.xml", 2, false);
  REQUIRE(!refused.ok());
  CHECK(refused.status().message() ==
        "interval 2027-01-15T08:30:00Z to 2027-01-15T08:45:00Z: 5 Wh, but 102 Wh is stored from "
        "first.xml (replace takes the new value)");
  CHECK(QueryInt(dir.File("a.db"), "SELECT count(*) FROM main_meter_interval") == 4);  // none

  Result<IntervalImport> replaced = ImportMainMeterIntervals(*db, corrected, "fixed.xml", 2, true);
  REQUIRE(replaced.ok());
  CHECK(replaced->added == 2);
  CHECK(replaced->replaced == 1);
  CHECK(replaced->unchanged == 3);
  CHECK(QueryInt(dir.File("a.db"), "SELECT wh FROM main_meter_interval WHERE start_ms = " +
                                       std::to_string(kT0 + 2 * kQuarter)) == 5);
}

TEST_CASE("an hourly interval over stored quarter hours is refused, even with replace") {
  TempDir dir;
  std::unique_ptr<Database> db = OpenAt(dir.File("a.db"));
  REQUIRE(ImportMainMeterIntervals(*db, Quarters(4, 100), "q.xml", 1, false).ok());
  std::vector<MeterInterval> hour = {{{kT0 + kQuarter, kT0 + 5 * kQuarter}, 400}};
  Result<IntervalImport> refused = ImportMainMeterIntervals(*db, hour, "h.xml", 2, true);
  REQUIRE(!refused.ok());
  CHECK(refused.status().message() ==
        "interval 2027-01-15T08:15:00Z to 2027-01-15T09:15:00Z overlaps the interval "
        "2027-01-15T08:15:00Z to 2027-01-15T08:30:00Z stored from q.xml");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
