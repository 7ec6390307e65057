// daemon/ingest/replay_window.cpp
#include "daemon/ingest/replay_window.h"

namespace ampledger {
namespace {

constexpr char kBlobVersion = 2;
// One boot's window: has_edge, boot, edge, bitmap.
constexpr std::size_t kWindowBytes = 1 + 4 + 4 + ReplayWindow::kWindowSize / 8;
constexpr std::size_t kBlobSize = 1 + 2 * kWindowBytes;

void PutU32(std::string* out, std::uint32_t v) {
  for (int i = 3; i >= 0; --i) out->push_back(static_cast<char>(v >> (8 * i)));
}

std::uint32_t GetU32(std::string_view in, std::size_t at) {
  std::uint32_t v = 0;
  for (int i = 0; i < 4; ++i) v = (v << 8) | static_cast<std::uint8_t>(in[at + i]);
  return v;
}

}  // namespace

const char* ReplayVerdictName(ReplayVerdict verdict) {
  switch (verdict) {
    case ReplayVerdict::kFresh: return "fresh";
    case ReplayVerdict::kDuplicate: return "duplicate";
    case ReplayVerdict::kTooOld: return "too_old";
    case ReplayVerdict::kOldBoot: return "old_boot";
  }
  return "unknown";
}

ReplayVerdict ReplayWindow::BootWindow::Check(std::uint32_t seq) const {
  if (seq > edge) return ReplayVerdict::kFresh;
  const std::uint32_t offset = edge - seq;
  if (offset >= kWindowSize) return ReplayVerdict::kTooOld;
  return Marked(offset) ? ReplayVerdict::kDuplicate : ReplayVerdict::kFresh;
}

void ReplayWindow::BootWindow::Shift(std::uint32_t by) {
  if (by >= kWindowSize) {
    bits.fill(0);
    return;
  }
  const std::uint32_t words = by / 64;
  const std::uint32_t rest = by % 64;
  for (std::size_t i = kWords; i-- > 0;) {
    std::uint64_t v = 0;
    if (i >= words) {
      v = bits[i - words] << rest;
      if (rest != 0 && i >= words + 1) v |= bits[i - words - 1] >> (64 - rest);
    }
    bits[i] = v;
  }
}

void ReplayWindow::BootWindow::Update(std::uint32_t seq) {
  if (seq > edge) {
    Shift(seq - edge);
    edge = seq;
  }
  Mark(edge - seq);
}

bool ReplayWindow::BootWindow::CheckInvariants() const {
  if (!has_edge) {
    for (const std::uint64_t word : bits) {
      if (word != 0) return false;
    }
    return boot == 0 && edge == 0;
  }
  // The edge itself was stored, and no mark lies left of seq 0.
  if (!Marked(0)) return false;
  for (std::uint32_t offset = edge + 1; offset < kWindowSize && edge < kWindowSize; ++offset) {
    if (Marked(offset)) return false;
  }
  return true;
}

ReplayVerdict ReplayWindow::Check(std::uint32_t boot, std::uint32_t seq) const {
  if (!current_.has_edge || boot > current_.boot) return ReplayVerdict::kFresh;
  if (boot == current_.boot) return current_.Check(seq);
  if (previous_.has_edge && boot == previous_.boot) return previous_.Check(seq);
  return ReplayVerdict::kOldBoot;
}

void ReplayWindow::Update(std::uint32_t boot, std::uint32_t seq) {
  if (IsReplay(Check(boot, seq))) return;
  if (!current_.has_edge || boot > current_.boot) {
    if (current_.has_edge) previous_ = current_;
    current_ = BootWindow{true, boot, seq, {}};
    current_.Mark(0);
  } else if (boot == current_.boot) {
    current_.Update(seq);
  } else {
    previous_.Update(seq);
  }
}

namespace {

void PutWindowFields(std::string* out, bool has_edge, std::uint32_t boot, std::uint32_t edge,
                     const std::array<std::uint64_t, ReplayWindow::kWindowSize / 64>& bits) {
  out->push_back(has_edge ? 1 : 0);
  PutU32(out, boot);
  PutU32(out, edge);
  for (const std::uint64_t word : bits) {
    PutU32(out, static_cast<std::uint32_t>(word >> 32));
    PutU32(out, static_cast<std::uint32_t>(word));
  }
}

}  // namespace

std::string ReplayWindow::Serialize() const {
  // Version 2: the version byte, then the current boot's window, then the previous boot's;
  // each window is has_edge (0 or 1), boot, edge (big-endian), then the bitmap, word 0
  // first, each word big-endian. Version 1 was the version byte and the current window only.
  std::string out;
  out.reserve(kBlobSize);
  out.push_back(kBlobVersion);
  PutWindowFields(&out, current_.has_edge, current_.boot, current_.edge, current_.bits);
  PutWindowFields(&out, previous_.has_edge, previous_.boot, previous_.edge, previous_.bits);
  return out;
}

Result<ReplayWindow> ReplayWindow::Deserialize(std::string_view blob) {
  const bool v1 = blob.size() == kWindowBytes + 1 && blob[0] == 1;
  const bool v2 = blob.size() == kBlobSize && blob[0] == kBlobVersion;
  if (!v1 && !v2) {
    return Status::Corruption("replay window blob: neither version 1 (" +
                              std::to_string(kWindowBytes + 1) + " bytes) nor version 2 (" +
                              std::to_string(kBlobSize) + " bytes)");
  }
  auto read_window = [blob](std::size_t at, BootWindow* window) {
    if (blob[at] != 0 && blob[at] != 1) return false;
    window->has_edge = blob[at] == 1;
    window->boot = GetU32(blob, at + 1);
    window->edge = GetU32(blob, at + 5);
    for (std::size_t i = 0; i < kWords; ++i) {
      window->bits[i] = (std::uint64_t{GetU32(blob, at + 9 + 8 * i)} << 32) |
                        GetU32(blob, at + 13 + 8 * i);
    }
    return true;
  };
  ReplayWindow window;
  bool ok = read_window(1, &window.current_);
  if (v2) ok = ok && read_window(1 + kWindowBytes, &window.previous_);
  if (!ok || !window.CheckInvariants()) {
    return Status::Corruption("replay window blob: inconsistent");
  }
  return window;
}

bool ReplayWindow::CheckInvariants() const {
  if (!current_.CheckInvariants() || !previous_.CheckInvariants()) return false;
  // A previous boot exists only beside a current one, and is older.
  return !previous_.has_edge || (current_.has_edge && previous_.boot < current_.boot);
}

}  // namespace ampledger
