// daemon/ingest/replay_window.h
// One node's anti-replay state: the sliding-window method of RFC 4303 section 3.4.3 over
// (boot, seq). The right edge is the highest seq stored in the current boot; a bitmap marks
// which of the kWindowSize seqs ending there were stored.
//
//   verdict of Check(boot, seq)                 what the daemon does
//   ----------------------------------------   -------------------------------------------
//   kFresh      boot > current, or seq right    store; after the writer reports it durable,
//               of the edge, or unseen inside   Update(boot, seq), then acknowledge
//   kDuplicate  seq inside the window, marked   store nothing; acknowledge again (it was
//                                               stored, only the ack was lost)
//   kTooOld     seq left of the window          refuse (reason replay), no ack
//   kOldBoot    boot < current boot             refuse (reason replay), no ack
//
// Check() does not change anything; Update() is called only after the datagram's readings
// are durable, so a mark always means "stored". Serialize() gives the blob the storage writer
// keeps beside the readings in the same transaction. Not thread-safe: the ingest thread owns
// each node's window.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <string_view>

#include "config/status.h"

namespace ampledger {

enum class ReplayVerdict { kFresh, kDuplicate, kTooOld, kOldBoot };

const char* ReplayVerdictName(ReplayVerdict verdict);  // "fresh", "duplicate", ...

// kTooOld and kOldBoot: the datagram is refused and counted as RefusalReason::kReplay.
inline bool IsReplay(ReplayVerdict verdict) {
  return verdict == ReplayVerdict::kTooOld || verdict == ReplayVerdict::kOldBoot;
}

class ReplayWindow {
 public:
  // RFC 4303 asks for at least 32 and recommends 64; we keep 1024 so that a node resending
  // the packs of a long outage, oldest first, still finds them inside the window.
  static constexpr std::uint32_t kWindowSize = 1024;

  ReplayWindow() = default;  // has seen nothing: every (boot, seq) is fresh

  ReplayVerdict Check(std::uint32_t boot, std::uint32_t seq) const;

  // Marks (boot, seq) stored. A higher boot starts a new window; a seq right of the edge
  // slides it. Does nothing for a pair Check() calls kTooOld or kOldBoot.
  void Update(std::uint32_t boot, std::uint32_t seq);

  bool empty() const { return !has_edge_; }
  std::uint32_t boot() const { return boot_; }
  std::uint32_t highest_seq() const { return edge_; }

  // A versioned binary blob, and back. Deserialize: Corruption if the blob is not one of ours.
  std::string Serialize() const;
  static Result<ReplayWindow> Deserialize(std::string_view blob);

  bool CheckInvariants() const;

 private:
  static constexpr std::size_t kWords = kWindowSize / 64;

  bool Marked(std::uint32_t offset) const {  // offset = edge_ - seq, < kWindowSize
    return (bits_[offset / 64] >> (offset % 64)) & 1u;
  }
  void Mark(std::uint32_t offset) { bits_[offset / 64] |= std::uint64_t{1} << (offset % 64); }
  void Shift(std::uint32_t by);  // slide the edge right by `by`

  bool has_edge_ = false;
  std::uint32_t boot_ = 0;
  std::uint32_t edge_ = 0;                   // highest seq stored in boot_
  std::array<std::uint64_t, kWords> bits_{};  // bit k: seq edge_ - k was stored
};

}  // namespace ampledger
