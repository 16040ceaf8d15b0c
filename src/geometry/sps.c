/* sps.c -- SPS revision 2.1 point and relation files into a geometry table (sps.h).
 *
 * Each file is read whole and cut into lines; every record is decoded field by
 * field from its fixed columns (SEG Technical Standards Committee, "SPS format,
 * revision 2.1", 2006; the column table is in sps.h). Points are kept sorted by
 * (line name, index, point number in hundredths) and found by bisection, so a
 * relation's receiver range is one contiguous run. Matching is done once, at
 * parse time: every relation record gets its source point and the receiver point
 * of each of its channels, or a note saying why not.
 *
 * Not here: trace lookup and derived geometry (geometry.c), the line and
 * figures (survey.c, bins.c).
 */
#include "tzero/sps.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/fileio.h"

#define SPS_MAX_FILE_BYTES ((size_t)1 << 30)
#define NAME_LEN 10                      /* line names: columns 2-11 (10 characters) */

typedef struct point {
  char line[NAME_LEN + 1];
  int idx;
  int64_t pc;                            /* point number in hundredths */
  double x, y, z, depth;
  int64_t lineno;
  int used;
} point;

typedef struct relation {
  int32_t ffid;
  char sline[NAME_LEN + 1], rline[NAME_LEN + 1];
  int64_t spc, r0, r1;                   /* point numbers in hundredths */
  int sidx, ridx;
  int32_t ch0, ch1, chinc;
  int64_t lineno;
  size_t src;                            /* index into the source points */
  size_t first, n;                       /* its channels in chan[] / rcv[] */
  int matched;
} relation;

struct sps_set {
  char *name[3];
  point *pt[2];                          /* source, receiver points (sorted) */
  size_t npt[2];
  relation *rel;
  size_t nrel;
  int32_t *chan;                         /* channel numbers of matched relations */
  size_t *rcv;                           /* their receiver points */
  size_t nchan;
  size_t cappt[2], caprel;
  sps_unmatched *un;
  size_t nun, capun;
};

/* ---- fixed columns ---- */

typedef struct rec {
  const char *s;                         /* the line, not NUL-terminated */
  size_t len;
  int64_t lineno;
  const char *file;
} rec;

/* Columns a..b (1-based, inclusive), blanks trimmed, into out (cap >= b - a + 2). */
static void cols(const rec *r, int a, int b, char *out)
{
  size_t n = 0;
  for (int c = a; c <= b && (size_t)c <= r->len; c++)
    out[n++] = r->s[c - 1];
  out[n] = '\0';
  size_t i = 0;
  while (out[i] == ' ')
    i++;
  memmove(out, out + i, n - i + 1);
  n -= i;
  while (n && out[n - 1] == ' ')
    out[--n] = '\0';
}

static int bad(const rec *r, tz_err *err, int a, int b, const char *what, const char *v,
               const char *expect)
{
  tz_fail_line(err, TZ_E_FORMAT, r->lineno, "column%s %d%s%.0d (%s): '%s' %s", a == b ? "" : "s",
               a, a == b ? "" : "-", a == b ? 0 : b, what, v, expect);
  return tz_err_path(err, r->file);
}

/* A number in columns a..b; blank gives `dflt` when `optional`, else an error. */
static int num(const rec *r, int a, int b, const char *what, int optional, double dflt,
               double *out, tz_err *err)
{
  char v[32];
  cols(r, a, b, v);
  if (!v[0]) {
    if (optional) {
      *out = dflt;
      return TZ_OK;
    }
    return bad(r, err, a, b, what, v, "is blank (a number is required)");
  }
  char *end;
  double d = strtod(v, &end);
  if (*end || !isfinite(d) || strchr(v, 'x') || strchr(v, 'X') || strchr(v, 'n') ||
      strchr(v, 'N'))
    return bad(r, err, a, b, what, v, "is not a number");
  *out = d;
  return TZ_OK;
}

static int whole(const rec *r, int a, int b, const char *what, int optional, int64_t dflt,
                 int64_t lo, int64_t hi, int64_t *out, tz_err *err)
{
  char v[32];
  cols(r, a, b, v);
  if (!v[0]) {
    if (optional) {
      *out = dflt;
      return TZ_OK;
    }
    return bad(r, err, a, b, what, v, "is blank (a whole number is required)");
  }
  char *end;
  long long x = strtoll(v, &end, 10);
  if (*end)
    return bad(r, err, a, b, what, v, "is not a whole number");
  if (x < lo || x > hi) {
    char e[64];
    snprintf(e, sizeof e, "is outside %lld..%lld", (long long)lo, (long long)hi);
    return bad(r, err, a, b, what, v, e);
  }
  *out = x;
  return TZ_OK;
}

