/* deploy/node/ampledger_node.c
 * CBOR (RFC 8949) is written and read by hand: only definite lengths, integer labels, and the
 * shortest exact number forms the daemon's own encoder writes, so a pack from here is
 * byte-identical to daemon/ingest/pack_encoder.h's for the same values. */
#include "ampledger_node.h"

#include <string.h>

#include "ampledger_sha256.h"

/* RFC 8428 Table 4: SenML CBOR labels. */
#define LABEL_BASE_NAME (-2)
#define LABEL_BASE_TIME (-3)
#define LABEL_NAME 0
#define LABEL_UNIT 1
#define LABEL_VALUE 2
#define LABEL_SUM 5
#define LABEL_UPDATE_TIME 7

/* RFC 9052: header labels, and CBOR tag 17 for COSE_Mac0. */
#define COSE_ALG 1
#define COSE_KID 4
#define COSE_MAC0_TAG 17

#define TWO_POW_28 268435456.0 /* PROTOCOL.md section 5: absolute times start here */
#define MAX_INTERVAL_S 86400.0

/* ------------------------------------------------------------------------------------------
 * Writing. A Writer counts every byte but stores only those below `capacity`, so one pass
 * with capacity 0 measures and the caller can tell an overflow by size > capacity. */

typedef struct {
  uint8_t* out;
  size_t capacity;
  size_t size;
} Writer;

static void PutByte(Writer* w, uint8_t byte) {
  if (w->size < w->capacity) w->out[w->size] = byte;
  w->size++;
}

static void PutBytes(Writer* w, const void* data, size_t size) {
  const uint8_t* bytes = (const uint8_t*)data;
  size_t i;
  for (i = 0; i < size; ++i) PutByte(w, bytes[i]);
}

/* RFC 8949 section 3: the initial byte and the shortest argument. */
static void PutHead(Writer* w, int major, uint64_t argument) {
  const uint8_t type = (uint8_t)(major << 5);
  int extra, i;
  if (argument < 24) {
    PutByte(w, (uint8_t)(type | argument));
    return;
  }
  if (argument <= 0xff) {
    PutByte(w, (uint8_t)(type | 24));
    extra = 1;
  } else if (argument <= 0xffff) {
    PutByte(w, (uint8_t)(type | 25));
    extra = 2;
  } else if (argument <= 0xffffffffu) {
    PutByte(w, (uint8_t)(type | 26));
    extra = 4;
  } else {
    PutByte(w, (uint8_t)(type | 27));
    extra = 8;
  }
  for (i = extra - 1; i >= 0; --i) PutByte(w, (uint8_t)(argument >> (8 * i)));
}

static void PutInt(Writer* w, int64_t value) {
  if (value >= 0) {
    PutHead(w, 0, (uint64_t)value);
  } else {
    PutHead(w, 1, (uint64_t)(-1 - value));
  }
}

static void PutText(Writer* w, const char* text) {
  const size_t size = strlen(text);
  PutHead(w, 3, size);
  PutBytes(w, text, size);
}

/* The binary16 bits of the float whose bits are `bits` if it converts exactly, else -1. */
static long ExactHalf(uint32_t bits) {
  const long sign = (long)(bits >> 31) << 15;
  const int exponent = (int)((bits >> 23) & 0xff) - 127;
  const uint32_t mantissa = bits & 0x7fffff;
  if ((bits & 0x7fffffff) == 0) return sign; /* +0, -0 */
  if (exponent == 128 || exponent == -127) return -1; /* inf/NaN; float subnormals */
  if (exponent >= -14 && exponent <= 15) {  /* a normal half: 10 mantissa bits */
    if (mantissa & 0x1fff) return -1;
    return sign | ((long)(exponent + 15) << 10) | (long)(mantissa >> 13);
  }
  if (exponent >= -24 && exponent < -14) {  /* a subnormal half: multiples of 2^-24 */
    const int shift = -(exponent + 1);      /* 14 .. 23 */
    const uint32_t significand = mantissa | 0x800000;
    if (significand & ((1u << shift) - 1)) return -1;
    return sign | (long)(significand >> shift);
  }
  return -1;
}

/* A number in the shortest exact form (RFC 8949 section 4.2.2 preference): an integer if
 * whole, else a half, single or double float. `value` must be finite. */
