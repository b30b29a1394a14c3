/* helper_thread.h — short-lived helper threads that take independent parts of one computation
 * (the bands of a Schrödinger pass, the energies of a continuum integral) off the caller's
 * thread, so that a single solve uses the machine's other cores.
 *
 * A helper is a POSIX thread started for the computation and joined at its end (not an OpenMP
 * team, whose idle threads spin between regions).  On Linux it is started on the CPUs other
 * than the caller's: measured on a 2-core virtual machine, a new thread left to the scheduler
 * waited 0.3–4 ms (queued behind its busy parent until a load balance) and one placed on the
 * other CPU ran after about 0.1 ms.  A helper that cannot start is no error: the caller does
 * its parts. */
#ifndef EW_HELPER_THREAD_H
#define EW_HELPER_THREAD_H

#include <pthread.h>

/* A helper that needs a factorization workspace and pencils of its own (the bands of a pass,
 * the Kane levels' tasks) is started only up to this many nodes: measured at 10⁶ nodes
 * (examples/detector_well.cfg in the bench), peak memory 718 MiB on one thread and 969 MiB
 * with helpers, against the 1 GiB of issue 16's target. */
#define EW_HELPER_WORKSPACE_MAX_NODES 250000

typedef struct {
  pthread_t thread;
  int started;
} ew_helper;

/* Helpers worth starting for `parts` independent parts now: none inside an OpenMP region (a
 * sweep's points, even on one thread: the workflows own the threads there), else up to
 * parts − 1 and one fewer than omp_get_max_threads() (OMP_NUM_THREADS, omp_set_num_threads);
 * 0 in a build without OpenMP. */
int ew_helper_count(int parts);

/* Start fn(arg) on a helper.  1 started, 0 not (then h->started is 0 and the caller does the
 * work itself). */
int ew_helper_start(ew_helper *h, void *(*fn)(void *), void *arg);

/* Wait for a started helper (no-op for one that did not start). */
void ew_helper_join(ew_helper *h);

/* Work that a running computation offers to the threads of its pass that have run out of
 * work of their own (the bands of a pass: the thread that finishes its bands first helps the
 * others instead of idling, on its own warm heap, with no extra thread).  A producer offers
 * fn(job, scratch), keeps working on the same job itself and withdraws the offer when done,
 * which waits until no thread is inside fn; fn takes parts off a queue inside job until it is
 * empty (a thread that returns from fn does not enter the same offer again).  scratch is the
 * serving thread's own: a slot for its factorization workspace (ew_shift_lu **, possibly
 * holding one of another size: fn replaces it), which the thread frees when it stops
 * serving.  Up to EW_ASSIST_OFFERS offers stand at once (each band of a pass may make one). */
typedef void (*ew_assist_fn)(void *job, void *scratch);
#define EW_ASSIST_OFFERS 4
typedef struct {
  pthread_mutex_t mu;
  pthread_cond_t cv;
  struct {
    ew_assist_fn fn; /* NULL: a free place */
    void *job;
    int inside;      /* threads inside fn */
    int drained;     /* a thread came back from fn: its queue is empty */
  } offer[EW_ASSIST_OFFERS];
  int open;          /* threads that may still offer work */
} ew_assist;

/* A hub for `open` threads of work.  0 when the mutex or condition cannot be made. */
int ew_assist_init(ew_assist *a, int open);
void ew_assist_destroy(ew_assist *a);
/* Offer fn(job, …): a handle > 0 for ew_assist_withdraw, or 0 when refused (a NULL hub, or
 * every place taken: the producer then works alone). */
int ew_assist_offer(ew_assist *a, ew_assist_fn fn, void *job);
/* Withdraw offer `handle` (> 0) and wait until no thread is inside it. */
void ew_assist_withdraw(ew_assist *a, int handle);
/* One of the `open` threads will never serve (a helper that did not start). */
void ew_assist_leave(ew_assist *a);
/* This thread has no work of its own left: run the offers that come, with its scratch, until
 * every one of the `open` threads has said so. */
void ew_assist_serve(ew_assist *a, void *scratch);

#endif
