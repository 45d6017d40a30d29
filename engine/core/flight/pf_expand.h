/* pf_expand.h - mean-field (Gross-Pitaevskii) expansion of a released cloud
 * on a grid that grows with it: the Castin-Dum scaling transformation.
 *
 * Per axis j the lab coordinate (relative to the grid's origin o) is
 * x_j - o_j = lambda_j(t) (xi_j - o_j), and
 *   psi(x, t) = Lambda^(-1/2) exp(i sum_j m lambda_j' (x_j - o_j)^2 / (2 hbar lambda_j)) chi(xi, t),
 * Lambda = prod_j lambda_j.  For free flight with mean field g |psi|^2,
 * chi obeys (Y. Castin and R. Dum, Phys. Rev. Lett. 77, 5315 (1996);
 * Yu. Kagan, E. L. Surkov and G. V. Shlyapnikov, Phys. Rev. A 54, R1753 (1996))
 *   i hbar d chi/dt = sum_j [ -hbar^2/(2 m lambda_j^2) d^2/dxi_j^2
 *                             + m lambda_j lambda_j'' (xi_j - o_j)^2 / 2 ] chi
 *                     + (g / Lambda) |chi|^2 chi.
 * This is exact for any smooth lambda_j(t) with lambda_j(0) = 1.  The engine
 * picks lambda so that chi changes slowly, which lets steps grow as the cloud
 * dilutes:
 *   castin-dum: lambda_j'' = omega_j^2 / (lambda_j Lambda), the Thomas-Fermi
 *               scaling law, under which a Thomas-Fermi cloud only changes
 *               its global phase;
 *   ballistic:  lambda_j'' = omega_j^2 / lambda_j^3, the width law of a freely
 *               expanding harmonic ground state (no interaction);
 *   fixed:      lambda_j = 1, plain split-step evolution on the wave's grid
 *               (the reference the others are checked against).
 * omega_j are the angular frequencies of the trap the cloud was released
 * from.  When none are given they are taken from the state itself: the
 * virial relation d^2<x_j^2>/dt^2 = (2 <p_j^2>_c / m + 2 E_int) / m at the
 * release sets omega_j^2 = (<p_j^2>_c / m + E_int) / (m <x_j^2>_c), which is
 * the trap frequency for a Thomas-Fermi or harmonic ground state.
 *
 * Time steps are Strang splittings of the chi equation (kinetic factor exact
 * per axis with the integral of 1/lambda_j^2 over the step, potential half
 * steps at the step ends), or their fourth-order Yoshida composition; the
 * lambda equations are integrated alongside with classical Runge-Kutta
 * sub-steps.  With no step count given, each step is sized so the spread of
 * the chi-frame potential over the occupied points turns the phase by at most
 * PF_EXPAND_PHASE rad, at most doubling from one step to the next.
 *
 * Handover: once the interaction energy has fallen below the fraction
 * `handover` of the cloud's energy (and the scaling law has become nearly
 * linear over the rest of the flight, PF_EXPAND_LINEAR_GAP), the mean field is dropped and the rest of
 * the time is one exact free step in the same frame (lambda then grows
 * linearly, and the kinetic integral of 1/lambda^2 is closed-form).  The
 * energy still in interaction at that moment bounds what the asymptotic
 * expansion speed misses: a relative error of at most about handover / 2.
 *
 * Uniform acceleration (gravity) goes into the wave's moving frame
 * (pf_frame.h): the Avron-Herbst factorisation holds for the
 * Gross-Pitaevskii equation too, because the mean field depends on |psi|^2
 * only, so the grid state expands as in free flight and the frame's offsets
 * and phase advance in closed form (pf_frame_advance).  A frame that already
 * moves (a launched cloud) keeps moving the same way.
 *
 * The result is written back on the lab grid: same point counts and origin,
 * spacings lambda_j dxi_j, the chirp and Lambda^(-1/2) applied (per-axis
 * tables).  On that coarse grid the chirp may exceed the Nyquist wave number:
 * densities, moments and pictures are exact samples, but a transform of the
 * result aliases.  A later expand of the same wave with no step in between
 * undoes the map exactly and continues in the chi frame. */
#ifndef PF_EXPAND_H
#define PF_EXPAND_H

#include "pf_wave.h"

typedef enum pf_expand_scaling {
    PF_SCALING_CASTIN_DUM = 0,
    PF_SCALING_BALLISTIC = 1,
    PF_SCALING_FIXED = 2
} pf_expand_scaling;

/* "castin-dum", "ballistic", "fixed". */
const char *pf_expand_scaling_name(pf_expand_scaling s);

/* Target potential phase per adaptive step (rad), and the largest step as a
 * fraction of the frame's own time scale 1 / max_j (|lambda_j'| / lambda_j + sqrt(|lambda_j''| / lambda_j)). */
#define PF_EXPAND_PHASE 0.1
#define PF_EXPAND_FRAME_STEP 0.05
/* The handover also waits until the scaling law is close to linear over the
 * rest of the flight: lambda_j + lambda_j' rest within this fraction of the
 * law's lambda_j at the end (a cloud released at rest must gather speed in
 * its frame first, or the free step would leave it on an unexpanded grid). */
#define PF_EXPAND_LINEAR_GAP 0.005

typedef struct pf_expand_spec {
    double g;                  /* mean-field coefficient (J m^d) for psi normalised to 1, as evolve takes it */
    double omega[PF_MAX_DIM];  /* release trap angular frequencies (rad/s); all 0: from the state */
    pf_expand_scaling scaling;
    size_t steps;              /* equal steps over the interacting part; 0: adaptive */
    int order;                 /* 2 (Strang) or 4 (Yoshida) */
    double handover;           /* interaction-energy fraction for the free handover, in [0, 1); 0: never */
    double acceleration[PF_MAX_DIM]; /* uniform acceleration (m/s^2) carried by the wave's frame; 0: none */
} pf_expand_spec;

typedef struct pf_expand_info {
    size_t steps;                /* split steps taken with the mean field */
    int handed_over;             /* 1 when the free step took over */
    double handover_time;        /* clock time of the handover (s); NAN when none */
    double interaction_fraction; /* E_int / E where the mean field stopped (end or handover) */
    double energy;               /* E = E_kin + E_int of the cloud at the release (J), conserved */
    double omega[PF_MAX_DIM];    /* omega_j used by the scaling law (rad/s) */
    double lambda[PF_MAX_DIM];   /* lambda_j at the end */
    double rate[PF_MAX_DIM];     /* d lambda_j / dt at the end (1/s) */
    int continued;               /* 1 when this call continued a previous expand's frame */
} pf_expand_info;

/* Expands w for t >= 0 seconds of free flight with mean field g (see above).
 * Leaves the wave in position representation on its lab grid (a new grid
 * object with the spacings lambda_j dxi_j), advances the clock and records
 * one "expand" step (method "castin-dum", "ballistic" or "fixed", with "+free"
 * after a handover).  Fails (state unchanged) on a negative or non-finite t,
 * a bad order, scaling or handover, negative or non-finite omega, omega
 * needed from a state for which the virial estimate is not positive, or a
 * grid that would outgrow the engine's range.  A stop request ends it with
 * PF_ESTOP (state then undefined, as for evolve).  info may be NULL. */
pf_status pf_wave_expand(pf_wave *w, double t, const pf_expand_spec *spec, pf_expand_info *info);

#endif