static void PutNumber(Writer* w, double value) {
  const double two_pow_63 = 9223372036854775808.0;
  uint64_t double_bits;
  float single = (float)value;
  uint32_t single_bits;
  memcpy(&double_bits, &value, sizeof double_bits);
  if (value >= -two_pow_63 && value < two_pow_63 && value == (double)(int64_t)value &&
      double_bits != 0x8000000000000000ull /* -0 stays a float */) {
    PutInt(w, (int64_t)value);
    return;
  }
  memcpy(&single_bits, &single, sizeof single_bits);
  if ((double)single == value) {
    const long half = ExactHalf(single_bits);
    int i;
    if (half >= 0) {
      PutByte(w, 0xf9);
      PutByte(w, (uint8_t)(half >> 8));
      PutByte(w, (uint8_t)half);
      return;
    }
    PutByte(w, 0xfa);
    for (i = 3; i >= 0; --i) PutByte(w, (uint8_t)(single_bits >> (8 * i)));
    return;
  }
  {
    int i;
    PutByte(w, 0xfb);
    for (i = 7; i >= 0; --i) PutByte(w, (uint8_t)(double_bits >> (8 * i)));
  }
}

static int IsFinite(double value) { return value == value && value - value == 0; }

/* PROTOCOL.md section 1: id characters A-Z a-z 0-9 - : . _ (no '/'). */
static int IsAlphanumeric(char c) {
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9');
}

static int IsValidId(const char* id) {
  const char* c;
  if (id == NULL || !IsAlphanumeric(id[0])) return 0;
  for (c = id; *c; ++c) {
    if (!IsAlphanumeric(*c) && *c != '-' && *c != ':' && *c != '.' && *c != '_') return 0;
  }
  return 1;
}

/* One quantity of a channel: record suffix, unit, and where its value and sum are. */
typedef struct {
  const char* suffix;
  const char* unit;
  uint32_t value_bit;
  uint32_t sum_bit; /* 0: no register on this quantity */
} Quantity;

/* PROTOCOL.md section 3, in the daemon encoder's order. */
static const Quantity kQuantities[] = {
    {"i", "A", AMPLEDGER_NODE_AMPS, 0},
    {"v", "V", AMPLEDGER_NODE_VOLTS, 0},
    {"p", "W", AMPLEDGER_NODE_REAL_WATTS, AMPLEDGER_NODE_REAL_REGISTER},
    {"s", "VA", AMPLEDGER_NODE_APPARENT_VA, AMPLEDGER_NODE_APPARENT_REGISTER},
    {"pf", "/", AMPLEDGER_NODE_POWER_FACTOR, 0},
    {"f", "Hz", AMPLEDGER_NODE_FREQUENCY, 0},
};
#define QUANTITY_COUNT (sizeof kQuantities / sizeof kQuantities[0])

static double ChannelField(const ampledger_node_channel* c, uint32_t bit) {
  switch (bit) {
    case AMPLEDGER_NODE_AMPS: return c->amps;
    case AMPLEDGER_NODE_VOLTS: return c->volts;
    case AMPLEDGER_NODE_REAL_WATTS: return c->real_watts;
    case AMPLEDGER_NODE_REAL_REGISTER: return c->real_register_j;
    case AMPLEDGER_NODE_APPARENT_VA: return c->apparent_va;
    case AMPLEDGER_NODE_APPARENT_REGISTER: return c->apparent_register_vas;
    case AMPLEDGER_NODE_POWER_FACTOR: return c->power_factor;
    default: return c->frequency_hz;
  }
}

