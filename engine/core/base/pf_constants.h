/* pf_constants.h - the physical constants the core itself needs.
 *
 * Source: CODATA 2018 recommended values (exact in the 2019 SI where noted).
 * The full table available to scripts lives with the units module. */
#ifndef PF_CONSTANTS_H
#define PF_CONSTANTS_H

/* Planck constant h, exact in the 2019 SI (CODATA 2018). */
#define PF_PLANCK 6.62607015e-34
/* Reduced Planck constant hbar = h / 2 pi (CODATA 2018 lists 1.054571817...e-34). */
#define PF_HBAR (PF_PLANCK / (2.0 * 3.14159265358979323846))
#define PF_PI 3.14159265358979323846
#define PF_TWO_PI 6.28318530717958647692

#endif
