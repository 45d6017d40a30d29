/* pfr_exit.h - exit statuses of the psiflight runner (docs/runner.md). */
#ifndef PFR_EXIT_H
#define PFR_EXIT_H

enum pfr_exit {
    PFR_EXIT_OK = 0,
    PFR_EXIT_SCRIPT = 1,   /* the script raised an error */
    PFR_EXIT_USAGE = 2,    /* bad command line */
    PFR_EXIT_GUARD = 3,    /* a numerical guard tripped in strict mode */
    PFR_EXIT_SANDBOX = 4,  /* the sandbox refused an operation */
    PFR_EXIT_LIMIT = 5,    /* a resource limit (memory, wall time) was reached */
    PFR_EXIT_POINTS = 6    /* a sweep finished, but at least one point failed */
};

#endif