static int CheckPack(const ampledger_node_pack* pack) {
  size_t i;
  int q;
  if (pack == NULL || !IsValidId(pack->node)) return AMPLEDGER_NODE_E_ARGUMENT;
  if (!IsFinite(pack->interval_s) || !(pack->interval_s > 0) ||
      pack->interval_s > MAX_INTERVAL_S) {
    return AMPLEDGER_NODE_E_ARGUMENT;
  }
  if (!IsFinite(pack->end_s) || (pack->end_s > 0 && pack->end_s < TWO_POW_28)) {
    return AMPLEDGER_NODE_E_ARGUMENT;
  }
  if (pack->channel_count > 0 && pack->channels == NULL) return AMPLEDGER_NODE_E_ARGUMENT;
  for (i = 0; i < pack->channel_count; ++i) {
    const ampledger_node_channel* c = &pack->channels[i];
    if (!IsValidId(c->channel)) return AMPLEDGER_NODE_E_ARGUMENT;
    for (q = 0; q < 8; ++q) {
      const uint32_t bit = 1u << q;
      if (!(c->present & bit)) continue;
      if (!IsFinite(ChannelField(c, bit))) return AMPLEDGER_NODE_E_ARGUMENT;
    }
    if (((c->present & AMPLEDGER_NODE_REAL_REGISTER) && c->real_register_j < 0) ||
        ((c->present & AMPLEDGER_NODE_APPARENT_REGISTER) && c->apparent_register_vas < 0)) {
      return AMPLEDGER_NODE_E_ARGUMENT;
    }
  }
  return AMPLEDGER_NODE_OK;
}

/* Writes the SenML records of an already checked pack. */
static void PutSenml(Writer* w, const ampledger_node_pack* pack) {
  size_t records = 2, i, q;
  for (i = 0; i < pack->channel_count; ++i) {
    for (q = 0; q < QUANTITY_COUNT; ++q) {
      if (pack->channels[i].present & (kQuantities[q].value_bit | kQuantities[q].sum_bit)) {
        ++records;
      }
    }
  }
  PutHead(w, 4, records);
  /* {bn: "<node>/", [bt: end], n: "boot", v: boot}: every later name and time builds on it. */
  PutHead(w, 5, pack->end_s != 0 ? 4 : 3);
  PutInt(w, LABEL_BASE_NAME);
  PutHead(w, 3, strlen(pack->node) + 1);
  PutBytes(w, pack->node, strlen(pack->node));
  PutByte(w, '/');
  if (pack->end_s != 0) {
    PutInt(w, LABEL_BASE_TIME);
    PutNumber(w, pack->end_s);
  }
  PutInt(w, LABEL_NAME);
  PutText(w, "boot");
  PutInt(w, LABEL_VALUE);
  PutInt(w, pack->boot);
  /* {n: "seq", v: seq, ut: interval} */
  PutHead(w, 5, 3);
  PutInt(w, LABEL_NAME);
  PutText(w, "seq");
  PutInt(w, LABEL_VALUE);
  PutInt(w, pack->seq);
  PutInt(w, LABEL_UPDATE_TIME);
  PutNumber(w, pack->interval_s);
  for (i = 0; i < pack->channel_count; ++i) {
    const ampledger_node_channel* c = &pack->channels[i];
    for (q = 0; q < QUANTITY_COUNT; ++q) {
      const Quantity* quantity = &kQuantities[q];
      const int has_value = (c->present & quantity->value_bit) != 0;
      const int has_sum = quantity->sum_bit != 0 && (c->present & quantity->sum_bit) != 0;
      if (!has_value && !has_sum) continue;
      PutHead(w, 5, 2 + (uint64_t)has_value + (uint64_t)has_sum);
      PutInt(w, LABEL_NAME);
      PutHead(w, 3, strlen(c->channel) + 1 + strlen(quantity->suffix));
      PutBytes(w, c->channel, strlen(c->channel));
      PutByte(w, '/');
      PutBytes(w, quantity->suffix, strlen(quantity->suffix));
      PutInt(w, LABEL_UNIT);
      PutText(w, quantity->unit);
      if (has_value) {
        PutInt(w, LABEL_VALUE);
        PutNumber(w, ChannelField(c, quantity->value_bit));
      }
      if (has_sum) {
        PutInt(w, LABEL_SUM);
        PutNumber(w, ChannelField(c, quantity->sum_bit));
      }
    }
  }
}

int ampledger_node_write_senml(const ampledger_node_pack* pack, uint8_t* out, size_t capacity,
                               size_t* size) {
  Writer w;
  const int checked = CheckPack(pack);
  if (checked != AMPLEDGER_NODE_OK) return checked;
  w.out = out;
  w.capacity = out == NULL ? 0 : capacity;
  w.size = 0;
  PutSenml(&w, pack);
  if (w.size > w.capacity) return AMPLEDGER_NODE_E_BUFFER;
  *size = w.size;
  return AMPLEDGER_NODE_OK;
}

