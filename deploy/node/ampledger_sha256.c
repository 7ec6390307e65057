/* deploy/node/ampledger_sha256.c */
#include "ampledger_sha256.h"

#include <string.h>

/* FIPS 180-4 section 4.2.2: the first 32 bits of the fractional parts of the cube roots of
 * the first 64 primes. */
static const uint32_t kRound[64] = {
    0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1, 0x923f82a4,
    0xab1c5ed5, 0xd807aa98, 0x12835b01, 0x243185be, 0x550c7dc3, 0x72be5d74, 0x80deb1fe,
    0x9bdc06a7, 0xc19bf174, 0xe49b69c1, 0xefbe4786, 0x0fc19dc6, 0x240ca1cc, 0x2de92c6f,
    0x4a7484aa, 0x5cb0a9dc, 0x76f988da, 0x983e5152, 0xa831c66d, 0xb00327c8, 0xbf597fc7,
    0xc6e00bf3, 0xd5a79147, 0x06ca6351, 0x14292967, 0x27b70a85, 0x2e1b2138, 0x4d2c6dfc,
    0x53380d13, 0x650a7354, 0x766a0abb, 0x81c2c92e, 0x92722c85, 0xa2bfe8a1, 0xa81a664b,
    0xc24b8b70, 0xc76c51a3, 0xd192e819, 0xd6990624, 0xf40e3585, 0x106aa070, 0x19a4c116,
    0x1e376c08, 0x2748774c, 0x34b0bcb5, 0x391c0cb3, 0x4ed8aa4a, 0x5b9cca4f, 0x682e6ff3,
    0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208, 0x90befffa, 0xa4506ceb, 0xbef9a3f7,
    0xc67178f2};

static uint32_t RotateRight(uint32_t x, int n) { return (x >> n) | (x << (32 - n)); }

/* FIPS 180-4 section 6.2.2, one 512-bit block. */
static void Compress(uint32_t state[8], const uint8_t block[64]) {
  uint32_t w[64];
  uint32_t a, b, c, d, e, f, g, h;
  int t;
  for (t = 0; t < 16; ++t) {
    w[t] = ((uint32_t)block[4 * t] << 24) | ((uint32_t)block[4 * t + 1] << 16) |
           ((uint32_t)block[4 * t + 2] << 8) | (uint32_t)block[4 * t + 3];
  }
  for (t = 16; t < 64; ++t) {
    const uint32_t s0 = RotateRight(w[t - 15], 7) ^ RotateRight(w[t - 15], 18) ^ (w[t - 15] >> 3);
    const uint32_t s1 = RotateRight(w[t - 2], 17) ^ RotateRight(w[t - 2], 19) ^ (w[t - 2] >> 10);
    w[t] = s1 + w[t - 7] + s0 + w[t - 16];
  }
  a = state[0]; b = state[1]; c = state[2]; d = state[3];
  e = state[4]; f = state[5]; g = state[6]; h = state[7];
  for (t = 0; t < 64; ++t) {
    const uint32_t sum1 = RotateRight(e, 6) ^ RotateRight(e, 11) ^ RotateRight(e, 25);
    const uint32_t choose = (e & f) ^ (~e & g);
    const uint32_t t1 = h + sum1 + choose + kRound[t] + w[t];
    const uint32_t sum0 = RotateRight(a, 2) ^ RotateRight(a, 13) ^ RotateRight(a, 22);
    const uint32_t majority = (a & b) ^ (a & c) ^ (b & c);
    const uint32_t t2 = sum0 + majority;
    h = g; g = f; f = e; e = d + t1;
    d = c; c = b; b = a; a = t1 + t2;
  }
  state[0] += a; state[1] += b; state[2] += c; state[3] += d;
  state[4] += e; state[5] += f; state[6] += g; state[7] += h;
}

void ampledger_sha256_init(ampledger_sha256* ctx) {
  /* FIPS 180-4 section 5.3.3: initial hash value. */
  static const uint32_t kInitial[8] = {0x6a09e667, 0xbb67ae85, 0x3c6ef372, 0xa54ff53a,
                                       0x510e527f, 0x9b05688c, 0x1f83d9ab, 0x5be0cd19};
  memcpy(ctx->state, kInitial, sizeof kInitial);
  ctx->length = 0;
  ctx->block_used = 0;
}

