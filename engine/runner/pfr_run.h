/* pfr_run.h - the runner's command interpreter, callable from main. */
#ifndef PFR_RUN_H
#define PFR_RUN_H

/* Parses argv, runs the requested command and returns the exit status. */
int pfr_main(int argc, char **argv);

#endif