static size_t TagLength(int alg) { return alg == AMPLEDGER_NODE_HMAC_256_64 ? 8 : 32; }

/* HMAC-SHA-256 of MAC_structure = ["MAC0", protected, h'', payload] (RFC 9052 section 6.3),
 * streamed so the payload is read where it lies. */
static void MacStructureHmac(const uint8_t* key, size_t key_size, const uint8_t* protected_bytes,
                             size_t protected_size, const uint8_t* payload, size_t payload_size,
                             uint8_t mac[AMPLEDGER_SHA256_SIZE]) {
  uint8_t head[24];
  Writer w;
  ampledger_hmac_sha256 hmac;
  w.out = head;
  w.capacity = sizeof head;
  w.size = 0;
  PutHead(&w, 4, 4);
  PutText(&w, "MAC0");
  PutHead(&w, 2, protected_size);
  ampledger_hmac_sha256_init(&hmac, key, key_size);
  ampledger_hmac_sha256_update(&hmac, head, w.size);
  ampledger_hmac_sha256_update(&hmac, protected_bytes, protected_size);
  w.size = 0;
  PutHead(&w, 2, 0); /* external_aad: h'' */
  PutHead(&w, 2, payload_size);
  ampledger_hmac_sha256_update(&hmac, head, w.size);
  ampledger_hmac_sha256_update(&hmac, payload, payload_size);
  ampledger_hmac_sha256_final(&hmac, mac);
}

int ampledger_node_encode(const ampledger_node_pack* pack, const uint8_t* key, size_t key_size,
                          int alg, uint8_t* out, size_t capacity, size_t* size) {
  Writer measure = {NULL, 0, 0};
  Writer w;
  size_t payload_size, payload_at;
  uint8_t protected_bytes[3];
  uint8_t mac[AMPLEDGER_SHA256_SIZE];
  const int checked = CheckPack(pack);
  if (checked != AMPLEDGER_NODE_OK) return checked;
  if (key == NULL || key_size == 0) return AMPLEDGER_NODE_E_ARGUMENT;
  if (alg != AMPLEDGER_NODE_HMAC_256_64 && alg != AMPLEDGER_NODE_HMAC_256_256) {
    return AMPLEDGER_NODE_E_ARGUMENT;
  }
  PutSenml(&measure, pack);
  payload_size = measure.size;
  protected_bytes[0] = 0xa1; /* {1: alg} */
  protected_bytes[1] = COSE_ALG;
  protected_bytes[2] = (uint8_t)alg;

  /* Measure the whole datagram first: the payload must be complete in `out` before its MAC
   * can be computed, and nothing is written unless everything fits. */
  w.out = NULL;
  w.capacity = 0;
  w.size = 0;
  PutHead(&w, 6, COSE_MAC0_TAG);
  PutHead(&w, 4, 4);
  PutHead(&w, 2, sizeof protected_bytes);
  PutBytes(&w, protected_bytes, sizeof protected_bytes);
  PutHead(&w, 5, 1);
  PutInt(&w, COSE_KID);
  PutHead(&w, 2, strlen(pack->node));
  PutBytes(&w, pack->node, strlen(pack->node));
  PutHead(&w, 2, payload_size);
  payload_at = w.size;
  w.size += payload_size;
  PutHead(&w, 2, TagLength(alg));
  w.size += TagLength(alg);
  if (out == NULL || w.size > capacity) return AMPLEDGER_NODE_E_BUFFER;

  w.out = out;
  w.capacity = capacity;
  w.size = 0;
  PutHead(&w, 6, COSE_MAC0_TAG);
  PutHead(&w, 4, 4);
  PutHead(&w, 2, sizeof protected_bytes);
  PutBytes(&w, protected_bytes, sizeof protected_bytes);
  PutHead(&w, 5, 1);
  PutInt(&w, COSE_KID);
  PutHead(&w, 2, strlen(pack->node));
  PutBytes(&w, pack->node, strlen(pack->node));
  PutHead(&w, 2, payload_size);
  PutSenml(&w, pack);
  MacStructureHmac(key, key_size, protected_bytes, sizeof protected_bytes, out + payload_at,
                   payload_size, mac);
  PutHead(&w, 2, TagLength(alg));
  PutBytes(&w, mac, TagLength(alg));
  memset(mac, 0, sizeof mac);
  *size = w.size;
  return AMPLEDGER_NODE_OK;
}

