/* check_segy.c -- the SEG-Y module against published bit patterns, the
 * standard's byte positions and the independent segyio library.
 *
 * Sources: the check values of docs/references.md (1-5 IBM hexadecimal float, from
 * IBM System/360 Principles of Operation and hand computation; 8
 * EBCDIC from Python's cp037 codec; #9 the SEG-Y rev 1/rev 2 scalar rule; #29
 * the rev 1 file layout), SEG-Y rev 1 (2002) byte positions, and Python
 * segyio (Debian python3-segyio) reading the files tzero writes.
 */
#include <float.h>
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "io/segy_priv.h"
#include "tzero/segy.h"
#include "unit.h"

static char dir[512];

static const char *tmp_path(const char *name)
{
  static char buf[8][600];
  static int k;
  if (!dir[0]) {
    const char *w = getenv("WORK");
    snprintf(dir, sizeof dir, "%s/check_segy.XXXXXX", w && *w ? w : "/tmp");
    ck_assert_ptr_nonnull(mkdtemp(dir));
  }
  k = (k + 1) % 8;
  snprintf(buf[k], sizeof buf[k], "%s/%s", dir, name);
  return buf[k];
}

/* ---- IBM hexadecimal float ---- */

/* Check values 1, 2, 3 (first half) and 5 of docs/references.md: IBM System/360
 * hexadecimal float (IBM System/360 Principles of Operation), worked by hand. */
static const struct { uint32_t ibm; float want; } ibm_cases[] = {
  { 0xC276A000u, -118.625f },   /* #1 */
  { 0x42640000u, 100.0f },      /* #2 */
  { 0x41100000u, 1.0f },
  { 0xC1100000u, -1.0f },
  { 0x40800000u, 0.5f },
  { 0x41A00000u, 10.0f },
  { 0x3F800000u, 0.03125f },    /* #3: IEEE 1.0 read as IBM */
  { 0x7FFFFFFFu, 0.0f },        /* #5: 7.237e75 overflows float: a bad sample, read as 0 */
  { 0xFFFFFFFFu, 0.0f },        /* -7.237e75 likewise */
  { 0x00100000u, 0.0f },        /* #5: 5.4e-79 underflows float to 0 */
  { 0x80000000u, 0.0f },        /* #5: negative zero reads as 0 */
  { 0x00000000u, 0.0f },
};

START_TEST(test_ibm_decode)
{
  ck_assert_float_eq(segy_ibm_to_float(ibm_cases[_i].ibm), ibm_cases[_i].want);
}
END_TEST

/* #3 second half: bits 0x41100000 read as IEEE give 9.0 (docs/references.md, check values). */
START_TEST(test_wrong_format_symptom)
{
  unsigned char b[4] = { 0x41, 0x10, 0x00, 0x00 };
  float v;
  segy_decode_samples(5, SEGY_ORDER_BIG, b, 1, &v);
  ck_assert_float_eq(v, 9.0f);
}
END_TEST

/* #4: 0.1 rounds to 0x4019999A, which decodes to 0.10000002384 (docs/references.md, check values). */
START_TEST(test_ibm_encode)
{
  ck_assert_uint_eq(segy_float_to_ibm(0.1f), 0x4019999Au);
  ck_assert_float_eq_tol(segy_ibm_to_float(0x4019999Au), 0.10000002384f, 1e-10f);
  for (size_t i = 0; i < 6; i++)     /* the exact #1/#2 patterns encode back bit for bit */
    ck_assert_uint_eq(segy_float_to_ibm(ibm_cases[i].want), ibm_cases[i].ibm);
  ck_assert_uint_eq(segy_float_to_ibm(0.0f), 0);
  ck_assert_uint_eq(segy_float_to_ibm(-INFINITY), 0xFFFFFFFFu);
}
END_TEST

/* IBM keeps 21-24 bits, so IEEE -> IBM -> IEEE is within 2^-21 relative
 * (IBM System/360 Principles of Operation, hexadecimal floating point precision note); exact for values in range with 21 bits. */
START_TEST(test_ibm_round_trip_tolerance)
{
  unsigned seed = 99;
  for (int k = 0; k < 100000; k++) {
    seed = seed * 1103515245u + 12345u;
    float v = ldexpf((float)(seed >> 8) / 16777216.0f, (int)(seed % 200) - 100);
    if (seed & 1)
      v = -v;
    float r = segy_ibm_to_float(segy_float_to_ibm(v));
    ck_assert(fabsf(r - v) <= fabsf(v) * 4.8e-7f);
  }
}
END_TEST

/* ---- EBCDIC, scalar rule ---- */

/* #8: "C 1 CLIENT" in cp037 = C3 40 F1 40 C3 D3 C9 C5 D5 E3 (Python codecs). */
START_TEST(test_ebcdic)
{
  const char *s = "C 1 CLIENT";
  const unsigned char want[] = { 0xC3, 0x40, 0xF1, 0x40, 0xC3, 0xD3, 0xC9, 0xC5, 0xD5, 0xE3 };
  unsigned char enc[10];
  for (int i = 0; i < 10; i++) {
    enc[i] = segy_ascii_to_ebcdic((unsigned char)s[i]);
    ck_assert_uint_eq(enc[i], want[i]);
  }
  char back[11];
  segy_text_decode(enc, 10, SEGY_TEXT_EBCDIC, back);
  ck_assert_str_eq(back, s);
  ck_assert_int_eq(segy_text_detect(enc, 10), SEGY_TEXT_EBCDIC);
  ck_assert_int_eq(segy_text_detect((const unsigned char *)s, 10), SEGY_TEXT_ASCII);
}
END_TEST

