// daemon/ingest/replay_window.cpp
#include "daemon/ingest/replay_window.h"

namespace ampledger {
namespace {

constexpr char kBlobVersion = 1;
constexpr std::size_t kBlobSize = 1 + 1 + 4 + 4 + ReplayWindow::kWindowSize / 8;

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

ReplayVerdict ReplayWindow::Check(std::uint32_t boot, std::uint32_t seq) const {
  if (!has_edge_ || boot > boot_) return ReplayVerdict::kFresh;
  if (boot < boot_) return ReplayVerdict::kOldBoot;
  if (seq > edge_) return ReplayVerdict::kFresh;
  const std::uint32_t offset = edge_ - seq;
  if (offset >= kWindowSize) return ReplayVerdict::kTooOld;
  return Marked(offset) ? ReplayVerdict::kDuplicate : ReplayVerdict::kFresh;
}

void ReplayWindow::Shift(std::uint32_t by) {
  if (by >= kWindowSize) {
    bits_.fill(0);
    return;
  }
  const std::uint32_t words = by / 64;
  const std::uint32_t rest = by % 64;
  for (std::size_t i = kWords; i-- > 0;) {
    std::uint64_t v = 0;
    if (i >= words) {
      v = bits_[i - words] << rest;
      if (rest != 0 && i >= words + 1) v |= bits_[i - words - 1] >> (64 - rest);
    }
    bits_[i] = v;
  }
}

void ReplayWindow::Update(std::uint32_t boot, std::uint32_t seq) {
  const ReplayVerdict verdict = Check(boot, seq);
  if (verdict == ReplayVerdict::kTooOld || verdict == ReplayVerdict::kOldBoot) return;
  if (!has_edge_ || boot > boot_) {
    has_edge_ = true;
    boot_ = boot;
    edge_ = seq;
    bits_.fill(0);
  } else if (seq > edge_) {
    Shift(seq - edge_);
    edge_ = seq;
  }
  Mark(edge_ - seq);
}

std::string ReplayWindow::Serialize() const {
  // version, has_edge, boot, edge (big-endian), then the bitmap, word 0 first, each word
  // big-endian.
  std::string out;
  out.push_back(kBlobVersion);
  out.push_back(has_edge_ ? 1 : 0);
  PutU32(&out, boot_);
  PutU32(&out, edge_);
  for (const std::uint64_t word : bits_) {
    PutU32(&out, static_cast<std::uint32_t>(word >> 32));
    PutU32(&out, static_cast<std::uint32_t>(word));
  }
  return out;
}

Result<ReplayWindow> ReplayWindow::Deserialize(std::string_view blob) {
  if (blob.size() != kBlobSize || blob[0] != kBlobVersion || (blob[1] != 0 && blob[1] != 1)) {
    return Status::Corruption("replay window blob: not version 1 of " +
                              std::to_string(kBlobSize) + " bytes");
  }
  ReplayWindow window;
  window.has_edge_ = blob[1] == 1;
  window.boot_ = GetU32(blob, 2);
  window.edge_ = GetU32(blob, 6);
  for (std::size_t i = 0; i < kWords; ++i) {
    window.bits_[i] = (std::uint64_t{GetU32(blob, 10 + 8 * i)} << 32) | GetU32(blob, 14 + 8 * i);
  }
  if (!window.CheckInvariants()) return Status::Corruption("replay window blob: inconsistent");
  return window;
}

bool ReplayWindow::CheckInvariants() const {
  if (!has_edge_) {
    for (const std::uint64_t word : bits_) {
      if (word != 0) return false;
    }
    return boot_ == 0 && edge_ == 0;
  }
  // The edge itself was stored, and no mark lies left of seq 0.
  if (!Marked(0)) return false;
  for (std::uint32_t offset = edge_ + 1; offset < kWindowSize && edge_ < kWindowSize; ++offset) {
    if (Marked(offset)) return false;
  }
  return true;
}

}  // namespace ampledger
