/* pf_status.h - status codes that every psiflight core call returns.
 *
 * The core never raises, prints or exits: a failing call returns one of these
 * codes and leaves a human-readable message in its context (pf_context_message).
 * The Lua binding turns the pair into a single Lua error. */
#ifndef PF_STATUS_H
#define PF_STATUS_H

typedef enum pf_status {
    PF_OK = 0,
    PF_EINVAL,   /* an argument is out of its domain (NaN, negative width, ...) */
    PF_ENOMEM,   /* the allocator failed */
    PF_ELIMIT,   /* a configured resource cap (memory) would be exceeded */
    PF_EFFT,     /* FFTW could not create a plan */
    PF_EIO,      /* a file could not be read or written */
    PF_ESTATE,   /* the object is in the wrong state (closed, mismatched grid) */
    PF_ECALLBACK, /* a caller-supplied callback reported failure */
    PF_ESTOP,    /* the caller asked a long computation to stop (pf_context_poll_stop) */
    PF_EBUG      /* psiflight's own code failed (a crash caught in a helper process): a bug to report */
} pf_status;

/* Short English name of a status code, for messages ("invalid argument"). */
const char *pf_status_name(pf_status s);

#endif
