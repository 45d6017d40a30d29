/* pf_status.c - names of the core's status codes. */
#include "pf_status.h"

const char *pf_status_name(pf_status s)
{
    static const char *const names[] = {
        [PF_OK] = "ok",
        [PF_EINVAL] = "invalid argument",
        [PF_ENOMEM] = "out of memory",
        [PF_ELIMIT] = "resource limit",
        [PF_EFFT] = "FFT planning failed",
        [PF_EIO] = "input/output error",
        [PF_ESTATE] = "invalid state",
        [PF_ECALLBACK] = "callback failed",
        [PF_ESTOP] = "stopped on request",
        [PF_EBUG] = "internal error",
    };
    if ((unsigned)s < sizeof names / sizeof names[0] && names[s]) return names[s];
    return "unknown status";
}
