// daemon/ingest/cose_mac0.cpp
#include "daemon/ingest/cose_mac0.h"

#include <openssl/core_names.h>
#include <openssl/crypto.h>
#include <openssl/evp.h>
#include <openssl/params.h>

#include <optional>

#include "daemon/ingest/cbor_reader.h"
#include "daemon/ingest/cbor_writer.h"

namespace ampledger {
namespace {

constexpr std::int64_t kLabelAlg = 1;
constexpr std::int64_t kLabelCrit = 2;
constexpr std::int64_t kLabelKid = 4;

Refusal Malformed(std::string detail) {
  return Refuse(RefusalReason::kMalformed, "COSE_Mac0: " + std::move(detail));
}

// Collected header parameters from both buckets; views into the message being parsed.
struct Headers {
  std::optional<std::int64_t> alg;
  bool alg_seen = false;
  std::optional<std::string_view> kid;
};

// A header label, to find one repeated: an integer (its major type and argument) or text.
struct LabelId {
  CborType type;
  std::uint64_t value;
  std::string_view text;
  bool operator==(const LabelId&) const = default;
};

// Reads the header map at `reader`'s position.
std::optional<Refusal> ReadHeaderMap(CborReader* reader, std::vector<LabelId>* seen,
                                     Headers* headers) {
  const CborHead map = reader->Read();
  if (map.type != CborType::kMap) return Malformed("a header bucket is not a map");
  for (std::uint64_t i = 0; reader->More(map, i); ++i) {
    const CborHead key = reader->Read();
    // RFC 9052 section 3: labels are int or tstr; one label in only one bucket, once.
    LabelId identity{key.type, 0, {}};
    if (key.IsInteger()) {
      identity.value = key.value;
    } else if (key.type == CborType::kText) {
      identity.text = key.bytes;
    } else {
      return Malformed("a header label is neither int nor text");
    }
    for (const LabelId& s : *seen) {
      if (s == identity) return Malformed("header label repeated");
    }
    seen->push_back(identity);
    const CborHead value = reader->Read();
    const std::optional<std::int64_t> label = key.AsInt64();  // unset for text labels
    if (label == kLabelAlg) {
      headers->alg_seen = true;
      headers->alg = value.AsInt64();
      if (!value.IsInteger() && value.type != CborType::kText) {
        return Malformed("alg is neither int nor text");
      }
    } else if (label == kLabelCrit) {
      // We understand no optional header parameter, so any crit list names one we do not.
      return Refuse(RefusalReason::kUnsupported, "COSE_Mac0: crit header present");
    } else if (label == kLabelKid) {
      if (value.type != CborType::kBytes) return Malformed("kid is not a bstr");
      headers->kid = value.bytes;
    }
    reader->SkipContent(value);
  }
  return std::nullopt;
}

// HMAC-SHA-256 with one OpenSSL context per thread. OpenSSL 3's one-shot HMAC() looks the
// algorithm up in its provider store on every call (a lock, string compares and allocations:
// about 4.3 us for a 200-byte message here); re-keying a kept context costs about 1.6 us, and
// every datagram and acknowledgement needs one.
class ThreadHmac {
 public:
  ThreadHmac() : mac_(EVP_MAC_fetch(nullptr, "HMAC", nullptr)) {
    if (mac_ != nullptr) context_ = EVP_MAC_CTX_new(mac_);
  }
  ~ThreadHmac() {
    EVP_MAC_CTX_free(context_);
    EVP_MAC_free(mac_);
  }
  ThreadHmac(const ThreadHmac&) = delete;
  ThreadHmac& operator=(const ThreadHmac&) = delete;

  // Writes the 32-byte MAC to `out`; false if OpenSSL failed (no HMAC provider, no memory).
  bool Compute(std::string_view key, std::string_view data, unsigned char* out) {
    if (context_ == nullptr) return false;
    char digest[] = "SHA256";
    OSSL_PARAM with_digest[] = {
        OSSL_PARAM_construct_utf8_string(OSSL_MAC_PARAM_DIGEST, digest, 0),
        OSSL_PARAM_construct_end()};
    // A null key pointer would mean "reuse the previous key"; an empty key must stay empty.
    static const unsigned char kNoKey = 0;
    const auto* key_bytes = key.empty() ? &kNoKey : reinterpret_cast<const unsigned char*>(key.data());
    std::size_t length = 0;
    bool ok = EVP_MAC_init(context_, key_bytes, key.size(), digest_set_ ? nullptr : with_digest) &&
              EVP_MAC_update(context_, reinterpret_cast<const unsigned char*>(data.data()),
                             data.size()) &&
              EVP_MAC_final(context_, out, &length, kSha256Bytes) && length == kSha256Bytes;
    digest_set_ = digest_set_ || ok;
    return ok;
  }

  static constexpr std::size_t kSha256Bytes = 32;

