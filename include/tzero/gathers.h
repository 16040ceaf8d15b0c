/* gathers.h -- traces after the job's chain up to a chosen step, sorted into shot,
 * receiver, common-offset or CMP gathers, and test panels over a list of values
 * (docs/gathers.md, tzero-gathers(1)).
 *
 * The traces come from stack_visit(), the stack's own chain (edits, statics,
 * conditioning, NMO, mutes), so a gather shows what the stack sums. Memory: the
 * traces visited are spilled to an unlinked temporary file as they leave the
 * chain and only a small index (sort keys and file offsets, GATHERS_MAX_TRACES
 * entries at most) is held and sorted; the output is then written in sorted
 * order from the spill.
 */
#ifndef TZERO_GATHERS_H
#define TZERO_GATHERS_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/job.h"
#include "tzero/segy.h"
#include "tzero/stack.h"
#include "tzero/velocity.h"

#define GATHERS_MAX_TRACES 4000000   /* traces one run may select (index memory) */
#define GATHERS_MAX_PANELS 24        /* values of one --vary (a line each in the text header) */

/* Test panel fields of every trace header (bytes of the SEG-Y rev 1 (2002) trace
 * header left unassigned for optional use): the panel number (1, 2, ...; 0 when
 * the file holds no panels) as a 4-byte big-endian integer, and the panel's
 * value as a 4-byte IEEE float (NaN when the value is not a number). */
#define GATHERS_PANEL_BYTE 233       /* bytes 233-236 */
#define GATHERS_VALUE_BYTE 237       /* bytes 237-240 */
void gathers_panel_set(segy_trace_header *h, int32_t panel, double value);
/* Reads them back from h->raw: returns the panel number (0: none). */
int32_t gathers_panel_get(const segy_trace_header *h, double *value);
/* The label of panel k (1-based) from a file's textual header: the text after
 * "panel K: " on its line (up to a newline or the end of its 80-byte card),
 * without trailing blanks; 0 when there is none. */
int gathers_panel_label(const char *text, int32_t k, char *buf, size_t cap);
/* The key varied ("varied: KEY" line), the same way; 0 when there is none. */
int gathers_panel_key(const char *text, char *buf, size_t cap);

enum gathers_sort {
  GATHERS_SORT_SHOT = 0,      /* by field record (bytes 9-12), then channel */
  GATHERS_SORT_RECEIVER,      /* by receiver station, then source station */
  GATHERS_SORT_OFFSET,        /* by offset range of the selection, then CMP, |offset| */
  GATHERS_SORT_CMP            /* by CMP, then |offset| (as tzero nmo) */
};
const char *gathers_sort_name(int sort);    /* "shot", ...; never NULL */
int gathers_sort_parse(const char *s);      /* -1 when unknown */

/* How far the chain goes (--through): a stack_step and, for a conditioning
 * step, how many steps of the job's conditioning. */
typedef struct gathers_step {
  int through;                 /* enum stack_step */
  size_t conditioning_steps;
  char label[96];              /* "conditioning[1] (bandpass)", "nmo", ... */
} gathers_step;

/* Parses "edits", "statics", "conditioning" (the whole conditioning),
 * "conditioning[K]" (up to and including step K, 0-based as in the job's JSON
 * paths), a conditioning step's name ("bandpass", ... when it occurs once in
 * the job), "nmo", "mute" or "all". TZ_E_ARG naming the choices otherwise. */
int gathers_step_parse(const char *s, const job_spec *job, gathers_step *out, tz_err *err);

/* The selection (--select): for shot, receiver and CMP sorts a list of whole
 * numbers ("250", "200-300", "200-900:50", items separated by commas), for the
 * offset sort a list of |offset| ranges in metres ("0-100", "0-1000:100" for
 * ranges 100 m wide); NULL or "" selects every trace. */
typedef struct gathers_select {
  int all;
  int32_t *values;             /* sorted, distinct (shot, receiver, CMP) */
  size_t nvalues;
  double (*ranges)[2];         /* [lo, hi] inclusive (offset), in the order given */
  size_t nranges;
} gathers_select;
int gathers_select_parse(int sort, const char *s, gathers_select *out, tz_err *err);
void gathers_select_free(gathers_select *s);

typedef struct gathers_request {
  int sort;                    /* enum gathers_sort */
  gathers_select select;
  int one_per_cmp;             /* keep only the smallest |offset| of each CMP in a gather */
  gathers_step step;
} gathers_request;

/* The values of a test panel run (NULL when there is one panel). */
typedef struct gathers_panels {
  const char *key;             /* the JSON path varied */
  size_t n;
  const char *const *values;   /* as given */
} gathers_panels;

typedef struct gathers_writer gathers_writer;

/* Creates `path` (and `weights_path` when not NULL: the same traces holding each
 * sample's live weight) under temporary names. The textual header names the
 * step, the sort, the selection, the line and the panels, from plan p (the
 * first panel's). On success *out owns the writer. */
int gathers_writer_open(gathers_writer **out, const stack_plan *p, const gathers_request *rq,
                        const gathers_panels *panels, const char *path,
                        const char *weights_path, int format_code, tz_err *err);
/* Writes panel `panel` (0-based; 0 without panels): the request's traces of
 * plan p through the step, sorted. NMO steps need v. *ntraces (may be NULL) gets
 * the traces written for this panel. */
int gathers_writer_add(gathers_writer *w, const stack_plan *p, const velocity_table *v,
                       size_t panel, int64_t *ntraces, tz_err *err);
/* Renames the outputs into place; takes the writer. No trace at all is TZ_E_ARG
 * (nothing is written). */
int gathers_writer_finish(gathers_writer *w, tz_err *err);
void gathers_writer_abort(gathers_writer *w);   /* takes the writer; NULL is a no-op */

/* Stacked sections of the same CMP range, one panel per value, into one SEG-Y
 * file (stack_section_write's trace headers with the panel fields set): CMPs
 * of panel 1, then panel 2, ... sec[i] was stacked from plans[i]. */
int gathers_write_stack_panels(const stack_section *const *sec, const stack_plan *const *plans,
                               const gathers_panels *panels, const char *path, int format_code,
                               tz_err *err);

#endif
