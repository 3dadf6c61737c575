/* engine: the block scheduler (OpenMP threads, in-order merging).
 *
 * Threads take block indices from a shared counter (so a slow block never
 * holds up the others) and compute them into per-block slots; the caller's
 * thread (OpenMP's master, thread 0) also merges finished blocks strictly in
 * block order between its own blocks, calls the progress callback, and
 * after the parallel region merges whatever is left.  Which thread computes
 * a block never changes what the block contains, and the merge order is
 * fixed, so results are bit-identical for any thread count.  A cancel
 * request stops the hand-out of blocks: every block already handed out
 * completes, so the merged blocks are always the prefix 0..taken-1. */
#include "engine_internal.h"

#include <omp.h>
#include <stdatomic.h>
#include <stdlib.h>

int engine_threads_resolve(int t)
{
  if (t > 0) return t;
  int m = omp_get_max_threads();
  return m > 0 ? m : 1;
}

typedef struct {
  const engine_par *p;
  atomic_uint_fast64_t next;   /* next block to hand out */
  atomic_int stop;             /* cancel or failure: hand out no more */
  atomic_uchar *done;          /* per block: computed */
  uint64_t merged;             /* blocks merged (master only) */
  int cancelled;               /* master only */
} par_state;

static uint64_t samples_after(const engine_par *p, uint64_t merged)
{
  uint64_t s = p->samples_before + merged * p->block_size;
  return s < p->run_samples ? s : p->run_samples;
}

/* Master only: merges the finished prefix and reports progress. */
static void merge_ready(par_state *s, int report)
{
  const engine_par *p = s->p;
  uint64_t before = s->merged;
  while (s->merged < p->nblocks &&
         atomic_load_explicit(&s->done[s->merged], memory_order_acquire)) {
    p->merge(p->job, p->first + s->merged);
    s->merged++;
  }
  if (report && p->progress && s->merged > before && !s->cancelled) {
    if (p->progress(p->progress_user, samples_after(p, s->merged), p->samples_total)) {
      s->cancelled = 1;
      atomic_store(&s->stop, 1);
    }
  }
}

sp_status engine_par_run(const engine_par *p, uint64_t *merged, int *cancelled,
                         sp_error *err)
{
  *merged = 0;
  *cancelled = 0;
  if (p->nblocks == 0) return SP_OK;
  par_state s;
  s.p = p;
  atomic_init(&s.next, 0);
  atomic_init(&s.stop, 0);
  s.merged = 0;
  s.cancelled = 0;
  s.done = malloc(p->nblocks * sizeof *s.done);
  if (!s.done) return sp_fail(err, SP_ENOMEM, "cannot allocate the block table");
  for (uint64_t b = 0; b < p->nblocks; b++) atomic_init(&s.done[b], 0);
  atomic_int failed;
  atomic_init(&failed, 0);

  int nt = p->threads > 0 ? p->threads : 1;
#pragma omp parallel num_threads(nt)
  {
    void *tw = p->thread_init(p->job);
    if (!tw) atomic_store(&failed, 1);
#pragma omp barrier
    const int master = omp_get_thread_num() == 0;
    if (!atomic_load(&failed)) {
      for (;;) {
        if (atomic_load(&s.stop)) break;
        uint64_t b = atomic_fetch_add(&s.next, 1);
        if (b >= p->nblocks) break;
        p->block(p->job, tw, p->first + b);
        atomic_store_explicit(&s.done[b], 1, memory_order_release);
        if (master) merge_ready(&s, 1);
      }
    }
    if (tw) p->thread_fini(p->job, tw);
  }
  if (atomic_load(&failed)) {
    free(s.done);
    return sp_fail(err, SP_ENOMEM, "cannot allocate a thread's workspace (%d threads)", nt);
  }
  /* Every block handed out has completed (the region joined); merge them.
   * With a cancel, those are the prefix 0..taken-1. */
  merge_ready(&s, !s.cancelled);
  *merged = s.merged;
  *cancelled = s.cancelled;
  free(s.done);
  return SP_OK;
}
