/* deploy/node/ampledger_node.h
 * The node side of the ampledger protocol (daemon/PROTOCOL.md) for firmware: writes one
 * interval's readings as a SenML CBOR pack wrapped in a COSE_Mac0 under the node's key, and
 * reads the daemon's acknowledgement. Portable C99; no heap, no floating-point library calls,
 * no I/O: the caller owns every buffer and sends/receives the datagrams itself. Stack use is
 * about 0.5 KB. The functions keep no state; separate calls may run on separate threads.
 *
 * A node's loop (PROTOCOL.md sections 4 and 9):
 *   at start:        boot = stored boot + 1 (store it), seq = 0
 *   every interval:  fill an ampledger_node_pack, ampledger_node_encode(), keep the bytes
 *                    with (boot, seq), send them over UDP to the daemon (port 4717), seq += 1
 *   on a datagram:   ampledger_node_read_ack(); on success drop the kept pack (boot, seq)
 *   on a timeout:    resend kept packs oldest first, byte-identical */
#ifndef AMPLEDGER_NODE_H
#define AMPLEDGER_NODE_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* Return codes. */
#define AMPLEDGER_NODE_OK 0
#define AMPLEDGER_NODE_E_BUFFER (-1)    /* the output buffer is too small; nothing usable in it */
#define AMPLEDGER_NODE_E_ARGUMENT (-2)  /* a bad id, value, key or algorithm in the input */
#define AMPLEDGER_NODE_E_MALFORMED (-3) /* not an acknowledgement in the expected form */
#define AMPLEDGER_NODE_E_BAD_TAG (-4)   /* the acknowledgement's tag does not verify */
#define AMPLEDGER_NODE_E_NOT_MINE (-5)  /* a valid acknowledgement for another node id */

/* COSE algorithms (RFC 9053 section 3.1). */
#define AMPLEDGER_NODE_HMAC_256_64 4   /* 8-byte tag: recommended for nodes */
#define AMPLEDGER_NODE_HMAC_256_256 5  /* 32-byte tag */

#define AMPLEDGER_NODE_KEY_SIZE 32
#define AMPLEDGER_NODE_MAX_DATAGRAM 1400 /* the daemon's default [ingest] max_datagram_bytes */

/* Which fields of an ampledger_node_channel are present (a bit set in `present`). */
#define AMPLEDGER_NODE_AMPS (1u << 0)            /* <channel>/i, A */
#define AMPLEDGER_NODE_VOLTS (1u << 1)           /* <channel>/v, V */
#define AMPLEDGER_NODE_REAL_WATTS (1u << 2)      /* <channel>/p, W */
#define AMPLEDGER_NODE_REAL_REGISTER (1u << 3)   /* <channel>/p sum, J since boot */
#define AMPLEDGER_NODE_APPARENT_VA (1u << 4)     /* <channel>/s, VA */
#define AMPLEDGER_NODE_APPARENT_REGISTER (1u << 5) /* <channel>/s sum, VA s since boot */
#define AMPLEDGER_NODE_POWER_FACTOR (1u << 6)    /* <channel>/pf, ratio -1..1 */
#define AMPLEDGER_NODE_FREQUENCY (1u << 7)       /* <channel>/f, Hz */

/* One channel's values for the pack's interval, in SI units. Registers are cumulative since
 * boot and start from 0 at each boot; keep them in a double or 64-bit integer (PROTOCOL.md
 * section 3). Only the fields flagged in `present` are read. */
typedef struct {
  const char* channel; /* the channel id from the daemon's config, e.g. "ct1" */
  uint32_t present;    /* AMPLEDGER_NODE_* bits */
  double amps;
  double volts;
  double real_watts;
  double real_register_j;
  double apparent_va;
  double apparent_register_vas;
  double power_factor;
  double frequency_hz;
} ampledger_node_channel;

/* One datagram: one reporting interval of some channels (none: a heartbeat). */
typedef struct {
  const char* node;    /* the node id (the COSE kid and the base name "<node>/") */
  uint32_t boot;       /* boot counter, kept in non-volatile memory */
  uint32_t seq;        /* pack counter within the boot */
  double interval_s;   /* reporting interval: 0 < interval_s <= 86400 */
  /* End of the interval, in seconds: POSIX time (>= 268435456) from a node with a clock, or
   * relative to the moment of sending (<= 0; 0 is "now") from a node without one. 0 writes no
   * time at all. */
  double end_s;
  const ampledger_node_channel* channels;
  size_t channel_count;
} ampledger_node_pack;

/* Writes `pack` as SenML CBOR (RFC 8428 section 6) into out[0 .. capacity). On success
 * returns AMPLEDGER_NODE_OK and sets *size. Never writes at or past out + capacity;
 * AMPLEDGER_NODE_E_BUFFER if the pack does not fit, AMPLEDGER_NODE_E_ARGUMENT for an id
 * outside SenML's name characters (A-Z a-z 0-9 - : . _, starting with a letter or digit),
 * an interval out of range, a NaN or infinite value, or a negative register. */
int ampledger_node_write_senml(const ampledger_node_pack* pack, uint8_t* out, size_t capacity,
                               size_t* size);

/* Writes the datagram for `pack`: CBOR tag 17, COSE_Mac0 with protected {1: alg},
 * unprotected {4: kid = node id}, the SenML CBOR payload, and the HMAC-SHA-256 tag under
 * `key` (key_size bytes; the daemon's node keys are 32) truncated per `alg`. Same results and
 * guarantees as ampledger_node_write_senml. */
int ampledger_node_encode(const ampledger_node_pack* pack, const uint8_t* key, size_t key_size,
                          int alg, uint8_t* out, size_t capacity, size_t* size);

/* Reads an acknowledgement received from the daemon: a COSE_Mac0 (tag 17 optional, alg 4 or
 * 5 in the protected header) whose tag verifies under `key` (constant-time comparison), whose
 * kid (if present) is `node`, and whose payload is exactly the SenML records
 * "<node>/ack_boot" and "<node>/ack_seq" with unsigned integer values. On success sets *boot
 * and *seq. Errors: AMPLEDGER_NODE_E_MALFORMED, AMPLEDGER_NODE_E_BAD_TAG,
 * AMPLEDGER_NODE_E_NOT_MINE; nothing is written to *boot or *seq then. */
int ampledger_node_read_ack(const uint8_t* datagram, size_t datagram_size, const char* node,
                            const uint8_t* key, size_t key_size, uint32_t* boot, uint32_t* seq);

#ifdef __cplusplus
}
#endif

#endif /* AMPLEDGER_NODE_H */
