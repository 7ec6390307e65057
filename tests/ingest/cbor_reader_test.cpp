// tests/ingest/cbor_reader_test.cpp
// The CBOR reader against the examples of RFC 8949 Appendix A, and the SenML CBOR and
// COSE_Mac0 readers built on it against the tree decoder they replaced (cbor_tree_oracle.h):
// the same verdict, reason and detail for the reference vectors, our own packs and many
// mutations of them.
#include <doctest/doctest.h>

#include <cmath>
#include <deque>
#include <filesystem>
#include <random>
#include <sstream>

#include <nlohmann/json.hpp>

#include "daemon/ingest/ack.h"
#include "daemon/ingest/cbor_reader.h"
#include "daemon/ingest/cose_mac0.h"
#include "daemon/ingest/pack_encoder.h"
#include "daemon/ingest/senml.h"
#include "tests/ingest/cbor_tree_oracle.h"
#include "tests/ingest/hex.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

using testing::FromHex;

// The head of the single item `hex` encodes (a string's content stays valid: `storage`).
CborHead Decode(const std::string& hex) {
  static std::deque<std::string> storage;  // keeps the bytes the returned views point into
  const std::string& bytes = storage.emplace_back(FromHex(hex));
  const Status checked = CheckCbor(bytes);
  REQUIRE_MESSAGE(checked.ok(), checked.ToString());
  static std::deque<CborReader> readers;
  return readers.emplace_back(bytes).Read();
}

