/* velocity.c -- stacking-velocity tables: parse, validate, write, sample, Dix.
 *
 * Design: a table is two flat arrays, one entry per control CMP (its number and
 * the range of its knots) and one per knot (time, velocity, eta, file line), in
 * file order. Sampling a CMP finds its two bracketing control CMPs once (binary
 * search over a sorted index), then walks each one's knots along the regular
 * time axis in a single pass, so sampling a whole trace costs O(knots + ns).
 * Interpolation rules (docs/velocity-table.md): linear in time between knots, constant
 * outside; linear in CMP number between control CMPs at equal time, constant
 * outside. Dix conversion follows Dix (1955).
 *
 * Not here: NMO itself (nmo.c), velocity analysis (semblance.c).
 */
#include "tzero/velocity.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"
#include "tzero/table.h"

struct vt_cmp {
  int64_t cmp;
  size_t first, n;        /* knots [first, first + n) */
};

struct velocity_table {
  char *source;
  char sha256[65];        /* of the file as read; "" when not read from text */
  int with_eta;
  size_t ncmp, cap_cmp;
  struct vt_cmp *cmps;
  size_t *order;          /* indexes of cmps[], sorted by CMP number (kept on insert) */
  size_t nk, cap_k;
  double *time_s, *vel, *eta;
  int64_t *line;
  int64_t *low_fold;      /* analysis CMPs without a pick for lack of fold (comment) */
  size_t nlow, low_min_fold;
};

static int vt_alloc(velocity_table **out, int with_eta, const char *source, tz_err *err)
{
  velocity_table *t = calloc(1, sizeof *t);
  if (!t || !(t->source = strdup(source ? source : ""))) {
    free(t);
    return tz_fail(err, TZ_E_NOMEM, "velocity table");
  }
  t->with_eta = with_eta != 0;
  *out = t;
  return TZ_OK;
}

void velocity_table_free(velocity_table *t)
{
  if (!t)
    return;
  free(t->source);
  free(t->cmps);
  free(t->order);
  free(t->time_s);
  free(t->vel);
  free(t->eta);
  free(t->line);
  free(t->low_fold);
  free(t);
}

int velocity_table_set_low_fold(velocity_table *t, const int64_t *cmps, size_t n,
                                size_t min_fold, tz_err *err)
{
  free(t->low_fold);
  t->low_fold = NULL;
  t->nlow = 0;
  t->low_min_fold = min_fold;
  if (!n)
    return TZ_OK;
  if (n > VELOCITY_MAX_LOW_FOLD)
    n = VELOCITY_MAX_LOW_FOLD;
  if (!(t->low_fold = malloc(n * sizeof *t->low_fold)))
    return tz_fail(err, TZ_E_NOMEM, "low-fold CMP list");
  memcpy(t->low_fold, cmps, n * sizeof *cmps);
  t->nlow = n;
  return TZ_OK;
}

size_t velocity_table_low_fold(const velocity_table *t, const int64_t **cmps)
{
  *cmps = t->low_fold;
  return t->nlow;
}

/* The comment "# ... no pick for lack of fold ...: CMP 1, 2, 5-9" before the
 * header: its CMP list (ranges expanded, at most VELOCITY_MAX_LOW_FOLD). A
 * comment that does not parse is only a comment. */
static void read_low_fold(velocity_table *t, const char *c)
{
  if (!c || !strstr(c, VELOCITY_LOW_FOLD_NOTE))
    return;
  const char *p = strstr(c, ": CMP ");
  if (!p)
    return;
  p += 6;
  size_t cap = 0;
  while (*p && t->nlow < VELOCITY_MAX_LOW_FOLD) {
    char *end;
    long long a = strtoll(p, &end, 10), b = a;
    if (end == p)
      return;
    p = end;
    if (*p == '-') {
      b = strtoll(p + 1, &end, 10);
      if (end == p + 1 || b < a)
        return;
      p = end;
    }
    /* CMP numbers a table may hold; beyond them the range walk below would
     * overflow (a fuzzed "CMP 0-9223372036854775807") */
    if (a < -VELOCITY_MAX_CMP || b > VELOCITY_MAX_CMP)
      return;
    for (long long x = a; x <= b && t->nlow < VELOCITY_MAX_LOW_FOLD; x++) {
      if (t->nlow == cap) {
        size_t nc = cap ? 2 * cap : 16;
        int64_t *v = realloc(t->low_fold, nc * sizeof *v);
        if (!v)
          return;
        t->low_fold = v;
        cap = nc;
      }
      t->low_fold[t->nlow++] = x;
    }
    while (*p == ',' || *p == ' ')
      p++;
  }
}

