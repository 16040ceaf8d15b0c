/* segy_reader.c -- opening SEG-Y rev 0/1/2 files and reading their traces.
 *
 * segy_open() reads the 3600 bytes of file headers, detects the textual
 * header's character set and the byte order, parses the revision leniently,
 * then settles where the traces are. The binary header may be read more than
 * one way (extended textual records counted whatever the revision, with or
 * without them; rev 2 extension counts of 2 or 4 bytes): each reading is
 * tried, the file size and a spot check of trace headers decide, and the
 * choice is reported. For each, the sample count and interval (binary
 * header first, the first trace header as fallback, common practice) and the
 * trace count: by arithmetic for fixed-length files, by a walk over the trace
 * headers (lengths from bytes 115-116) otherwise.
 *
 * Traces are read through a per-handle window. A regular file is mapped
 * (mmap, read-only) in pieces of up to MAP_PIECE bytes: headers are decoded
 * and samples converted straight out of the page cache, with no copy and no
 * system call per trace, and a header-only pass touches the same pages the
 * data pass later decodes from. When a file cannot be mapped (or the caller
 * asks, segy_open_opts.no_map) the window is a buffer (allocated at its first use)
 * filled with pread(): a sequential pass makes one large read per window and
 * no seeks; header-only access then reads just the header bytes.
 * At most one piece is mapped per handle, so the memory a pass holds does not
 * grow with the file or the number of files.
 *
 * Thread rule: one handle per thread; handles share nothing.
 * Not here: sample conversion (segy_conv.c), header fields (segy_map.c),
 * the writer (segy_writer.c).
 */
#include <ctype.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>

#include "segy_priv.h"
#include "tzero/fileio.h"

#define WINDOW_BYTES (1u << 20)
#define MAP_PIECE ((int64_t)16 << 20)   /* bytes mapped at a time */
#define MAX_EXTENDED_TEXT 100000   /* 3200-byte records: over 300 MB of text is absurd */
#define MAX_HEADER_EXTENSIONS 1000
#define MAX_STANZA_RECORDS 256     /* records searched for stanza names */
#define MAX_LAYOUTS 4              /* readings of the file structure tried */

struct segy_file {
  int fd;
  int order;
  segy_info info;
  segy_header_map map;
  int has_map;
  int ext;                  /* trace header extension blocks per trace */
  size_t hdr_bytes;         /* 240 * (1 + ext) */
  int64_t trace_bytes;      /* fixed-length: header + samples */
  int64_t data_end;         /* end of the trace data (before rev 2 trailers) */
  int64_t walk_end;         /* where the last walk stopped */
  int trailers_unknown;     /* rev 2 3529-3532 = -1 with a declared trace count */
  int64_t *toff;            /* variable-length: offset of each trace, else NULL */
  uint32_t *tns;            /* variable-length: samples of each trace */
  uint16_t *tnx;            /* variable-length rev 2: header extensions of each trace */
  int check_ns;             /* a different 115-116 in a fixed-length file is an error */
  char *path;
  unsigned char *scratch;   /* little-endian / pair-swapped files: bytes reordered here */
  unsigned char *win;       /* read window */
  size_t wincap;
  int64_t winoff;           /* file offset of win[0] */
  size_t winlen;            /* valid bytes in the window */
  int use_map;              /* the window is a mapping of the file, not a buffer */
  unsigned char *mbase;     /* mapped piece (page aligned), or NULL */
  int64_t mapoff;           /* file offset of map[0] */
  size_t maplen;
  long page;
  int64_t piece;            /* bytes mapped at a time */
  int64_t map_end;          /* a mapped piece need not reach beyond this byte (0: file end) */
  int64_t bad;
  const unsigned char *last;  /* sample bytes of the last trace read, big-endian */
};

