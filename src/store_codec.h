/* store_codec.h (internal to the store): the compact, lossless encoding of a series of doubles
 * kept in the store's BLOBs (sample channels, curves). Pure: arrays in, bytes out.
 *
 * A series whose every value v_i, for one scale s of 1, 10, 100, 1000, 60, 600, 6000, 60000,
 * 10^4, 10^5, 10^6 and the caller's weights w_i (1 without), is to the last bit the double
 * q_i / (s·w_i) of an integer count q_i (|q_i| < 2^51) is kept as those counts: the differences of
 * consecutive counts as zigzag LEB128 varints, compressed by zstd (Facebook's Zstandard, RFC 8878).
 * A 1-Hz time channel thereby becomes a run of ones with its gaps as the exceptions, which zstd
 * stores in a few bytes. Any other series is kept as its IEEE-754 binary64 bytes, regrouped by byte
 * position (all first bytes, then all second bytes, ...) and compressed by zstd.
 *
 * Layout: byte 0 'Q' (counts) or 'F' (doubles), byte 1 the scale's index (0 for 'F'), then one
 * zstd frame holding the payload with its size. Decoding reverses it exactly. */
#ifndef CPDOMAIN_STORE_CODEC_H
#define CPDOMAIN_STORE_CODEC_H

#include <stddef.h>

/* A codec workspace: zstd's contexts and the scratch of the payload, reused from call to call
 * (a fresh zstd context per call would cost more than compressing a channel). NULL when out of
 * memory; the caller frees it with cpd_codec_free (NULL accepted). */
typedef struct cpd_codec cpd_codec;
cpd_codec *cpd_codec_alloc(void);
void cpd_codec_free(cpd_codec *z);

/* The most bytes cpd_codec_encode writes for n values. */
size_t cpd_codec_bound(size_t n);

/* Encodes n values (weight: n positive whole numbers or NULL) into out (cap bytes, at least
 * cpd_codec_bound(n)); *len receives the bytes written. Returns CPD_OK, CPD_EUSAGE when cap is too
 * small or n is 0, CPD_ENOMEM. */
int cpd_codec_encode(cpd_codec *z, const double *v, const double *weight, size_t n, unsigned char *out, size_t cap,
                     size_t *len);

/* Decodes len bytes into exactly n values (with the weights used to encode them, or NULL).
 * Returns CPD_OK, CPD_EDATA when the bytes are not such an encoding of n values, CPD_ENOMEM. */
int cpd_codec_decode(cpd_codec *z, const void *in, size_t len, const double *weight, size_t n, double *out);

#endif
