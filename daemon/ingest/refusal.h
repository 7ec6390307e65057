// daemon/ingest/refusal.h
// Why ingest refused a datagram. Every refusal has one reason, which the daemon counts under
// RefusalName() (a stable, lower-case name used as a counter label), and a detail message for
// the rate-limited log. DecodeResult<T> holds a decoded T or a Refusal: Result<T> (status.h)
// with the reason a refused datagram is counted under in place of a StatusCode, because a
// refusal is an expected outcome of hostile or broken input, not a failure of ours; callers
// that speak Status convert with Refusal::ToStatus(). Plain values; any thread.
#pragma once

#include <cassert>
#include <string>
#include <utility>
#include <variant>

#include "config/status.h"

namespace ampledger {

enum class RefusalReason {
  kOversize,        // longer than IngestConfig::max_datagram_bytes
  kMalformed,       // not valid JSON/CBOR/SenML/COSE, or breaks a rule of daemon/PROTOCOL.md
  kUnsupported,     // valid but needs something we do not implement: a newer SenML version, a
                    // must-understand label ("..._"), a COSE algorithm or critical header, a CBOR tag
  kUnknownNode,     // the node id (bn or kid) is not configured
  kAuthRequired,    // plain SenML from a node configured for COSE_Mac0
  kBadTag,          // the COSE_Mac0 authentication tag does not verify under the node's key
  kKidMismatch,     // the COSE kid names another node than the pack's base name
  kMixedNodes,      // records of more than one node in one pack
  kUnknownRecord,   // a record name that is neither boot, seq nor <channel>/<quantity>
  kUnknownChannel,  // a channel the node's configuration does not list
  kUnitMismatch,    // a quantity in a unit that is not its own (e.g. `i` in W)
  kOutOfRange,      // a value outside its domain (negative current, |pf| > 1, seq >= 2^32 ...)
  kClock,           // a reading later than now + max_future or older than now - resend horizon
  kReplay,          // (boot, seq) refused by the anti-replay window (see replay_window.h)
};

inline constexpr int kRefusalReasonCount = static_cast<int>(RefusalReason::kReplay) + 1;

// "oversize", "malformed", "unsupported", "unknown_node", "auth_required", "bad_tag",
// "kid_mismatch", "mixed_nodes", "unknown_record", "unknown_channel", "unit_mismatch",
// "out_of_range", "clock", "replay".
const char* RefusalName(RefusalReason reason);

struct Refusal {
  RefusalReason reason = RefusalReason::kMalformed;
  std::string detail;  // for logs; never contains key material

  // "<name>: <detail>" as an InvalidArgument Status, for callers that speak Status.
  Status ToStatus() const;
};

inline Refusal Refuse(RefusalReason reason, std::string detail) {
  return Refusal{reason, std::move(detail)};
}

// A T or a Refusal. Reading value() of a refusal, or refusal() of a value, is a bug.
template <typename T>
class [[nodiscard]] DecodeResult {
 public:
  DecodeResult(T value) : state_(std::move(value)) {}         // NOLINT: implicit by design
  DecodeResult(Refusal refusal) : state_(std::move(refusal)) {}  // NOLINT: implicit by design

  bool ok() const { return std::holds_alternative<T>(state_); }
  const Refusal& refusal() const {
    assert(!ok());
    return std::get<Refusal>(state_);
  }
  RefusalReason reason() const { return refusal().reason; }
  T& value() & { return std::get<T>(state_); }
  const T& value() const& { return std::get<T>(state_); }
  T&& value() && { return std::get<T>(std::move(state_)); }
  T* operator->() { return &value(); }
  const T* operator->() const { return &value(); }
  T& operator*() & { return value(); }
  const T& operator*() const& { return value(); }

 private:
  std::variant<T, Refusal> state_;
};

}  // namespace ampledger