/* ------------------------------------------------------------------------------------------
 * Reading the acknowledgement. A Reader never reads past `size`; any error is sticky. */

typedef struct {
  const uint8_t* data;
  size_t size;
  size_t at;
  int failed;
} Reader;

/* Reads an initial byte and its argument; indefinite lengths and reserved values fail. */
static int ReadHead(Reader* r, int* major, uint64_t* argument) {
  uint8_t initial;
  int extra, info;
  if (r->failed || r->at >= r->size) return r->failed = 1, 0;
  initial = r->data[r->at++];
  *major = initial >> 5;
  info = initial & 0x1f;
  if (info < 24) {
    *argument = (uint64_t)info;
    return 1;
  }
  if (info > 27) return r->failed = 1, 0;
  extra = 1 << (info - 24);
  if (r->size - r->at < (size_t)extra) return r->failed = 1, 0;
  *argument = 0;
  while (extra-- > 0) *argument = (*argument << 8) | r->data[r->at++];
  return 1;
}

static int Expect(Reader* r, int major, uint64_t* argument) {
  int got;
  if (!ReadHead(r, &got, argument) || got != major) return r->failed = 1, 0;
  return 1;
}

/* A byte or text string: points *bytes into the datagram. */
static int ReadString(Reader* r, int major, const uint8_t** bytes, size_t* size) {
  uint64_t length;
  if (!Expect(r, major, &length)) return 0;
  if (length > r->size - r->at) return r->failed = 1, 0;
  *bytes = r->data + r->at;
  *size = (size_t)length;
  r->at += (size_t)length;
  return 1;
}

/* An integer label (major type 0 or 1) as a signed value. */
static int ReadLabel(Reader* r, int64_t* label) {
  int major;
  uint64_t argument;
  if (!ReadHead(r, &major, &argument) || (major != 0 && major != 1) || argument > 0xffff) {
    return r->failed = 1, 0;
  }
  *label = major == 0 ? (int64_t)argument : -1 - (int64_t)argument;
  return 1;
}

/* True if first + second (two strings joined) is node + "/" + suffix. */
static int NameIs(const uint8_t* first, size_t first_size, const uint8_t* second,
                  size_t second_size, const char* node, const char* suffix) {
  const size_t node_size = strlen(node), suffix_size = strlen(suffix);
  size_t i;
  if (first_size + second_size != node_size + 1 + suffix_size) return 0;
  for (i = 0; i < first_size + second_size; ++i) {
    const uint8_t got = i < first_size ? first[i] : second[i - first_size];
    const char want = i < node_size ? node[i] : i == node_size ? '/' : suffix[i - node_size - 1];
    if (got != (uint8_t)want) return 0;
  }
  return 1;
}

/* Reads the ack SenML pack: [{-2: bn, 0: "ack_boot", 2: boot}, {0: "ack_seq", 2: seq}]
 * (base name carried forward as RFC 8428 section 4.1 says). */
static int ReadAckPayload(const uint8_t* payload, size_t payload_size, const char* node,
                          uint32_t* boot, uint32_t* seq) {
  static const char* const kNames[2] = {"ack_boot", "ack_seq"};
  Reader r = {payload, payload_size, 0, 0};
  const uint8_t* base_name = NULL;
  size_t base_name_size = 0;
  uint64_t count, values[2];
  int record, mine = 1;
  if (!Expect(&r, 4, &count) || count != 2) return AMPLEDGER_NODE_E_MALFORMED;
  for (record = 0; record < 2; ++record) {
    const uint8_t* name = NULL;
    size_t name_size = 0;
    int has_value = 0, has_base_name = 0;
    uint64_t fields, f;
    if (!Expect(&r, 5, &fields) || fields > 3) return AMPLEDGER_NODE_E_MALFORMED;
    for (f = 0; f < fields; ++f) {
      int64_t label;
      if (!ReadLabel(&r, &label)) return AMPLEDGER_NODE_E_MALFORMED;
      if (label == LABEL_BASE_NAME && !has_base_name) {
        has_base_name = 1;
        if (!ReadString(&r, 3, &base_name, &base_name_size)) return AMPLEDGER_NODE_E_MALFORMED;
      } else if (label == LABEL_NAME && name == NULL) {
        if (!ReadString(&r, 3, &name, &name_size)) return AMPLEDGER_NODE_E_MALFORMED;
      } else if (label == LABEL_VALUE && !has_value) {
        has_value = 1;
        if (!Expect(&r, 0, &values[record]) || values[record] > 0xffffffffu) {
          return AMPLEDGER_NODE_E_MALFORMED;
        }
      } else {
        return AMPLEDGER_NODE_E_MALFORMED;
      }
    }
    if (name == NULL || !has_value) return AMPLEDGER_NODE_E_MALFORMED;
    if (!NameIs(base_name, base_name_size, name, name_size, node, kNames[record])) mine = 0;
  }
  if (r.at != r.size) return AMPLEDGER_NODE_E_MALFORMED;
  if (!mine) return AMPLEDGER_NODE_E_NOT_MINE;
  *boot = (uint32_t)values[0];
  *seq = (uint32_t)values[1];
  return AMPLEDGER_NODE_OK;
}