int velocity_table_new(velocity_table **out, int with_eta, tz_err *err)
{
  return vt_alloc(out, with_eta, "", err);
}

static int grow_knots(velocity_table *t, tz_err *err)
{
  if (t->nk < t->cap_k)
    return TZ_OK;
  if (t->nk >= VELOCITY_MAX_KNOTS)
    return tz_fail(err, TZ_E_FORMAT, "more than %d knots in one velocity table",
                   VELOCITY_MAX_KNOTS);
  size_t cap = t->cap_k ? t->cap_k * 2 : 64;
  if (cap > VELOCITY_MAX_KNOTS)
    cap = VELOCITY_MAX_KNOTS;
  double *a = realloc(t->time_s, cap * sizeof *a);
  if (a)
    t->time_s = a;
  double *b = a ? realloc(t->vel, cap * sizeof *b) : NULL;
  if (b)
    t->vel = b;
  double *c = b ? realloc(t->eta, cap * sizeof *c) : NULL;
  if (c)
    t->eta = c;
  int64_t *d = c ? realloc(t->line, cap * sizeof *d) : NULL;
  if (d)
    t->line = d;
  if (!d)
    return tz_fail(err, TZ_E_NOMEM, "velocity table knots");
  t->cap_k = cap;
  return TZ_OK;
}

static int grow_cmps(velocity_table *t, tz_err *err)
{
  if (t->ncmp < t->cap_cmp)
    return TZ_OK;
  size_t cap = t->cap_cmp ? t->cap_cmp * 2 : 16;
  struct vt_cmp *c = realloc(t->cmps, cap * sizeof *c);
  if (c)
    t->cmps = c;
  size_t *o = c ? realloc(t->order, cap * sizeof *o) : NULL;
  if (!o)
    return tz_fail(err, TZ_E_NOMEM, "velocity table CMPs");
  t->order = o;
  t->cap_cmp = cap;
  return TZ_OK;
}

/* Adds a knot with the table rules. `line` > 0 reports failures as TZ_E_FORMAT at
 * that line of the file; 0 (built in code) reports TZ_E_ARG. */
