/* pf_hermite.c - Hermite functions by the normalised three-term recurrence,
 * with running rescaling so that xi^n growth never overflows. */
#include <math.h>
#include "pf_hermite.h"

/* pi^(-1/4) */
#define PF_PI_M_QUARTER 0.75112554446494248286

#define RESCALE_ABOVE 1e150
#define RESCALE_BY 1e-150
#define LOG_RESCALE (-345.38776394910684) /* log(1e-150) */

/* Runs the recurrence to nmax.  Values are p_k * exp(lscale - xi^2/2); when
 * out is given, every order is finished and stored. */
static double run(int nmax, double xi, double *out)
{
    double lscale = 0.0;
    double g = -0.5 * xi * xi;
    double prev = 0.0, cur = PF_PI_M_QUARTER;
    if (out) out[0] = cur * exp(g);
    for (int k = 0; k < nmax; k++) {
        double next = sqrt(2.0 / (k + 1)) * xi * cur - sqrt((double)k / (k + 1)) * prev;
        prev = cur;
        cur = next;
        if (fabs(cur) > RESCALE_ABOVE) {
            /* Scale both terms of the recurrence; the ratio is what matters. */
            cur *= RESCALE_BY;
            prev *= RESCALE_BY;
            lscale -= LOG_RESCALE;
        }
        if (out) out[k + 1] = cur == 0.0 ? 0.0 : copysign(exp(log(fabs(cur)) + lscale + g), cur);
    }
    if (cur == 0.0) return 0.0;
    return copysign(exp(log(fabs(cur)) + lscale + g), cur);
}

double pf_hermite_function(int n, double xi)
{
    if (n < 0) return 0.0;
    return run(n, xi, 0);
}

void pf_hermite_functions(int nmax, double xi, double *out)
{
    if (nmax < 0) return;
    run(nmax, xi, out);
}
