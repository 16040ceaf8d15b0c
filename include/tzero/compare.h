/* compare.h -- two stacks of the same line compared CMP by CMP. */
#ifndef TZERO_COMPARE_H
#define TZERO_COMPARE_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define COMPARE_MAX_TRACES 2000000   /* traces one section may hold */

typedef struct compare_params {
  double max_lag_ms;       /* cross-correlation lags searched, +-. Default 20 */
  double time_min_ms;      /* comparison window in recorded time, ms, inclusive. */
  double time_max_ms;      /* Defaults -INFINITY, INFINITY (the whole trace) */
  double threshold_db;     /* |energy ratio| above this calls B stronger/weaker. Default 0.5 */
} compare_params;

void compare_params_init(compare_params *p);

enum compare_verdict { COMPARE_SIMILAR = 0, COMPARE_STRONGER = 1, COMPARE_WEAKER = -1 };

/* One CMP present in both sections. Energies are sums of squares over the window. */
typedef struct compare_cmp {
  int32_t cmp;
  double rms_a, rms_b;         /* RMS amplitude of each trace */
  double rms_difference;       /* RMS of b - a */
  double relative_difference;  /* rms_difference / rms_a (NAN when A is all zero) */
  double energy_ratio;         /* energy of B / energy of A (NAN when A is all zero) */
  double energy_ratio_db;      /* 10 log10(energy_ratio); 0 when both are all zero */
  double peak_correlation;     /* largest normalised cross-correlation over the lags */
  double lag_ms;               /* its lag; positive when B is later than A */
  int verdict;                 /* enum compare_verdict (from energy_ratio_db) */
} compare_cmp;

/* Consecutive compared CMPs with one verdict. */
typedef struct compare_run {
  int32_t first_cmp, last_cmp;
  int verdict;
  size_t count;
  double mean_db;              /* mean energy_ratio_db over the run */
} compare_run;

typedef struct compare_result {
  size_t n;                    /* CMPs in both sections, ascending */
  compare_cmp *cmps;           /* owned */
  size_t only_a, only_b;       /* CMPs present in one section only */
  size_t stronger, weaker, similar;
  size_t nruns;
  compare_run *runs;           /* owned */
  double energy_ratio_db;      /* whole window, all compared CMPs: 10 log10(sum E_B / sum E_A) */
  double mean_rms_difference;
  double min_peak_correlation;
  uint32_t samples, interval_us;
  int32_t delay_ms;
  size_t window_first, window_end;  /* samples compared: [first, end) */
} compare_result;

/* Compares the traces of two sample series (ns samples each, interval dt_ms),
 * correlating over lags -max_lag..+max_lag samples (normalised by the two
 * window energies, so identical traces give 1 at lag 0). */
void compare_traces(const float *a, const float *b, size_t ns, size_t max_lag, double dt_ms,
                    double threshold_db, compare_cmp *out);

/* Opens two SEG-Y stacks, matches traces by CMP number (bytes 21-24) and
 * compares each pair. Errors: unreadable files (TZ_E_NOINPUT / TZ_E_FORMAT with
 * the reader's context), different sample axes (count, interval or delay:
 * TZ_E_FORMAT naming both files' values), a CMP number repeated in one file
 * (TZ_E_FORMAT naming both traces), no CMP in common (TZ_E_FORMAT), bad
 * parameters (TZ_E_ARG). On success *out owns the result: compare_result_free(). */
int compare_sections(const char *path_a, const char *path_b, const compare_params *p,
                     compare_result **out, tz_err *err);
void compare_result_free(compare_result *r);   /* NULL is a no-op */

const char *compare_verdict_name(int verdict);  /* "stronger", "weaker", "similar" */

#endif