static int add_knot(velocity_table *t, int64_t cmp, double time_s, double v, double eta,
                    int64_t line, tz_err *err)
{
  int st = line > 0 ? TZ_E_FORMAT : TZ_E_ARG;
  int64_t ln = line > 0 ? line : -1;
  if (cmp < -VELOCITY_MAX_CMP || cmp > VELOCITY_MAX_CMP)
    return tz_fail_line(err, st, ln, "cmp %lld is outside -%d to %d, the CMP numbers a job "
                        "allows", (long long)cmp, VELOCITY_MAX_CMP, VELOCITY_MAX_CMP);
  if (!isfinite(time_s) || time_s < 0 || time_s * 1e3 > VELOCITY_MAX_TIME_MS)
    return tz_fail_line(err, st, ln, "cmp %lld: time %.10g ms must be >= 0 (and at most %g)",
                        (long long)cmp, time_s * 1e3, VELOCITY_MAX_TIME_MS);
  if (!isfinite(v) || v <= 0)
    return tz_fail_line(err, st, ln,
                        "cmp %lld: velocity %.10g m/s at %.10g ms must be positive",
                        (long long)cmp, v, time_s * 1e3);
  if (v < VELOCITY_MIN_MPS || v > VELOCITY_MAX_MPS)
    return tz_fail_line(err, st, ln,
                        "cmp %lld: velocity %.10g m/s at %.10g ms is outside %g to %g m/s",
                        (long long)cmp, v, time_s * 1e3, VELOCITY_MIN_MPS, VELOCITY_MAX_MPS);
  if (t->with_eta && (!isfinite(eta) || eta <= -0.5 || eta > VELOCITY_MAX_ETA))
    return tz_fail_line(err, st, ln,
                        "cmp %lld: eta %.10g at %.10g ms outside (-0.5, %g]",
                        (long long)cmp, eta, time_s * 1e3, VELOCITY_MAX_ETA);
  struct vt_cmp *last = t->ncmp ? &t->cmps[t->ncmp - 1] : NULL;
  if (last && last->cmp == cmp) {
    size_t k = last->first + last->n - 1;
    if (time_s == t->time_s[k])
      return tz_fail_line(err, st, ln,
                          "cmp %lld: duplicate row at %.10g ms (first given on line %lld)",
                          (long long)cmp, time_s * 1e3, (long long)t->line[k]);
    if (time_s < t->time_s[k])
      return tz_fail_line(err, st, ln,
                          "cmp %lld: time %.10g ms is not after the previous %.10g ms "
                          "(times must strictly increase within a CMP)",
                          (long long)cmp, time_s * 1e3, t->time_s[k] * 1e3);
  } else {
    /* Binary search of the sorted index: has this CMP had a group already? */
    size_t lo = 0, hi = t->ncmp;
    while (lo < hi) {
      size_t mid = lo + (hi - lo) / 2;
      if (t->cmps[t->order[mid]].cmp < cmp)
        lo = mid + 1;
      else
        hi = mid;
    }
    if (lo < t->ncmp && t->cmps[t->order[lo]].cmp == cmp)
      return tz_fail_line(err, st, ln,
                          "cmp %lld reappears after other CMPs (its group started on "
                          "line %lld; rows must be grouped by cmp)",
                          (long long)cmp, (long long)t->line[t->cmps[t->order[lo]].first]);
    int rc = grow_cmps(t, err);
    if (rc)
      return rc;
    t->cmps[t->ncmp].cmp = cmp;
    t->cmps[t->ncmp].first = t->nk;
    t->cmps[t->ncmp].n = 0;
    /* Insertion into the sorted index at the position found above. */
    memmove(t->order + lo + 1, t->order + lo, (t->ncmp - lo) * sizeof *t->order);
    t->order[lo] = t->ncmp;
    t->ncmp++;
    last = &t->cmps[t->ncmp - 1];
  }
  int rc = grow_knots(t, err);
  if (rc)
    return rc;
  t->time_s[t->nk] = time_s;
  t->vel[t->nk] = v;
  t->eta[t->nk] = t->with_eta ? eta : 0.0;
  t->line[t->nk] = line > 0 ? line : 0;
  t->nk++;
  last->n++;
  return TZ_OK;
}

int velocity_table_add(velocity_table *t, int64_t cmp, double time_s, double velocity_mps,
                       double eta, tz_err *err)
{
  return add_knot(t, cmp, time_s, velocity_mps, eta, 0, err);
}

enum { COL_CMP, COL_TIME, COL_VEL, COL_ETA, NCOL };
static const char *const colname[NCOL] = { "cmp", "time_ms", "velocity_mps", "eta" };

