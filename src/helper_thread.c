/* helper_thread.c — short-lived helper threads (see helper_thread.h). */
#if defined(__linux__) && !defined(_GNU_SOURCE)
#define _GNU_SOURCE /* sched_getcpu, CPU_SET, pthread_attr_setaffinity_np */
#endif
#include "helper_thread.h"

#include <sched.h>
#include <string.h>

#ifdef _OPENMP
#include <omp.h>
#endif

int ew_helper_count(int parts) {
#ifdef _OPENMP
  if (parts < 2 || omp_get_level() > 0) return 0;
  int t = omp_get_max_threads() - 1;
  return t < 1 ? 0 : t < parts - 1 ? t : parts - 1;
#else
  (void)parts;
  return 0;
#endif
}

/* The helper's attributes: on Linux, the process's CPUs without the caller's (see the header);
 * 0 when there is no such placement to ask for (plain attributes). */
static void place_elsewhere(pthread_attr_t *at) {
#ifdef __linux__
  cpu_set_t cpus;
  int me = sched_getcpu();
  if (me < 0 || sched_getaffinity(0, sizeof cpus, &cpus) != 0) return;
  CPU_CLR(me, &cpus);
  if (CPU_COUNT(&cpus) > 0) pthread_attr_setaffinity_np(at, sizeof cpus, &cpus);
#else
  (void)at;
#endif
}

int ew_helper_start(ew_helper *h, void *(*fn)(void *), void *arg) {
  h->started = 0;
  pthread_attr_t at;
  if (pthread_attr_init(&at) != 0) return 0;
  place_elsewhere(&at);
  h->started = pthread_create(&h->thread, &at, fn, arg) == 0;
  pthread_attr_destroy(&at);
  return h->started;
}

void ew_helper_join(ew_helper *h) {
  if (h->started) pthread_join(h->thread, NULL);
  h->started = 0;
}

int ew_assist_init(ew_assist *a, int open) {
  memset(a->offer, 0, sizeof a->offer);
  a->open = open;
  if (pthread_mutex_init(&a->mu, NULL) != 0) return 0;
  if (pthread_cond_init(&a->cv, NULL) != 0) {
    pthread_mutex_destroy(&a->mu);
    return 0;
  }
  return 1;
}

void ew_assist_destroy(ew_assist *a) {
  pthread_cond_destroy(&a->cv);
  pthread_mutex_destroy(&a->mu);
}

int ew_assist_offer(ew_assist *a, ew_assist_fn fn, void *job) {
  if (!a) return 0;
  pthread_mutex_lock(&a->mu);
  int handle = 0;
  for (int i = 0; i < EW_ASSIST_OFFERS && !handle; i++)
    if (!a->offer[i].fn && !a->offer[i].inside) {
      a->offer[i].fn = fn, a->offer[i].job = job, a->offer[i].drained = 0;
      handle = i + 1;
    }
  pthread_cond_broadcast(&a->cv);
  pthread_mutex_unlock(&a->mu);
  return handle;
}

void ew_assist_withdraw(ew_assist *a, int handle) {
  int i = handle - 1;
  pthread_mutex_lock(&a->mu);
  a->offer[i].fn = NULL; /* nobody enters any more */
  while (a->offer[i].inside > 0) pthread_cond_wait(&a->cv, &a->mu);
  a->offer[i].job = NULL;
  pthread_mutex_unlock(&a->mu);
}

void ew_assist_leave(ew_assist *a) {
  pthread_mutex_lock(&a->mu);
  a->open--;
  pthread_cond_broadcast(&a->cv);
  pthread_mutex_unlock(&a->mu);
}

/* A standing offer that no thread has come back from yet; −1 when none. */
static int open_offer(const ew_assist *a) {
  for (int i = 0; i < EW_ASSIST_OFFERS; i++)
    if (a->offer[i].fn && !a->offer[i].drained) return i;
  return -1;
}

void ew_assist_serve(ew_assist *a, void *scratch) {
  pthread_mutex_lock(&a->mu);
  a->open--;
  pthread_cond_broadcast(&a->cv);
  while (a->open > 0) {
    int i = open_offer(a);
    if (i < 0) {
      pthread_cond_wait(&a->cv, &a->mu);
      continue;
    }
    ew_assist_fn fn = a->offer[i].fn;
    void *job = a->offer[i].job;
    a->offer[i].inside++;
    pthread_mutex_unlock(&a->mu);
    fn(job, scratch);
    pthread_mutex_lock(&a->mu);
    a->offer[i].inside--;
    a->offer[i].drained = 1; /* its queue is empty: wait for another offer (or the end) */
    pthread_cond_broadcast(&a->cv);
  }
  pthread_mutex_unlock(&a->mu);
}
