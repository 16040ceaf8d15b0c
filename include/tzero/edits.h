/* edits.h -- trace edits: kill and reverse by selector, automatic kills of dead and noisy traces.
 *
 * An edits_spec is a plain value (job.c fills it from the job's "edits" object,
 * or from a file given with --edits). An entry selects the traces that match
 * every selector it gives (field record, channel, source station, receiver
 * station, shot file name); a list of entries selects the traces any entry
 * selects. Automatic kills look at one whole record at a time: a trace is dead
 * when all its samples are equal (zero or constant), noisy when its RMS in the
 * window is more than rms_ratio_max times the median RMS of the record's live
 * traces (docs/statics.md, "Edits").
 */
#ifndef TZERO_EDITS_H
#define TZERO_EDITS_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define EDITS_MAX_RANGES 64          /* ranges in one selector */
#define EDITS_MAX_ENTRIES 4096       /* entries in one kill or reverse list */

/* Why a trace was killed (QC: traces.killed by reason). */
enum edits_reason {
  EDITS_KILL_LISTED = 0,     /* a kill entry selected it */
  EDITS_KILL_DEAD,           /* automatic: all samples equal */
  EDITS_KILL_NOISY,          /* automatic: RMS above rms_ratio_max x the record's median */
  EDITS_KILL__COUNT
};
const char *edits_reason_name(int reason);   /* "listed", "dead", "noisy" */

typedef struct edits_range { int64_t lo, hi; } edits_range;   /* inclusive */

typedef struct edits_set {   /* one selector's values; n = 0: not given */
  size_t n;
  edits_range r[EDITS_MAX_RANGES];
} edits_set;

typedef struct edits_entry {
  char where[72];            /* JSON path of the entry, e.g. "$.edits.kill[2]" */
  edits_set record, channel, source_station, receiver_station;
  char file[256];            /* shot file name ("" = not given): matches the path as
                              * given or its last component */
} edits_entry;

typedef struct edits_spec {
  size_t nkill, nreverse;
  edits_entry *kill, *reverse;   /* owned: edits_spec_free() */
  int auto_dead;                 /* 1: kill traces whose samples are all equal */
  double rms_ratio_max;          /* > 0: kill traces above this x the record's median RMS */
  double window_start_ms, window_end_ms;   /* RMS window in recorded time; end 0 = trace end */
} edits_spec;

void edits_spec_init(edits_spec *e);
void edits_spec_free(edits_spec *e);          /* frees the lists; the value may be reused */
int edits_spec_copy(edits_spec *dst, const edits_spec *src, tz_err *err);
/* 1 when the spec edits anything. */
int edits_spec_active(const edits_spec *e);
/* 1 when some entry selects by source or receiver station. */
int edits_use_stations(const edits_spec *e);

/* Parses a selector value as job files write it: a number, a string of numbers
 * and ranges ("30-32", "1,3,7-9"), or an array of those. TZ_E_JOB naming `where`. */
int edits_set_parse_text(edits_set *s, const char *text, const char *where, tz_err *err);
int edits_set_add(edits_set *s, int64_t lo, int64_t hi, const char *where, tz_err *err);
int edits_set_has(const edits_set *s, int64_t v);

/* What a trace is, for matching. */
typedef struct edits_trace {
  int32_t record, channel;
  int32_t source_station, receiver_station;
  const char *file;          /* shot file path */
} edits_trace;

/* 1 when the entry selects the trace. */
int edits_entry_matches(const edits_entry *e, const edits_trace *t);

/* RMS of samples [lo, hi) of x; 0 for an empty window. */
double edits_rms(const float *x, size_t lo, size_t hi);
/* 1 when every sample of x[0..n) equals the first (a dead or clipped-flat trace). */
int edits_is_constant(const float *x, size_t n);
/* Median of v[0..n) (sorted in place); NAN when n = 0. */
double edits_median(double *v, size_t n);

#endif
