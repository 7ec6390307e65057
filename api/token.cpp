// api/token.cpp
#include "api/token.h"

#include <openssl/crypto.h>
#include <openssl/evp.h>
#include <openssl/rand.h>

#include <cctype>
#include <charconv>

#include "storage/token_store.h"

namespace ampledger {
namespace {

constexpr std::string_view kTokenPrefix = "amlt_";
constexpr std::string_view kUnitPrefix = "unit:";
constexpr int kSecretBytes = 32;        // 256 bits
constexpr std::size_t kSecretChars = 43;  // ceil(32 * 8 / 6), base64url without padding

std::string Base64Url(const unsigned char* bytes, int length) {
  static constexpr char kAlphabet[] =
      "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_";
  std::string out;
  std::uint32_t bits = 0;
  int bit_count = 0;
  for (int i = 0; i < length; ++i) {
    bits = (bits << 8) | bytes[i];
    bit_count += 8;
    while (bit_count >= 6) {
      bit_count -= 6;
      out.push_back(kAlphabet[(bits >> bit_count) & 0x3f]);
    }
  }
  if (bit_count > 0) out.push_back(kAlphabet[(bits << (6 - bit_count)) & 0x3f]);
  return out;
}

bool IsBase64UrlChar(char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') ||
         c == '-' || c == '_';
}

// Splits "amlt_<id>_<secret>"; false when the text is not of that shape.
bool SplitToken(std::string_view token, std::int64_t* id, std::string_view* secret) {
  if (token.substr(0, kTokenPrefix.size()) != kTokenPrefix) return false;
  token.remove_prefix(kTokenPrefix.size());
  std::size_t separator = token.find('_');
  if (separator == std::string_view::npos || separator == 0 || separator > 18) return false;
  auto [end, error] = std::from_chars(token.data(), token.data() + separator, *id);
  if (error != std::errc() || end != token.data() + separator || *id <= 0) return false;
  *secret = token.substr(separator + 1);
  if (secret->size() != kSecretChars) return false;
  for (char c : *secret) {
    if (!IsBase64UrlChar(c)) return false;
  }
  return true;
}

}  // namespace

Result<Scope> ParseScope(std::string_view text) {
  if (text == "admin") return Scope{Scope::Kind::kAdmin, ""};
  if (text == "viewer") return Scope{Scope::Kind::kViewer, ""};
  if (text.substr(0, kUnitPrefix.size()) == kUnitPrefix && text.size() > kUnitPrefix.size()) {
    return Scope{Scope::Kind::kUnit, std::string(text.substr(kUnitPrefix.size()))};
  }
  return Status::InvalidArgument("scope \"" + std::string(text) +
                                 "\" is not admin, viewer or unit:<unit id>");
}

std::string ScopeName(const Scope& scope) {
  switch (scope.kind) {
    case Scope::Kind::kAdmin: return "admin";
    case Scope::Kind::kViewer: return "viewer";
    case Scope::Kind::kUnit: return std::string(kUnitPrefix) + scope.unit;
  }
  return "viewer";
}

std::string Sha256(std::string_view secret) {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  // EVP_Digest fails only on allocation failure; an empty digest then matches nothing.
  if (EVP_Digest(secret.data(), secret.size(), digest, &length, EVP_sha256(), nullptr) != 1) {
    return std::string();
  }
  return std::string(reinterpret_cast<const char*>(digest), length);
}

Result<IssuedToken> IssueToken(const Database& db, const Scope& scope, const std::string& label,
                               UnixMs now_ms) {
  unsigned char random[kSecretBytes];
  if (RAND_bytes(random, kSecretBytes) != 1) {
    return Status::Unavailable("the system's random source is not available");
  }
  std::string secret = Base64Url(random, kSecretBytes);
  OPENSSL_cleanse(random, kSecretBytes);
  Result<std::int64_t> id = InsertToken(db, Sha256(secret), ScopeName(scope), label, now_ms);
  if (!id.ok()) return id.status();
  return IssuedToken{*id, std::string(kTokenPrefix) + std::to_string(*id) + "_" + secret};
}

Result<std::optional<Scope>> Authenticate(const Database& db, std::string_view authorization) {
  // RFC 6750 section 2.1: the scheme name is case-insensitive, one space, then the token.
  constexpr std::string_view kScheme = "bearer ";
  if (authorization.size() <= kScheme.size()) return std::optional<Scope>();
  for (std::size_t i = 0; i < kScheme.size(); ++i) {
    if (std::tolower(static_cast<unsigned char>(authorization[i])) != kScheme[i]) {
      return std::optional<Scope>();
    }
  }
  std::int64_t id = 0;
  std::string_view secret;
  if (!SplitToken(authorization.substr(kScheme.size()), &id, &secret)) {
    return std::optional<Scope>();
  }
  Result<std::optional<StoredToken>> stored = FindToken(db, id);
  if (!stored.ok()) return stored.status();
  if (!stored->has_value() || (*stored)->revoked_ms.has_value()) return std::optional<Scope>();
  const std::string presented = Sha256(secret);
  const std::string& expected = (*stored)->secret_sha256;
  if (presented.size() != expected.size() || presented.empty() ||
      CRYPTO_memcmp(presented.data(), expected.data(), expected.size()) != 0) {
    return std::optional<Scope>();
  }
  Result<Scope> scope = ParseScope((*stored)->scope);
  if (!scope.ok()) return std::optional<Scope>();
  return std::optional<Scope>(*scope);
}

}  // namespace ampledger