TEST_SUITE("ingest") {

TEST_CASE("RFC 8949 Appendix A: integers") {
  CHECK(*Decode("00").AsInt64() == 0);
  CHECK(*Decode("17").AsInt64() == 23);
  CHECK(*Decode("1818").AsInt64() == 24);
  CHECK(*Decode("1903e8").AsInt64() == 1000);
  CHECK(*Decode("1a000f4240").AsInt64() == 1000000);
  CHECK(*Decode("1b000000e8d4a51000").AsInt64() == 1000000000000);
  CHECK(Decode("1bffffffffffffffff").value == 18446744073709551615u);
  CHECK(!Decode("1bffffffffffffffff").AsInt64());
  CHECK(*Decode("20").AsInt64() == -1);
  CHECK(*Decode("3863").AsInt64() == -100);
  CHECK(*Decode("3903e7").AsInt64() == -1000);
  CHECK(Decode("3bffffffffffffffff").AsDouble() == -18446744073709551616.0);
}

TEST_CASE("RFC 8949 Appendix A: half, single and double floats") {
  CHECK(Decode("f90000").number == 0.0);
  CHECK(std::signbit(Decode("f98000").number));
  CHECK(Decode("f93c00").number == 1.0);
  CHECK(Decode("fb3ff199999999999a").number == 1.1);
  CHECK(Decode("f93e00").number == 1.5);
  CHECK(Decode("f97bff").number == 65504.0);
  CHECK(Decode("fa47c35000").number == 100000.0);
  CHECK(Decode("fa7f7fffff").number == 3.4028234663852886e+38);
  CHECK(Decode("fb7e37e43c8800759c").number == 1.0e+300);
  CHECK(Decode("f90001").number == 5.960464477539063e-8);
  CHECK(Decode("f90400").number == 0.00006103515625);
  CHECK(Decode("f9c400").number == -4.0);
  CHECK(Decode("fbc010666666666666").number == -4.1);
  CHECK(std::isinf(Decode("f97c00").number));
  CHECK(std::isnan(Decode("f97e00").number));
  CHECK(Decode("f9fc00").number == -INFINITY);
  CHECK(std::isinf(Decode("fa7f800000").number));
}

TEST_CASE("RFC 8949 Appendix A: simple values, strings, arrays, maps, tags") {
  CHECK(Decode("f4").IsBool());
  CHECK(Decode("f5").value == 21);
  CHECK(Decode("f6").IsNull());
  CHECK(Decode("f7").value == 23);
  CHECK(Decode("f0").value == 16);
  CHECK(Decode("f8ff").value == 255);
  CHECK(Decode("60").bytes.empty());
  CHECK(Decode("6449455446").bytes == "IETF");
  CHECK(Decode("62c3bc").bytes == "\xc3\xbc");
  CHECK(Decode("4401020304").bytes == FromHex("01020304"));

  const std::string nested_bytes = FromHex("8301820203820405");
  REQUIRE(CheckCbor(nested_bytes).ok());
  CborReader nested(nested_bytes);
  const CborHead outer = nested.Read();
  CHECK(outer.type == CborType::kArray);
  CHECK(nested.CountEntries(outer) == 3);
  CHECK(nested.Read().value == 1);
  nested.Skip();  // [2, 3]
  const CborHead last = nested.Read();
  CHECK(nested.CountEntries(last) == 2);
  CHECK(nested.Read().value == 4);
  CHECK(nested.Read().value == 5);
  CHECK(nested.position() == nested_bytes.size());

  const CborHead map = Decode("a201020304");
  CHECK(map.type == CborType::kMap);
  CHECK(map.value == 2);

  const std::string tagged_bytes = FromHex("c074323031332d30332d32315432303a30343a30305a");
  REQUIRE(CheckCbor(tagged_bytes).ok());
  CborReader tagged(tagged_bytes);
  const CborHead tag = tagged.Read();
  CHECK(tag.type == CborType::kTag);
  CHECK(tag.value == 0);
  CHECK(tagged.Read().bytes == "2013-03-21T20:04:00Z");
}

TEST_CASE("RFC 8949 Appendix A: indefinite lengths") {
  CHECK(Decode("5f42010243030405ff").bytes == FromHex("0102030405"));
  CHECK(Decode("7f657374726561646d696e67ff").bytes == "streaming");

  const std::string empty_bytes = FromHex("9fff");
  CborReader empty(empty_bytes);
  const CborHead empty_array = empty.Read();
  CHECK(empty_array.indefinite);
  CHECK(empty.CountEntries(empty_array) == 0);
  CHECK(!empty.More(empty_array, 0));
  CHECK(empty.position() == empty_bytes.size());

  const std::string mixed_bytes = FromHex("9f018202039f0405ffff");
  REQUIRE(CheckCbor(mixed_bytes).ok());
  CborReader mixed(mixed_bytes);
  const CborHead mixed_array = mixed.Read();
  CHECK(mixed.CountEntries(mixed_array) == 3);
  mixed.SkipContent(mixed_array);
  CHECK(mixed.position() == mixed_bytes.size());

  const std::string map_bytes = FromHex("bf61610161629f0203ffff");
  REQUIRE(CheckCbor(map_bytes).ok());
  CborReader map(map_bytes);
  const CborHead map_head = map.Read();
  CHECK(map.CountEntries(map_head) == 2);
  CHECK(map.Read().bytes == "a");
  CHECK(map.Read().value == 1);
  CHECK(map.Read().bytes == "b");
  const CborHead inner = map.Read();
  CHECK(map.CountEntries(inner) == 2);
  map.SkipContent(inner);
  CHECK(!map.More(map_head, 2));
  CHECK(map.position() == map_bytes.size());
}

TEST_CASE("malformed CBOR is refused without reading past the input") {
  const char* bad[] = {
      "",            // nothing
      "18",          // truncated argument
      "1c",          // reserved additional information 28
      "62c3",        // text shorter than its length
      "5b" "ffffffffffffffff",  // a huge declared length
      "9b" "ffffffffffffffff",  // a huge array with no items
      "8301",        // array shorter than declared
      "ff",          // break outside an indefinite container
      "5f01ff",      // chunk of the wrong type in an indefinite bstr
      "5f5f4101ffff",// nested indefinite chunk
      "62c328",      // invalid UTF-8
      "63eda080",    // a UTF-16 surrogate encoded in UTF-8
      "f818",        // two-byte simple value below 32
      "0000",        // trailing bytes
      "a1",          // map without its pair
      "a101",        // map with a key and no value
      "9f01",        // unterminated indefinite array
  };
  for (const char* hex : bad) {
    CAPTURE(hex);
    CHECK(!CheckCbor(FromHex(hex)).ok());
  }
}

TEST_CASE("nesting is bounded") {
  std::string deep(kMaxCborDepth + 1, static_cast<char>(0x81));
  deep.push_back(0x00);
  CHECK(!CheckCbor(deep).ok());
  std::string ok(kMaxCborDepth, static_cast<char>(0x81));
  ok.push_back(0x00);
  CHECK(CheckCbor(ok).ok());
}

// --- The readers against the tree decoder they replaced ---------------------------------

constexpr double kNowSeconds = 1764633600;

std::string Describe(const Refusal& refusal) {
  return std::string(RefusalName(refusal.reason)) + ": " + refusal.detail;
}

std::string Describe(const SenmlPack& pack) {
  std::ostringstream out;
  out.precision(17);
  out << "version " << pack.version;
  for (const SenmlRecord& r : pack.records) {
    out << " | " << r.name << " [" << r.unit << "] t=" << r.time;
    if (r.value) out << " v=" << *r.value;
    if (r.string_value) out << " vs=" << testing::ToHex(*r.string_value);
    if (r.bool_value) out << " vb=" << *r.bool_value;
    if (r.data_value) out << " vd=" << testing::ToHex(*r.data_value);
    if (r.sum) out << " s=" << *r.sum;
    if (r.update_time) out << " ut=" << *r.update_time;
  }
  return out.str();
}

std::string Describe(const CoseMac0& m) {
  return std::string(m.tagged ? "tagged " : "untagged ") + MacAlgorithmName(m.alg) + " kid " +
         testing::ToHex(m.kid) + " protected " + testing::ToHex(m.protected_bytes) +
         " payload " + testing::ToHex(m.payload) + " tag " + testing::ToHex(m.tag);
}

template <typename T>
std::string Describe(const DecodeResult<T>& result) {
  return result.ok() ? "accepted " + Describe(result.value()) : "refused " + Describe(result.refusal());
}

struct Tally {
  int inputs = 0;
  int cbor_ok = 0;
  int senml_ok = 0;
  int cose_ok = 0;
  int refusals[kRefusalReasonCount] = {};
};

// One input through the old and the new readers: every verdict must be the same.
void Compare(const std::string& bytes, Tally* tally) {
  ++tally->inputs;
  const Status checked = CheckCbor(bytes);
  const Result<testing::tree_oracle::CborItem> tree = testing::tree_oracle::DecodeCbor(bytes);
  CHECK_MESSAGE(checked.ok() == tree.ok(), testing::ToHex(bytes));
  if (!checked.ok() && !tree.ok()) {
    CHECK_MESSAGE(checked.message() == tree.status().message(), testing::ToHex(bytes));
  }
  tally->cbor_ok += checked.ok() ? 1 : 0;

  const DecodeResult<SenmlPack> senml = DecodeSenmlCbor(bytes, kNowSeconds);
  const DecodeResult<SenmlPack> old_senml =
      testing::tree_oracle::DecodeSenmlCbor(bytes, kNowSeconds);
  CHECK_MESSAGE(Describe(senml) == Describe(old_senml), testing::ToHex(bytes));
  tally->senml_ok += senml.ok() ? 1 : 0;
  if (!senml.ok()) ++tally->refusals[static_cast<int>(senml.reason())];

  const DecodeResult<CoseMac0> cose = ParseCoseMac0(bytes);
  const DecodeResult<CoseMac0> old_cose = testing::tree_oracle::ParseCoseMac0(bytes);
  CHECK_MESSAGE(Describe(cose) == Describe(old_cose), testing::ToHex(bytes));
  tally->cose_ok += cose.ok() ? 1 : 0;
  if (!cose.ok()) ++tally->refusals[static_cast<int>(cose.reason())];
  if (cose.ok()) {
    CHECK(Describe(DecodeSenmlCbor(cose->payload, kNowSeconds)) ==
          Describe(testing::tree_oracle::DecodeSenmlCbor(cose->payload, kNowSeconds)));
  }
}

// Seeds: the RFC 8428 and COSE working-group files, our packs and acknowledgements in every
// encoding, and hand-written CBOR for the paths nodes rarely take (indefinite lengths,
// decimal fractions, tags, unknown and repeated labels).
std::vector<std::string> Seeds() {
  std::vector<std::string> seeds;
  const std::filesystem::path reference = testing::ReferenceDir();
  // Source: RFC 8428 sections 5 and 6 (tests/reference/data/senml, see its SOURCES.md).
  for (const auto& entry : std::filesystem::directory_iterator(reference / "senml")) {
    if (entry.path().extension() == ".cbor" || entry.path().extension() == ".json") {
      seeds.push_back(testing::ReadFile(entry.path()));
    }
  }
  // Source: github.com/cose-wg/Examples 53c9d63, hmac-examples/ and mac0-tests/.
  for (const char* folder : {"hmac-examples", "mac0-tests"}) {
    for (const auto& entry : std::filesystem::directory_iterator(reference / "cose" / folder)) {
      const nlohmann::json vector = nlohmann::json::parse(testing::ReadFile(entry.path()));
      seeds.push_back(FromHex(vector["output"]["cbor"].get<std::string>()));
    }
  }
  // Our packs (invented values): every encoding, both algorithms, tag 17 or not, relative
  // times, secondary units, a channel with its own ut.
  const std::string key(32, '\x42');
  NodePack pack{"garage", 3, 41, 10000, {}};
  for (int c = 1; c <= 3; ++c) {
    ChannelSample& s = pack.samples.emplace_back();
    s.channel = "ct" + std::to_string(c);
    s.end_ms = 1764633590000 + (c == 3 ? 5000 : 0);
    s.duration_ms = c == 3 ? 5000 : 10000;
    s.amps = 0.25 * c;
    s.real_watts = 57.5 * c;
    s.real_register_j = 3600000.0 * c + 0.5;
    if (c == 2) s.volts = 231.7, s.power_factor = 0.93, s.apparent_va = 61.8;
  }
  for (const PackFormat format : {PackFormat::kCbor, PackFormat::kCoseMac0}) {
    for (const MacAlgorithm alg : {MacAlgorithm::kHmac256_64, MacAlgorithm::kHmac256_256}) {
      for (const bool tagged : {true, false}) {
        PackEncoding encoding{format, alg, tagged, {}};
        seeds.push_back(EncodePack(pack, encoding, key));
        seeds.push_back(EncodeAck(Ack{"garage", 3, 41}, encoding, key));
        encoding.relative_to = 1764633600000;
        seeds.push_back(EncodePack(pack, encoding, key));
      }
    }
  }
  const char* hand_written[] = {
      // [{-2:"a/",0:"b",2:1}] with indefinite array, map and chunked text
      "9fbf21626a2f007f6162ff0201ffff",
      // [{-1:26, 0:"x", 1:"kW", 2:4(-1, 15)}]: bver 26, a decimal fraction 1.5
      "81a4201a00617801626b5702c482200f",
      // decimal fraction with three parts, and with a float part
      "81a2006178" "02c48320010f",
      "81a2006178" "02c482f93c0001",
      // a tag on a number, a tag around the pack, self-described CBOR around the pack
      "81a2006178" "02c11a5f5e1000",
      "d8208100",
      "d9d9f781a200617802f93c00",
      // unknown text and integer labels, once and twice; a must-understand label
      "81a300617802016378797a00",
      "81a40061780201637879" "7a00637879" "7a01",
      "81a3006178020117f4",
      "81a400617802011717f41718f4",
      "81a30061780201627a5ff5",
      // wrong types, a bool, data and string values, duplicate known labels
      "81a200f402f5",
      "81a20061780403",
      "81a2006178" "0443010203",
      "81a2006178" "0363616263",
      "81a2006178" "04f5",
      "81a3006178" "0201" "0202",
      // bver as a negative number and as a float
      "81a320200061780201",
      "81a320f94900006178" "0201",
      // COSE_Mac0: indefinite outer array, indefinite unprotected map, kid twice, alg as
      // text, crit, a detached payload, a tag of the wrong length, an unknown CBOR tag
      "d19f43a10104bf0442676bff4130" "48" "0102030405060708ff",
      "d18443a10104a20442676b0442676b41304801020304050607" "08",
      "d18443a10104a10442676b" "4130" "48" "0102030405060708",
      "d18443a10104a1016548533235364130" "48" "0102030405060708",
      "d18443a10104a10281014130" "48" "0102030405060708",
      "d18443a10104a10442676b" "f6" "48" "0102030405060708",
      "d18443a10104a10442676b" "4130" "43" "010203",
      "d28443a10104a04130" "48" "0102030405060708",
      "8443a10105a10442676b4130" "5820" "0101010101010101010101010101010101010101010101010101010101010101",
      "d1845f4201a1410104ffa10442676b4130" "48" "0102030405060708",
      "d1844ba1015f426162ff0104a04130" "48" "0102030405060708",
  };
  for (const char* hex : hand_written) seeds.push_back(FromHex(hex));
  return seeds;
}

TEST_CASE("SenML CBOR and COSE_Mac0 read without a tree exactly as with one") {
  Tally tally;
  const std::vector<std::string> seeds = Seeds();
  for (const std::string& seed : seeds) {
    Compare(seed, &tally);
    // Every truncation, every byte replaced by values that change CBOR structure, every byte
    // removed.
    for (std::size_t length = 0; length < seed.size(); ++length) Compare(seed.substr(0, length), &tally);
    for (std::size_t i = 0; i < seed.size(); ++i) {
      const int byte = static_cast<unsigned char>(seed[i]);
      for (const int replacement : {0x00, 0x18, 0x5f, 0x9f, 0xbf, 0xc4, 0xf9, 0xff, byte ^ 0x01}) {
        std::string mutated = seed;
        mutated[i] = static_cast<char>(replacement);
        Compare(mutated, &tally);
      }
      std::string removed = seed;
      removed.erase(i, 1);
      Compare(removed, &tally);
    }
  }
  // Random mutations (fixed seed): several bytes flipped, inserted or removed at once.
  std::mt19937 random(20261202);
  for (int round = 0; round < 20000; ++round) {
    std::string mutated = seeds[random() % seeds.size()];
    const int edits = 1 + static_cast<int>(random() % 4);
    for (int e = 0; e < edits && !mutated.empty(); ++e) {
      const std::size_t at = random() % mutated.size();
      switch (random() % 3) {
        case 0: mutated[at] = static_cast<char>(mutated[at] ^ (1 << (random() % 8))); break;
        case 1: mutated.insert(at, 1, static_cast<char>(random() % 256)); break;
        default: mutated.erase(at, 1); break;
      }
    }
    Compare(mutated, &tally);
  }
  MESSAGE(tally.inputs << " inputs: " << tally.cbor_ok << " well-formed CBOR, " << tally.senml_ok
                       << " SenML packs, " << tally.cose_ok << " COSE_Mac0 accepted");
  // The comparison is worth something only if both verdicts and several reasons occurred.
  CHECK(tally.senml_ok > 100);
  CHECK(tally.cose_ok > 100);
  CHECK(tally.inputs - tally.cbor_ok > 1000);
  for (const RefusalReason reason : {RefusalReason::kMalformed, RefusalReason::kUnsupported}) {
    CAPTURE(RefusalName(reason));
    CHECK(tally.refusals[static_cast<int>(reason)] > 10);
  }
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