static void warn(segy_info *in, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void warn(segy_info *in, const char *fmt, ...)
{
  int n = (int)(sizeof in->warnings / sizeof in->warnings[0]);
  if (in->nwarnings >= n)
    return;
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(in->warnings[in->nwarnings++], sizeof in->warnings[0], fmt, ap);
  va_end(ap);
}

/* Reads exactly n bytes at off; a short read is a malformed (truncated) file. */
static int read_at(segy_file *f, int64_t off, void *buf, size_t n, int64_t trace, tz_err *err)
{
  size_t got = 0;
  while (got < n) {
    ssize_t k = pread(f->fd, (char *)buf + got, n - got, (off_t)(off + (int64_t)got));
    if (k < 0) {
      if (errno == EINTR)
        continue;
      return tz_fail_os(err, TZ_E_IO, errno, "read failed at byte %lld",
                        (long long)(off + (int64_t)got));
    }
    if (k == 0)
      return tz_fail_at(err, TZ_E_FORMAT, trace, off + (int64_t)got,
                        "file ends %zu bytes early (truncated)", n - got);
    got += (size_t)k;
  }
  return TZ_OK;
}

/* Returns a pointer to bytes [off, off+n) through the window, refilling it
 * with one large read when needed. n must be <= f->wincap. */
static void unmap_piece(segy_file *f)
{
  if (f->mbase)
    munmap(f->mbase, f->maplen);
  f->mbase = NULL;
  f->maplen = 0;
  f->winlen = 0;
  f->winoff = -1;
}

/* Maps the piece of the file holding [off, off + n): from the page holding
 * off, at least MAP_PIECE bytes (n when longer), not beyond the file's end.
 * 0 on success; -1 when mmap fails (the caller falls back to pread). */
static int map_piece(segy_file *f, int64_t off, size_t n)
{
  unmap_piece(f);
  int64_t start = off - off % f->page;
  int64_t len = f->piece;
  if ((int64_t)n + (off - start) > len)
    len = (int64_t)n + (off - start);
  int64_t end = f->map_end > 0 && off + (int64_t)n <= f->map_end ? f->map_end : f->info.file_bytes;
  if (len > end - start)
    len = end - start;
  if (len <= 0)
    return -1;
  void *m = mmap(NULL, (size_t)len, PROT_READ, MAP_PRIVATE, f->fd, (off_t)start);
  if (m == MAP_FAILED)
    return -1;
  madvise(m, (size_t)len, MADV_SEQUENTIAL);
  f->mbase = m;
  f->maplen = (size_t)len;
  f->mapoff = start;
  f->win = NULL;
  f->winoff = start;
  f->winlen = (size_t)len;
  return 0;
}

static const unsigned char *window(segy_file *f, int64_t off, size_t n, int64_t trace,
                                   tz_err *err)
{
  if (off >= f->winoff && off + (int64_t)n <= f->winoff + (int64_t)f->winlen)
    return (f->mbase ? f->mbase : f->win) + (off - f->winoff);
  if (f->use_map) {
    if (off + (int64_t)n > f->info.file_bytes) {
      tz_fail_at(err, TZ_E_FORMAT, trace, f->info.file_bytes,
                 "file ends %lld bytes early (truncated)",
                 (long long)(off + (int64_t)n - f->info.file_bytes));
      return NULL;
    }
    if (map_piece(f, off, n) == 0)
      return f->mbase + (off - f->mapoff);
    /* cannot map (address space, a file system without mmap): read instead */
    f->use_map = 0;
  }
  /* allocated at the first read that needs it: a pass that reads only
   * headers (one pread each, segy_header_read) never does */
  if (!f->win && !(f->win = malloc(f->wincap))) {
    tz_fail(err, TZ_E_NOMEM, "read buffer of %zu bytes", f->wincap);
    return NULL;
  }
  size_t want = f->wincap;
  int64_t end = f->map_end > 0 && off + (int64_t)n <= f->map_end ? f->map_end : f->info.file_bytes;
  if ((int64_t)want > end - off)
    want = (size_t)(end - off);
  if (want < n)
    want = n;
  f->winlen = 0;
  if (read_at(f, off, f->win, want, trace, err))
    return NULL;
  f->winoff = off;
  f->winlen = want;
  return f->win;
}

static int detect_order(const unsigned char *bin)
{
  uint32_t c = be32_load(bin + 96);                 /* 3297-3300 */
  if (c == 0x01020304u)
    return SEGY_ORDER_BIG;
  if (c == 0x04030201u)
    return SEGY_ORDER_LITTLE;
  if (c == 0x02010403u)
    return SEGY_ORDER_PAIRS;
  /* No constant: the format code (3225-3226) read both ways (common practice). */
  int be = u16_to_i16(be16_load(bin + 24)), le = u16_to_i16(le16_load(bin + 24));
  if (segy_format_bytes(be) || be == 4)
    return SEGY_ORDER_BIG;
  if (segy_format_bytes(le) || le == 4)
    return SEGY_ORDER_LITTLE;
  return SEGY_ORDER_BIG;
}

/* Revision 3501-3502: rev 2 major/minor bytes, rev 1 0x0100, and the odd
 * encodings seen in the wild (1, 100; common practice). Never fatal. */
static void parse_revision(segy_info *in, int order)
{
  const unsigned char *p = in->binary + 300;
  in->revision_raw = be16_load(p);
  uint16_t file = segy_ld16(order, p);
  if (p[0] == 1 || p[0] == 2) {
    in->revision_major = p[0];
    in->revision_minor = p[1];
  } else if (file == 0x0100 || file == 0x0200) {
    in->revision_major = file >> 8;
  } else if (file == 1 || file == 100) {
    in->revision_major = 1;
  } else {
    if (in->revision_raw)
      warn(in, "revision field (bytes 3501-3502) holds 0x%04x; read as rev 0",
           in->revision_raw);
    in->revision_major = 0;
  }
}

static int16_t bin16(const segy_file *f, int pos) { return u16_to_i16(segy_ld16(f->order, f->info.binary + (pos - 3201))); }
static uint16_t binu16(const segy_file *f, int pos) { return segy_ld16(f->order, f->info.binary + (pos - 3201)); }
static int32_t bin32(const segy_file *f, int pos) { return u32_to_i32(segy_ld32(f->order, f->info.binary + (pos - 3201))); }
static uint64_t bin64(const segy_file *f, int pos) { return segy_ld64(f->order, f->info.binary + (pos - 3201)); }

/* ---- extended textual headers and data trailers ---- */

/* 1 when the record holds the ((SEG: EndText)) stanza, under either text
 * encoding, ignoring blanks and letter case (writers vary both). */
static int has_end_text(const unsigned char *rec)
{
  char txt[SEGY_TEXT_BYTES + 1], flat[SEGY_TEXT_BYTES + 1];
  for (int enc = 0; enc < 2; enc++) {
    segy_text_decode(rec, SEGY_TEXT_BYTES, enc ? SEGY_TEXT_ASCII : SEGY_TEXT_EBCDIC, txt);
    size_t k = 0;
    for (const char *p = txt; *p; p++)
      if (*p != ' ')
        flat[k++] = (char)toupper((unsigned char)*p);
    flat[k] = '\0';
    if (strstr(flat, "((SEG:ENDTEXT))"))
      return 1;
  }
  return 0;
}

/* Lists the stanza headers "((...))" of one 3200-byte record in in->stanzas. */
static void list_stanzas(segy_info *in, const unsigned char *rec, int record, int trailer)
{
  char txt[SEGY_TEXT_BYTES + 1];
  segy_text_decode(rec, SEGY_TEXT_BYTES, segy_text_detect(rec, SEGY_TEXT_BYTES), txt);
  for (const char *p = txt; (p = strstr(p, "((")) != NULL;) {
    const char *q = strstr(p + 2, "))");
    if (!q)
      break;
    const char *a = p + 2, *b = q;
    while (a < b && *a == ' ')
      a++;
    while (b > a && b[-1] == ' ')
      b--;
    if (b - a < 1 || b - a >= (ptrdiff_t)sizeof in->stanzas[0].name || memchr(a, '(', (size_t)(b - a))) {
      p += 2;                      /* not a stanza header: too long, empty or nested */
      continue;
    }
    if (in->nstanzas < SEGY_MAX_STANZAS) {
      segy_stanza *z = &in->stanzas[in->nstanzas++];
      memcpy(z->name, a, (size_t)(b - a));
      z->name[b - a] = '\0';
      z->record = record;
      z->trailer = trailer;
      z->layout = strcasestr(z->name, "layout") != NULL ||
                  (strcasestr(z->name, "header") && strcasestr(z->name, "map"));
    }
    p = q + 2;
  }
}

/* Reads records [0, n) of 3200 bytes starting at `off` for their stanza names
 * (at most MAX_STANZA_RECORDS of them). */
static int scan_records(segy_file *f, int64_t off, int64_t n, int trailer, tz_err *err)
{
  unsigned char rec[SEGY_TEXT_BYTES];
  for (int64_t k = 0; k < n && k < MAX_STANZA_RECORDS; k++) {
    if (off + SEGY_TEXT_BYTES * (k + 1) > f->info.file_bytes)
      break;
    if (read_at(f, off + SEGY_TEXT_BYTES * k, rec, sizeof rec, -1, err))
      return err->status;
    list_stanzas(&f->info, rec, (int)k + 1, trailer);
  }
  return TZ_OK;
}

/* The variable count (-1): records up to and including the one holding
 * ((SEG: EndText)). Returns the count, or 0 when no record holds it before
 * the end of the file or the first record that does not read as text. */
static int end_text_count(segy_file *f, tz_err *err)
{
  unsigned char rec[SEGY_TEXT_BYTES];
  for (int k = 0; k < MAX_EXTENDED_TEXT; k++) {
    int64_t off = 3600 + SEGY_TEXT_BYTES * (int64_t)k;
    if (off + SEGY_TEXT_BYTES > f->info.file_bytes)
      break;
    if (read_at(f, off, rec, sizeof rec, -1, err))
      return -1;
    if (has_end_text(rec))
      return k + 1;
    if (!segy_text_likely(rec, sizeof rec))
      break;                     /* past the text: no end stanza (and no long scan) */
  }
  return 0;
}

/* A sample interval read from a 16-bit field is valid when it is positive as
 * a signed value: 32768-65535 is negative as SEG-Y rev 1 stores it (i16). */
static int interval_valid(uint32_t v) { return v >= 1 && v <= 32767; }

static int check_samples(const segy_file *f, uint32_t ns, int64_t trace, int64_t byte,
                         tz_err *err)
{
  if (ns > SEGY_MAX_SAMPLES)
    return tz_fail_at(err, TZ_E_FORMAT, trace, byte,
                      "%u samples per trace is beyond the limit of %u", ns, SEGY_MAX_SAMPLES);
  (void)f;
  return TZ_OK;
}

/* Sample count of the trace whose header bytes are at h (rev 2 extension
 * 137-140 first when present), 0 if unset. */
static uint32_t header_samples(const segy_file *f, const unsigned char *h)
{
  if (f->ext > 0) {
    uint32_t x = segy_ld32(f->order, h + 240 + 136);
    if (x)
      return x;
  }
  return segy_ld16(f->order, h + 114);
}

static void drop_index(segy_file *f)
{
  free(f->toff);
  free(f->tns);
  free(f->tnx);
  f->toff = NULL;
  f->tns = NULL;
  f->tnx = NULL;
}

/* Walks the traces of a variable-length file, at most `limit` of them (0: to
 * the end of the trace data). Rev 2 traces may each carry fewer header
 * extensions than the binary header's maximum: the count is in extension
 * bytes 157-158 (SEG-Y rev 2.0, trace header extension 1). */
static int walk(segy_file *f, int64_t limit, tz_err *err)
{
  segy_info *in = &f->info;
  size_t cap = 0;
  int64_t n = 0, off = in->first_trace_offset;
  size_t probe = f->ext > 0 ? 2 * SEGY_TRACE_HEADER_BYTES : SEGY_TRACE_HEADER_BYTES;
  unsigned char h[2 * SEGY_TRACE_HEADER_BYTES];
  int rc = TZ_OK;
  int same = 1;
  uint32_t maxns = 0;
  while (off < f->data_end && (!limit || n < limit)) {
    if (f->data_end - off < (int64_t)probe) {
      rc = tz_fail_at(err, TZ_E_FORMAT, n, off,
                      "truncated trace header: %lld bytes left, a header is %zu",
                      (long long)(f->data_end - off), probe);
      break;
    }
    if ((rc = read_at(f, off, h, probe, n, err)))
      break;
    int k = f->ext;
    if (k > 0) {
      int kk = segy_ld16(f->order, h + 240 + 156);
      if (kk >= 1 && kk <= f->ext)
        k = kk;
    }
    int64_t hb = SEGY_TRACE_HEADER_BYTES * (int64_t)(1 + k);
    uint32_t ns = header_samples(f, h);
    if (!ns)
      ns = in->samples;
    if (!ns) {
      rc = tz_fail_at(err, TZ_E_FORMAT, n, off + 114,
                      "trace has 0 samples (bytes 115-116) and the binary header gives none");
      break;
    }
    if ((rc = check_samples(f, ns, n, off + 114, err)))
      break;
    int64_t len = hb + (int64_t)ns * in->bytes_per_sample;
    if (off + len > f->data_end) {
      rc = tz_fail_at(err, TZ_E_FORMAT, n, off,
                      "truncated last trace: %lld of %lld bytes present",
                      (long long)(f->data_end - off), (long long)len);
      break;
    }
    if ((size_t)n == cap) {
      cap = cap ? cap * 2 : 1024;
      int64_t *a = realloc(f->toff, cap * sizeof *a);
      if (a)
        f->toff = a;
      uint32_t *b = a ? realloc(f->tns, cap * sizeof *b) : NULL;
      if (b)
        f->tns = b;
      uint16_t *c = b && f->ext > 0 ? realloc(f->tnx, cap * sizeof *c) : NULL;
      if (c)
        f->tnx = c;
      if (!b || (f->ext > 0 && !c)) {
        rc = tz_fail(err, TZ_E_NOMEM, "trace index for %lld traces", (long long)n);
        break;
      }
    }
    f->toff[n] = off;
    f->tns[n] = ns;
    if (f->tnx)
      f->tnx[n] = (uint16_t)k;
    if (ns != f->tns[0] || (f->tnx && f->tnx[n] != f->tnx[0]))
      same = 0;
    if (ns > maxns)
      maxns = ns;
    n++;
    off += len;
  }
  if (rc)
    return rc;
  in->trace_count = n;
  f->walk_end = off;
  if (n && f->tns[0] != in->samples && in->samples)
    warn(in, "binary header says %u samples per trace, the first trace %u",
         in->samples, f->tns[0]);
  if (n)
    in->samples = same ? f->tns[0] : maxns;
  if (same) {
    if (n && f->tnx && f->tnx[0] != f->ext) {      /* every trace has fewer extensions */
      f->ext = f->tnx[0];
      f->hdr_bytes = SEGY_TRACE_HEADER_BYTES * (size_t)(1 + f->ext);
      in->trace_header_extensions = f->ext;
    }
    in->fixed_length = 1;
    f->trace_bytes = (int64_t)f->hdr_bytes + (int64_t)in->samples * in->bytes_per_sample;
    drop_index(f);
  } else {
    in->fixed_length = 0;
    warn(in, "trace lengths vary (up to %u samples)", maxns);
  }
  return TZ_OK;
}

/* Bytes left after the traces a rev 2 file declares (3513-3520): data trailer
 * records when their count is unknown (3529-3532 = -1) and they are whole
 * 3200-byte records; otherwise the file does not match its binary header. */
static int after_declared(segy_file *f, int64_t extra, int allow_partial, tz_err *err)
{
  segy_info *in = &f->info;
  in->trailing_bytes = 0;
  if (!extra)
    return TZ_OK;
  if (f->trailers_unknown && extra % SEGY_TEXT_BYTES == 0 &&
      extra / SEGY_TEXT_BYTES <= MAX_EXTENDED_TEXT) {
    in->trailer_records = (int)(extra / SEGY_TEXT_BYTES);
    return TZ_OK;
  }
  in->trailing_bytes = extra;
  if (!allow_partial)
    return tz_fail_at(err, TZ_E_FORMAT, in->trace_count, f->data_end,
                      "%lld bytes after the %lld traces the binary header declares (bytes "
                      "3513-3520) are neither traces nor data trailer records",
                      (long long)extra, (long long)in->declared_traces);
  warn(in, "%lld bytes after the %lld traces the binary header declares (bytes 3513-3520) "
           "ignored", (long long)extra, (long long)in->declared_traces);
  return TZ_OK;
}

/* Fixed-length trace count from the file size; picks between the binary and
 * the first trace header's sample count when only one divides evenly. */
static int fixed_count(segy_file *f, uint32_t alt_ns, int allow_partial, tz_err *err)
{
  segy_info *in = &f->info;
  int64_t body = f->data_end - in->first_trace_offset;
  int64_t tb = (int64_t)f->hdr_bytes + (int64_t)in->samples * in->bytes_per_sample;
  if (body % tb && alt_ns && alt_ns != in->samples) {
    int64_t tb2 = (int64_t)f->hdr_bytes + (int64_t)alt_ns * in->bytes_per_sample;
    if (body % tb2 == 0) {
      warn(in, "using the trace headers' %u samples per trace: the binary header's %u "
               "does not match the file size", alt_ns, in->samples);
      in->samples = alt_ns;
      tb = tb2;
      f->check_ns = 1;
    }
  }
  f->trace_bytes = tb;
  in->trace_count = body / tb;
  in->trailing_bytes = body % tb;
  int64_t decl = in->declared_traces;
  if (decl > 0 && decl <= in->trace_count) {
    /* rev 2: only the declared traces belong to the data set (3513-3520) */
    in->trace_count = decl;
    f->data_end = in->first_trace_offset + decl * tb;
    return after_declared(f, body - decl * tb, allow_partial, err);
  }
  if (in->trailing_bytes) {
    int64_t at = in->first_trace_offset + in->trace_count * tb;
    if (!allow_partial)
      return tz_fail_at(err, TZ_E_FORMAT, in->trace_count, at,
                        "truncated last trace: %lld of %lld bytes present",
                        (long long)in->trailing_bytes, (long long)tb);
    warn(in, "last trace truncated: %lld of %lld bytes ignored",
         (long long)in->trailing_bytes, (long long)tb);
  }
  return TZ_OK;
}

/* Settles samples per trace and the sample interval (binary header, rev 2
 * extended fields, first trace header, the caller's interval), then the trace
 * count, for the layout already set in f. */
static int place(segy_file *f, const segy_open_opts *o, tz_err *err)
{
  segy_info *in = &f->info;
  int rev2 = in->revision_major >= 2;
  f->hdr_bytes = SEGY_TRACE_HEADER_BYTES * (size_t)(1 + f->ext);
  in->trace_header_extensions = f->ext;

  /* samples and interval: binary header, rev 2 extended fields, first trace */
  in->bin_samples = binu16(f, 3221);
  in->interval_us_raw = binu16(f, 3217);
  in->bin_interval_us = in->interval_us_raw;
  in->interval_source = SEGY_INTERVAL_BINARY;
  if (rev2 && bin32(f, 3269) > 0)
    in->bin_samples = (uint32_t)bin32(f, 3269);
  int ext_dt = 0;
  if (rev2) {
    double dt = bits_f64(bin64(f, 3273));
    if (isfinite(dt) && dt > 0 && dt < 4e9) {
      in->bin_interval_us = (uint32_t)nearbyint(dt);
      ext_dt = in->bin_interval_us > 0;
    }
  }
  uint32_t tr_ns = 0, tr_dt = 0;
  unsigned char h0[SEGY_TRACE_HEADER_BYTES * 2];
  int have_first = in->first_trace_offset + (int64_t)f->hdr_bytes <= f->data_end;
  if (have_first) {
    size_t nb = f->hdr_bytes < sizeof h0 ? f->hdr_bytes : sizeof h0;
    if (read_at(f, in->first_trace_offset, h0, nb, 0, err))
      return err->status;
    int keep = f->ext;
    if (f->hdr_bytes > sizeof h0)
      f->ext = 1;
    tr_ns = header_samples(f, h0);
    f->ext = keep;
    tr_dt = segy_ld16(f->order, h0 + 116);
  }
  in->samples = in->bin_samples ? in->bin_samples : tr_ns;
  if (!in->samples)
    return tz_fail_at(err, TZ_E_FORMAT, have_first ? 0 : -1,
                      have_first ? in->first_trace_offset + 114 : 3220,
                      "samples per trace is 0 in the binary header (bytes 3221-3222)%s",
                      have_first ? " and in the first trace header (bytes 115-116)" :
                                   " and there is no trace to fall back on");
  int bin_ok = ext_dt || interval_valid(in->bin_interval_us);
  uint32_t given = o ? o->interval_us : 0;
  if (given) {
    in->interval_us = given;
    in->interval_source = SEGY_INTERVAL_GIVEN;
    uint32_t file_dt = bin_ok ? in->bin_interval_us : interval_valid(tr_dt) ? tr_dt : 0;
    if (file_dt && file_dt != given)
      warn(in, "sample interval %u us given; the file says %u us (ignored)", given, file_dt);
  } else if (bin_ok) {
    in->interval_us = in->bin_interval_us;
    in->interval_source = ext_dt ? SEGY_INTERVAL_EXTENDED : SEGY_INTERVAL_BINARY;
  } else if (interval_valid(tr_dt)) {
    in->interval_us = tr_dt;
    in->interval_source = SEGY_INTERVAL_TRACE;
  } else {
    char bin[96], tr[96];
    if (in->bin_interval_us)
      snprintf(bin, sizeof bin, "%u (invalid: %d as a signed 16-bit value)",
               in->bin_interval_us, (int)u16_to_i16((uint16_t)in->bin_interval_us));
    else
      snprintf(bin, sizeof bin, "0");
    if (!have_first)
      snprintf(tr, sizeof tr, "there is no trace to fall back on");
    else if (tr_dt)
      snprintf(tr, sizeof tr, "the first trace header (bytes 117-118) %u (invalid: %d as a "
               "signed 16-bit value)", tr_dt, (int)u16_to_i16((uint16_t)tr_dt));
    else
      snprintf(tr, sizeof tr, "the first trace header (bytes 117-118) 0");
    return tz_fail_at(err, TZ_E_FORMAT, have_first ? 0 : -1,
                      have_first ? in->first_trace_offset + 116 : 3216,
                      "no valid sample interval: the binary header (bytes 3217-3218) gives "
                      "%s, %s; give it with --interval-us or the job key \"interval_us\"",
                      bin, tr);
  }
  if (check_samples(f, in->samples, -1, 3220, err))
    return err->status;
  if (!in->bin_samples)
    warn(in, "binary header samples per trace is 0; using the first trace's %u", tr_ns);
  if (in->interval_source == SEGY_INTERVAL_TRACE) {
    if (in->bin_interval_us)
      warn(in, "binary header sample interval %u us (bytes 3217-3218) is invalid (%d as a "
               "signed 16-bit value); using the first trace's %u us", in->bin_interval_us,
           (int)u16_to_i16((uint16_t)in->bin_interval_us), tr_dt);
    else
      warn(in, "binary header sample interval is 0; using the first trace's %u us", tr_dt);
  }
  if (bin_ok && tr_dt && tr_dt != in->bin_interval_us)
    warn(in, "binary header says %u us sample interval, the first trace %u us%s",
         in->bin_interval_us, tr_dt, interval_valid(tr_dt) ? "" : " (invalid)");
  if (in->interval_us < 10)
    warn(in, "sample interval %u us is implausibly small (milliseconds written as "
             "microseconds?)", in->interval_us);
  f->check_ns = !(in->bin_samples && tr_ns && tr_ns != in->bin_samples);

  /* trace count */
  int fixed = in->revision_major >= 1 && bin16(f, 3503) == 1;
  int allow_partial = o && o->allow_partial;
  int rc;
  if (fixed) {
    in->fixed_length = 1;
    if (in->bin_samples && tr_ns && tr_ns != in->bin_samples &&
        (f->data_end - in->first_trace_offset) %
            ((int64_t)f->hdr_bytes + (int64_t)in->samples * in->bytes_per_sample) == 0)
      warn(in, "binary header says %u samples per trace, the first trace %u",
           in->bin_samples, tr_ns);
    rc = fixed_count(f, tr_ns, allow_partial, err);
  } else {
    tz_err werr;
    tz_err_init(&werr);
    rc = walk(f, in->declared_traces, &werr);
    if (rc == TZ_OK) {
      if (f->walk_end < f->data_end) {         /* stopped at the declared count */
        int64_t extra = f->data_end - f->walk_end;
        f->data_end = f->walk_end;
        rc = after_declared(f, extra, allow_partial, err);
      }
    } else {
      /* Rev 0 trace headers are often unreliable: fall back on the binary header
       * when it accounts for the file size exactly. */
      int64_t tb = (int64_t)f->hdr_bytes + (int64_t)in->samples * in->bytes_per_sample;
      if (werr.status == TZ_E_FORMAT && (f->data_end - in->first_trace_offset) % tb == 0) {
        drop_index(f);
        f->check_ns = 0;
        warn(in, "trace header sample counts are inconsistent; using %u samples per trace "
                 "from the binary header", in->samples);
        in->fixed_length = 1;
        rc = fixed_count(f, 0, allow_partial, err);
      } else {
        *err = werr;
        rc = err->status;
      }
    }
  }
  if (rc)
    return rc;
  int64_t decl = in->declared_traces;
  if (decl > 0 && decl > in->trace_count) {
    if (!allow_partial)
      return tz_fail_at(err, TZ_E_FORMAT, in->trace_count, f->data_end,
                        "binary header declares %lld traces (bytes 3513-3520), the file "
                        "holds %lld (truncated)", (long long)decl, (long long)in->trace_count);
    warn(in, "binary header declares %lld traces (bytes 3513-3520), the file holds %lld",
         (long long)decl, (long long)in->trace_count);
  }
  return TZ_OK;
}

/* One reading of where the traces are: the candidates settle() tries. */
typedef struct layout {
  int next;              /* extended textual header records */
  int64_t first;         /* byte offset of the first trace header */
  int ext;               /* trace header extensions per trace */
  int ext_bytes;         /* rev 2: 2 (3507-3508) or 4 (3507-3510); else 0 */
} layout;

/* Resets what place() sets, so that another layout can be tried. */
static void unplace(segy_file *f, const segy_info *saved)
{
  drop_index(f);
  f->info = *saved;
  f->trace_bytes = 0;
  f->walk_end = 0;
  f->check_ns = 0;
}

static int try_layout(segy_file *f, const segy_open_opts *o, const layout *l, int64_t data_end,
                      tz_err *err)
{
  segy_info *in = &f->info;
  in->extended_text_count = l->next;
  in->first_trace_offset = l->first;
  in->extension_count_bytes = l->ext_bytes;
  f->ext = l->ext;
  f->data_end = data_end;
  if (l->first > data_end)
    return tz_fail_at(err, TZ_E_FORMAT, -1, data_end,
                      "the first trace would start at byte %lld, past the end of the trace "
                      "data (byte %lld)", (long long)l->first, (long long)data_end);
  return place(f, o, err);
}

/* Spot check of a fixed-length reading: the headers of the second and the last
 * trace, where this reading puts them, should give the file's sample count and
 * interval (or 0), and extension 1 a sample count and block count that agree.
 * Under a wrong reading they land in sample bytes. Returns the misfits. */
static int spot_check(segy_file *f)
{
  const segy_info *in = &f->info;
  if (f->toff || in->trace_count < 2)
    return 0;
  int bad = 0;
  int64_t idx[2] = { 1, in->trace_count - 1 };
  for (int k = 0; k < 2; k++) {
    if (k && idx[1] == idx[0])
      break;
    unsigned char h[2 * SEGY_TRACE_HEADER_BYTES];
    size_t nb = f->ext > 0 ? sizeof h : SEGY_TRACE_HEADER_BYTES;
    tz_err e;
    tz_err_init(&e);
    if (read_at(f, in->first_trace_offset + idx[k] * f->trace_bytes, h, nb, idx[k], &e)) {
      bad += 10;
      continue;
    }
    uint32_t ns = segy_ld16(f->order, h + 114), dt = segy_ld16(f->order, h + 116);
    bad += ns && ns != in->samples && ns != (in->samples & 0xFFFF);
    bad += dt && dt != in->interval_us && dt != in->interval_us_raw;
    if (f->ext > 0) {
      uint32_t xs = segy_ld32(f->order, h + 240 + 136);
      int blocks = segy_ld16(f->order, h + 240 + 156);
      bad += xs && xs != in->samples;
      bad += blocks > f->ext;
    }
  }
  return bad;
}

/* How well a layout reads the file: lower is better; anomalies found while
 * reading with it (headers disagreeing, bytes left over) count against it. */
static int layout_cost(segy_file *f, int nwarn0)
{
  const segy_info *in = &f->info;
  return (in->nwarnings - nwarn0) + (in->trailing_bytes ? 10 : 0) +
         (in->declared_traces && in->declared_traces != in->trace_count ? 10 : 0) +
         spot_check(f);
}

static int settle(segy_file *f, const segy_open_opts *o, tz_err *err)
{
  segy_info *in = &f->info;
  int rev2 = in->revision_major >= 2;

  /* sample format */
  int code = o && o->format_code ? o->format_code : bin16(f, 3225);
  in->format_code = code;
  in->bytes_per_sample = segy_format_bytes(code);
  if (code == 4)
    return tz_fail_at(err, TZ_E_FORMAT, -1, 3224,
                      "unknown sample format code 4 (bytes 3225-3226): the obsolete 4-byte "
                      "fixed point with gain of SEG-Y rev 0 is not read; if the samples are "
                      "in another format, give its code (inspect --format)");
  /* SEG-Y rev 2.0 (2017) binary header bytes 3225-3226 define codes 1 to 16:
   * a value outside them is most often a file that is not SEG-Y at all */
  if (!in->bytes_per_sample && (code < 1 || code > 16))
    return tz_fail_at(err, TZ_E_FORMAT, -1, 3224,
                      "not a SEG-Y file? the sample format code at byte 3225 is %d (SEG-Y "
                      "defines codes 1 to 16 in bytes 3225-3226)", code);
  if (!in->bytes_per_sample)
    return tz_fail_at(err, TZ_E_FORMAT, -1, 3224,
                      "unknown sample format code %d (bytes 3225-3226)", code);

  /* header blocks */
  in->sorting_code = bin16(f, 3229);
  in->ensemble_fold = bin16(f, 3227);
  in->measurement_system = bin16(f, 3255);
  in->job_id = bin32(f, 3201);
  in->line_no = bin32(f, 3205);
  in->reel_no = bin32(f, 3209);
  in->traces_per_ensemble = bin16(f, 3213);
  in->aux_per_ensemble = bin16(f, 3215);
  if (rev2 && bin32(f, 3293))
    in->ensemble_fold = (int16_t)bin32(f, 3293);

  /* Trace header extensions (rev 2): the rev 2.1 layout has a 2-byte count at
   * 3507-3508 (3509-3510 survey type); earlier writers put one 4-byte count at
   * 3507-3510. Both readings are tried, the 2-byte one first. */
  int next_n = 0, ext_v[2] = { 0, 0 }, ext_w[2] = { 0, 0 };
  if (rev2) {
    int a = binu16(f, 3507);
    int64_t b = bin32(f, 3507);
    if (a <= MAX_HEADER_EXTENSIONS) {
      ext_v[next_n] = a;
      ext_w[next_n++] = 2;
    }
    if (b != a && b >= 0 && b <= MAX_HEADER_EXTENSIONS) {
      ext_v[next_n] = (int)b;
      ext_w[next_n++] = 4;
    }
    if (!next_n)
      return tz_fail_at(err, TZ_E_FORMAT, -1, 3506,
                        "additional trace headers: %d (bytes 3507-3508) and %lld (bytes "
                        "3507-3510 as one count) are both beyond the limit of %d", a,
                        (long long)b, MAX_HEADER_EXTENSIONS);
  } else {
    next_n = 1;
  }

  /* Rev 2 data trailer records (3529-3532) and trace count (3513-3520). */
  int64_t data_end = in->file_bytes;
  int trailers = 0;
  if (rev2) {
    uint64_t decl = bin64(f, 3513);
    in->declared_traces = decl > (uint64_t)in->file_bytes ? -1 : (int64_t)decl;
    if (in->declared_traces < 0)
      return tz_fail_at(err, TZ_E_FORMAT, -1, 3512,
                        "binary header declares %llu traces (bytes 3513-3520), more than "
                        "the %lld-byte file can hold", (unsigned long long)decl,
                        (long long)in->file_bytes);
    int32_t m = bin32(f, 3529);
    if (m > 0) {
      if (3600 + SEGY_TEXT_BYTES * (int64_t)m > in->file_bytes)
        return tz_fail_at(err, TZ_E_FORMAT, -1, 3528,
                          "%d data trailer records (bytes 3529-3532) do not fit in the file", m);
      trailers = m;
      data_end = in->file_bytes - SEGY_TEXT_BYTES * (int64_t)m;
    } else if (m < 0 && !in->declared_traces) {
      warn(in, "data trailer count unknown (bytes 3529-3532 = %d); none assumed", m);
    } else if (m == -1) {
      f->trailers_unknown = 1;
    }
  }
  in->trailer_records = trailers;

  /* Extended textual headers (3505-3506), read whatever the revision says:
   * many writers fill the count and leave the revision at 0. Two readings,
   * with and without the records; the file size decides. */
  int n = bin16(f, 3505);
  in->extended_text_declared = n;
  int with = -1;                       /* records under the "with" reading, -1 none */
  tz_err pending;                      /* why the count cannot be right, if it cannot */
  tz_err_init(&pending);
  uint64_t first = rev2 ? bin64(f, 3521) : 0;
  layout cand[MAX_LAYOUTS];
  int ncand = 0;
  int64_t firsts[2];
  int nexts[2], nt = 0;
  if (first) {
    if (first < 3600 || first > (uint64_t)data_end)
      return tz_fail_at(err, TZ_E_FORMAT, -1, 3520,
                        "first trace offset %llu (bytes 3521-3528) is outside the file",
                        (unsigned long long)first);
    firsts[nt] = (int64_t)first;
    nexts[nt++] = (int)(((int64_t)first - 3600) / SEGY_TEXT_BYTES);
  } else {
    if (n > 0) {
      if (3600 + SEGY_TEXT_BYTES * (int64_t)n <= data_end)
        with = n;
      else
        tz_fail_at(&pending, TZ_E_FORMAT, -1, 3504,
                   "%d extended textual header records (bytes 3505-3506) do not fit in a "
                   "%lld-byte file", n, (long long)in->file_bytes);
    } else if (n == -1) {
      int k = end_text_count(f, err);
      if (k < 0)
        return err->status;
      if (k)
        with = k;
      else
        tz_fail_at(&pending, TZ_E_FORMAT, -1, 3600,
                   "variable extended textual header (bytes 3505-3506 = -1) has no "
                   "((SEG: EndText)) record");
    } else if (n < -1) {
      tz_fail_at(&pending, TZ_E_FORMAT, -1, 3504,
                 "extended textual header count %d (bytes 3505-3506) is not -1, 0 or "
                 "positive", n);
    }
    /* Without the records the bytes after the binary header would be a trace;
     * a record that reads as text is not one. */
    unsigned char rec[SEGY_TEXT_BYTES];
    int textual = 0;
    if (n && 3600 + SEGY_TEXT_BYTES <= in->file_bytes) {
      if (read_at(f, 3600, rec, sizeof rec, -1, err))
        return err->status;
      textual = segy_text_likely(rec, sizeof rec);
    }
    int without_first = with > 0 && in->revision_major == 0 && !textual;
    if (with > 0 && !without_first) {
      firsts[nt] = 3600 + SEGY_TEXT_BYTES * (int64_t)with;
      nexts[nt++] = with;
    }
    if (!textual || n == 0) {
      firsts[nt] = 3600;
      nexts[nt++] = 0;
    }
    if (without_first) {
      firsts[nt] = 3600 + SEGY_TEXT_BYTES * (int64_t)with;
      nexts[nt++] = with;
    }
    /* -1 with no end stanza, or a count the file cannot hold, in rev 1 or
     * later: the count is wrong and no reading is safe. */
    if (pending.status && in->revision_major >= 1 && n == -1) {
      *err = pending;
      return err->status;
    }
  }
  for (int t = 0; t < nt; t++)
    for (int e = 0; e < next_n; e++)
      cand[ncand++] = (layout){ nexts[t], firsts[t], ext_v[e], ext_w[e] };

  /* Try each reading; keep the cheapest that reads the file, the first on ties. */
  segy_info saved = *in;
  int best = -1, best_cost = 0;
  for (int c = 0; c < ncand; c++) {
    tz_err terr;
    tz_err_init(&terr);
    int rc = try_layout(f, o, &cand[c], data_end, &terr);
    int cost = rc ? -1 : layout_cost(f, saved.nwarnings);
    unplace(f, &saved);
    if (!rc && (best < 0 || cost < best_cost)) {
      best = c;
      best_cost = cost;
    }
    if (!rc && !cost)
      break;
  }
  if (best < 0) {
    if (pending.status && (in->revision_major >= 1 || n == -1 || !ncand)) {
      *err = pending;
      return err->status;
    }
    return try_layout(f, o, &cand[0], data_end, err);   /* its error */
  }
  const layout *l = &cand[best];
  int rc = try_layout(f, o, l, data_end, err);
  if (rc)
    return rc;

  /* Say what was chosen where the file left a choice. */
  if (!first && l->next && in->revision_major == 0)
    warn(in, "revision 0 file with %d extended textual header records (bytes 3505-3506 = "
             "%d): read, as the file size fits", l->next, n);
  else if (!first && !l->next && n)
    warn(in, "extended textual header count %d (bytes 3505-3506) ignored: the file reads "
             "as whole traces only without such records", n);
  if (rev2 && l->ext_bytes == 4)
    warn(in, "additional trace headers: %d, read from bytes 3507-3510 as one 4-byte count "
             "(bytes 3507-3508 alone give %d, which does not fit the file size)", l->ext,
         binu16(f, 3507));
  if (f->trailers_unknown && in->trailer_records)
    warn(in, "data trailer count unknown (bytes 3529-3532 = -1): the %d records after the "
             "declared traces taken as trailer", in->trailer_records);
  trailers = in->trailer_records;

  /* Stanza names, from the records read and from the trailers. */
  if (l->next && scan_records(f, 3600, l->next, 0, err))
    return err->status;
  if (trailers && scan_records(f, in->file_bytes - SEGY_TEXT_BYTES * (int64_t)trailers,
                               trailers, 1, err))
    return err->status;
  for (int k = 0; k < in->nstanzas; k++)
    if (in->stanzas[k].layout)
      warn(in, "%s record %d holds a header layout stanza ((%s)): seen, not applied "
               "(fields are read at their standard bytes; --header-map moves them)",
           in->stanzas[k].trailer ? "data trailer" : "extended textual header",
           in->stanzas[k].record, in->stanzas[k].name);
  return TZ_OK;
}

int segy_open(segy_file **out, const char *path, const segy_open_opts *o, tz_err *err)
{
  segy_file *f = calloc(1, sizeof *f);
  if (!f)
    return tz_fail(err, TZ_E_NOMEM, "file handle");
  f->fd = -1;
  int rc = TZ_OK;
  /* a named pipe or device is refused before it can block the run */
  if ((rc = fileio_open_input(path, &f->fd, err)))
    goto fail;
  struct stat st;
  if (fstat(f->fd, &st) != 0) {
    rc = tz_fail_os(err, TZ_E_NOINPUT, errno, "cannot open");
    goto fail;
  }
  segy_info *in = &f->info;
  in->file_bytes = (int64_t)st.st_size;
  if (in->file_bytes < 3600) {
    rc = tz_fail_at(err, TZ_E_FORMAT, -1, in->file_bytes,
                    "file is %lld bytes, shorter than the 3600 bytes of SEG-Y file headers",
                    (long long)in->file_bytes);
    goto fail;
  }
  unsigned char head[3600];
  if ((rc = read_at(f, 0, head, sizeof head, -1, err)))
    goto fail;
  memcpy(in->binary, head + 3200, SEGY_BINARY_BYTES);
  in->text_encoding = segy_text_detect(head, SEGY_TEXT_BYTES);
  segy_text_decode(head, SEGY_TEXT_BYTES, in->text_encoding, in->text);
  f->order = o && o->byte_order ? o->byte_order : detect_order(in->binary);
  in->byte_order = f->order;
  parse_revision(in, f->order);
  if (o && o->interval_us > 1000000u) {
    rc = tz_fail(err, TZ_E_ARG, "sample interval %u us given is beyond 1000000 us",
                 o->interval_us);
    goto fail;
  }
  if (o && o->map) {
    f->map = *o->map;
    f->has_map = 1;
  }
  if ((rc = settle(f, o, err)))
    goto fail;
  size_t need = f->hdr_bytes + (size_t)in->samples * (size_t)in->bytes_per_sample;
  f->wincap = need > WINDOW_BYTES ? need : WINDOW_BYTES;
  f->winoff = -1;
  f->page = sysconf(_SC_PAGESIZE);
  if (f->page <= 0)
    f->page = 4096;
  f->use_map = !(o && o->no_map) && S_ISREG(st.st_mode);
  f->piece = o && o->map_bytes > 0 ? o->map_bytes : MAP_PIECE;
  f->piece += (f->page - f->piece % f->page) % f->page;
  if (f->order == SEGY_ORDER_LITTLE || f->order == SEGY_ORDER_PAIRS) {
    if (!(f->scratch = malloc(need))) {
      rc = tz_fail(err, TZ_E_NOMEM, "read buffer of %zu bytes", need);
      goto fail;
    }
  }
  if (!(f->path = strdup(path))) {
    rc = tz_fail(err, TZ_E_NOMEM, "file handle");
    goto fail;
  }
  *out = f;
  return TZ_OK;
fail:
  tz_err_path(err, path);
  segy_close(f);
  return rc;
}

void segy_close(segy_file *f)
{
  if (!f)
    return;
  unmap_piece(f);
  if (f->fd >= 0)
    close(f->fd);
  free(f->toff);
  free(f->tns);
  free(f->tnx);
  free(f->win);
  free(f->scratch);
  free(f->path);
  free(f);
}

const segy_info *segy_get_info(const segy_file *f) { return &f->info; }
int64_t segy_trace_count(const segy_file *f) { return f->info.trace_count; }
int64_t segy_bad_samples(const segy_file *f) { return f->bad; }

static int64_t trace_offset(const segy_file *f, int64_t i)
{
  return f->toff ? f->toff[i] : f->info.first_trace_offset + i * f->trace_bytes;
}

void segy_window_end(segy_file *f, int64_t end)
{
  f->map_end = end >= 0 && end < f->info.trace_count ? trace_offset(f, end) : 0;
}

static size_t trace_header_bytes(const segy_file *f, int64_t i)
{
  return f->tnx ? SEGY_TRACE_HEADER_BYTES * (size_t)(1 + f->tnx[i]) : f->hdr_bytes;
}

static uint32_t trace_samples(const segy_file *f, int64_t i)
{
  return f->tns ? f->tns[i] : f->info.samples;
}

/* Decodes the header bytes at p for trace i at offset off and applies the
 * file-level fallbacks and the fixed-length check. */
static int finish_header(segy_file *f, int64_t i, int64_t off, const unsigned char *p,
                         segy_trace_header *h, tz_err *err)
{
  segy_header_decode(p, f->order, f->has_map ? &f->map : NULL, h);
  uint32_t ns = trace_samples(f, i);
  uint32_t stored = header_samples(f, p);
  if (f->check_ns && !f->tns && stored && stored != ns && !f->has_map) {
    tz_err_path(err, f->path);
    return tz_fail_at(err, TZ_E_FORMAT, i, off + 114,
                      "trace length changes mid-file: %u samples (bytes 115-116) in a "
                      "fixed-length file of %u", stored, ns);
  }
  h->samples = ns;
  if (!interval_valid(h->interval_us) || f->info.interval_source == SEGY_INTERVAL_GIVEN)
    h->interval_us = f->info.interval_us;
  return TZ_OK;
}

static int check_index(const segy_file *f, int64_t i, tz_err *err)
{
  if (i < 0 || i >= f->info.trace_count)
    return tz_fail_at(err, TZ_E_ARG, i, -1, "no such trace (the file has %lld)",
                      (long long)f->info.trace_count);
  return TZ_OK;
}

int segy_header_read(segy_file *f, int64_t i, segy_trace_header *h, tz_err *err)
{
  if (check_index(f, i, err))
    return tz_err_path(err, f->path);
  int64_t off = trace_offset(f, i);
  size_t hb = trace_header_bytes(f, i);
  const unsigned char *p;
  unsigned char tmp[SEGY_TRACE_HEADER_BYTES * 2];
  if (f->use_map || (off >= f->winoff && off + (int64_t)hb <= f->winoff + (int64_t)f->winlen)) {
    if (!(p = window(f, off, hb, i, err)))
      return tz_err_path(err, f->path);
  } else if (hb <= sizeof tmp) {
    if (read_at(f, off, tmp, hb, i, err))
      return tz_err_path(err, f->path);
    p = tmp;
  } else if (!(p = window(f, off, hb, i, err)))
    return tz_err_path(err, f->path);
  return finish_header(f, i, off, p, h, err);
}

int segy_trace_read(segy_file *f, int64_t i, segy_trace_header *h, float *samples,
                    size_t cap, tz_err *err)
{
  if (check_index(f, i, err))
    return tz_err_path(err, f->path);
  uint32_t ns = trace_samples(f, i);
  if (cap < ns)
    return tz_fail_at(err, TZ_E_ARG, i, -1, "sample buffer of %zu is too small for %u samples",
                      cap, ns);
  int64_t off = trace_offset(f, i);
  size_t hb = trace_header_bytes(f, i);
  size_t nbytes = (size_t)ns * (size_t)f->info.bytes_per_sample;
  const unsigned char *p = window(f, off, hb + nbytes, i, err);
  if (!p || finish_header(f, i, off, p, h, err))
    return tz_err_path(err, f->path);
  unsigned char *s = (unsigned char *)p + hb;  /* big-endian: left untouched */
  if (f->scratch) {
    memcpy(f->scratch, s, nbytes);
    s = f->scratch;
  }
  f->bad += segy_decode_samples(f->info.format_code, f->order, s, ns, samples);
  f->last = s;
  return TZ_OK;
}

int segy_extensions_read(segy_file *f, int64_t i, unsigned char *out, size_t cap,
                         int *nblocks, tz_err *err)
{
  *nblocks = 0;
  if (check_index(f, i, err))
    return tz_err_path(err, f->path);
  size_t hb = trace_header_bytes(f, i);
  size_t nb = hb - SEGY_TRACE_HEADER_BYTES;
  if (!nb)
    return TZ_OK;
  if (cap < nb)
    return tz_fail_at(err, TZ_E_ARG, i, -1, "buffer of %zu bytes is too small for %zu bytes "
                      "of trace header extensions", cap, nb);
  if (read_at(f, trace_offset(f, i) + SEGY_TRACE_HEADER_BYTES, out, nb, i, err))
    return tz_err_path(err, f->path);
  *nblocks = (int)(nb / SEGY_TRACE_HEADER_BYTES);
  return TZ_OK;
}

const unsigned char *segy_last_sample_bytes(const segy_file *f) { return f->last; }
