/* pf_cubehelix.c - Green's cubehelix colour map from its formula. */
#include <math.h>
#include "pf_constants.h"
#include "pf_cubehelix.h"

/* Saturation 0.8, not the 1.2 of Green's example: at 1.2 the helix clips in the
 * pinks and the 8-bit table steps back in CIE L* (tests/unit/io/test_colormap.c). */
const pf_cubehelix_params pf_cubehelix_default = {0.5, -1.5, 0.8, 1.0};

void pf_cubehelix(const pf_cubehelix_params *p, double lambda, double rgb[3])
{
    if (!(lambda >= 0)) lambda = 0;
    if (lambda > 1) lambda = 1;
    /* Green 2011 eq. 2: a helix around the grey diagonal whose perturbation
     * has zero luminance for the 0.30/0.59/0.11 weights. */
    double lg = pow(lambda, p->gamma);
    double amp = p->hue * lg * (1 - lg) / 2;
    double phi = 2 * PF_PI * (p->start / 3 + p->rotations * lambda);
    double c = cos(phi), s = sin(phi);
    rgb[0] = lg + amp * (-0.14861 * c + 1.78277 * s);
    rgb[1] = lg + amp * (-0.29227 * c - 0.90649 * s);
    rgb[2] = lg + amp * (1.97294 * c);
    for (int i = 0; i < 3; i++) rgb[i] = rgb[i] < 0 ? 0 : (rgb[i] > 1 ? 1 : rgb[i]);
}