static int parse_reader(velocity_table **out, table_reader *r, tz_err *err)
{
  size_t nf;
  int rc = table_next(r, &nf, err);
  if (rc)
    return rc;
  if (nf == 0)
    return tz_fail_line(err, TZ_E_FORMAT, -1,
                        "empty velocity table: expected the header line "
                        "cmp,time_ms,velocity_mps");
  int64_t hline = table_line(r);
  if (nf < 3 || nf > 4)
    return tz_fail_line(err, TZ_E_FORMAT, hline,
                        "header has %zu columns; expected cmp,time_ms,velocity_mps "
                        "and optionally eta", nf);
  int numeric_first = table_parse_f64(table_field(r, 0), &(double){ 0 }) == 0;
  if (numeric_first)
    return tz_fail_line(err, TZ_E_FORMAT, hline,
                        "missing header line: expected cmp,time_ms,velocity_mps "
                        "before the first row");
  for (size_t i = 0; i < nf; i++)
    if (strcmp(table_field(r, i), colname[i]))
      return tz_fail_line(err, TZ_E_FORMAT, hline,
                          "unknown column '%s' in position %zu; expected '%s' "
                          "(header: cmp,time_ms,velocity_mps[,eta])",
                          table_field(r, i), i + 1, colname[i]);
  velocity_table *t;
  rc = vt_alloc(&t, nf == 4, table_name(r), err);
  if (rc)
    return rc;
  read_low_fold(t, table_last_comment(r));
  for (;;) {
    rc = table_next(r, &nf, err);
    if (rc || nf == 0)
      break;
    int64_t ln = table_line(r);
    size_t want = t->with_eta ? 4 : 3;
    if (nf != want) {
      rc = tz_fail_line(err, TZ_E_FORMAT, ln, "%zu fields; the header has %zu", nf, want);
      break;
    }
    int64_t cmp;
    double tms, v, eta = 0;
    if ((rc = table_field_i64(r, COL_CMP, "cmp", &cmp, err)) ||
        (rc = table_field_f64(r, COL_TIME, "time_ms", &tms, err)) ||
        (rc = table_field_f64(r, COL_VEL, "velocity_mps", &v, err)) ||
        (t->with_eta && (rc = table_field_f64(r, COL_ETA, "eta", &eta, err))))
      break;
    if ((rc = add_knot(t, cmp, tms * 1e-3, v, eta, ln, err)))
      break;
  }
  if (!rc && t->nk == 0)
    rc = tz_fail_line(err, TZ_E_FORMAT, hline, "velocity table has a header but no rows");
  if (rc) {
    velocity_table_free(t);
    return rc;
  }
  *out = t;
  return TZ_OK;
}

/* The table's name goes into err only on failure: a successful load must not
 * leave its path behind for a later, unrelated error to be reported under. */
static int parse_named(velocity_table **out, table_reader *r, tz_err *err)
{
  int rc = parse_reader(out, r, err);
  if (rc)
    tz_err_path(err, table_name(r));
  else
    snprintf((*out)->sha256, sizeof (*out)->sha256, "%s", table_sha256(r));
  table_close(r);
  return rc;
}

int velocity_table_load(velocity_table **out, const char *path, tz_err *err)
{
  table_reader *r;
  int rc = table_open(&r, path, err);
  if (rc)
    return rc;
  return parse_named(out, r, err);
}

int velocity_table_parse(velocity_table **out, const char *name, const char *text,
                         size_t len, tz_err *err)
{
  table_reader *r;
  int rc = table_open_mem(&r, name, text, len, err);
  if (rc)
    return rc;
  return parse_named(out, r, err);
}

int velocity_table_constant(velocity_table **out, double v_mps, tz_err *err)
{
  if (!isfinite(v_mps) || v_mps < VELOCITY_MIN_MPS || v_mps > VELOCITY_MAX_MPS)
    return tz_fail(err, TZ_E_ARG, "constant velocity %.10g m/s must be within %g to %g m/s",
                   v_mps, VELOCITY_MIN_MPS, VELOCITY_MAX_MPS);
  velocity_table *t;
  int rc = vt_alloc(&t, 0, "", err);
  if (!rc)
    rc = add_knot(t, 0, 0.0, v_mps, 0.0, 0, err);
  if (rc) {
    velocity_table_free(t);
    return rc;
  }
  *out = t;
  return TZ_OK;
}

