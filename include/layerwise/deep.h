/*
 * layerwise/deep.h - running work that recurses once per level.
 *
 * A few algorithms recurse as deep as a diagram has levels (the
 * zero-suppressed set operations behind the cut-set family, and the
 * post-incident walks) or a model has nested elements (the loader).  A hospital-wide model can have hundreds of
 * thousands of levels, more than a default thread stack holds.  The
 * library's entry points that may recurse that deep run their work through
 * lw_deep_call when a diagram has more than LW_DEEP_LEVELS levels, so
 * callers need no stack of their own.
 */
#ifndef LAYERWISE_DEEP_H
#define LAYERWISE_DEEP_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

/* Levels up to which recursive work runs on the caller's stack: about
 * 2 x 1024 frames of at most a few hundred bytes, well inside even a
 * small thread stack. */
#define LW_DEEP_LEVELS 1024u

/* Run fn(arg) on a thread with a large stack (1 GiB of address space on
 * 64-bit systems, committed only as it is touched; halved down to 64 MiB
 * where the process may not map that much) and wait for it, with the
 * caller's cancellation held off.  A call made from such a thread runs fn
 * directly; so does a call when no thread can be made at all.  fn runs on
 * another thread: it must not longjmp or throw out of itself, and its
 * thread-local state and errno are not the caller's.  Returns 1 when fn
 * ran on a new thread. */
int lw_deep_call(void (*fn)(void *), void *arg);
/* fn(arg) through lw_deep_call when 'levels' is over LW_DEEP_LEVELS, else
 * in place: how the library's entry points call their recursive work. */
void lw_deep_call_past(size_t levels, void (*fn)(void *), void *arg);

#ifdef __cplusplus
}
#endif
#endif
