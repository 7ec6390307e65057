// daemon/ingest/replay_window.h
// One node's anti-replay state: the sliding-window method of RFC 4303 section 3.4.3 over
// (boot, seq). Per boot, the right edge is the highest seq stored and a bitmap marks which of
// the kWindowSize seqs ending there were stored. The window of the boot before the current
// one is kept too, so that a node that restarted with packs still unacknowledged (kept in its
// flash, say) can resend them under their old boot and have them stored once.
//
//   verdict of Check(boot, seq)                 what the daemon does
//   ----------------------------------------   -------------------------------------------
//   kFresh      boot > current, or seq right    store; after the writer reports it durable,
//               of its boot's edge, or unseen   Update(boot, seq), then acknowledge
//               inside its boot's window
//   kDuplicate  seq inside its boot's window,   store nothing; acknowledge again (it was
//               marked                          stored, only the ack was lost)
//   kTooOld     seq left of its boot's window   refuse (reason replay), no ack
//   kOldBoot    boot older than the current     refuse (reason replay), no ack
//               and the previous one
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

  // Marks (boot, seq) stored. A higher boot starts a new window and keeps the current one as
  // the previous boot's; a seq right of its boot's edge slides that window. Does nothing for
  // a pair Check() calls kTooOld or kOldBoot.
  void Update(std::uint32_t boot, std::uint32_t seq);

  bool empty() const { return !current_.has_edge; }
  std::uint32_t boot() const { return current_.boot; }
  std::uint32_t highest_seq() const { return current_.edge; }

  // A versioned binary blob, and back. Deserialize reads this version and the one before it
  // (which had no previous boot); Corruption if the blob is not one of ours.
  std::string Serialize() const;
  static Result<ReplayWindow> Deserialize(std::string_view blob);

  bool CheckInvariants() const;

 private:
  static constexpr std::size_t kWords = kWindowSize / 64;

  // The window of one boot.
  struct BootWindow {
    bool has_edge = false;
    std::uint32_t boot = 0;
    std::uint32_t edge = 0;                   // highest seq stored in `boot`
    std::array<std::uint64_t, kWords> bits{};  // bit k: seq edge - k was stored

    ReplayVerdict Check(std::uint32_t seq) const;
    void Update(std::uint32_t seq);  // `seq` must be fresh or a duplicate
    bool Marked(std::uint32_t offset) const {  // offset = edge - seq, < kWindowSize
      return (bits[offset / 64] >> (offset % 64)) & 1u;
    }
    void Mark(std::uint32_t offset) { bits[offset / 64] |= std::uint64_t{1} << (offset % 64); }
    void Shift(std::uint32_t by);  // slide the edge right by `by`
    bool CheckInvariants() const;
  };

  BootWindow current_;
  BootWindow previous_;  // has_edge only once a second boot was seen
};

}  // namespace ampledger
