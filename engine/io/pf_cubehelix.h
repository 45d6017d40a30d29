/* pf_cubehelix.h - the cubehelix colour scheme of D. A. Green (2011, Bull.
 * Astr. Soc. India 39, 289), computed from its published formula.  Perceived
 * brightness rises monotonically, so pictures stay readable in grey scale. */
#ifndef PF_CUBEHELIX_H
#define PF_CUBEHELIX_H

/* Parameters of the scheme (Green 2011, eq. 2 and the text around it). */
typedef struct pf_cubehelix_params {
    double start;      /* starting hue, 0..3 (0.5: purple) */
    double rotations;  /* colour rotations from black to white */
    double hue;        /* saturation amplitude */
    double gamma;      /* intensity exponent */
} pf_cubehelix_params;

/* psiflight's map colours: start 0.5, rotations -1.5, hue 0.8, gamma 1 (lightness
 * rises at every one of the 256 table entries, tests/unit/io/test_colormap.c). */
extern const pf_cubehelix_params pf_cubehelix_default;

/* Colour at fraction lambda in [0, 1] (clamped), components in [0, 1]
 * (clipped, as Green's reference implementation does). */
void pf_cubehelix(const pf_cubehelix_params *p, double lambda, double rgb[3]);

#endif