int velocity_table_write_stream(const velocity_table *t, FILE *fp, const char *name,
                                tz_err *err)
{
  if (t->nlow) {
    fprintf(fp, "# %s (fewer than %zu live traces after the mutes; tzero semblance "
            "--min-fold): CMP ", VELOCITY_LOW_FOLD_NOTE, t->low_min_fold);
    for (size_t i = 0; i < t->nlow;) {
      size_t k = i;
      while (k + 1 < t->nlow && t->low_fold[k + 1] == t->low_fold[k] + 1)
        k++;
      fprintf(fp, k > i ? "%s%lld-%lld" : "%s%lld", i ? ", " : "", (long long)t->low_fold[i],
              (long long)t->low_fold[k]);
      i = k + 1;
    }
    fputc('\n', fp);
  }
  fprintf(fp, "cmp,time_ms,velocity_mps%s\n", t->with_eta ? ",eta" : "");
  for (size_t i = 0; i < t->ncmp; i++)
    for (size_t k = t->cmps[i].first; k < t->cmps[i].first + t->cmps[i].n; k++) {
      fprintf(fp, "%lld,%.10g,%.10g", (long long)t->cmps[i].cmp, t->time_s[k] * 1e3,
              t->vel[k]);
      if (t->with_eta)
        fprintf(fp, ",%.10g", t->eta[k]);
      fputc('\n', fp);
    }
  if (ferror(fp)) {
    tz_err_path(err, name);
    return tz_fail_os(err, TZ_E_IO, errno ? errno : EIO, "write failed");
  }
  return TZ_OK;
}

int velocity_table_write(const velocity_table *t, const char *path, tz_err *err)
{
  fileio_out *o;
  int rc = fileio_create(&o, path, err);
  if (rc)
    return rc;
  rc = velocity_table_write_stream(t, fileio_stream(o), path, err);
  if (rc) {
    fileio_abort(o);
    return rc;
  }
  return fileio_commit(o, err);
}

size_t velocity_table_ncmps(const velocity_table *t) { return t->ncmp; }
int64_t velocity_table_cmp(const velocity_table *t, size_t i) { return t->cmps[i].cmp; }
size_t velocity_table_nknots(const velocity_table *t, size_t i) { return t->cmps[i].n; }
int velocity_table_has_eta(const velocity_table *t) { return t->with_eta; }
const char *velocity_table_sha256(const velocity_table *t)
{
  return t->sha256;
}

const char *velocity_table_source(const velocity_table *t) { return t->source; }

void velocity_table_knot(const velocity_table *t, size_t i, size_t k, double *time_s,
                         double *velocity_mps, double *eta)
{
  size_t j = t->cmps[i].first + k;
  if (time_s)
    *time_s = t->time_s[j];
  if (velocity_mps)
    *velocity_mps = t->vel[j];
  if (eta)
    *eta = t->eta[j];
}

int64_t velocity_table_knot_line(const velocity_table *t, size_t i, size_t k)
{
  return t->line[t->cmps[i].first + k];
}

/* ---- sampling ---- */

/* The (at most two) control CMPs bracketing `cmp` and the weight of the second:
 * value = (1 - w) f_a + w f_b. Outside the control range, a = b = the end one. */
static void bracket(const velocity_table *t, int64_t cmp, const struct vt_cmp **a,
                    const struct vt_cmp **b, double *w)
{
  const size_t *o = t->order;
  size_t n = t->ncmp;
  const struct vt_cmp *c = t->cmps;
  if (n == 1 || cmp <= c[o[0]].cmp) {
    *a = *b = &c[o[0]];
    *w = 0;
    return;
  }
  if (cmp >= c[o[n - 1]].cmp) {
    *a = *b = &c[o[n - 1]];
    *w = 0;
    return;
  }
  size_t lo = 0, hi = n - 1;   /* c[o[lo]].cmp < cmp < c[o[hi]].cmp, or equal at lo */
  while (hi - lo > 1) {
    size_t mid = lo + (hi - lo) / 2;
    if (c[o[mid]].cmp <= cmp)
      lo = mid;
    else
      hi = mid;
  }
  *a = &c[o[lo]];
  *b = &c[o[hi]];
  *w = (double)(cmp - (*a)->cmp) / (double)((*b)->cmp - (*a)->cmp);
}

/* Adds the velocity function of one control CMP, sampled along t_i = t0 + (i0 + i)
 * dt, i < n: wgt * value into acc[i] (and eacc[i] when not NULL). One sweep,
 * segment by segment: the knot index only moves forward and each sample costs one
 * compare. */