/* #9: scalar rule (SEG-Y rev 1/rev 2): positive multiplies, negative divides, 0 = 1. */
START_TEST(test_scalar_rule)
{
  ck_assert_double_eq_tol(segy_apply_scalar(123456, -100), 1234.56, 1e-9);
  ck_assert_double_eq_tol(segy_apply_scalar(123456, 10), 1234560, 1e-9);
  ck_assert_double_eq_tol(segy_apply_scalar(123456, 0), 123456, 1e-9);
  ck_assert_double_eq_tol(segy_apply_scalar(-5000, -10), -500.0, 1e-9);
}
END_TEST

/* ---- writer and reader ---- */

static void fill_header(segy_trace_header *h, int i)
{
  memset(h, 0, sizeof *h);
  h->line_seq = i + 1;
  h->file_seq = i + 1;
  h->field_record = 1001 + i / 4;
  h->channel = i % 4 + 1;
  h->source_point = 7;
  h->cmp = 200 + i;
  h->cmp_trace = 1;
  h->kind = i == 2 ? SEGY_KIND_DEAD : SEGY_KIND_SEISMIC;
  h->stacked_traces = 3;
  h->offset = -125.0 + 25 * i;
  h->receiver_elev = 101.5;
  h->source_elev = 99.5;
  h->coord_scalar = -100;
  h->elev_scalar = -10;
  h->source_x = 512345.67;
  h->source_y = 6123456.78;
  h->receiver_x = 512345.67 + 12.5 * i;
  h->receiver_y = 6123456.78;
  h->coord_units = 1;
  h->delay_ms = 8;
  h->mute_start_ms = 1;
  h->mute_end_ms = 20;
  h->cmp_x = 512300.25 + i;
  h->cmp_y = 6123400.5;
  h->inline_no = 4;
  h->crossline_no = 300 + i;
  h->shotpoint = 55;
  h->shotpoint_scalar = 1;
}

static float sample_value(int i, int k) { return (float)sin(0.1 * k + i) * (float)(1 + i); }

static const char *write_file(const char *name, int format, int rev, int ntr, uint32_t ns)
{
  const char *path = tmp_path(name);
  segy_writer_opts o = { .revision = rev, .format_code = format, .samples = ns,
                        .interval_us = 2000, .sorting_code = 1, .ensemble_fold = 4,
                        .traces_per_ensemble = 4, .line_no = 17,
                        .text = "CLIENT INVENTED EXPLORATION LTD\nLINE NORTH-7" };
  segy_writer *w = NULL;
  tz_err err;
  tz_err_init(&err);
  ck_assert_int_eq(segy_writer_open(&w, path, &o, &err), TZ_OK);
  float *s = malloc(ns * sizeof *s);
  for (int i = 0; i < ntr; i++) {
    segy_trace_header h;
    fill_header(&h, i);
    for (uint32_t k = 0; k < ns; k++)
      s[k] = sample_value(i, (int)k);
    ck_assert_int_eq(segy_trace_write(w, &h, s, &err), TZ_OK);
    if (i == 0)    /* nothing at the final path until finish (fileio contract) */
      ck_assert_int_ne(access(path, F_OK), 0);
  }
  free(s);
  ck_assert_int_eq(segy_writer_finish(w, &err), TZ_OK);
  return path;
}

static void check_read_back(const char *path, int format, int rev, int ntr, uint32_t ns)
{
  segy_file *f = NULL;
  tz_err err;
  tz_err_init(&err);
  ck_assert_msg(segy_open(&f, path, NULL, &err) == TZ_OK, "%s", err.msg);
  const segy_info *in = segy_get_info(f);
  ck_assert_int_eq(in->format_code, format);
  ck_assert_int_eq(in->revision_major, rev);
  ck_assert_int_eq(in->byte_order, SEGY_ORDER_BIG);
  ck_assert_int_eq(in->text_encoding, SEGY_TEXT_EBCDIC);
  ck_assert_uint_eq(in->samples, ns);
  ck_assert_uint_eq(in->interval_us, 2000);
  ck_assert_int_eq(segy_trace_count(f), ntr);
  ck_assert_int_eq(in->nwarnings, 0);
  ck_assert(strncmp(in->text, "C 1 CLIENT INVENTED EXPLORATION LTD", 35) == 0);
  /* cards 39 and 40 as SEG-Y rev 1 (2002), textual file header gives them */
  ck_assert(strncmp(in->text + 38 * 80, rev == 2 ? "C39 SEG-Y_REV2.0" : "C39 SEG Y REV1", 14) == 0);
  ck_assert(strncmp(in->text + 39 * 80, "C40 END TEXTUAL HEADER", 22) == 0);
  float *s = malloc(ns * sizeof *s);
  for (int i = 0; i < ntr; i++) {
    segy_trace_header h, want;
    fill_header(&want, i);
    ck_assert_int_eq(segy_trace_read(f, i, &h, s, ns, &err), TZ_OK);
    ck_assert_int_eq(h.field_record, want.field_record);
    ck_assert_int_eq(h.channel, want.channel);
    ck_assert_int_eq(h.cmp, want.cmp);
    ck_assert_int_eq(h.kind, want.kind);
    ck_assert_double_eq_tol(h.offset, want.offset, 1e-9);
    ck_assert_double_eq_tol(h.receiver_elev, want.receiver_elev, 1e-9);
    ck_assert_double_eq_tol(h.source_x, want.source_x, 1e-6);
    ck_assert_double_eq_tol(h.receiver_x, want.receiver_x, 1e-6);
    ck_assert_double_eq_tol(h.cmp_y, want.cmp_y, 1e-6);
    ck_assert_int_eq(h.crossline_no, want.crossline_no);
    ck_assert_int_eq(h.delay_ms, 8);
    ck_assert_uint_eq(h.samples, ns);
    ck_assert_uint_eq(h.interval_us, 2000);
    for (uint32_t k = 0; k < ns; k++) {
      float v = sample_value(i, (int)k);
      if (format == 5)
        ck_assert_float_eq(s[k], v);
      else
        ck_assert(fabsf(s[k] - v) <= fabsf(v) * 4.8e-7f);
    }
    segy_trace_header h2;   /* header-only access gives the same header */
    ck_assert_int_eq(segy_header_read(f, i, &h2, &err), TZ_OK);
    ck_assert_mem_eq(h2.raw, h.raw, SEGY_TRACE_HEADER_BYTES);
  }
  free(s);
  segy_close(f);
}

