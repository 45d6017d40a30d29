/* pf_plans.h - the plans a context has made, for provenance.
 *
 * A measured FFTW plan can differ between machines and between a run with
 * and without wisdom, and the last bits of every result follow the plan.  So
 * a run records which plans it used: one note per planning event (a grid's
 * forward/backward pair, or the fused flight's set), holding a label that
 * names the shape and thread count and a digest of FFTW's own description of
 * the plans (fftw_sprint_plan).  Two runs with equal notes ran the same
 * transforms.  Equal notes are kept once; the order is the order of first
 * planning, which a script fixes. */
#ifndef PF_PLANS_H
#define PF_PLANS_H

#include <stddef.h>
#include "pf_context.h"

/* Number of distinct plan notes the context holds. */
size_t pf_context_plan_count(const pf_context *ctx);
/* Label of note i < count: "grid 1024x256, 1 thread", "fused 64x64x64, 2 threads". */
const char *pf_context_plan_label(const pf_context *ctx, size_t i);
/* 16 hex digits: FNV-1a 64 of the FFTW plan descriptions of note i < count. */
const char *pf_context_plan_digest(const pf_context *ctx, size_t i);

#endif
