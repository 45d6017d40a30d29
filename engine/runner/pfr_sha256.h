/* pfr_sha256.h - SHA-256 of a file (FIPS 180-4), used to identify the script
 * of a run: sweeps skip a point only when the script is byte-identical. */
#ifndef PFR_SHA256_H
#define PFR_SHA256_H

/* Writes 64 lowercase hex digits and a NUL into hex.  Returns 0, or -1 when
 * the file cannot be read (errno set). */
int pfr_sha256_file(const char *path, char hex[65]);
/* Same for a buffer in memory (bundled recipes). */
void pfr_sha256_buffer(const void *data, unsigned long long len, char hex[65]);

#endif