/* A point number in hundredths (the standard's F10.2). */
static int point_number(const rec *r, int a, int b, const char *what, int64_t *out, tz_err *err)
{
  double d;
  if (num(r, a, b, what, 0, 0, &d, err))
    return err->status;
  if (fabs(d) > 1e12)
    return bad(r, err, a, b, what, "", "is beyond 1e12");
  *out = (int64_t)llround(d * 100.0);
  return TZ_OK;
}

static int line_name(const rec *r, int a, int b, const char *what, char *out, tz_err *err)
{
  cols(r, a, b, out);
  if (!out[0])
    return bad(r, err, a, b, what, out, "is blank (a line name is required)");
  return TZ_OK;
}

/* ---- files into records ---- */

typedef int (*rec_fn)(sps_set *s, const rec *r, tz_err *err);

static int each_record(sps_set *s, const char *name, const char *text, size_t len, char id,
                       rec_fn fn, tz_err *err)
{
  size_t pos = 0, nrec = 0;
  int64_t lineno = 0;
  while (pos < len) {
    size_t e = pos;
    while (e < len && text[e] != '\n')
      e++;
    rec r = { text + pos, e - pos, ++lineno, name };
    pos = e + 1;
    if (r.len && r.s[r.len - 1] == '\r')
      r.len--;
    if (r.len > SPS_MAX_LINE_BYTES) {
      tz_fail_line(err, TZ_E_FORMAT, r.lineno, "a line of %zu bytes: not an SPS record "
                   "(80 columns)", r.len);
      return tz_err_path(err, name);
    }
    size_t k = 0;
    while (k < r.len && r.s[k] == ' ')
      k++;
    if (k == r.len || r.s[0] == 'H')
      continue;                            /* blank line or header record */
    for (size_t c = 0; c < r.len; c++)
      if (r.s[c] == '\t' || r.s[c] == '\0') {
        tz_fail_line(err, TZ_E_FORMAT, r.lineno, "column %zu: a %s in a fixed-column record "
                     "(SPS records are columns of characters padded with spaces)", c + 1,
                     r.s[c] ? "tab" : "NUL byte");
        return tz_err_path(err, name);
      }
    if (r.s[0] != id) {
      char v[2] = { r.s[0], 0 };
      char want[96];
      snprintf(want, sizeof want, "is not '%c' (nor 'H' for a header record) as this file's "
               "records must be", id);
      return bad(&r, err, 1, 1, "record identifier", v, want);
    }
    if (++nrec > SPS_MAX_RECORDS) {
      tz_fail_line(err, TZ_E_FORMAT, r.lineno, "more than %d records", SPS_MAX_RECORDS);
      return tz_err_path(err, name);
    }
    if (fn(s, &r, err))
      return err->status;
  }
  return TZ_OK;
}

static int grow(void **p, size_t *cap, size_t n, size_t size, tz_err *err)
{
  if (n < *cap)
    return TZ_OK;
  size_t nc = *cap ? 2 * *cap : 256;
  void *q = realloc(*p, nc * size);
  if (!q)
    return tz_fail(err, TZ_E_NOMEM, "SPS records");
  *p = q;
  *cap = nc;
  return TZ_OK;
}

