/* deploy/node/ampledger_sha256.h
 * SHA-256 (FIPS 180-4 section 6.2) and HMAC-SHA-256 (RFC 2104 with SHA-256, as RFC 4231
 * tests it) for nodes without a crypto library. Portable C99, no heap, no libc beyond
 * memcpy/memset. A context belongs to one caller at a time; the functions keep no global
 * state, so separate contexts may be used from separate threads or interrupts. */
#ifndef AMPLEDGER_SHA256_H
#define AMPLEDGER_SHA256_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

#define AMPLEDGER_SHA256_SIZE 32
#define AMPLEDGER_SHA256_BLOCK 64

typedef struct {
  uint32_t state[8];
  uint64_t length;                       /* bytes hashed so far */
  uint8_t block[AMPLEDGER_SHA256_BLOCK]; /* bytes not yet compressed */
  size_t block_used;
} ampledger_sha256;

void ampledger_sha256_init(ampledger_sha256* ctx);
void ampledger_sha256_update(ampledger_sha256* ctx, const void* data, size_t size);
/* Writes the 32-byte digest; the context must be initialised again before reuse. */
void ampledger_sha256_final(ampledger_sha256* ctx, uint8_t digest[AMPLEDGER_SHA256_SIZE]);

typedef struct {
  ampledger_sha256 inner;
  uint8_t outer_key[AMPLEDGER_SHA256_BLOCK]; /* K XOR opad */
} ampledger_hmac_sha256;

/* Any key length: keys longer than a block are hashed first (RFC 2104 section 2). */
void ampledger_hmac_sha256_init(ampledger_hmac_sha256* ctx, const uint8_t* key, size_t key_size);
void ampledger_hmac_sha256_update(ampledger_hmac_sha256* ctx, const void* data, size_t size);
/* Writes the 32-byte MAC and wipes the key material from the context. */
void ampledger_hmac_sha256_final(ampledger_hmac_sha256* ctx, uint8_t mac[AMPLEDGER_SHA256_SIZE]);

#ifdef __cplusplus
}
#endif

#endif /* AMPLEDGER_SHA256_H */