static void add_knots(const velocity_table *t, const struct vt_cmp *c, double wgt, double t0,
                      double dt, size_t i0, size_t n, double *acc, double *eacc)
{
  const double *kt = t->time_s + c->first, *kv = t->vel + c->first;
  const double *ke = t->eta + c->first;
  size_t nk = c->n, i = 0;
#define TIME(j) (t0 + (double)(i0 + (j)) * dt)
  for (; i < n && TIME(i) <= kt[0]; i++) {   /* held before the first knot */
    acc[i] += wgt * kv[0];
    if (eacc)
      eacc[i] += wgt * ke[0];
  }
  for (size_t k = 0; k + 1 < nk && i < n; k++) {
    double ta = kt[k], tb = kt[k + 1];
    double sv = (kv[k + 1] - kv[k]) / (tb - ta), se = (ke[k + 1] - ke[k]) / (tb - ta);
    double tm;
    if (eacc)
      for (; i < n && (tm = TIME(i)) < tb; i++) {
        acc[i] += wgt * (kv[k] + sv * (tm - ta));
        eacc[i] += wgt * (ke[k] + se * (tm - ta));
      }
    else
      for (; i < n && (tm = TIME(i)) < tb; i++)
        acc[i] += wgt * (kv[k] + sv * (tm - ta));
  }
  for (; i < n; i++) {   /* held after the last knot */
    acc[i] += wgt * kv[nk - 1];
    if (eacc)
      eacc[i] += wgt * ke[nk - 1];
  }
#undef TIME
}

void velocity_sample(const velocity_table *t, int64_t cmp, double t_first_s, double dt_s,
                     size_t ns, float *vel_mps, float *eta)
{
  const struct vt_cmp *a, *b;
  double w;
  if (t->ncmp == 0) {   /* an empty table built in code: nothing to sample */
    memset(vel_mps, 0, ns * sizeof *vel_mps);
    if (eta)
      memset(eta, 0, ns * sizeof *eta);
    return;
  }
  bracket(t, cmp, &a, &b, &w);
  /* Accumulate in double over blocks of a small stack buffer (no allocation). */
  enum { BLK = 256 };
  double acc[BLK], eacc[BLK];
  for (size_t i0 = 0; i0 < ns; i0 += BLK) {
    size_t n = ns - i0 < BLK ? ns - i0 : BLK;
    memset(acc, 0, n * sizeof *acc);
    if (eta)
      memset(eacc, 0, n * sizeof *eacc);
    add_knots(t, a, 1.0 - w, t_first_s, dt_s, i0, n, acc, eta ? eacc : NULL);
    if (w > 0)
      add_knots(t, b, w, t_first_s, dt_s, i0, n, acc, eta ? eacc : NULL);
    for (size_t j = 0; j < n; j++)
      vel_mps[i0 + j] = (float)acc[j];
    if (eta)
      for (size_t j = 0; j < n; j++)
        eta[i0 + j] = (float)eacc[j];
  }
}

double velocity_at(const velocity_table *t, int64_t cmp, double time_s, double *eta)
{
  const struct vt_cmp *a, *b;
  double w, v = 0, e = 0;
  if (t->ncmp == 0)
    return 0;
  bracket(t, cmp, &a, &b, &w);
  add_knots(t, a, 1.0 - w, time_s, 1.0, 0, 1, &v, &e);
  if (w > 0)
    add_knots(t, b, w, time_s, 1.0, 0, 1, &v, &e);
  if (eta)
    *eta = e;
  return v;
}

/* ---- Dix ---- */

