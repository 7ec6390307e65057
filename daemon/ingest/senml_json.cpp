// daemon/ingest/senml_json.cpp
// SenML JSON (RFC 8428 section 5) read with nlohmann's SAX interface, so that duplicate
// member names can be refused (nlohmann's DOM keeps the last one silently) and no DOM is built.
#include <cstdint>
#include <set>
#include <string>

#include <nlohmann/json.hpp>

#include "daemon/ingest/senml.h"
#include "daemon/ingest/senml_fields.h"

namespace ampledger {
namespace {

constexpr int kMaxJsonDepth = 16;

// base64url without padding (RFC 4648 section 5), as RFC 8428 section 5 requires for vd.
// Padding is tolerated. False on any other character or an impossible length.
bool DecodeBase64Url(const std::string& in, std::string* out) {
  auto sextet = [](char c) -> int {
    if (c >= 'A' && c <= 'Z') return c - 'A';
    if (c >= 'a' && c <= 'z') return c - 'a' + 26;
    if (c >= '0' && c <= '9') return c - '0' + 52;
    if (c == '-') return 62;
    if (c == '_') return 63;
    return -1;
  };
  std::size_t length = in.size();
  while (length > 0 && in[length - 1] == '=') --length;
  if (length % 4 == 1) return false;
  std::uint32_t buffer = 0;
  int bits = 0;
  for (std::size_t i = 0; i < length; ++i) {
    const int v = sextet(in[i]);
    if (v < 0) return false;
    buffer = (buffer << 6) | static_cast<std::uint32_t>(v);
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out->push_back(static_cast<char>((buffer >> bits) & 0xff));
    }
  }
  return true;
}

// Accepts exactly: an array of objects whose members are scalars, except unknown labels,
// whose values may be anything (they are skipped).
class SenmlSax {
 public:
  using json = nlohmann::json;

  bool null() { return Scalar(std::nullopt); }
  bool boolean(bool b) {
    SenmlField f;
    f.kind = SenmlField::Kind::kBool;
    f.boolean = b;
    return Scalar(f);
  }
  bool number_integer(json::number_integer_t v) { return Number(static_cast<double>(v), true); }
  bool number_unsigned(json::number_unsigned_t v) { return Number(static_cast<double>(v), true); }
  bool number_float(json::number_float_t v, const json::string_t&) { return Number(v, false); }
  bool string(json::string_t& s) {
    SenmlField f;
    f.kind = SenmlField::Kind::kText;
    f.text = s;
    return Scalar(f);
  }
  bool binary(json::binary_t&) { return Fail(RefusalReason::kMalformed, "binary value"); }

  bool start_object(std::size_t) {
    if (skip_depth_ > 0 || (depth_ == 2 && skipping_key_)) return Nest();
    if (depth_ != 1) return Fail(RefusalReason::kMalformed, "a record is not inside the pack");
    depth_ = 2;
    records_.emplace_back();
    seen_keys_.clear();
    skipping_key_ = false;
    return true;
  }
  bool end_object() {
    if (skip_depth_ > 0) return Unnest();
    depth_ = 1;
    return true;
  }
  bool start_array(std::size_t) {
    if (skip_depth_ > 0 || (depth_ == 2 && skipping_key_)) return Nest();
    if (depth_ != 0) return Fail(RefusalReason::kMalformed, "an array where a record belongs");
    depth_ = 1;
    return true;
  }
  bool end_array() {
    if (skip_depth_ > 0) return Unnest();
    depth_ = 0;
    done_ = true;
    return true;
  }
  bool key(json::string_t& name) {
    if (skip_depth_ > 0) return true;
    if (!seen_keys_.insert(name).second) {
      return Fail(RefusalReason::kMalformed, "duplicate label \"" + name + "\"");
    }
    label_ = SenmlLabelFromJson(name);
    skipping_key_ = !label_;
    if (!label_ && !name.empty() && name.back() == '_') {
      return Fail(RefusalReason::kUnsupported, "must-understand label \"" + name + "\"");
    }
    return true;
  }
  bool parse_error(std::size_t position, const std::string&, const nlohmann::detail::exception&) {
    return Fail(RefusalReason::kMalformed, "not JSON (at byte " + std::to_string(position) + ")");
  }

  const std::optional<Refusal>& refusal() const { return refusal_; }
  std::vector<RawSenmlRecord>& records() { return records_; }
  bool done() const { return done_; }

 private:
  bool Fail(RefusalReason reason, std::string detail) {
    if (!refusal_) {
      const std::string where =
          records_.empty() ? "" : "record " + std::to_string(records_.size()) + ": ";
      refusal_ = Refuse(reason, "SenML: " + where + detail);
    }
    return false;
  }
  bool Nest() {
    if (++skip_depth_ > kMaxJsonDepth) return Fail(RefusalReason::kMalformed, "nested too deep");
    return true;
  }
  bool Unnest() {
    --skip_depth_;
    return true;
  }
  bool Number(double v, bool integer) {
    SenmlField f;
    f.number = v;
    f.integer = integer;
    return Scalar(f);
  }
  bool Scalar(const std::optional<SenmlField>& field) {
    if (skip_depth_ > 0) return true;
    if (depth_ != 2) return Fail(RefusalReason::kMalformed, "a value where a record belongs");
    if (skipping_key_) return true;  // unknown label: ignored (RFC 8428 section 4.4)
    const SenmlField::Kind want = SenmlLabelKind(*label_);
    const SenmlField::Kind json_kind =
        want == SenmlField::Kind::kBytes ? SenmlField::Kind::kText : want;
    if (!field || field->kind != json_kind) {
      return Fail(RefusalReason::kMalformed,
                  std::string("wrong type for ") + SenmlLabelName(*label_));
    }
    SenmlField stored = *field;
    if (want == SenmlField::Kind::kBytes) {
      stored.kind = SenmlField::Kind::kBytes;
      stored.text.clear();
      if (!DecodeBase64Url(field->text, &stored.text)) {
        return Fail(RefusalReason::kMalformed, "vd is not base64url");
      }
    }
    records_.back()[*label_] = std::move(stored);
    return true;
  }

  int depth_ = 0;       // 0 outside, 1 in the pack array, 2 in a record
  int skip_depth_ = 0;  // nesting inside a skipped unknown label's value
  bool skipping_key_ = false;
  bool done_ = false;
  std::optional<SenmlLabel> label_;
  std::set<std::string> seen_keys_;
  std::vector<RawSenmlRecord> records_;
  std::optional<Refusal> refusal_;
};

}  // namespace

DecodeResult<SenmlPack> DecodeSenmlJson(std::string_view text, double now_seconds) {
  SenmlSax sax;
  bool parsed = false;
  try {
    parsed = nlohmann::json::sax_parse(text.begin(), text.end(), &sax);
  } catch (const std::exception& e) {  // nlohmann throws only on misuse; keep it inside
    return Refuse(RefusalReason::kMalformed, std::string("SenML: ") + e.what());
  }
  if (sax.refusal()) return *sax.refusal();
  if (!parsed || !sax.done()) return Refuse(RefusalReason::kMalformed, "SenML: not a JSON array");
  return ResolveSenml(sax.records(), now_seconds);
}

}  // namespace ampledger