static int add_point_to(sps_set *s, int kind, const rec *r, tz_err *err)
{
  point p;
  memset(&p, 0, sizeof p);
  int64_t idx;
  double v;
  if (line_name(r, 2, 11, "line name", p.line, err) ||
      point_number(r, 12, 21, "point number", &p.pc, err) ||
      whole(r, 24, 24, "point index", 1, 1, 0, 9, &idx, err))
    return err->status;
  p.idx = (int)idx;
  /* checked though not used: a malformed number here is a shifted record */
  if (num(r, 27, 30, "static correction", 1, 0, &v, err) ||
      num(r, 31, 34, "point depth", 1, 0, &p.depth, err) ||
      num(r, 35, 38, "seismic datum", 1, 0, &v, err) ||
      num(r, 39, 40, "uphole time", 1, 0, &v, err) ||
      num(r, 41, 46, "water depth", 1, 0, &v, err) ||
      num(r, 47, 55, "map grid easting", 0, 0, &p.x, err) ||
      num(r, 56, 65, "map grid northing", 0, 0, &p.y, err) ||
      num(r, 66, 71, "surface elevation", 1, 0, &p.z, err))
    return err->status;
  double lim = GEOMETRY_MAX_COORD_M + GEOMETRY_MAX_EXTENT_M;
  if (fabs(p.x) > lim || fabs(p.y) > lim || fabs(p.z) > GEOMETRY_MAX_HEIGHT_M ||
      fabs(p.depth) > GEOMETRY_MAX_HEIGHT_M) {
    int a = fabs(p.x) > lim ? 47 : fabs(p.y) > lim ? 56 : fabs(p.z) > GEOMETRY_MAX_HEIGHT_M ? 66 : 31;
    tz_fail_line(err, TZ_E_FORMAT, r->lineno, "column %d: %s %.6g is beyond %g", a,
                 a == 47 ? "easting" : a == 56 ? "northing" : a == 66 ? "surface elevation"
                                                                     : "point depth",
                 a == 47 ? p.x : a == 56 ? p.y : a == 66 ? p.z : p.depth,
                 a < 66 && a != 31 ? lim : GEOMETRY_MAX_HEIGHT_M);
    return tz_err_path(err, r->file);
  }
  p.lineno = r->lineno;
  if (grow((void **)&s->pt[kind], &s->cappt[kind], s->npt[kind], sizeof p, err))
    return err->status;
  s->pt[kind][s->npt[kind]++] = p;
  return TZ_OK;
}

static int add_source(sps_set *s, const rec *r, tz_err *err)
{
  return add_point_to(s, SPS_SOURCE, r, err);
}

static int add_receiver(sps_set *s, const rec *r, tz_err *err)
{
  return add_point_to(s, SPS_RECEIVER, r, err);
}

static int add_relation(sps_set *s, const rec *r, tz_err *err)
{
  relation x;
  memset(&x, 0, sizeof x);
  int64_t ffid, inc, sidx, ch0, ch1, chinc, ridx;
  if (whole(r, 8, 15, "field record number", 0, 0, INT32_MIN, INT32_MAX, &ffid, err) ||
      whole(r, 16, 16, "field record increment", 1, 1, 0, 9, &inc, err) ||
      line_name(r, 18, 27, "source line name", x.sline, err) ||
      point_number(r, 28, 37, "source point number", &x.spc, err) ||
      whole(r, 38, 38, "source point index", 1, 1, 0, 9, &sidx, err) ||
      whole(r, 39, 43, "from channel", 0, 0, 0, 99999, &ch0, err) ||
      whole(r, 44, 48, "to channel", 0, 0, 0, 99999, &ch1, err) ||
      whole(r, 49, 49, "channel increment", 1, 1, 1, 9, &chinc, err) ||
      line_name(r, 50, 59, "receiver line name", x.rline, err) ||
      point_number(r, 60, 69, "from receiver point", &x.r0, err) ||
      point_number(r, 70, 79, "to receiver point", &x.r1, err) ||
      whole(r, 80, 80, "receiver point index", 1, 1, 0, 9, &ridx, err))
    return err->status;
  if (ch1 < ch0 || (ch1 - ch0) % chinc) {
    tz_fail_line(err, TZ_E_FORMAT, r->lineno, "columns 39-49 (from channel %lld, to channel "
                 "%lld, channel increment %lld): the channels must run up from the first to the "
                 "last in whole increments", (long long)ch0, (long long)ch1, (long long)chinc);
    return tz_err_path(err, r->file);
  }
  x.ffid = (int32_t)ffid;
  x.sidx = (int)sidx;
  x.ridx = (int)ridx;
  x.ch0 = (int32_t)ch0;
  x.ch1 = (int32_t)ch1;
  x.chinc = (int32_t)chinc;
  x.lineno = r->lineno;
  if (grow((void **)&s->rel, &s->caprel, s->nrel, sizeof x, err))
    return err->status;
  s->rel[s->nrel++] = x;
  return TZ_OK;
}

/* ---- matching ---- */