int velocity_dix(const double *t_s, const double *v_rms_mps, size_t n,
                 velocity_interval *out, tz_err *err)
{
  double z = 0, tprev = 0, vprev = 0;
  for (size_t k = 0; k < n; k++) {
    double tk = t_s[k], vk = v_rms_mps[k];
    if (!isfinite(tk) || tk < 0 || (k > 0 && tk <= tprev))
      return tz_fail(err, TZ_E_ARG, "Dix: knot %zu time %.10g s is not after %.10g s", k,
                     tk, tprev);
    if (!isfinite(vk) || vk <= 0)
      return tz_fail(err, TZ_E_ARG, "Dix: knot %zu velocity %.10g m/s is not positive", k,
                     vk);
    velocity_interval *iv = &out[k];
    iv->t_top_s = k ? tprev : 0.0;
    iv->t_base_s = tk;
    iv->v_rms_top_mps = k ? vprev : 0.0;
    iv->v_rms_base_mps = vk;
    if (k == 0 || tk == 0) {
      /* Surface layer: V_int = V_rms (Dix with t_{-1} = 0). */
      iv->v_int_sq = vk * vk;
    } else {
      /* Dix 1955: V_int^2 = (V_n^2 t_n - V_{n-1}^2 t_{n-1}) / (t_n - t_{n-1}). */
      iv->v_int_sq = (vk * vk * tk - vprev * vprev * tprev) / (tk - tprev);
    }
    iv->imaginary = !(iv->v_int_sq > 0);
    iv->v_int_mps = iv->imaginary ? NAN : sqrt(iv->v_int_sq);
    iv->z_top_m = z;
    z = iv->imaginary || isnan(z) ? NAN : z + iv->v_int_mps * (tk - iv->t_top_s) / 2;
    iv->z_base_m = z;
    tprev = tk;
    vprev = vk;
  }
  return TZ_OK;
}

int velocity_rms_from_interval(const double *t_s, const double *v_int_mps, size_t n,
                               double *v_rms_mps, tz_err *err)
{
  double sum = 0, tprev = 0;
  for (size_t k = 0; k < n; k++) {
    double tk = t_s[k], vk = v_int_mps[k];
    if (!isfinite(tk) || tk < 0 || (k > 0 && tk <= tprev))
      return tz_fail(err, TZ_E_ARG, "interval %zu: time %.10g s is not after %.10g s", k,
                     tk, tprev);
    if (!isfinite(vk) || vk <= 0)
      return tz_fail(err, TZ_E_ARG, "interval %zu: velocity %.10g m/s is not positive", k,
                     vk);
    sum += vk * vk * (tk - tprev);
    v_rms_mps[k] = tk > 0 ? sqrt(sum / tk) : vk;
    tprev = tk;
  }
  return TZ_OK;
}

double velocity_depth(const velocity_interval *iv, size_t n, double t_s)
{
  if (n == 0 || !(t_s >= 0))
    return NAN;
  size_t k = 0;
  while (k + 1 < n && iv[k].t_base_s < t_s)
    k++;
  if (iv[k].imaginary || isnan(iv[k].z_top_m))
    return NAN;
  return iv[k].z_top_m + iv[k].v_int_mps * (t_s - iv[k].t_top_s) / 2;
}

/* ---- checks ---- */

const char *velocity_warning_name(int kind)
{
  switch (kind) {
  case VELOCITY_WARN_IMAGINARY: return "imaginary";
  case VELOCITY_WARN_LOW: return "low";
  case VELOCITY_WARN_HIGH: return "high";
  case VELOCITY_WARN_INVERSION: return "inversion";
  case VELOCITY_WARN_OUTSIDE: return "outside_line";
  default: return "unknown";
  }
}

struct wlist {
  velocity_warning *w;
  size_t n, cap;
};

static int push(struct wlist *l, int kind, int64_t cmp, int64_t line,
                const velocity_interval *iv, double value, tz_err *err)
{
  if (l->n == l->cap) {
    size_t cap = l->cap ? l->cap * 2 : 16;
    velocity_warning *w = realloc(l->w, cap * sizeof *w);
    if (!w)
      return tz_fail(err, TZ_E_NOMEM, "velocity warnings");
    l->w = w;
    l->cap = cap;
  }
  velocity_warning *w = &l->w[l->n++];
  memset(w, 0, sizeof *w);
  w->kind = kind;
  w->cmp = cmp;
  w->line = line;
  w->t_top_s = iv->t_top_s;
  w->t_base_s = iv->t_base_s;
  w->value = value;
  double a = iv->t_top_s * 1e3, b = iv->t_base_s * 1e3;
  switch (kind) {
  case VELOCITY_WARN_IMAGINARY:
    snprintf(w->msg, sizeof w->msg,
             "cmp %lld, %.6g-%.6g ms: Dix interval velocity is imaginary "
             "(V_int^2 = %.6g m^2/s^2: V_rms^2 t decreases)", (long long)cmp, a, b, value);
    break;
  case VELOCITY_WARN_LOW:
  case VELOCITY_WARN_HIGH:
    snprintf(w->msg, sizeof w->msg,
             "cmp %lld, %.6g-%.6g ms: implausible interval velocity %.6g m/s", (long long)cmp,
             a, b, value);
    break;
  default:
    snprintf(w->msg, sizeof w->msg,
             "cmp %lld, %.6g-%.6g ms: RMS velocity inverts (falls by %.6g m/s)",
             (long long)cmp, a, b, value);
    break;
  }
  return TZ_OK;
}

