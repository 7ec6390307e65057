// tests/api/health_test.cpp
// CheckHealth on real files: a database in a temporary folder, one whose folder is gone, a
// stopped writer, and a free-space threshold no disk meets.
#include "api/health.h"

#include <doctest/doctest.h>

#include "test_util.h"

namespace ampledger {
namespace {

TEST_SUITE("api") {
  TEST_CASE("CheckHealth: writer, writable database and folder, free space against a threshold") {
    testing::TempDir dir;
    const std::string db = dir.File("site.db");
    testing::WriteFile(db, "");

    const HealthReport ok = CheckHealth(Status::Ok(), db, 0);
    REQUIRE(ok.checks.size() == 3);
    CHECK(std::string(ok.checks[0].name) == "writer");
    CHECK(std::string(ok.checks[1].name) == "database_writable");
    CHECK(std::string(ok.checks[2].name) == "disk_free");
    CHECK(ok.Pass());
    CHECK(ok.FailingNames() == "");
    CHECK(ok.free_bytes > 0);

    // No file system has 2^62 bytes free: the threshold alone fails the disk check.
    const HealthReport full = CheckHealth(Status::Ok(), db, std::uint64_t{1} << 62);
    CHECK_FALSE(full.Pass());
    CHECK(full.FailingNames() == "disk_free");
    CHECK(full.checks[2].detail == std::to_string(full.free_bytes) + " bytes free in " +
                                       dir.path().string() + ", at least 4611686018427387904 "
                                                             "needed");

    const HealthReport stopped = CheckHealth(Status::IOError("disk I/O error"), db, 0);
    CHECK(stopped.FailingNames() == "writer");
    CHECK(stopped.checks[0].detail == "I/O error: disk I/O error");

    // A database whose folder is gone can be neither written nor measured.
    const std::string gone = dir.File("gone/site.db");
    const HealthReport missing = CheckHealth(Status::Ok(), gone, 0);
    CHECK(missing.FailingNames() == "database_writable, disk_free");
    CHECK(missing.checks[1].detail == gone + " is not writable: No such file or directory");
    CHECK(missing.checks[2].detail == "cannot read the free space of " + dir.File("gone") +
                                          ": No such file or directory");
  }
}

}  // namespace
}  // namespace ampledger