static const struct { int format, rev; } wr_cases[] = { { 5, 1 }, { 1, 1 }, { 5, 2 }, { 1, 2 } };

START_TEST(test_write_read)
{
  int fmt = wr_cases[_i].format, rev = wr_cases[_i].rev;
  const char *p = write_file("wr.sgy", fmt, rev, 9, 50);
  check_read_back(p, fmt, rev, 9, 50);
  unlink(p);
}
END_TEST

/* #29: 1000 samples, format 5, no extended headers, 500 traces, rev 1:
 * 3600 + 500 * (240 + 4000) = 2 123 600 bytes (docs/references.md, check values). */
START_TEST(test_file_size)
{
  const char *p = write_file("size.sgy", 5, 1, 500, 1000);
  struct stat st;
  ck_assert_int_eq(stat(p, &st), 0);
  ck_assert_int_eq(st.st_size, 2123600);
  unlink(p);
}
END_TEST

/* Files tzero writes, read by the independent segyio library: identical samples
 * (IEEE bit for bit; IBM exactly, since segyio's IBM decoding is exact for
 * in-range values) and identical header values at the SEG-Y rev 1 positions. */
START_TEST(test_segyio_reads_ours)
{
  int fmt = _i ? 1 : 5;
  const int ntr = 5;
  const uint32_t ns = 20;
  const char *p = write_file(fmt == 1 ? "x_ibm.sgy" : "x_ieee.sgy", fmt, 1, ntr, ns);
  const char *top = getenv("TOP"), *py = getenv("PYTHON");
  char cmd[2048];
  snprintf(cmd, sizeof cmd, "%s %s/tests/xcheck/segyio_dump.py %s", py ? py : "/usr/bin/python3",
           top ? top : ".", p);
  FILE *fp = popen(cmd, "r");
  ck_assert_ptr_nonnull(fp);
  char line[8192];
  int nbin = 0, nhdr = 0, ntrc = 0;
  while (fgets(line, sizeof line, fp)) {
    int pos, i;
    long long v;
    if (sscanf(line, "bin %d %lld", &pos, &v) == 2) {
      long long want = pos == 3217 ? 2000 : pos == 3221 ? (long long)ns : pos == 3225 ? fmt
                     : pos == 3227 ? 4 : pos == 3229 ? 1 : pos == 3255 ? 1 : pos == 3213 ? 4
                     : pos == 3205 ? 17 : pos == 3501 ? 0x0100 : pos == 3503 ? 1 : 0;
      ck_assert_msg(v == want, "binary header byte %d: segyio %lld, expected %lld", pos, v, want);
      nbin++;
    } else if (sscanf(line, "hdr %d %d %lld", &i, &pos, &v) == 3) {
      segy_trace_header h;
      fill_header(&h, i);
      long long want;
      switch (pos) {
      case 1: want = h.line_seq; break;
      case 5: want = h.file_seq; break;
      case 9: want = h.field_record; break;
      case 13: want = h.channel; break;
      case 17: want = h.source_point; break;
      case 21: want = h.cmp; break;
      case 25: want = h.cmp_trace; break;
      case 29: want = h.kind; break;
      case 33: want = h.stacked_traces; break;
      case 37: want = llround(h.offset); break;
      case 41: want = llround(h.receiver_elev * 10); break;    /* scalar -10 */
      case 45: want = llround(h.source_elev * 10); break;
      case 69: want = -10; break;
      case 71: want = -100; break;
      case 73: want = llround(h.source_x * 100); break;       /* scalar -100 */
      case 77: want = llround(h.source_y * 100); break;
      case 81: want = llround(h.receiver_x * 100); break;
      case 85: want = llround(h.receiver_y * 100); break;
      case 89: want = 1; break;
      case 109: want = 8; break;
      case 111: want = 1; break;
      case 113: want = 20; break;
      case 115: want = ns; break;
      case 117: want = 2000; break;
      case 181: want = llround(h.cmp_x * 100); break;
      case 185: want = llround(h.cmp_y * 100); break;
      case 189: want = h.inline_no; break;
      case 193: want = h.crossline_no; break;
      case 197: want = h.shotpoint; break;
      case 201: want = h.shotpoint_scalar; break;
      default: want = 0; break;
      }
      ck_assert_msg(v == want, "trace %d byte %d: segyio %lld, expected %lld", i, pos, v, want);
      nhdr++;
    } else if (sscanf(line, "trc %d", &i) == 1) {
      char *q = line + 4;
      strtol(q, &q, 10);
      for (uint32_t k = 0; k < ns; k++) {
        float v2 = strtof(q, &q), want = sample_value(i, (int)k);
        if (fmt == 5)
          ck_assert_msg(v2 == want, "trace %d sample %u: segyio %.9g, ours %.9g", i, k, v2, want);
        else
          ck_assert(fabsf(v2 - want) <= fabsf(want) * 4.8e-7f);
      }
      ntrc++;
    } else if (!strncmp(line, "text ", 5)) {
      ck_assert(strncmp(line + 5, "C_1_CLIENT_INVENTED", 19) == 0);  /* segyio decodes EBCDIC */
    }
  }
  ck_assert_int_eq(pclose(fp), 0);
  ck_assert_int_eq(nbin, 11);
  ck_assert_int_eq(nhdr, 30 * ntr);
  ck_assert_int_eq(ntrc, ntr);
  unlink(p);
}
END_TEST

