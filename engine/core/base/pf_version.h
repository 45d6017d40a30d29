/* pf_version.h - the engine version, reported by scripts and run manifests. */
#ifndef PF_VERSION_H
#define PF_VERSION_H
#define PF_VERSION "0.1.0"
#endif