 private:
  EVP_MAC* mac_ = nullptr;
  EVP_MAC_CTX* context_ = nullptr;
  bool digest_set_ = false;
};

// The HMAC-SHA-256 of `data`, or "" if OpenSSL failed (which no tag then matches).
std::string Hmac(std::string_view key, std::string_view data) {
  thread_local ThreadHmac hmac;
  unsigned char digest[ThreadHmac::kSha256Bytes];
  if (!hmac.Compute(key, data, digest)) return std::string();
  return std::string(reinterpret_cast<const char*>(digest), sizeof digest);
}

// The protected bytes as they enter MAC_structure: an empty map counts as h''.
std::string_view ProtectedForMac(std::string_view protected_bytes) {
  return protected_bytes == std::string_view("\xa0", 1) ? std::string_view() : protected_bytes;
}

}  // namespace

const char* MacAlgorithmName(MacAlgorithm alg) {
  return alg == MacAlgorithm::kHmac256_64 ? "HMAC 256/64" : "HMAC 256/256";
}

std::size_t MacTagLength(MacAlgorithm alg) { return alg == MacAlgorithm::kHmac256_64 ? 8 : 32; }

std::string MacStructure(std::string_view protected_bytes, std::string_view external_aad,
                         std::string_view payload) {
  CborWriter w;
  w.Array(4);
  w.Text("MAC0");
  w.Bytes(protected_bytes);
  w.Bytes(external_aad);
  w.Bytes(payload);
  return w.Take();
}

DecodeResult<CoseMac0> ParseCoseMac0(std::string_view bytes) {
  if (Status checked = CheckCbor(bytes); !checked.ok()) return Malformed(checked.message());
  CborReader reader(bytes);
  CoseMac0 out;
  CborHead array = reader.Read();
  if (array.type == CborType::kTag) {
    if (array.value != kCoseMac0Tag) {
      return Refuse(RefusalReason::kUnsupported,
                    "COSE_Mac0: CBOR tag " + std::to_string(array.value) + " (expected 17)");
    }
    out.tagged = true;
    array = reader.Read();
  }
  if (array.type != CborType::kArray || reader.CountEntries(array) != 4) {
    return Malformed("not an array of 4");
  }
  const CborHead protected_item = reader.Read();
  reader.SkipContent(protected_item);
  // The unprotected bucket is read after the checks of the items behind it.
  CborReader unprotected(bytes.substr(reader.position()));
  reader.Skip();
  const CborHead payload = reader.Read();
  reader.SkipContent(payload);
  const CborHead tag = reader.Read();
  if (protected_item.type != CborType::kBytes) return Malformed("protected is not a bstr");
  if (payload.IsNull()) return Malformed("detached payload");
  if (payload.type != CborType::kBytes || tag.type != CborType::kBytes) {
    return Malformed("payload or tag is not a bstr");
  }
  std::vector<LabelId> seen;
  Headers headers;  // views into `bytes` and the readers' storage
  CborReader protected_map(protected_item.bytes);
  if (!protected_item.bytes.empty()) {
    if (Status checked = CheckCbor(protected_item.bytes); !checked.ok()) {
      return Malformed("protected header: " + checked.message());
    }
    if (auto refusal = ReadHeaderMap(&protected_map, &seen, &headers)) return *refusal;
  }
  if (auto refusal = ReadHeaderMap(&unprotected, &seen, &headers)) return *refusal;
  if (!headers.alg_seen) return Malformed("no alg");
  if (!headers.alg || (*headers.alg != 4 && *headers.alg != 5)) {
    return Refuse(RefusalReason::kUnsupported,
                  "COSE_Mac0: alg is not 4 (HMAC 256/64) or 5 (HMAC 256/256)");
  }
  out.alg = static_cast<MacAlgorithm>(*headers.alg);
  if (tag.bytes.size() != MacTagLength(out.alg)) return Malformed("tag length does not match alg");
  out.protected_bytes = protected_item.bytes;
  out.kid = headers.kid.value_or("");
  out.payload = payload.bytes;
  out.tag = tag.bytes;
  return out;
}

bool VerifyCoseMac0(const CoseMac0& message, std::string_view key, std::string_view external_aad) {
  // HMAC accepts an empty key, but a node without a key has nothing to authenticate with.
  if (key.empty()) return false;
  const std::string expected =
      Hmac(key, MacStructure(ProtectedForMac(message.protected_bytes), external_aad,
                             message.payload));
  const std::size_t length = MacTagLength(message.alg);
  if (message.tag.size() != length || expected.size() < length) return false;
  return CRYPTO_memcmp(expected.data(), message.tag.data(), length) == 0;
}

std::string CreateCoseMac0(std::string_view payload, std::string_view key, MacAlgorithm alg,
                           std::string_view kid, bool tagged, std::string_view external_aad) {
  CborWriter header;
  header.Map(1);
  header.Int(kLabelAlg);
  header.Int(static_cast<int>(alg));
  const std::string protected_bytes = header.Take();
  const std::string tag =
      Hmac(key, MacStructure(protected_bytes, external_aad, payload)).substr(0, MacTagLength(alg));
  CborWriter w;
  if (tagged) w.Tag(kCoseMac0Tag);
  w.Array(4);
  w.Bytes(protected_bytes);
  if (kid.empty()) {
    w.Map(0);
  } else {
    w.Map(1);
    w.Int(kLabelKid);
    w.Bytes(kid);
  }
  w.Bytes(payload);
  w.Bytes(tag);
  return w.Take();
}

}  // namespace ampledger