/* ---- malformed input ---- */

static void write_bytes(const char *path, const unsigned char *b, size_t n)
{
  FILE *fp = fopen(path, "wb");
  ck_assert_ptr_nonnull(fp);
  ck_assert_uint_eq(fwrite(b, 1, n, fp), n);
  fclose(fp);
}

START_TEST(test_short_file)
{
  unsigned char b[3000] = { 0 };
  const char *p = tmp_path("short.sgy");
  write_bytes(p, b, sizeof b);
  segy_file *f = NULL;
  tz_err err;
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, p, NULL, &err), TZ_E_FORMAT);
  ck_assert_str_eq(err.path, p);
  ck_assert_int_eq(err.byte, 3000);
  ck_assert_ptr_nonnull(strstr(err.msg, "shorter than the 3600 bytes"));
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, tmp_path("missing.sgy"), NULL, &err), TZ_E_NOINPUT);
}
END_TEST

static unsigned char *copy_file(const char *path, size_t *n)
{
  FILE *fp = fopen(path, "rb");
  ck_assert_ptr_nonnull(fp);
  fseek(fp, 0, SEEK_END);
  *n = (size_t)ftell(fp);
  rewind(fp);
  unsigned char *b = malloc(*n);
  ck_assert_uint_eq(fread(b, 1, *n, fp), *n);
  fclose(fp);
  return b;
}

START_TEST(test_corrupt)
{
  const char *good = write_file("good.sgy", 5, 1, 4, 10);
  size_t n;
  unsigned char *b = copy_file(good, &n);
  const char *p = tmp_path("bad.sgy");
  segy_file *f = NULL;
  tz_err err;

  /* unknown format code 13 (undefined in rev 2, SEG-Y rev 2.0 (2017), data sample format codes) */
  b[3225 - 1] = 0; b[3226 - 1] = 13;
  write_bytes(p, b, n);
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, p, NULL, &err), TZ_E_FORMAT);
  ck_assert_int_eq(err.byte, 3224);
  ck_assert_ptr_nonnull(strstr(err.msg, "unknown sample format code 13"));
  b[3226 - 1] = 5;

  /* truncated last trace: error, or a warning with allow_partial */
  write_bytes(p, b, n - 7);
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, p, NULL, &err), TZ_E_FORMAT);
  ck_assert_int_eq(err.trace, 3);
  ck_assert_int_eq(err.byte, 3600 + 3 * 280);
  ck_assert_ptr_nonnull(strstr(err.msg, "truncated last trace"));
  segy_open_opts oo = { .allow_partial = 1 };
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, p, &oo, &err), TZ_OK);
  ck_assert_int_eq(segy_trace_count(f), 3);
  ck_assert_int_eq(segy_get_info(f)->nwarnings, 1);
  segy_close(f);

  /* zero samples in the binary header and in the first trace header */
  memset(b + 3220, 0, 2);
  memset(b + 3600 + 114, 0, 2);
  write_bytes(p, b, n);
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, p, NULL, &err), TZ_E_FORMAT);
  ck_assert_int_eq(err.byte, 3600 + 114);
  ck_assert_ptr_nonnull(strstr(err.msg, "samples per trace is 0"));

  /* zero in the binary header only: the first trace header is the fallback */
  b[3600 + 114] = 0; b[3600 + 115] = 10;
  write_bytes(p, b, n);
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, p, NULL, &err), TZ_OK);
  ck_assert_uint_eq(segy_get_info(f)->samples, 10);
  ck_assert_int_eq(segy_get_info(f)->nwarnings, 1);
  segy_close(f);

  /* trace length changing mid-file in a fixed-length file */
  b[3221 - 1] = 0; b[3222 - 1] = 10;
  b[3600 + 2 * 280 + 115] = 11;
  write_bytes(p, b, n);
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&f, p, NULL, &err), TZ_OK);
  segy_trace_header h;
  float s[16];
  ck_assert_int_eq(segy_trace_read(f, 1, &h, s, 16, &err), TZ_OK);
  ck_assert_int_eq(segy_trace_read(f, 2, &h, s, 16, &err), TZ_E_FORMAT);
  ck_assert_int_eq(err.trace, 2);
  ck_assert_int_eq(err.byte, 3600 + 2 * 280 + 114);
  ck_assert_ptr_nonnull(strstr(err.msg, "trace length changes mid-file"));
  ck_assert_str_eq(err.path, p);
  segy_close(f);
  free(b);
  unlink(p);
  unlink(good);
}
END_TEST

/* NaN and Inf in IEEE data are replaced by 0 and counted (docs/segy-reading.md). */
START_TEST(test_nan_counted)
{
  unsigned char b[16] = { 0x7F, 0xC0, 0, 0,  0x7F, 0x80, 0, 0,  0x3F, 0x80, 0, 0,  0xFF, 0x80, 0, 0 };
  float v[4];
  ck_assert_int_eq(segy_decode_samples(5, SEGY_ORDER_BIG, b, 4, v), 3);
  ck_assert_float_eq(v[0], 0.0f);
  ck_assert_float_eq(v[1], 0.0f);
  ck_assert_float_eq(v[2], 1.0f);
  ck_assert_float_eq(v[3], 0.0f);
}
END_TEST

/* IBM words beyond the float range (largest IBM single 0x7FFFFFFF =
 * (1 - 16^-6) * 16^63, about 7.2e75; SEG-Y rev 1 (2002) format 1 definition)
 * are bad samples: counted, and delivered as 0 as NaN and Inf are, so a stack
 * sums 0 and not FLT_MAX (common practice: a bad sample must not dominate).
 * Also through the SIMD block paths (eight and four words at a time). */
