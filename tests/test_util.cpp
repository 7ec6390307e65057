#include "test_util.h"

#include <doctest/doctest.h>
#include <sqlite3.h>

#include <fstream>

#include "api/token.h"
#include "config/wall_clock.h"
#include "storage/database.h"
#include <random>
#include <sstream>
#include <stdexcept>

namespace ampledger::testing {

TempDir::TempDir() {
  std::random_device random;
  for (int attempt = 0; attempt < 100; ++attempt) {
    auto candidate = std::filesystem::temp_directory_path() /
                     ("ampledger-test-" + std::to_string(random()));
    if (std::filesystem::create_directory(candidate)) {
      path_ = candidate;
      return;
    }
  }
  throw std::runtime_error("cannot create a temporary directory");
}

TempDir::~TempDir() {
  std::error_code ignored;
  std::filesystem::remove_all(path_, ignored);
}

std::filesystem::path SourceDir() { return AMPLEDGER_SOURCE_DIR; }

std::filesystem::path ReferenceDir() { return SourceDir() / "tests" / "reference" / "data"; }

std::string AmpledgerBinary() { return AMPLEDGER_BINARY; }

std::string ReadFile(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw std::runtime_error("cannot read " + path.string());
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

void WriteFile(const std::filesystem::path& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
  if (!out) throw std::runtime_error("cannot write " + path.string());
}

namespace {

// Runs `sql` and hands its first row's statement to `read`.
template <typename T, typename Read>
T QueryFirst(const std::string& path, const std::string& sql, Read read) {
  sqlite3* db = nullptr;
  REQUIRE(sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READONLY, nullptr) == SQLITE_OK);
  sqlite3_stmt* statement = nullptr;
  REQUIRE_MESSAGE(sqlite3_prepare_v2(db, sql.c_str(), -1, &statement, nullptr) == SQLITE_OK,
                  sqlite3_errmsg(db));
  REQUIRE(sqlite3_step(statement) == SQLITE_ROW);
  T value = read(statement);
  sqlite3_finalize(statement);
  sqlite3_close(db);
  return value;
}

}  // namespace

std::int64_t QueryInt(const std::string& path, const std::string& sql) {
  return QueryFirst<std::int64_t>(path, sql,
                                  [](sqlite3_stmt* row) { return sqlite3_column_int64(row, 0); });
}

double QueryDouble(const std::string& path, const std::string& sql) {
  return QueryFirst<double>(path, sql,
                            [](sqlite3_stmt* row) { return sqlite3_column_double(row, 0); });
}

std::string ViewerToken(const Config& config) {
  Result<std::unique_ptr<Database>> db = Database::Open(config.storage);
  REQUIRE(db.ok());
  Result<IssuedToken> token =
      IssueToken(**db, Scope{Scope::Kind::kViewer, ""}, "test", WallClockMs());
  REQUIRE(token.ok());
  return token->token;
}

}  // namespace ampledger::testing