static int cmp_key(const char *la, int ia, int64_t pa, const char *lb, int ib, int64_t pb)
{
  int c = strcmp(la, lb);
  if (c)
    return c;
  if (ia != ib)
    return ia < ib ? -1 : 1;
  return (pa > pb) - (pa < pb);
}

static int cmp_point(const void *a, const void *b)
{
  const point *x = a, *y = b;
  int c = cmp_key(x->line, x->idx, x->pc, y->line, y->idx, y->pc);
  return c ? c : (x->lineno > y->lineno) - (x->lineno < y->lineno);
}

/* First point not before (line, idx, pc). */
static size_t lower(const point *p, size_t n, const char *line, int idx, int64_t pc)
{
  size_t lo = 0, hi = n;
  while (lo < hi) {
    size_t mid = lo + (hi - lo) / 2;
    if (cmp_key(p[mid].line, p[mid].idx, p[mid].pc, line, idx, pc) < 0)
      lo = mid + 1;
    else
      hi = mid;
  }
  return lo;
}

static int find(const point *p, size_t n, const char *line, int idx, int64_t pc, size_t *at)
{
  size_t k = lower(p, n, line, idx, pc);
  if (k < n && !cmp_key(p[k].line, p[k].idx, p[k].pc, line, idx, pc)) {
    *at = k;
    return 1;
  }
  return 0;
}

static int note(sps_set *s, int kind, int64_t lineno, tz_err *err, const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));
static int note(sps_set *s, int kind, int64_t lineno, tz_err *err, const char *fmt, ...)
{
  if (grow((void **)&s->un, &s->capun, s->nun, sizeof *s->un, err))
    return err->status;
  sps_unmatched *u = &s->un[s->nun++];
  u->kind = kind;
  u->line = lineno;
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(u->what, sizeof u->what, fmt, ap);
  va_end(ap);
  return TZ_OK;
}

static void pt_text(int64_t pc, char *out, size_t cap)
{
  snprintf(out, cap, "%.2f", (double)pc / 100.0);
}

static int check_duplicates(sps_set *s, int kind, tz_err *err)
{
  const point *p = s->pt[kind];
  for (size_t i = 1; i < s->npt[kind]; i++)
    if (!cmp_key(p[i].line, p[i].idx, p[i].pc, p[i - 1].line, p[i - 1].idx, p[i - 1].pc)) {
      char t[32];
      pt_text(p[i].pc, t, sizeof t);
      tz_fail_line(err, TZ_E_FORMAT, p[i].lineno, "line %s point %s index %d is already given "
                   "on line %lld", p[i].line, t, p[i].idx, (long long)p[i - 1].lineno);
      return tz_err_path(err, s->name[kind]);
    }
  return TZ_OK;
}

/* The receiver points of relation x (sps.h), appended to chan[]/rcv[]; 0 and a
 * note when they cannot all be found. */
static int match_receivers(sps_set *s, relation *x, size_t *capchan, tz_err *err)
{
  const point *p = s->pt[SPS_RECEIVER];
  size_t np = s->npt[SPS_RECEIVER];
  size_t n = (size_t)((x->ch1 - x->ch0) / x->chinc) + 1;
  int64_t lo = x->r0 < x->r1 ? x->r0 : x->r1, hi = x->r0 < x->r1 ? x->r1 : x->r0;
  size_t a = lower(p, np, x->rline, x->ridx, lo), b = a;
  while (b < np && !strcmp(p[b].line, x->rline) && p[b].idx == x->ridx && p[b].pc <= hi)
    b++;
  size_t cap = s->nchan + n;
  if (cap > *capchan) {
    size_t nc = *capchan ? *capchan : 1024;
    while (nc < cap)
      nc *= 2;
    int32_t *c = realloc(s->chan, nc * sizeof *c);
    if (c)
      s->chan = c;
    size_t *r = realloc(s->rcv, nc * sizeof *r);
    if (r)
      s->rcv = r;
    if (!c || !r)
      return tz_fail(err, TZ_E_NOMEM, "SPS relations");
    *capchan = nc;
  }
  char t0[32], t1[32];
  pt_text(x->r0, t0, sizeof t0);
  pt_text(x->r1, t1, sizeof t1);
  if (b - a == n) {                          /* the R file's points in the range */
    for (size_t k = 0; k < n; k++) {
      s->chan[s->nchan + k] = x->ch0 + (int32_t)k * x->chinc;
      s->rcv[s->nchan + k] = x->r0 <= x->r1 ? a + k : b - 1 - k;
    }
  } else {                                   /* evenly spaced point numbers */
    int64_t span = x->r1 - x->r0;
    if (n == 1 ? span != 0 : span % (int64_t)(n - 1) != 0)
      return note(s, SPS_RELATION, x->lineno, err, "field record %d channels %d-%d: %zu "
                  "channels, but line %s index %d has %zu receiver points from %s to %s",
                  (int)x->ffid, (int)x->ch0, (int)x->ch1, n, x->rline, x->ridx, b - a, t0, t1);
    int64_t step = n == 1 ? 0 : span / (int64_t)(n - 1);
    for (size_t k = 0; k < n; k++) {
      size_t at;
      int64_t pc = x->r0 + (int64_t)k * step;
      if (!find(p, np, x->rline, x->ridx, pc, &at)) {
        char tp[32];
        pt_text(pc, tp, sizeof tp);
        return note(s, SPS_RELATION, x->lineno, err, "field record %d channel %d: receiver "
                    "line %s point %s index %d is not in the receiver file", (int)x->ffid,
                    (int)(x->ch0 + (int32_t)k * x->chinc), x->rline, tp, x->ridx);
      }
      s->chan[s->nchan + k] = x->ch0 + (int32_t)k * x->chinc;
      s->rcv[s->nchan + k] = at;
    }
  }
  x->first = s->nchan;
  x->n = n;
  x->matched = 1;
  s->nchan += n;
  return TZ_OK;
}