int ampledger_node_read_ack(const uint8_t* datagram, size_t datagram_size, const char* node,
                            const uint8_t* key, size_t key_size, uint32_t* boot, uint32_t* seq) {
  Reader r = {datagram, datagram_size, 0, 0};
  Reader header;
  const uint8_t *protected_bytes, *kid = NULL, *payload, *tag;
  size_t protected_size, kid_size = 0, payload_size, tag_size, i;
  uint64_t argument, entries, e;
  int64_t alg = 0;
  uint8_t mac[AMPLEDGER_SHA256_SIZE];
  uint8_t difference = 0;
  if (datagram == NULL || node == NULL || key == NULL || key_size == 0) {
    return AMPLEDGER_NODE_E_ARGUMENT;
  }
  if (datagram_size > 0 && datagram[0] == 0xd1) r.at = 1; /* tag 17 is optional */
  if (!Expect(&r, 4, &argument) || argument != 4) return AMPLEDGER_NODE_E_MALFORMED;
  /* protected: bstr .cbor {1: alg} */
  if (!ReadString(&r, 2, &protected_bytes, &protected_size)) return AMPLEDGER_NODE_E_MALFORMED;
  header.data = protected_bytes;
  header.size = protected_size;
  header.at = 0;
  header.failed = 0;
  if (!Expect(&header, 5, &entries) || entries != 1 || !ReadLabel(&header, &alg) ||
      alg != COSE_ALG || !ReadLabel(&header, &alg) || header.at != header.size) {
    return AMPLEDGER_NODE_E_MALFORMED;
  }
  if (alg != AMPLEDGER_NODE_HMAC_256_64 && alg != AMPLEDGER_NODE_HMAC_256_256) {
    return AMPLEDGER_NODE_E_MALFORMED;
  }
  /* unprotected: {} or {4: kid} */
  if (!Expect(&r, 5, &entries) || entries > 1) return AMPLEDGER_NODE_E_MALFORMED;
  for (e = 0; e < entries; ++e) {
    int64_t label;
    if (!ReadLabel(&r, &label) || label != COSE_KID || !ReadString(&r, 2, &kid, &kid_size)) {
      return AMPLEDGER_NODE_E_MALFORMED;
    }
  }
  if (!ReadString(&r, 2, &payload, &payload_size) || !ReadString(&r, 2, &tag, &tag_size) ||
      r.at != r.size || tag_size != TagLength((int)alg)) {
    return AMPLEDGER_NODE_E_MALFORMED;
  }
  MacStructureHmac(key, key_size, protected_bytes, protected_size, payload, payload_size, mac);
  for (i = 0; i < tag_size; ++i) difference |= (uint8_t)(mac[i] ^ tag[i]); /* constant time */
  memset(mac, 0, sizeof mac);
  if (difference != 0) return AMPLEDGER_NODE_E_BAD_TAG;
  if (kid != NULL && (kid_size != strlen(node) || memcmp(kid, node, kid_size) != 0)) {
    return AMPLEDGER_NODE_E_NOT_MINE;
  }
  return ReadAckPayload(payload, payload_size, node, boot, seq);
}
