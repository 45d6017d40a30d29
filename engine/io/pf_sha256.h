/* pf_sha256.h - SHA-256 message digests (FIPS 180-4), for run manifests.
 *
 * Used to name exactly which script and which output files belong to a run;
 * checked against sha256sum and Python's hashlib in tests/ref/test_sha256.sh. */
#ifndef PF_SHA256_H
#define PF_SHA256_H

#include <stddef.h>
#include <stdint.h>

typedef struct pf_sha256 {
    uint32_t h[8];
    uint64_t length;      /* message bytes absorbed so far */
    unsigned char block[64];
    size_t fill;          /* bytes waiting in block */
} pf_sha256;

/* Starts a digest with the FIPS 180-4 initial hash value. */
void pf_sha256_init(pf_sha256 *s);
/* Absorbs n bytes (n may be 0; data may be NULL when n is 0). */
void pf_sha256_update(pf_sha256 *s, const void *data, size_t n);
/* Pads, finishes and writes the 32-byte digest; s must be re-initialised
 * before further use. */
void pf_sha256_final(pf_sha256 *s, unsigned char digest[32]);
/* Lower-case hex form of a digest into out (65 bytes with the terminator). */
void pf_sha256_hex(const unsigned char digest[32], char out[65]);
/* Digest of a whole buffer, as hex. */
void pf_sha256_buffer(const void *data, size_t n, char out[65]);
/* Digest of a file's contents as hex; returns 0 on success, -1 when the file
 * cannot be opened or read (errno tells why). */
int pf_sha256_file(const char *path, char out[65]);

#endif
