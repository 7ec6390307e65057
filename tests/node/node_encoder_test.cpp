// tests/node/node_encoder_test.cpp
// The reference node-side encoder in C (deploy/node/) against the published vectors of its
// hash and MAC, against the daemon's own decoder and acknowledgement encoder, against the
// worked example of daemon/PROTOCOL.md, and end to end over real UDP into a running daemon.
#include <arpa/inet.h>
#include <doctest/doctest.h>
#include <netinet/in.h>
#include <openssl/evp.h>
#include <openssl/hmac.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <map>
#include <string>
#include <vector>

#include "ampledger_node.h"
#include "ampledger_sha256.h"
#include "config/config.h"
#include "config/wall_clock.h"
#include "daemon/ingest/ack.h"
#include "daemon/ingest/datagram.h"
#include "daemon/service.h"
#include "tests/ingest/hex.h"
#include "tests/test_util.h"

namespace ampledger {
namespace {

std::string Sha256Hex(const std::string& message) {
  ampledger_sha256 ctx;
  std::uint8_t digest[AMPLEDGER_SHA256_SIZE];
  ampledger_sha256_init(&ctx);
  ampledger_sha256_update(&ctx, message.data(), message.size());
  ampledger_sha256_final(&ctx, digest);
  return testing::ToHex(std::string(reinterpret_cast<char*>(digest), sizeof digest));
}

std::string HmacHex(const std::string& key, const std::string& message) {
  ampledger_hmac_sha256 ctx;
  std::uint8_t mac[AMPLEDGER_SHA256_SIZE];
  ampledger_hmac_sha256_init(&ctx, reinterpret_cast<const std::uint8_t*>(key.data()), key.size());
  ampledger_hmac_sha256_update(&ctx, message.data(), message.size());
  ampledger_hmac_sha256_final(&ctx, mac);
  return testing::ToHex(std::string(reinterpret_cast<char*>(mac), sizeof mac));
}

// The demo key of PROTOCOL.md's worked example: bytes 0x00 .. 0x1f.
std::string DemoKey() {
  std::string key;
  for (int i = 0; i < 32; ++i) key.push_back(static_cast<char>(i));
  return key;
}

const std::uint8_t* Bytes(const std::string& s) {
  return reinterpret_cast<const std::uint8_t*>(s.data());
}

// Encodes with the C encoder; fails the test on an error.
std::string Encode(const ampledger_node_pack& pack, const std::string& key, int alg) {
  std::array<std::uint8_t, AMPLEDGER_NODE_MAX_DATAGRAM> out{};
  std::size_t size = 0;
  const int result = ampledger_node_encode(&pack, Bytes(key), key.size(), alg, out.data(),
                                           out.size(), &size);
  REQUIRE(result == AMPLEDGER_NODE_OK);
  return std::string(reinterpret_cast<const char*>(out.data()), size);
}

NodeConfig NodeWith(const std::string& id, const std::string& key,
                    const std::vector<std::string>& channels) {
  NodeConfig node;
  node.id = id;
  node.key.assign(key.begin(), key.end());
  for (const std::string& c : channels) node.channels.emplace_back().id = c;
  return node;
}

// The text of the first ``` block after `marker`, with all white space removed.
std::string BlockAfter(const std::string& doc, const std::string& marker) {
  const std::size_t at = doc.find(marker);
  REQUIRE_MESSAGE(at != std::string::npos, marker);
  const std::size_t start = doc.find('\n', doc.find("```", at)) + 1;
  const std::size_t close = doc.find("```", start);
  std::string block;
  for (std::size_t i = start; i < close; ++i) {
    if (!std::isspace(static_cast<unsigned char>(doc[i]))) block.push_back(doc[i]);
  }
  return block;
}

TEST_SUITE("node") {

TEST_CASE("SHA-256 of the FIPS 180-4 example messages") {
  // FIPS 180-4 examples (NIST "SHA256.pdf", Cryptographic Standards and Guidelines: Examples
  // with Intermediate Values): one-block message "abc" and the two-block 448-bit message.
  CHECK(Sha256Hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(Sha256Hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  // Streaming in odd pieces gives the same digest as one update.
  ampledger_sha256 ctx;
  std::uint8_t digest[AMPLEDGER_SHA256_SIZE];
  const std::string message = "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq";
  ampledger_sha256_init(&ctx);
  for (std::size_t at = 0; at < message.size(); at += 7) {
    ampledger_sha256_update(&ctx, message.data() + at, std::min<std::size_t>(7, message.size() - at));
  }
  ampledger_sha256_final(&ctx, digest);
  CHECK(testing::ToHex(std::string(reinterpret_cast<char*>(digest), 32)) ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

TEST_CASE("HMAC-SHA-256: RFC 4231 test cases 1, 2 and 6") {
  // RFC 4231 section 4.2, test case 1.
  CHECK(HmacHex(std::string(20, '\x0b'), "Hi There") ==
        "b0344c61d8db38535ca8afceaf0bf12b881dc200c9833da726e9376c2e32cff7");
  // RFC 4231 section 4.3, test case 2: a key shorter than the output.
  CHECK(HmacHex("Jefe", "what do ya want for nothing?") ==
        "5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843");
  // RFC 4231 section 4.7, test case 6: a key longer than a block is hashed first.
  CHECK(HmacHex(std::string(131, '\xaa'), "Test Using Larger Than Block-Size Key - Hash Key First") ==
        "60e431591ee0b67f0d8a26aacbf5b77f8e0bc6213728c5140546040f0ee37f54");
}

TEST_CASE("SHA-256 and HMAC agree with OpenSSL at every length across block boundaries") {
  // OpenSSL as a general-purpose reference library: lengths 0..200 cover the padding cases
  // (55, 56, 63, 64 bytes) and keys 0..140 bytes cover short, block-sized and hashed keys.
  std::string message;
  for (int length = 0; length <= 200; ++length) {
    unsigned char expected[32];
    unsigned int expected_size = 0;
    EVP_Digest(message.data(), message.size(), expected, &expected_size, EVP_sha256(), nullptr);
    CHECK(Sha256Hex(message) == testing::ToHex(std::string(reinterpret_cast<char*>(expected), 32)));
    if (length <= 140) {
      const std::string key = message;
      HMAC(EVP_sha256(), key.data(), static_cast<int>(key.size()), Bytes(message), message.size(),
           expected, &expected_size);
      CHECK(HmacHex(key, message) == testing::ToHex(std::string(reinterpret_cast<char*>(expected), 32)));
    }
    message.push_back(static_cast<char>(length * 37 + 11));
  }
}

TEST_CASE("PROTOCOL.md worked example: the C encoder writes the document's datagram exactly") {
  const std::string doc = testing::ReadFile(testing::SourceDir() / "daemon" / "PROTOCOL.md");
  const std::string expected = BlockAfter(doc, "<!-- example:datagram");
  ampledger_node_channel ct1{};
  ct1.channel = "ct1";
  ct1.present = AMPLEDGER_NODE_AMPS | AMPLEDGER_NODE_REAL_WATTS | AMPLEDGER_NODE_REAL_REGISTER;
  ct1.amps = 12.5;
  ct1.real_watts = 1458;
  ct1.real_register_j = 5250000;
  const ampledger_node_pack pack{"laundry", 7, 1042, 10, 1767225600, &ct1, 1};
  CHECK(testing::ToHex(Encode(pack, DemoKey(), AMPLEDGER_NODE_HMAC_256_64)) == expected);

  // The SenML payload alone is the document's 74-byte CBOR pack.
  std::array<std::uint8_t, 128> senml{};
  std::size_t size = 0;
  REQUIRE(ampledger_node_write_senml(&pack, senml.data(), senml.size(), &size) == AMPLEDGER_NODE_OK);
  CHECK(size == 74);
  CHECK(expected.find(testing::ToHex(std::string(reinterpret_cast<char*>(senml.data()), size))) ==
        2 * (1 + 1 + 4 + 10 + 2));  // after d1 84, protected, unprotected, bstr head

  // And the document's acknowledgement reads as boot 7, seq 1042.
  const std::string ack = testing::FromHex(BlockAfter(doc, "<!-- example:ack"));
  std::uint32_t boot = 0, seq = 0;
  const std::string key = DemoKey();
  REQUIRE(ampledger_node_read_ack(Bytes(ack), ack.size(), "laundry", Bytes(key), key.size(),
                                  &boot, &seq) == AMPLEDGER_NODE_OK);
  CHECK(boot == 7);
  CHECK(seq == 1042);
}

TEST_CASE("datagrams of both algorithms and many channel/quantity mixes verify in the daemon") {
  const std::string key(32, '\x5a');
  const std::vector<NodeConfig> nodes = {NodeWith("cellar-2", key, {"ct1", "ct2", "mains_a"})};
  const UnixMs now = WallClockMs();
  const double end_s = std::floor(static_cast<double>(now) / 1000.0) - 30;

  // Three channels with different quantities, values needing ints, halves, singles, doubles.
  std::vector<ampledger_node_channel> channels(3);
  channels[0] = {};
  channels[0].channel = "ct1";
  channels[0].present = AMPLEDGER_NODE_AMPS;
  channels[0].amps = 0.1;  // needs a double
  channels[1] = {};
  channels[1].channel = "ct2";
  channels[1].present = AMPLEDGER_NODE_AMPS | AMPLEDGER_NODE_VOLTS | AMPLEDGER_NODE_REAL_WATTS |
                        AMPLEDGER_NODE_REAL_REGISTER | AMPLEDGER_NODE_APPARENT_VA |
                        AMPLEDGER_NODE_APPARENT_REGISTER | AMPLEDGER_NODE_POWER_FACTOR |
                        AMPLEDGER_NODE_FREQUENCY;
  channels[1].amps = 8.75;
  channels[1].volts = 231.4;
  channels[1].real_watts = -1850.25;  // export
  channels[1].real_register_j = 123456789012.0;  // beyond 32 bits
  channels[1].apparent_va = 2024.5;
  channels[1].apparent_register_vas = 0;
  channels[1].power_factor = -0.91;
  channels[1].frequency_hz = 49.98;
  channels[2] = {};
  channels[2].channel = "mains_a";
  channels[2].present = AMPLEDGER_NODE_REAL_REGISTER;  // a register alone: p with no value
  channels[2].real_register_j = 3.0e-5;
  for (const int alg : {AMPLEDGER_NODE_HMAC_256_64, AMPLEDGER_NODE_HMAC_256_256}) {
    for (std::size_t count = 0; count <= channels.size(); ++count) {
      for (const double end : {end_s, -12.0, 0.0}) {
        CAPTURE(alg);
        CAPTURE(count);
        CAPTURE(end);
        const ampledger_node_pack pack{"cellar-2", 3, static_cast<std::uint32_t>(100 + count),
                                       15, end, channels.data(), count};
        const std::string datagram = Encode(pack, key, alg);
        DecodeResult<DecodedDatagram> d = DecodeDatagram(datagram, now, nodes, IngestConfig{});
        REQUIRE_MESSAGE(d.ok(), (d.ok() ? "" : d.refusal().detail));
        CHECK(d->kid == "cellar-2");
        CHECK(static_cast<int>(d->encoding.alg) == alg);
        CHECK(d->pack.boot == 3);
        CHECK(d->pack.seq == 100 + count);
        CHECK(d->pack.interval_ms == 15000);
        const UnixMs expected_end = end >= 268435456 ? static_cast<UnixMs>(end * 1000)
                                                     : now + static_cast<UnixMs>(end * 1000);
        std::map<std::string, ChannelSample> by_channel;
        for (const ChannelSample& s : d->pack.samples) by_channel[s.channel] = s;
        REQUIRE(by_channel.size() == count);
        for (const auto& [name, s] : by_channel) {
          CHECK(s.end_ms == expected_end);
          CHECK(s.duration_ms == 15000);
        }
        if (count >= 1) {
          CHECK(*by_channel["ct1"].amps == 0.1);
          CHECK(!by_channel["ct1"].volts);
        }
        if (count >= 2) {
          const ChannelSample& s = by_channel["ct2"];
          CHECK(*s.amps == 8.75);
          CHECK(*s.volts == 231.4);
          CHECK(*s.real_watts == -1850.25);
          CHECK(*s.real_register_j == 123456789012.0);
          CHECK(*s.apparent_va == 2024.5);
          CHECK(*s.apparent_register_j == 0);
          CHECK(*s.power_factor == -0.91);
          CHECK(*s.frequency_hz == 49.98);
        }
        if (count >= 3) {
          const ChannelSample& s = by_channel["mains_a"];
          CHECK(!s.real_watts);
          CHECK(*s.real_register_j == 3.0e-5);
        }
        // The daemon's own encoder writes the same bytes from what it decoded (absolute
        // times with readings only: its relative form puts times on each record, not in bt,
        // and it writes no bt in a heartbeat).
        if (end == end_s && count > 0) {
          CHECK(testing::ToHex(EncodePack(d->pack, d->encoding, key)) == testing::ToHex(datagram));
        }
        // Under another key it is refused.
        const std::string other_key(32, '\x5b');
        const std::vector<NodeConfig> wrong = {NodeWith("cellar-2", other_key, {"ct1"})};
        DecodeResult<DecodedDatagram> forged = DecodeDatagram(datagram, now, wrong, IngestConfig{});
        REQUIRE(!forged.ok());
        CHECK(forged.refusal().reason == RefusalReason::kBadTag);
      }
    }
  }
}

TEST_CASE("numbers take the shortest exact CBOR form, like the daemon's encoder") {
  // Half floats normal and subnormal (2^-24 is the smallest half: IEEE 754 binary16), singles,
  // doubles, negative zero and large integers; the daemon's encoder is the reference.
  const std::string key(32, '\x01');
  const std::vector<NodeConfig> nodes = {NodeWith("n1", key, {"c"})};
  const UnixMs now = WallClockMs();
  for (const double value : {0.5, -0.0, 65504.0, 65505.0, 5.960464477539063e-08, 6.1e-5,
                             1.0 / 3.0, 0.1f + 0.0, 1e300, -4294967296.0, 1e18, 100000.5}) {
    CAPTURE(value);
    ampledger_node_channel c{};
    c.channel = "c";
    c.present = AMPLEDGER_NODE_REAL_WATTS;
    c.real_watts = value;
    const ampledger_node_pack pack{"n1", 1, 1, 1, -1, &c, 1};
    const std::string datagram = Encode(pack, key, AMPLEDGER_NODE_HMAC_256_256);
    DecodeResult<DecodedDatagram> d = DecodeDatagram(datagram, now, nodes, IngestConfig{});
    REQUIRE_MESSAGE(d.ok(), (d.ok() ? "" : d.refusal().detail));
    REQUIRE(d->pack.samples.size() == 1);
    CHECK(*d->pack.samples[0].real_watts == value);
    std::vector<SenmlOutRecord> records(1);
    records[0].value = value;
    const std::string daemon_bytes = WriteSenmlCbor(records);  // 81 a1 02 <number>
    CHECK(testing::ToHex(datagram).find(testing::ToHex(daemon_bytes.substr(3))) != std::string::npos);
  }
}

TEST_CASE("the daemon's acknowledgements read back; foreign, forged and broken ones do not") {
  const std::string key(32, '\x33');
  for (const MacAlgorithm alg : {MacAlgorithm::kHmac256_64, MacAlgorithm::kHmac256_256}) {
    for (const bool tagged : {true, false}) {
      const PackEncoding encoding{PackFormat::kCoseMac0, alg, tagged, std::nullopt};
      const std::string ack = EncodeAck(Ack{"attic", 4000000000u, 65536}, encoding, key);
      std::uint32_t boot = 0, seq = 0;
      REQUIRE(ampledger_node_read_ack(Bytes(ack), ack.size(), "attic", Bytes(key), key.size(),
                                      &boot, &seq) == AMPLEDGER_NODE_OK);
      CHECK(boot == 4000000000u);
      CHECK(seq == 65536);
      const std::string other_key(32, '\x34');
      CHECK(ampledger_node_read_ack(Bytes(ack), ack.size(), "attic", Bytes(other_key), 32, &boot,
                                    &seq) == AMPLEDGER_NODE_E_BAD_TAG);
      CHECK(ampledger_node_read_ack(Bytes(ack), ack.size(), "attic2", Bytes(key), 32, &boot,
                                    &seq) == AMPLEDGER_NODE_E_NOT_MINE);
      // Every truncation and every single flipped bit is refused and never read out of bounds.
      for (std::size_t size = 0; size < ack.size(); ++size) {
        CHECK(ampledger_node_read_ack(Bytes(ack), size, "attic", Bytes(key), 32, &boot, &seq) < 0);
      }
      for (std::size_t bit = 0; bit < ack.size() * 8; ++bit) {
        std::string flipped = ack;
        flipped[bit / 8] = static_cast<char>(flipped[bit / 8] ^ (1 << (bit % 8)));
        CHECK(ampledger_node_read_ack(Bytes(flipped), flipped.size(), "attic", Bytes(key), 32,
                                      &boot, &seq) < 0);
      }
    }
  }
  // A plain SenML acknowledgement carries no tag: a node with a key refuses it.
  const PackEncoding plain{PackFormat::kCbor, MacAlgorithm::kHmac256_64, false, std::nullopt};
  const std::string ack = EncodeAck(Ack{"attic", 1, 2}, plain, "");
  std::uint32_t boot = 0, seq = 0;
  CHECK(ampledger_node_read_ack(Bytes(ack), ack.size(), "attic", Bytes(key), 32, &boot, &seq) ==
        AMPLEDGER_NODE_E_MALFORMED);
}

TEST_CASE("a buffer too small is refused and never written past") {
  ampledger_node_channel c[2] = {};
  c[0].channel = "ct1";
  c[0].present = AMPLEDGER_NODE_AMPS | AMPLEDGER_NODE_REAL_WATTS | AMPLEDGER_NODE_REAL_REGISTER;
  c[0].amps = 1.25;
  c[0].real_watts = 287.3;
  c[0].real_register_j = 99999.5;
  c[1].channel = "ct2";
  c[1].present = AMPLEDGER_NODE_FREQUENCY;
  c[1].frequency_hz = 60;
  const ampledger_node_pack pack{"shed", 1, 2, 10, 1767225600, c, 2};
  const std::string key(32, '\x07');
  const std::size_t full = Encode(pack, key, AMPLEDGER_NODE_HMAC_256_64).size();
  std::size_t senml_full = 0;
  REQUIRE(ampledger_node_write_senml(&pack, nullptr, 0, &senml_full) == AMPLEDGER_NODE_E_BUFFER);
  std::array<std::uint8_t, 256> scratch{};
  REQUIRE(ampledger_node_write_senml(&pack, scratch.data(), scratch.size(), &senml_full) ==
          AMPLEDGER_NODE_OK);
  for (std::size_t capacity = 0; capacity < full; ++capacity) {
    std::vector<std::uint8_t> buffer(full + 16, 0xee);
    std::size_t size = 12345;
    CHECK(ampledger_node_encode(&pack, Bytes(key), key.size(), AMPLEDGER_NODE_HMAC_256_64,
                                buffer.data(), capacity, &size) == AMPLEDGER_NODE_E_BUFFER);
    CHECK(size == 12345);
    for (std::size_t i = capacity; i < buffer.size(); ++i) REQUIRE(buffer[i] == 0xee);
    if (capacity < senml_full) {
      CHECK(ampledger_node_write_senml(&pack, buffer.data(), capacity, &size) ==
            AMPLEDGER_NODE_E_BUFFER);
      for (std::size_t i = capacity; i < buffer.size(); ++i) REQUIRE(buffer[i] == 0xee);
    }
  }
  std::vector<std::uint8_t> exact(full);
  std::size_t size = 0;
  CHECK(ampledger_node_encode(&pack, Bytes(key), key.size(), AMPLEDGER_NODE_HMAC_256_64,
                              exact.data(), exact.size(), &size) == AMPLEDGER_NODE_OK);
  CHECK(size == full);
}

TEST_CASE("bad ids, values, intervals, times, keys and algorithms are refused") {
  ampledger_node_channel c{};
  c.channel = "ct1";
  c.present = AMPLEDGER_NODE_AMPS;
  c.amps = 1;
  const std::string key(32, '\x07');
  std::array<std::uint8_t, 256> out{};
  std::size_t size = 0;
  auto encode = [&](const ampledger_node_pack& pack, int alg = AMPLEDGER_NODE_HMAC_256_64) {
    return ampledger_node_encode(&pack, Bytes(key), key.size(), alg, out.data(), out.size(), &size);
  };
  const ampledger_node_pack good{"shed", 1, 2, 10, 0, &c, 1};
  CHECK(encode(good) == AMPLEDGER_NODE_OK);
  CHECK(encode(good, 6) == AMPLEDGER_NODE_E_ARGUMENT);
  CHECK(ampledger_node_encode(&good, Bytes(key), 0, 4, out.data(), out.size(), &size) ==
        AMPLEDGER_NODE_E_ARGUMENT);
  for (const char* id : {"", "shed/", "-shed", "sh ed", "sh\xc3\xa9"}) {
    CAPTURE(id);
    ampledger_node_pack pack = good;
    pack.node = id;
    CHECK(encode(pack) == AMPLEDGER_NODE_E_ARGUMENT);
    ampledger_node_channel bad = c;
    bad.channel = id;
    pack = good;
    pack.channels = &bad;
    CHECK(encode(pack) == AMPLEDGER_NODE_E_ARGUMENT);
  }
  for (const double interval : {0.0, -1.0, 86400.5, double{NAN}}) {
    ampledger_node_pack pack = good;
    pack.interval_s = interval;
    CHECK(encode(pack) == AMPLEDGER_NODE_E_ARGUMENT);
  }
  for (const double end : {1.0, 268435455.0, double{INFINITY}}) {  // (0, 2^28) is neither form
    ampledger_node_pack pack = good;
    pack.end_s = end;
    CHECK(encode(pack) == AMPLEDGER_NODE_E_ARGUMENT);
  }
  ampledger_node_channel bad = c;
  bad.amps = NAN;
  ampledger_node_pack pack = good;
  pack.channels = &bad;
  CHECK(encode(pack) == AMPLEDGER_NODE_E_ARGUMENT);
  bad = c;
  bad.present |= AMPLEDGER_NODE_REAL_REGISTER;
  bad.real_register_j = -1;
  CHECK(encode(pack) == AMPLEDGER_NODE_E_ARGUMENT);
}

Config EndToEndConfig(const testing::TempDir& dir, const std::string& key_hex) {
  const std::string toml = R"toml(
[site]
name = "Node encoder test"
time_zone = "UTC"
nominal_volts = [230]
currency = "EUR"

[[node]]
id = "porch"
key = ")toml" + key_hex + R"toml("
[[node.channel]]
id = "ct1"
[[node.channel]]
id = "ct2"

[[circuit]]
id = "kettle"
channels = ["porch/ct1"]
[[circuit]]
id = "fridge"
channels = ["porch/ct2"]

[storage]
path = "node.db"

[ingest]
listen = "127.0.0.1:0"

[http]
listen = "127.0.0.1:0"
threads = 1
)toml";
  Result<Config> config = ParseConfig(toml, dir.File("node.toml"));
  REQUIRE_MESSAGE(config.ok(), config.status().ToString());
  return *config;
}

TEST_CASE("end to end: C-encoded packs over UDP are stored and acknowledged to the C decoder") {
  testing::TempDir dir;
  const std::string key(32, '\x42');
  Config config = EndToEndConfig(dir, testing::ToHex(key));
  const std::string db_path = config.storage.path;
  Service service(config);
  REQUIRE(service.Start().ok());

  const int fd = ::socket(AF_INET, SOCK_DGRAM, 0);
  REQUIRE(fd >= 0);
  sockaddr_in daemon{};
  daemon.sin_family = AF_INET;
  daemon.sin_port = htons(service.udp_port());
  daemon.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  REQUIRE(::connect(fd, reinterpret_cast<const sockaddr*>(&daemon), sizeof daemon) == 0);

  // 300 intervals of 10 s ending a minute ago, two channels each, alternating algorithms;
  // every seventh datagram is held back on its first send and goes out with the resends.
  constexpr int kPacks = 300;
  const double last_end_s = std::floor(static_cast<double>(WallClockMs()) / 1000.0) - 60;
  std::map<std::uint32_t, std::string> unacked;  // seq -> datagram
  double register_j = 0;
  for (int i = 0; i < kPacks; ++i) {
    ampledger_node_channel c[2] = {};
    c[0].channel = "ct1";
    c[0].present = AMPLEDGER_NODE_AMPS | AMPLEDGER_NODE_REAL_WATTS | AMPLEDGER_NODE_REAL_REGISTER;
    c[0].real_watts = 1000 + i;
    c[0].amps = c[0].real_watts / 230;
    register_j += c[0].real_watts * 10;
    c[0].real_register_j = register_j;
    c[1].channel = "ct2";
    c[1].present = AMPLEDGER_NODE_AMPS;
    c[1].amps = 0.5;
    const ampledger_node_pack pack{"porch", 9, static_cast<std::uint32_t>(i), 10,
                                   last_end_s - 10.0 * (kPacks - 1 - i), c, 2};
    const std::string datagram =
        Encode(pack, key, i % 2 ? AMPLEDGER_NODE_HMAC_256_256 : AMPLEDGER_NODE_HMAC_256_64);
    unacked[pack.seq] = datagram;
    if (i % 7 != 3) REQUIRE(::send(fd, datagram.data(), datagram.size(), 0) > 0);
  }
  // Read acknowledgements with the C decoder; resend whatever stays unacknowledged (bounded).
  int foreign = 0;
  for (int round = 0; round < 100 && !unacked.empty(); ++round) {
    pollfd ready{fd, POLLIN, 0};
    while (::poll(&ready, 1, 100) > 0) {
      std::uint8_t ack[256];
      const ssize_t got = ::recv(fd, ack, sizeof ack, 0);
      if (got <= 0) break;
      std::uint32_t boot = 0, seq = 0;
      if (ampledger_node_read_ack(ack, static_cast<std::size_t>(got), "porch", Bytes(key),
                                  key.size(), &boot, &seq) != AMPLEDGER_NODE_OK) {
        ++foreign;
        continue;
      }
      CHECK(boot == 9);
      unacked.erase(seq);
    }
    for (const auto& [seq, datagram] : unacked) {
      REQUIRE(::send(fd, datagram.data(), datagram.size(), 0) > 0);
    }
  }
  ::close(fd);
  CHECK(unacked.empty());
  CHECK(foreign == 0);
  service.RequestStop();
  REQUIRE(service.Wait().ok());
  CHECK(testing::QueryInt(db_path, "SELECT count(*) FROM reading") == 2 * kPacks);
  CHECK(testing::QueryDouble(db_path, "SELECT max(real_register_j) FROM reading") == register_j);
}

}  // TEST_SUITE

}  // namespace
}  // namespace ampledger
