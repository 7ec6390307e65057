// daemon/ingest/cose_mac0.h
// COSE_Mac0 (RFC 9052 section 6.2) with the HMAC algorithms of RFC 9053 section 3.1 that nodes
// use: 4 = HMAC 256/64 (HMAC-SHA-256 truncated to 8 bytes) and 5 = HMAC 256/256.
//   COSE_Mac0 = [protected: bstr .cbor header_map / h'', unprotected: header_map,
//                payload: bstr, tag: bstr], optionally wrapped in CBOR tag 17.
//   MAC_structure = ["MAC0", protected, external_aad, payload]
// The MAC is computed over the CBOR encoding of MAC_structure with the received protected
// bytes, except that an empty protected map (h'a0') counts as h'' (RFC 9052 sections 3, 6.3).
// Header labels: 1 alg, 2 crit, 4 kid. Pure functions; any thread.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/ingest/refusal.h"

namespace ampledger {

enum class MacAlgorithm : int {
  kHmac256_64 = 4,   // "HMAC 256/64": 8-byte tag
  kHmac256_256 = 5,  // "HMAC 256/256": 32-byte tag
};

inline constexpr std::uint64_t kCoseMac0Tag = 17;

// "HMAC 256/64" or "HMAC 256/256".
const char* MacAlgorithmName(MacAlgorithm alg);
std::size_t MacTagLength(MacAlgorithm alg);

// A parsed, not yet verified, COSE_Mac0.
struct CoseMac0 {
  bool tagged = false;          // wrapped in CBOR tag 17
  std::string protected_bytes;  // the protected bstr's content as received
  MacAlgorithm alg = MacAlgorithm::kHmac256_256;
  std::string kid;              // label 4 (protected or unprotected); "" if absent
  std::string payload;
  std::string tag;              // the authentication tag as received
};

// Parses `bytes`. Refusals: kMalformed (not a COSE_Mac0, duplicate or conflicting header
// labels, detached payload, a tag of the wrong length), kUnsupported (another CBOR tag than 17,
// an algorithm other than 4 or 5, any crit header).
DecodeResult<CoseMac0> ParseCoseMac0(std::string_view bytes);

// True if `message.tag` is the MAC of `message` under `key` (constant-time comparison).
// Always false for an empty key.
bool VerifyCoseMac0(const CoseMac0& message, std::string_view key,
                    std::string_view external_aad = {});

// Builds a COSE_Mac0: protected {1: alg}, unprotected {4: kid} (omitted if kid is empty),
// the payload, and its tag under `key`.
std::string CreateCoseMac0(std::string_view payload, std::string_view key, MacAlgorithm alg,
                           std::string_view kid, bool tagged = true,
                           std::string_view external_aad = {});

// The CBOR encoding of MAC_structure that is fed to HMAC (exposed for tests and the protocol
// document's worked example).
std::string MacStructure(std::string_view protected_bytes, std::string_view external_aad,
                         std::string_view payload);

}  // namespace ampledger