START_TEST(test_ibm_overflow_is_zero)
{
  enum { N = 19 };
  unsigned char b[4 * N];
  float v[N];
  for (int i = 0; i < N; i++) {
    uint32_t w = i == 3 ? 0x7FFFFFFFu : i == 12 ? 0xFFFFFFFFu : i == 17 ? 0x61100000u
                                                                        : 0x41100000u;
    be32_store(b + 4 * i, w);     /* 0x61100000 = 16^32, beyond float; 0x41100000 = 1.0 */
  }
  ck_assert_int_eq(segy_decode_samples(1, SEGY_ORDER_BIG, b, N, v), 3);
  for (int i = 0; i < N; i++)
    ck_assert_float_eq(v[i], i == 3 || i == 12 || i == 17 ? 0.0f : 1.0f);
  /* IEEE doubles beyond the float range (format 6) are handled the same way */
  unsigned char d[16];
  be64_store(d, f64_bits(1e300));
  be64_store(d + 8, f64_bits(-2.5));
  float dv[2];
  ck_assert_int_eq(segy_decode_samples(6, SEGY_ORDER_BIG, d, 2, dv), 1);
  ck_assert_float_eq(dv[0], 0.0f);
  ck_assert_float_eq(dv[1], -2.5f);
}
END_TEST

/* Every binary header field (1-based bytes 3201-3600, SEG-Y rev 1 (2002) and
 * rev 2.0 (2017) binary file header) read at every position and width through
 * segy_binary_value, and a file opened in each byte order, so that pointer
 * arithmetic on the 400-byte block is checked by UBSan's bounds checks
 * (`make sanitize`; clang reports an out-of-bounds index for a pointer formed
 * as binary + pos before subtracting 3201). Values are compared with the
 * bytes read by hand: big-endian is the rev 1 byte order. */
START_TEST(test_binary_fields_every_position)
{
  segy_info in;
  memset(&in, 0, sizeof in);
  for (int i = 0; i < SEGY_BINARY_BYTES; i++)
    in.binary[i] = (unsigned char)(i * 7 + 3);
  in.byte_order = SEGY_ORDER_BIG;
  for (int pos = 3201; pos <= 3600; pos++) {
    const unsigned char *p = in.binary + (pos - 3201);
    if (pos <= 3599)
      ck_assert_int_eq(segy_binary_value(&in, pos, 2), (int16_t)(p[0] << 8 | p[1]));
    if (pos <= 3597)
      ck_assert_int_eq(segy_binary_value(&in, pos, 4),
                       (int32_t)((uint32_t)p[0] << 24 | (uint32_t)p[1] << 16 |
                                 (uint32_t)p[2] << 8 | p[3]));
    if (pos <= 3593)
      ck_assert_uint_eq((uint64_t)segy_binary_value(&in, pos, 8), be64_load(p));
    if (pos > 3593)                   /* a width running past the block: 0 */
      ck_assert_int_eq(segy_binary_value(&in, pos, 8), 0);
  }
  ck_assert_int_eq(segy_binary_value(&in, 3200, 2), 0);
  ck_assert_int_eq(segy_binary_value(&in, 3600, 2), 0);
  ck_assert_int_eq(segy_binary_value(&in, 3599, 4), 0);
  /* segy_open reads the binary header fields of a rev 2 file (the reader's own
   * bin16/bin32/bin64 helpers), big- and little-endian */
  const char *path = write_file("every_field.sgy", 5, 2, 3, 8);
  size_t n;
  unsigned char *raw = copy_file(path, &n);
  for (int order = 0; order < 2; order++) {
    if (order) {                      /* the same file, every binary field byte-reversed */
      static const int w4[] = { 3201, 3205, 3209, 3261, 3265, 3269, 3289, 3293, 3297, 3529 };
      static const int w8[] = { 3273, 3281, 3513, 3521 };
      unsigned char t[8];
      for (int pos = 3213; pos < 3261; pos += 2) {
        memcpy(t, raw + pos - 1, 2);
        raw[pos - 1] = t[1];
        raw[pos] = t[0];
      }
      for (size_t k = 0; k < sizeof w4 / sizeof w4[0]; k++) {
        memcpy(t, raw + w4[k] - 1, 4);
        for (int j = 0; j < 4; j++)
          raw[w4[k] - 1 + j] = t[3 - j];
      }
      for (size_t k = 0; k < sizeof w8 / sizeof w8[0]; k++) {
        memcpy(t, raw + w8[k] - 1, 8);
        for (int j = 0; j < 8; j++)
          raw[w8[k] - 1 + j] = t[7 - j];
      }
      for (int pos = 3503; pos < 3513; pos += 2) {
        memcpy(t, raw + pos - 1, 2);
        raw[pos - 1] = t[1];
        raw[pos] = t[0];
      }
      for (size_t off = 3600; off + 240 + 32 <= n; off += 240 + 32) {
        for (int pos = 1; pos < 240; pos += 2) {     /* 2-byte trace header fields */
          if ((pos >= 1 && pos < 29) || (pos >= 37 && pos < 69) || (pos >= 73 && pos < 89) ||
              (pos >= 181 && pos < 201))
            continue;
          memcpy(t, raw + off + (size_t)pos - 1, 2);
          raw[off + (size_t)pos - 1] = t[1];
          raw[off + (size_t)pos] = t[0];
        }
        for (int pos = 1; pos < 240; pos += 4) {     /* 4-byte trace header fields */
          if (!((pos >= 1 && pos < 29) || (pos >= 37 && pos < 69) || (pos >= 73 && pos < 89) ||
                (pos >= 181 && pos < 201)))
            continue;
          memcpy(t, raw + off + (size_t)pos - 1, 4);
          for (int j = 0; j < 4; j++)
            raw[off + (size_t)pos - 1 + (size_t)j] = t[3 - j];
        }
        for (size_t k = 0; k < 8; k++) {             /* IEEE samples */
          memcpy(t, raw + off + 240 + 4 * k, 4);
          for (int j = 0; j < 4; j++)
            raw[off + 240 + 4 * k + (size_t)j] = t[3 - j];
        }
      }
      path = tmp_path("every_field_le.sgy");
      write_bytes(path, raw, n);
    }
    segy_file *f = NULL;
    tz_err err;
    tz_err_init(&err);
    ck_assert_msg(segy_open(&f, path, NULL, &err) == TZ_OK, "%s", err.msg);
    const segy_info *fi = segy_get_info(f);
    ck_assert_int_eq(fi->byte_order, order ? SEGY_ORDER_LITTLE : SEGY_ORDER_BIG);
    ck_assert_int_eq(fi->line_no, 17);
    ck_assert_int_eq(fi->ensemble_fold, 4);
    ck_assert_int_eq(fi->traces_per_ensemble, 4);
    ck_assert_int_eq(fi->samples, 8);
    ck_assert_int_eq(fi->interval_us, 2000);
    ck_assert_int_eq(fi->trace_count, 3);
    for (int pos = 3201; pos <= 3600; pos++)
      for (int w = 2; w <= 8; w *= 2)
        (void)segy_binary_value(fi, pos, w);
    segy_trace_header h;
    float s[8];
    ck_assert_int_eq(segy_trace_read(f, 2, &h, s, 8, &err), TZ_OK);
    ck_assert_float_eq(s[5], sample_value(2, 5));
    segy_close(f);
  }
  free(raw);
}
END_TEST

