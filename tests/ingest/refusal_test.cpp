// tests/ingest/refusal_test.cpp
#include <doctest/doctest.h>

#include <set>
#include <string>

#include "daemon/ingest/refusal.h"

namespace ampledger {
namespace {

TEST_SUITE("ingest") {

TEST_CASE("every refusal reason has its own counter name") {
  std::set<std::string> names;
  for (int i = 0; i < kRefusalReasonCount; ++i) {
    const std::string name = RefusalName(static_cast<RefusalReason>(i));
    CHECK(name != "unknown");
    CHECK(name.find_first_not_of("abcdefghijklmnopqrstuvwxyz_") == std::string::npos);
    names.insert(name);
  }
  CHECK(names.size() == static_cast<std::size_t>(kRefusalReasonCount));
  CHECK(std::string(RefusalName(RefusalReason::kBadTag)) == "bad_tag");
}

TEST_CASE("a refusal reads as a Status naming its reason") {
  const Status status = Refuse(RefusalReason::kClock, "time 5 is in the future").ToStatus();
  CHECK(status.code() == StatusCode::kInvalidArgument);
  CHECK(status.message() == "clock: time 5 is in the future");
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