void ampledger_sha256_update(ampledger_sha256* ctx, const void* data, size_t size) {
  const uint8_t* bytes = (const uint8_t*)data;
  ctx->length += size;
  while (size > 0) {
    size_t take = AMPLEDGER_SHA256_BLOCK - ctx->block_used;
    if (take > size) take = size;
    memcpy(ctx->block + ctx->block_used, bytes, take);
    ctx->block_used += take;
    bytes += take;
    size -= take;
    if (ctx->block_used == AMPLEDGER_SHA256_BLOCK) {
      Compress(ctx->state, ctx->block);
      ctx->block_used = 0;
    }
  }
}

void ampledger_sha256_final(ampledger_sha256* ctx, uint8_t digest[AMPLEDGER_SHA256_SIZE]) {
  /* FIPS 180-4 section 5.1.1: a 1 bit, zeros, then the length in bits as 64 bits. */
  const uint64_t bits = ctx->length * 8;
  static const uint8_t kOne = 0x80;
  static const uint8_t kZero = 0;
  uint8_t length[8];
  int i;
  for (i = 0; i < 8; ++i) length[i] = (uint8_t)(bits >> (56 - 8 * i));
  ampledger_sha256_update(ctx, &kOne, 1);
  while (ctx->block_used != 56) ampledger_sha256_update(ctx, &kZero, 1);
  ampledger_sha256_update(ctx, length, 8);
  for (i = 0; i < 8; ++i) {
    digest[4 * i] = (uint8_t)(ctx->state[i] >> 24);
    digest[4 * i + 1] = (uint8_t)(ctx->state[i] >> 16);
    digest[4 * i + 2] = (uint8_t)(ctx->state[i] >> 8);
    digest[4 * i + 3] = (uint8_t)ctx->state[i];
  }
}

void ampledger_hmac_sha256_init(ampledger_hmac_sha256* ctx, const uint8_t* key, size_t key_size) {
  uint8_t block_key[AMPLEDGER_SHA256_BLOCK];
  uint8_t inner_key[AMPLEDGER_SHA256_BLOCK];
  size_t i;
  memset(block_key, 0, sizeof block_key);
  if (key_size > AMPLEDGER_SHA256_BLOCK) {
    ampledger_sha256_init(&ctx->inner);
    ampledger_sha256_update(&ctx->inner, key, key_size);
    ampledger_sha256_final(&ctx->inner, block_key);
  } else if (key_size > 0) {
    memcpy(block_key, key, key_size);
  }
  /* RFC 2104 section 2: ipad = 0x36, opad = 0x5c repeated. */
  for (i = 0; i < AMPLEDGER_SHA256_BLOCK; ++i) {
    inner_key[i] = (uint8_t)(block_key[i] ^ 0x36);
    ctx->outer_key[i] = (uint8_t)(block_key[i] ^ 0x5c);
  }
  ampledger_sha256_init(&ctx->inner);
  ampledger_sha256_update(&ctx->inner, inner_key, sizeof inner_key);
  memset(block_key, 0, sizeof block_key);
  memset(inner_key, 0, sizeof inner_key);
}

void ampledger_hmac_sha256_update(ampledger_hmac_sha256* ctx, const void* data, size_t size) {
  ampledger_sha256_update(&ctx->inner, data, size);
}

void ampledger_hmac_sha256_final(ampledger_hmac_sha256* ctx, uint8_t mac[AMPLEDGER_SHA256_SIZE]) {
  uint8_t inner_digest[AMPLEDGER_SHA256_SIZE];
  ampledger_sha256 outer;
  ampledger_sha256_final(&ctx->inner, inner_digest);
  ampledger_sha256_init(&outer);
  ampledger_sha256_update(&outer, ctx->outer_key, sizeof ctx->outer_key);
  ampledger_sha256_update(&outer, inner_digest, sizeof inner_digest);
  ampledger_sha256_final(&outer, mac);
  memset(ctx, 0, sizeof *ctx);
  memset(inner_digest, 0, sizeof inner_digest);
}
