// tests/ingest/replay_window_test.cpp
// The anti-replay window: the cases of RFC 4303 section 3.4.3 (duplicate, in-window out of
// order, too old, window advance) plus our boot counter.
#include <doctest/doctest.h>

#include <cassert>

#include "daemon/ingest/replay_window.h"

namespace ampledger {
namespace {

constexpr std::uint32_t kSize = ReplayWindow::kWindowSize;

TEST_SUITE("ingest") {

TEST_CASE("an empty window takes anything") {
  ReplayWindow w;
  CHECK(w.empty());
  CHECK(w.Check(0, 0) == ReplayVerdict::kFresh);
  CHECK(w.Check(7, 123456) == ReplayVerdict::kFresh);
  CHECK(w.CheckInvariants());
}

TEST_CASE("RFC 4303 3.4.3: duplicate refused, in-window out of order accepted once") {
  ReplayWindow w;
  w.Update(1, 100);
  CHECK(w.Check(1, 100) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(1, 98) == ReplayVerdict::kFresh);  // inside, not yet seen
  w.Update(1, 98);
  CHECK(w.Check(1, 98) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(1, 99) == ReplayVerdict::kFresh);
  CHECK(w.highest_seq() == 100);  // out-of-order seqs do not move the edge
  CHECK(w.CheckInvariants());
}

TEST_CASE("RFC 4303 3.4.3: too old, left of the window") {
  ReplayWindow w;
  w.Update(1, 5000);
  CHECK(w.Check(1, 5000 - (kSize - 1)) == ReplayVerdict::kFresh);  // the window's left end
  CHECK(w.Check(1, 5000 - kSize) == ReplayVerdict::kTooOld);
  CHECK(w.Check(1, 0) == ReplayVerdict::kTooOld);
  w.Update(1, 0);  // ignored
  CHECK(w.highest_seq() == 5000);
}

TEST_CASE("RFC 4303 3.4.3: window advance keeps marks that stay inside") {
  ReplayWindow w;
  for (std::uint32_t seq = 10; seq < 20; ++seq) w.Update(2, seq);
  w.Update(2, 12 + kSize - 1);  // seq 12 is now the left end
  CHECK(w.Check(2, 12) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(2, 11) == ReplayVerdict::kTooOld);
  CHECK(w.Check(2, 13) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(2, 20) == ReplayVerdict::kFresh);
  CHECK(w.CheckInvariants());
  // An advance by more than the window clears every mark.
  w.Update(2, 12 + 3 * kSize);
  CHECK(w.Check(2, 12 + 3 * kSize - 1) == ReplayVerdict::kFresh);
  CHECK(w.CheckInvariants());
}

TEST_CASE("advances by every shift amount keep exactly the marks they should") {
  // Shifts that are and are not multiples of 64 (the bitmap's word size).
  for (std::uint32_t by : {1u, 5u, 63u, 64u, 65u, 127u, 128u, 500u, kSize - 1, kSize}) {
    CAPTURE(by);
    ReplayWindow w;
    for (std::uint32_t seq = 1000; seq < 1000 + kSize; seq += 3) w.Update(0, seq);
    const std::uint32_t old_edge = w.highest_seq();
    w.Update(0, old_edge + by);
    for (std::uint32_t seq = old_edge + by - (kSize - 1); seq <= old_edge + by; ++seq) {
      const bool was_marked = seq <= old_edge && seq >= 1000 && (seq - 1000) % 3 == 0;
      const bool marked = was_marked || seq == old_edge + by;
      CHECK((w.Check(0, seq) == ReplayVerdict::kDuplicate) == marked);
    }
    CHECK(w.CheckInvariants());
  }
}

TEST_CASE("a higher boot starts a new window; the boot before it is kept, older ones refused") {
  ReplayWindow w;
  w.Update(3, 9000);
  CHECK(w.Check(4, 0) == ReplayVerdict::kFresh);
  CHECK(w.Check(2, 9999) == ReplayVerdict::kOldBoot);
  w.Update(4, 0);
  CHECK(w.boot() == 4);
  CHECK(w.highest_seq() == 0);
  CHECK(w.Check(4, 0) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(4, 1) == ReplayVerdict::kFresh);
  CHECK(w.Check(2, 9999) == ReplayVerdict::kOldBoot);
  CHECK(w.CheckInvariants());
}

TEST_CASE("packs of the previous boot resent after a restart are stored once") {
  ReplayWindow w;
  w.Update(3, 2000);
  w.Update(3, 1998);  // 1999 was lost before the node restarted
  w.Update(4, 0);
  CHECK(w.Check(3, 2000) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(3, 1998) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(3, 1999) == ReplayVerdict::kFresh);  // unacknowledged, resent
  CHECK(w.Check(3, 2001) == ReplayVerdict::kFresh);  // sent just before the restart
  CHECK(w.Check(3, 2000 - ReplayWindow::kWindowSize) == ReplayVerdict::kTooOld);
  w.Update(3, 1999);
  w.Update(3, 2001);
  CHECK(w.Check(3, 1999) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(3, 2001) == ReplayVerdict::kDuplicate);
  CHECK(w.boot() == 4);
  CHECK(w.highest_seq() == 0);
  CHECK(w.CheckInvariants());

  // A further restart forgets boot 3.
  w.Update(5, 0);
  CHECK(w.Check(3, 2002) == ReplayVerdict::kOldBoot);
  CHECK(w.Check(4, 0) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(4, 1) == ReplayVerdict::kFresh);
}

TEST_CASE("too old and old boot count as replay; fresh and duplicate do not") {
  CHECK(IsReplay(ReplayVerdict::kTooOld));
  CHECK(IsReplay(ReplayVerdict::kOldBoot));
  CHECK(!IsReplay(ReplayVerdict::kFresh));
  CHECK(!IsReplay(ReplayVerdict::kDuplicate));
  CHECK(std::string(ReplayVerdictName(ReplayVerdict::kOldBoot)) == "old_boot");
}

TEST_CASE("seq 0 and 2^32 - 1") {
  ReplayWindow w;
  w.Update(0, 0);
  CHECK(w.Check(0, 0) == ReplayVerdict::kDuplicate);
  w.Update(0, 4294967295u);
  CHECK(w.Check(0, 4294967295u) == ReplayVerdict::kDuplicate);
  CHECK(w.Check(0, 0) == ReplayVerdict::kTooOld);
  CHECK(w.CheckInvariants());
}

TEST_CASE("Check does not modify; serialize and deserialize keep every verdict") {
  ReplayWindow w;
  w.Update(5, 300);
  w.Update(5, 290);
  w.Update(5, 2);
  const std::string before = w.Serialize();
  (void)w.Check(5, 301);
  (void)w.Check(6, 0);
  CHECK(w.Serialize() == before);
  Result<ReplayWindow> back = ReplayWindow::Deserialize(before);
  REQUIRE(back.ok());
  for (std::uint32_t seq = 0; seq < 400; ++seq) {
    CHECK(back->Check(5, seq) == w.Check(5, seq));
  }
  CHECK(back->Check(4, 1) == ReplayVerdict::kOldBoot);

  w.Update(6, 7);
  Result<ReplayWindow> with_previous = ReplayWindow::Deserialize(w.Serialize());
  REQUIRE(with_previous.ok());
  for (std::uint32_t seq = 0; seq < 400; ++seq) {
    CHECK(with_previous->Check(5, seq) == w.Check(5, seq));
    CHECK(with_previous->Check(6, seq) == w.Check(6, seq));
  }
  Result<ReplayWindow> empty = ReplayWindow::Deserialize(ReplayWindow().Serialize());
  REQUIRE(empty.ok());
  CHECK(empty->empty());
}

TEST_CASE("a version 1 blob (current boot only) still loads") {
  ReplayWindow w;
  w.Update(5, 300);
  w.Update(5, 290);
  // Version 1 is version 2's first window alone behind the version byte 1.
  const std::string v2 = w.Serialize();
  std::string v1 = v2.substr(0, 1 + (v2.size() - 1) / 2);
  v1[0] = 1;
  Result<ReplayWindow> back = ReplayWindow::Deserialize(v1);
  REQUIRE(back.ok());
  CHECK(back->Serialize() == v2);
  CHECK(back->Check(5, 290) == ReplayVerdict::kDuplicate);
  CHECK(back->Check(5, 291) == ReplayVerdict::kFresh);
  CHECK(back->Check(4, 0) == ReplayVerdict::kOldBoot);
}

TEST_CASE("a blob that is not ours is Corruption") {
  CHECK(ReplayWindow::Deserialize("").status().code() == StatusCode::kCorruption);
  std::string blob = ReplayWindow().Serialize();
  blob[0] = 3;
  CHECK(ReplayWindow::Deserialize(blob).status().code() == StatusCode::kCorruption);
  std::string marked_but_empty = ReplayWindow().Serialize();
  marked_but_empty.back() = 1;
  CHECK(ReplayWindow::Deserialize(marked_but_empty).status().code() == StatusCode::kCorruption);
  CHECK(ReplayWindow::Deserialize(ReplayWindow().Serialize() + "x").status().code() ==
        StatusCode::kCorruption);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