static int match(sps_set *s, tz_err *err)
{
  for (int k = 0; k < 2; k++) {
    if (s->npt[k])
      qsort(s->pt[k], s->npt[k], sizeof *s->pt[k], cmp_point);
    if (check_duplicates(s, k, err))
      return err->status;
  }
  size_t capchan = 0;
  for (size_t i = 0; i < s->nrel; i++) {
    relation *x = &s->rel[i];
    if (!find(s->pt[SPS_SOURCE], s->npt[SPS_SOURCE], x->sline, x->sidx, x->spc, &x->src)) {
      char t[32];
      pt_text(x->spc, t, sizeof t);
      if (note(s, SPS_RELATION, x->lineno, err, "field record %d: source line %s point %s "
               "index %d is not in the source file", (int)x->ffid, x->sline, t, x->sidx))
        return err->status;
      continue;
    }
    if (match_receivers(s, x, &capchan, err))
      return err->status;
    if (!x->matched)
      continue;
    s->pt[SPS_SOURCE][x->src].used = 1;
    for (size_t k = 0; k < x->n; k++)
      s->pt[SPS_RECEIVER][s->rcv[x->first + k]].used = 1;
  }
  for (int k = 0; k < 2; k++)
    for (size_t i = 0; i < s->npt[k]; i++) {
      const point *p = &s->pt[k][i];
      if (p->used)
        continue;
      char t[32];
      pt_text(p->pc, t, sizeof t);
      if (note(s, k, p->lineno, err, "%s line %s point %s index %d: in no matched relation "
               "record", k == SPS_SOURCE ? "source" : "receiver", p->line, t, p->idx))
        return err->status;
    }
  return TZ_OK;
}

static int cmp_unmatched(const void *a, const void *b)
{
  const sps_unmatched *x = a, *y = b;
  if (x->kind != y->kind)
    return x->kind - y->kind;
  return (x->line > y->line) - (x->line < y->line);
}

/* ---- public ---- */

int sps_parse(sps_set **out, const char *const names[3], const char *const texts[3],
              const size_t lens[3], tz_err *err)
{
  sps_set *s = calloc(1, sizeof *s);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "SPS set");
  int rc = TZ_OK;
  for (int k = 0; k < 3 && !rc; k++)
    if (!(s->name[k] = strdup(names[k] ? names[k] : "")))
      rc = tz_fail(err, TZ_E_NOMEM, "SPS set");
  static const char ids[3] = { 'S', 'R', 'X' };
  static const rec_fn fns[3] = { add_source, add_receiver, add_relation };
  for (int k = 0; k < 3 && !rc; k++)
    rc = each_record(s, s->name[k], texts[k], lens[k], ids[k], fns[k], err);
  for (int k = 0; k < 3 && !rc; k++) {
    size_t n = k < 2 ? s->npt[k] : s->nrel;
    if (!n) {
      rc = tz_fail(err, TZ_E_FORMAT, "no %c records (SPS revision 2.1 %s file)", ids[k],
                   k == 0 ? "source" : k == 1 ? "receiver" : "relation");
      tz_err_path(err, s->name[k]);
    }
  }
  if (!rc)
    rc = match(s, err);
  if (rc) {
    sps_free(s);
    return rc;
  }
  if (s->nun)
    qsort(s->un, s->nun, sizeof *s->un, cmp_unmatched);
  *out = s;
  return TZ_OK;
}