/* Rev 2 writer: byte-order constant 01 02 03 04 at 3297-3300, revision bytes
 * 02 00 at 3501-3502, trace count at 3513-3520, first trace at 3521-3528
 * (SEG-Y rev 1 (2002), binary file header; SEG-Y rev 2.0 (2017); check values 6 and 7 of docs/references.md). Rev 1: 01 00 and no constant. */
START_TEST(test_writer_binary_header)
{
  size_t n;
  const char *p2 = write_file("rev2.sgy", 5, 2, 3, 10);
  unsigned char *b = copy_file(p2, &n);
  const unsigned char c[4] = { 1, 2, 3, 4 }, r2[2] = { 2, 0 };
  ck_assert_mem_eq(b + 3296, c, 4);
  ck_assert_mem_eq(b + 3500, r2, 2);
  ck_assert(be64_load(b + 3512) == 3);
  ck_assert(be64_load(b + 3520) == 3600);
  ck_assert_uint_eq(be16_load(b + 3502), 1);            /* fixed-length flag */
  ck_assert_uint_eq(be16_load(b + 3216), 2000);         /* interval */
  ck_assert_uint_eq(be16_load(b + 3220), 10);           /* samples */
  ck_assert_uint_eq(be16_load(b + 3228), 1);            /* sorting code */
  ck_assert_uint_eq(be16_load(b + 3226), 4);            /* ensemble fold */
  ck_assert_uint_eq(be16_load(b + 3254), 1);            /* metres by default */
  free(b);
  unlink(p2);
  const char *p1 = write_file("rev1.sgy", 1, 1, 3, 10);
  b = copy_file(p1, &n);
  const unsigned char r1[2] = { 1, 0 }, z[4] = { 0, 0, 0, 0 };
  ck_assert_mem_eq(b + 3500, r1, 2);
  ck_assert_mem_eq(b + 3296, z, 4);
  ck_assert_uint_eq(be16_load(b + 3224), 1);
  /* trace header 1: scalar -100 at 71-72, source_x 512345.67 -> 51234567 at 73-76 */
  ck_assert_int_eq(u16_to_i16(be16_load(b + 3600 + 70)), -100);
  ck_assert_int_eq(u32_to_i32(be32_load(b + 3600 + 72)), 51234567);
  ck_assert_int_eq(u32_to_i32(be32_load(b + 3600 + 36)), -125);   /* offset, unscaled */
  free(b);
  unlink(p1);
}
END_TEST

START_TEST(test_writer_errors)
{
  const char *p = tmp_path("werr.sgy");
  segy_writer *w = NULL;
  tz_err err;
  tz_err_init(&err);
  segy_writer_opts o = { .samples = 0, .interval_us = 1000 };
  ck_assert_int_eq(segy_writer_open(&w, p, &o, &err), TZ_E_ARG);
  o.samples = 4;
  o.format_code = 2;
  tz_err_init(&err);
  ck_assert_int_eq(segy_writer_open(&w, p, &o, &err), TZ_E_ARG);
  o.format_code = 0;
  tz_err_init(&err);
  ck_assert_int_eq(segy_writer_open(&w, p, &o, &err), TZ_OK);
  segy_trace_header h;
  memset(&h, 0, sizeof h);
  h.source_x = 3e7;          /* 3e9 centimetres does not fit 32 bits */
  float s[4] = { 0 };
  ck_assert_int_eq(segy_trace_write(w, &h, s, &err), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(err.msg, "source_x"));
  ck_assert_int_eq(err.trace, 0);
  segy_writer_abort(w);
  ck_assert_int_ne(access(p, F_OK), 0);   /* nothing left behind, not even the temporary */
  char cmd[700];
  snprintf(cmd, sizeof cmd, "ls -A %s | grep -q werr", dir);
  ck_assert_int_ne(system(cmd), 0);
}
END_TEST