int velocity_check(const velocity_table *t, double min_mps, double max_mps,
                   velocity_warning **out, size_t *n, tz_err *err)
{
  if (min_mps <= 0)
    min_mps = VELOCITY_PLAUSIBLE_MIN_MPS;
  if (max_mps <= 0)
    max_mps = VELOCITY_PLAUSIBLE_MAX_MPS;
  struct wlist l = { 0 };
  velocity_interval *iv = NULL;
  size_t cap = 0;
  int rc = TZ_OK;
  for (size_t i = 0; i < t->ncmp && !rc; i++) {
    const struct vt_cmp *c = &t->cmps[i];
    if (c->n > cap) {
      free(iv);
      cap = c->n;
      if (!(iv = malloc(cap * sizeof *iv))) {
        rc = tz_fail(err, TZ_E_NOMEM, "velocity intervals");
        break;
      }
    }
    rc = velocity_dix(t->time_s + c->first, t->vel + c->first, c->n, iv, err);
    for (size_t k = 0; k < c->n && !rc; k++) {
      int64_t line = t->line[c->first + k];
      if (k > 0 && iv[k].v_rms_base_mps < iv[k].v_rms_top_mps)
        rc = push(&l, VELOCITY_WARN_INVERSION, c->cmp, line, &iv[k],
                  iv[k].v_rms_top_mps - iv[k].v_rms_base_mps, err);
      if (rc)
        break;
      if (iv[k].imaginary)
        rc = push(&l, VELOCITY_WARN_IMAGINARY, c->cmp, line, &iv[k], iv[k].v_int_sq, err);
      else if (iv[k].v_int_mps < min_mps)
        rc = push(&l, VELOCITY_WARN_LOW, c->cmp, line, &iv[k], iv[k].v_int_mps, err);
      else if (iv[k].v_int_mps > max_mps)
        rc = push(&l, VELOCITY_WARN_HIGH, c->cmp, line, &iv[k], iv[k].v_int_mps, err);
    }
  }
  free(iv);
  if (rc) {
    free(l.w);
    return rc;
  }
  *out = l.w;
  *n = l.n;
  return TZ_OK;
}

int velocity_check_cmp_range(const velocity_table *t, int64_t first_cmp, int64_t last_cmp,
                             velocity_warning **out, size_t *n, tz_err *err)
{
  if (t->ncmp < 2)   /* one function for the whole line: where it sits does not matter */
    return TZ_OK;
  for (size_t i = 0; i < t->ncmp; i++) {
    int64_t c = t->cmps[i].cmp;
    if (c >= first_cmp && c <= last_cmp)
      continue;
    velocity_warning *w = realloc(*out, (*n + 1) * sizeof *w);
    if (!w)
      return tz_fail(err, TZ_E_NOMEM, "velocity warnings");
    *out = w;
    w += (*n)++;
    memset(w, 0, sizeof *w);
    w->kind = VELOCITY_WARN_OUTSIDE;
    w->cmp = c;
    w->line = t->line ? t->line[t->cmps[i].first] : 0;
    w->value = (double)c;
    snprintf(w->msg, sizeof w->msg,
             "control cmp %lld lies outside the line's CMPs %lld-%lld (a typo?): the line "
             "takes the nearest control CMPs' velocities instead", (long long)c,
             (long long)first_cmp, (long long)last_cmp);
  }
  return TZ_OK;
}
