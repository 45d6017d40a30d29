/* pf_fault.h - whose code crashed: a helper process that runs a foreign
 * library (libhdf5 in pf_h5_isolate.c) tells its parent, through its exit
 * status, whether a fatal signal struck inside that library or inside
 * psiflight's own code.
 *
 * A crash inside the library on a hostile file is the file's fault: the
 * parent refuses the file.  A crash in psiflight's code is a bug that must
 * not pass as a bad file: the parent fails loudly (PF_EBUG; the fuzz
 * harness aborts).
 *
 * The verdict walks the stack from the faulting instruction outwards and
 * takes the first frame that lies in either the library's code or
 * psiflight's: a fault in libc's memcpy called by libhdf5 is libhdf5's, a
 * fault in a psiflight callback that libhdf5 called is psiflight's.  Frames
 * of other libraries (libc, libz) and a sanitizer's interceptors of libc
 * functions are passed over; a stack with neither kind of frame counts as
 * psiflight's (unproven library faults stay loud). */
#ifndef PF_FAULT_H
#define PF_FAULT_H

#include <stddef.h>

/* Exit statuses of a guarded process that caught a fatal signal sig: */
#define PF_FAULT_LIBRARY_EXIT 64 /* + sig: the fault lies in the library */
#define PF_FAULT_OWN_EXIT 96     /* + sig: psiflight's code, or nothing identified */

typedef enum pf_fault_class {
    PF_FAULT_NONE = 0, /* a normal exit with a status outside both ranges */
    PF_FAULT_LIBRARY,  /* the library crashed */
    PF_FAULT_OWN,      /* psiflight crashed */
    PF_FAULT_KILLED    /* ended by a signal nobody classified (SIGKILL, a fault in the handler) */
} pf_fault_class;

/* In a process about to call the library (a forked child): records the
 * executable address ranges of every loaded shared object whose file name
 * starts with library_prefix ("libhdf5": libhdf5_serial.so and its _hl
 * part) and of the object holding own_code (psiflight's: the runner, the
 * Lua module or a test program), then catches SIGSEGV, SIGBUS, SIGFPE,
 * SIGILL, SIGABRT and SIGSYS on an alternate stack and ends the process
 * with _exit(PF_FAULT_LIBRARY_EXIT + sig) or _exit(PF_FAULT_OWN_EXIT + sig).
 * Returns the number of library ranges found (0: every fault will count
 * as psiflight's), or -1 when the handlers could not be installed. */
int pf_fault_guard(const char *library_prefix, const void *own_code);

/* The verdict on a stack: frames[0..n) from the innermost outwards, as
 * backtrace(3) gives them; fault_pc (or NULL) is the faulting instruction,
 * and the walk starts at the frame of the same function (a signal
 * handler's or a sanitizer's own frames above it are skipped).  Returns
 * PF_FAULT_LIBRARY or PF_FAULT_OWN.  Needs pf_fault_guard's ranges; usable
 * from a sanitizer's death callback (the fuzz harness). */
pf_fault_class pf_fault_classify_stack(void *const *frames, int n, const void *fault_pc);

/* Reads a wait status of a guarded process: the class, and in *sig the
 * signal (0 when none). */
pf_fault_class pf_fault_from_status(int wait_status, int *sig);

#endif