/* Header map: a field moved to other bytes, a float slot, and the errors. */
START_TEST(test_header_map)
{
  segy_header_map m;
  tz_err err;
  tz_err_init(&err);
  ck_assert_int_eq(segy_header_map_parse(&m, "{\"source_x\": {\"byte\": 181, \"width\": 4},"
                                             " \"shotpoint\": {\"byte\": 225, \"float\": true},"
                                             " \"cmp\": {\"byte\": 9, \"width\": 2}}", "m", &err),
                   TZ_OK);
  ck_assert_int_eq(m.n, 3);
  unsigned char raw[240] = { 0 };
  be16_store(raw + 70, (uint16_t)-10);       /* coordinate scalar -10 */
  be32_store(raw + 180, 123456);             /* -> source_x 12345.6 */
  be32_store(raw + 224, f32_bits(17.5f));    /* IEEE float slot */
  be16_store(raw + 8, 0xFFFE);               /* 2-byte signed: -2 */
  segy_trace_header h;
  segy_header_decode(raw, SEGY_ORDER_BIG, &m, &h);
  ck_assert_double_eq_tol(h.source_x, 12345.6, 1e-9);
  ck_assert_int_eq(h.shotpoint, 18);         /* 17.5 rounded to the nearest integer (even) */
  ck_assert_int_eq(h.cmp, -2);
  static const char *const bad[] = {
    "{\"source_x\": {\"byte\": 181},, }", "{\"nosuch\": {\"byte\": 1}}",
    "{\"source_x\": {\"byte\": 239, \"width\": 4}}", "{\"source_x\": {\"width\": 3, \"byte\": 1}}",
    "{\"cmp\": {\"byte\": 9, \"width\": 2, \"float\": true}}", "[1, 2]",
    "{\"cmp\": {\"byte\": 9, \"colour\": 1}}",
    /* positions whose end (byte + width - 1) overflows int, and numbers beyond
     * int's range: refused before any conversion (no wrap-around accepted) */
    "{\"cmp\": {\"byte\": 2147483647, \"width\": 4}}",
    "{\"cmp\": {\"byte\": 2147483646, \"width\": 4}}",
    "{\"cmp\": {\"byte\": 2147483645, \"width\": 4}}",
    "{\"cmp\": {\"byte\": 7.7e110, \"width\": 4}}",
    "{\"cmp\": {\"byte\": -7.7e110, \"width\": 4}}",
    "{\"cmp\": {\"byte\": 9, \"width\": 4294967298}}",
    "{\"cmp\": {\"byte\": 9, \"width\": 7.7e110}}",
    "{\"cmp\": {\"byte\": 0, \"width\": 2}}",
  };
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    tz_err_init(&err);
    ck_assert_int_eq(segy_header_map_parse(&m, bad[i], "m.json", &err), TZ_E_FORMAT);
    ck_assert_str_eq(err.path, "m.json");
  }
  /* the message names the field and the allowed byte range */
  tz_err_init(&err);
  ck_assert_int_eq(segy_header_map_parse(&m, "{\"cmp\": {\"byte\": 2147483647, \"width\": 4}}",
                                         "m.json", &err), TZ_E_FORMAT);
  ck_assert_str_eq(err.msg, "header map: $.cmp.byte: must be 1..237 for width 4");
  /* a map built by hand with an impossible position is not followed out of
   * the 240 bytes: the standard position is used */
  segy_header_map hand = { .n = 1 };
  snprintf(hand.f[0].field, sizeof hand.f[0].field, "cmp");
  hand.f[0].byte = 2147483647;
  hand.f[0].width = 4;
  memset(raw, 0, sizeof raw);
  be32_store(raw + 20, 4321);
  segy_header_decode(raw, SEGY_ORDER_BIG, &hand, &h);
  ck_assert_int_eq(h.cmp, 4321);
}
END_TEST

/* Damage never crashes (DEVELOPERS.md, bad input: "never a crash"): random bytes written over the
 * binary header and the first trace headers of a good rev 2 file; every open
 * either fails with a message or gives a file whose every trace can be scanned
 * or fails with a message. Run under ASan/UBSan by `make sanitize`. */
START_TEST(test_mutations)
{
  const char *good = write_file("fuzz.sgy", 1, 2, 6, 12);
  size_t n;
  unsigned char *b = copy_file(good, &n), *m = malloc(n);
  const char *p = tmp_path("fuzzed.sgy");
  unsigned seed = 99;
  int opened = 0;
  for (int iter = 0; iter < 600; iter++) {
    memcpy(m, b, n);
    int hits = 1 + iter % 6;
    for (int k = 0; k < hits; k++) {
      seed = seed * 1103515245u + 12345u;
      size_t at = iter % 2 ? 3200 + (seed >> 8) % 400 : 3600 + (seed >> 8) % (n - 3600);
      seed = seed * 1103515245u + 12345u;
      m[at] = (unsigned char)(seed >> 16);
    }
    write_bytes(p, m, n);
    segy_file *f = NULL;
    tz_err err;
    tz_err_init(&err);
    if (segy_open(&f, p, NULL, &err) != TZ_OK) {
      ck_assert(err.msg[0] && err.status != TZ_OK);
      continue;
    }
    opened++;
    segy_stats st;
    tz_err_init(&err);
    if (segy_scan(f, 1, &st, &err) != TZ_OK)
      ck_assert(err.msg[0]);
    segy_close(f);
  }
  ck_assert_int_gt(opened, 100);     /* many damaged files are still readable */
  free(m);
  free(b);
  unlink(p);
  unlink(good);
}
END_TEST

/* One handle per thread, handles share nothing (segy_reader.c thread rule): four
 * threads reading the same file give the serial run's samples exactly. */
struct reader_job { const char *path; double sum; int rc; };

static void *reader_thread(void *arg)
{
  struct reader_job *j = arg;
  segy_file *f = NULL;
  tz_err err;
  tz_err_init(&err);
  j->rc = segy_open(&f, j->path, NULL, &err);
  float s[64];
  segy_trace_header h;
  for (int64_t i = 0; !j->rc && i < segy_trace_count(f); i++) {
    j->rc = segy_trace_read(f, i, &h, s, 64, &err);
    for (int k = 0; k < 50; k++)
      j->sum += s[k] * (double)(i + 1) + h.receiver_x;
  }
  segy_close(f);
  return NULL;
}

