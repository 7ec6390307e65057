// daemon/ingest/refusal.cpp
#include "daemon/ingest/refusal.h"

namespace ampledger {

const char* RefusalName(RefusalReason reason) {
  switch (reason) {
    case RefusalReason::kOversize: return "oversize";
    case RefusalReason::kMalformed: return "malformed";
    case RefusalReason::kUnsupported: return "unsupported";
    case RefusalReason::kUnknownNode: return "unknown_node";
    case RefusalReason::kAuthRequired: return "auth_required";
    case RefusalReason::kBadTag: return "bad_tag";
    case RefusalReason::kKidMismatch: return "kid_mismatch";
    case RefusalReason::kMixedNodes: return "mixed_nodes";
    case RefusalReason::kUnknownRecord: return "unknown_record";
    case RefusalReason::kUnknownChannel: return "unknown_channel";
    case RefusalReason::kUnitMismatch: return "unit_mismatch";
    case RefusalReason::kOutOfRange: return "out_of_range";
    case RefusalReason::kClock: return "clock";
    case RefusalReason::kReplay: return "replay";
  }
  return "unknown";
}

Status Refusal::ToStatus() const {
  return Status::InvalidArgument(std::string(RefusalName(reason)) + ": " + detail);
}

}  // namespace ampledger