int sps_load(sps_set **out, const char *source_path, const char *receiver_path,
             const char *relation_path, tz_err *err)
{
  const char *names[3] = { source_path, receiver_path, relation_path };
  char *texts[3] = { NULL, NULL, NULL };
  size_t lens[3] = { 0, 0, 0 };
  int rc = TZ_OK;
  for (int k = 0; k < 3 && !rc; k++)
    if ((rc = fileio_read_all(names[k], SPS_MAX_FILE_BYTES, &texts[k], &lens[k], err)))
      tz_err_path(err, names[k]);
  if (!rc)
    rc = sps_parse(out, names, (const char *const *)texts, lens, err);
  for (int k = 0; k < 3; k++)
    free(texts[k]);
  return rc;
}

void sps_free(sps_set *s)
{
  if (!s)
    return;
  for (int k = 0; k < 3; k++)
    free(s->name[k]);
  free(s->pt[0]);
  free(s->pt[1]);
  free(s->rel);
  free(s->chan);
  free(s->rcv);
  free(s->un);
  free(s);
}

void sps_get_summary(const sps_set *s, sps_summary *o)
{
  memset(o, 0, sizeof *o);
  o->source_points = s->npt[SPS_SOURCE];
  o->receiver_points = s->npt[SPS_RECEIVER];
  o->relations = s->nrel;
  for (int k = 0; k < 2; k++)
    for (size_t i = 0; i < s->npt[k]; i++)
      *(k ? &o->receivers_used : &o->sources_used) += (size_t)s->pt[k][i].used;
  for (size_t i = 0; i < s->nrel; i++)
    o->relations_matched += (size_t)s->rel[i].matched;
  o->traces = s->nchan;
}

size_t sps_unmatched_count(const sps_set *s) { return s->nun; }

const sps_unmatched *sps_unmatched_get(const sps_set *s, size_t i)
{
  return i < s->nun ? &s->un[i] : NULL;
}

const char *sps_file_name(const sps_set *s, int kind)
{
  return kind >= 0 && kind < 3 ? s->name[kind] : "";
}

int sps_to_table(const sps_set *s, geometry_table **out, tz_err *err)
{
  geometry_table *t = NULL;
  if (geometry_table_new(&t, s->name[SPS_RELATION], err))
    return err->status;
  for (size_t i = 0; i < s->nrel; i++) {
    const relation *x = &s->rel[i];
    if (!x->matched)
      continue;
    const point *sp = &s->pt[SPS_SOURCE][x->src];
    for (size_t k = 0; k < x->n; k++) {
      const point *rp = &s->pt[SPS_RECEIVER][s->rcv[x->first + k]];
      geometry_trace g;
      memset(&g, 0, sizeof g);
      g.field_record = x->ffid;
      g.channel = s->chan[x->first + k];
      g.source_x = sp->x;
      g.source_y = sp->y;
      g.source_z = sp->z;
      g.source_depth = sp->depth;
      g.receiver_x = rp->x;
      g.receiver_y = rp->y;
      g.receiver_z = rp->z;
      if (geometry_table_add(t, &g, x->lineno, err)) {
        geometry_table_free(t);
        return err->status;
      }
    }
  }
  if (geometry_table_seal(t, err)) {
    geometry_table_free(t);
    return err->status;
  }
  *out = t;
  return TZ_OK;
}

int sps_geometry_source(const sps_set *s, geometry_source **out, tz_err *err)
{
  geometry_table *t = NULL;
  if (sps_to_table(s, &t, err))
    return err->status;
  return geometry_source_table(out, t, err);
}

int sps_load_source(geometry_source **out, const char *const paths[3], tz_err *err)
{
  sps_set *s = NULL;
  if (sps_load(&s, paths[0], paths[1], paths[2], err))
    return err->status;
  int rc = sps_geometry_source(s, out, err);
  sps_free(s);
  return rc;
}