START_TEST(test_threads)
{
  const char *p = write_file("threads.sgy", 1, 1, 40, 50);
  struct reader_job serial = { p, 0, 0 }, jobs[4];
  reader_thread(&serial);
  ck_assert_int_eq(serial.rc, TZ_OK);
  pthread_t th[4];
  for (int t = 0; t < 4; t++) {
    jobs[t] = (struct reader_job){ p, 0, 0 };
    ck_assert_int_eq(pthread_create(&th[t], NULL, reader_thread, &jobs[t]), 0);
  }
  for (int t = 0; t < 4; t++) {
    pthread_join(th[t], NULL);
    ck_assert_int_eq(jobs[t].rc, TZ_OK);
    ck_assert(jobs[t].sum == serial.sum);
  }
  unlink(p);
}
END_TEST

/* The mapped reader (default) and the pread() path (segy_open_opts.no_map, the
 * path of files that cannot be mapped) give the same headers and samples, bit
 * for bit, also when traces straddle the pieces mapped one at a time
 * (map_bytes of one page: every trace of 300 samples crosses a boundary
 * sooner or later). Common practice: two readers of the same bytes agree. */
START_TEST(test_mapped_equals_pread)
{
  int fmt = _i ? 1 : 5;
  const char *p = write_file("mapped.sgy", fmt, 1, 37, 300);
  segy_open_opts om = { 0 }, op = { .no_map = 1 }, os = { .map_bytes = 1 };
  segy_file *fm = NULL, *fp = NULL, *fs = NULL;
  tz_err err;
  tz_err_init(&err);
  ck_assert_int_eq(segy_open(&fm, p, &om, &err), TZ_OK);
  ck_assert_int_eq(segy_open(&fp, p, &op, &err), TZ_OK);
  ck_assert_int_eq(segy_open(&fs, p, &os, &err), TZ_OK);
  float a[300], b[300], c[300];
  for (int pass = 0; pass < 2; pass++)
    for (int64_t t = 0; t < 37; t++) {
      int64_t i = pass ? 36 - t : t;    /* forwards, then backwards (remaps) */
      segy_trace_header ha, hb, hc;
      ck_assert_int_eq(segy_trace_read(fm, i, &ha, a, 300, &err), TZ_OK);
      ck_assert_int_eq(segy_trace_read(fp, i, &hb, b, 300, &err), TZ_OK);
      ck_assert_int_eq(segy_trace_read(fs, i, &hc, c, 300, &err), TZ_OK);
      ck_assert_mem_eq(&ha, &hb, sizeof ha);
      ck_assert_mem_eq(&ha, &hc, sizeof ha);
      ck_assert_mem_eq(a, b, sizeof a);
      ck_assert_mem_eq(a, c, sizeof a);
      ck_assert_int_eq(segy_header_read(fs, i, &hc, &err), TZ_OK);
      ck_assert_mem_eq(&ha, &hc, sizeof ha);
    }
  segy_close(fm);
  segy_close(fp);
  segy_close(fs);
  unlink(p);
}
END_TEST

/* Headers without a map take a straight-line decoder; with a map, a table
 * walk. A map whose one entry is unusable (decoded at the standard position)
 * forces the table walk over the standard positions: on random headers in
 * all three byte orders the two give the same decoded header, byte for byte. */
START_TEST(test_decode_paths_agree)
{
  segy_header_map hand = { .n = 1 };
  snprintf(hand.f[0].field, sizeof hand.f[0].field, "cmp");
  hand.f[0].byte = 2147483647;
  hand.f[0].width = 4;
  unsigned seed = 12345;
  unsigned char raw[240];
  static const int orders[] = { SEGY_ORDER_BIG, SEGY_ORDER_LITTLE, SEGY_ORDER_PAIRS };
  for (int iter = 0; iter < 3000; iter++) {
    for (int k = 0; k < 240; k++) {
      seed = seed * 1103515245u + 12345u;
      raw[k] = (unsigned char)(seed >> 16);
    }
    if (iter % 3 == 0)          /* the common scalars too, not only random ones */
      be16_store(raw + 68, (uint16_t)(iter % 2 ? -100 : 10));
    segy_trace_header x, y;
    int order = orders[iter % 3];
    segy_header_decode(raw, order, NULL, &x);
    segy_header_decode(raw, order, &hand, &y);
    ck_assert_mem_eq(&x, &y, sizeof x);
  }
}
END_TEST

static Suite *segy_suite(void)
{
  Suite *s = suite_create("segy");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 60);
  tcase_add_loop_test(tc, test_ibm_decode, 0, sizeof ibm_cases / sizeof ibm_cases[0]);
  tcase_add_test(tc, test_wrong_format_symptom);
  tcase_add_test(tc, test_ibm_encode);
  tcase_add_test(tc, test_ibm_round_trip_tolerance);
  tcase_add_test(tc, test_ebcdic);
  tcase_add_test(tc, test_scalar_rule);
  tcase_add_loop_test(tc, test_write_read, 0, sizeof wr_cases / sizeof wr_cases[0]);
  tcase_add_test(tc, test_file_size);
  tcase_add_loop_test(tc, test_segyio_reads_ours, 0, 2);
  tcase_add_test(tc, test_short_file);
  tcase_add_test(tc, test_corrupt);
  tcase_add_test(tc, test_nan_counted);
  tcase_add_test(tc, test_ibm_overflow_is_zero);
  tcase_add_test(tc, test_binary_fields_every_position);
  tcase_add_test(tc, test_writer_binary_header);
  tcase_add_test(tc, test_writer_errors);
  tcase_add_test(tc, test_header_map);
  tcase_add_test(tc, test_mutations);
  tcase_add_test(tc, test_threads);
  tcase_add_loop_test(tc, test_mapped_equals_pread, 0, 2);
  tcase_add_test(tc, test_decode_paths_agree);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(segy_suite)
