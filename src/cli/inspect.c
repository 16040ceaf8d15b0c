/* inspect.c -- `tzero inspect FILE|DIR...`: what a SEG-Y file says about itself.
 *
 * Opens each file with the library (segy_open, segy_scan) and prints the
 * decoded textual header, the binary header values with their byte positions,
 * what was detected (revision, byte order, format), counts, header value
 * ranges, amplitude statistics and the anomalies found. A folder is read as
 * its *.sgy / *.segy files, one line each, with a total. All facts come from
 * the library; this file only formats them.
 */
#include <cjson/cJSON.h>
#include <dirent.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fileio.h"
#include "tzero/segy.h"

#define MAX_FILES 100000

typedef struct opts {
  int json, quiet, amplitudes, allow_partial;
  long long headers;          /* first N trace headers as a table */
  long long samples_trace;    /* 1-based trace whose samples to print; -1 all; 0 none */
  const char *fields;         /* comma-separated field names for --headers */
  segy_open_opts open;
  segy_header_map map;
} opts;

static void help(void)
{
  printf("usage: tzero inspect [OPTIONS] FILE|DIR...\n"
         "\n"
         "Summarises SEG-Y files: the textual header (decoded to ASCII), binary header\n"
         "values with their byte positions, the detected revision, byte order and sample\n"
         "format, trace count, samples per trace, sample interval, record length, the\n"
         "range of the key trace header fields, field records and channels, dead\n"
         "traces, amplitude minimum/maximum/RMS, NaN/Inf samples, the all-zero\n"
         "traces and those whose RMS is over 10 x their record's median (named by\n"
         "trace, record and channel) and anomalies.\n"
         "A folder is read as its *.sgy and *.segy files: one line per file and a total.\n"
         "\n"
         "options:\n"
         "  --headers N          print the first N trace headers as a table, then their\n"
         "                       rev 2 trace header extensions (extension 1 by field,\n"
         "                       later blocks as raw bytes)\n"
         "  --fields LIST        columns for --headers (comma-separated field names;\n"
         "                       --fields help lists them)\n"
         "  --samples TRACE      print the samples of trace TRACE (counted from 1), or\n"
         "                       'all' for every trace; time in ms, amplitude as stored\n"
         "  --no-amplitudes      read trace headers only (faster; no amplitude figures)\n"
         "  --byte-order ORDER   big, little or pairs: override the detected byte order\n"
         "  --format CODE        override the sample format code (1,2,3,5,6,7,8,9,10,\n"
         "                       11,12,15,16)\n"
         "  --header-map FILE    JSON moving fields to other bytes, e.g.\n"
         "                       {\"source_x\": {\"byte\": 181, \"width\": 4}}\n"
         "  --allow-partial      ignore a truncated last trace (with a warning) instead\n"
         "                       of failing\n"
         "  --interval-us US     sample interval in microseconds, replacing the file's\n"
         "                       (for files whose binary and trace headers give none\n"
         "                       that is valid, e.g. one negative as a 16-bit value)\n"
         "  --json               print the facts as JSON: {\"files\": [...], \"total\": {...}}\n"
         "  --quiet              one line per file (no header listings)\n"
         "  -h, --help           this text\n"
         "\n"
         "Exit status: 0 all files read; 65 a file is malformed; 66 a file or folder\n"
         "cannot be opened; 64 bad options.\n"
         "\n%s", CLI_CAUTION);
}

/* Record length as the time of the last sample after the first, (samples - 1) x
 * interval, the convention `tzero synth --record-ms` follows. */
static double record_ms(const segy_info *in)
{
  return in->samples ? (in->samples - 1) * (double)in->interval_us / 1000.0 : 0;
}

static const char *interval_from(const segy_info *in)
{
  switch (in->interval_source) {
  case SEGY_INTERVAL_EXTENDED: return "binary header 3273-3280";
  case SEGY_INTERVAL_TRACE: return "first trace header 117-118";
  case SEGY_INTERVAL_GIVEN: return "given";
  default: return "binary header 3217-3218";
  }
}

static const char *order_name(int o)
{
  return o == SEGY_ORDER_LITTLE ? "little" : o == SEGY_ORDER_PAIRS ? "pairs" : "big";
}

/* Binary header fields shown, with tzero's own labels (positions: SEG-Y rev 1/2). */
static const struct bin_field { int pos, width, rev2; const char *name; } bin_fields[] = {
  { 3201, 4, 0, "job identification number" },
  { 3205, 4, 0, "line number" },
  { 3209, 4, 0, "reel number" },
  { 3213, 2, 0, "data traces per ensemble" },
  { 3215, 2, 0, "auxiliary traces per ensemble" },
  { 3217, 2, 0, "sample interval (us)" },
  { 3219, 2, 0, "original sample interval (us)" },
  { 3221, 2, 0, "samples per trace" },
  { 3223, 2, 0, "original samples per trace" },
  { 3225, 2, 0, "sample format code" },
  { 3227, 2, 0, "ensemble fold" },
  { 3229, 2, 0, "trace sorting code" },
  { 3231, 2, 0, "vertical sum code" },
  { 3253, 2, 0, "amplitude recovery method" },
  { 3255, 2, 0, "measurement system (1 metres, 2 feet)" },
  { 3257, 2, 0, "impulse signal polarity" },
  { 3269, 4, 1, "extended samples per trace" },
  { 3297, 4, 1, "byte-order constant" },
  { 3501, 2, 0, "revision number (raw)" },
  { 3503, 2, 0, "fixed-length trace flag" },
  { 3505, 2, 0, "extended textual header records" },
  { 3507, 2, 1, "additional trace headers (rev 2.1 layout)" },
  { 3507, 4, 1, "additional trace headers read as one 4-byte count" },
  { 3509, 2, 1, "survey type (rev 2.1)" },
  { 3511, 2, 1, "time basis code" },
  { 3513, 8, 1, "number of traces" },
  { 3521, 8, 1, "byte offset of first trace" },
  { 3529, 4, 1, "data trailer records" },
};
#define NBIN (sizeof bin_fields / sizeof bin_fields[0])

/* Key trace header fields for the ranges table and the default --headers columns. */
static const char *const key_fields[] = {
  "field_record", "channel", "source_point", "cmp", "kind", "offset", "receiver_elev",
  "source_elev", "elev_scalar", "coord_scalar", "source_x", "source_y", "receiver_x",
  "receiver_y", "delay_ms", "samples", "interval_us", "cmp_x", "cmp_y", "inline_no",
  "crossline_no",
};
#define NKEY (sizeof key_fields / sizeof key_fields[0])

static long field_index(const char *name)
{
  for (size_t i = 0; i < segy_field_count(); i++)
    if (!strcmp(segy_field_name(i), name))
      return (long)i;
  return -1;
}

/* Column list for --headers: indexes into the library's field table. */
static int parse_fields(const char *list, long *idx, size_t *n)
{
  *n = 0;
  if (!list) {
    for (size_t i = 0; i < NKEY; i++)
      idx[(*n)++] = field_index(key_fields[i]);
    return 0;
  }
  char buf[1024];
  snprintf(buf, sizeof buf, "%s", list);
  for (char *save = NULL, *t = strtok_r(buf, ",", &save); t; t = strtok_r(NULL, ",", &save)) {
    long k = field_index(t);
    if (k < 0 || *n >= SEGY_MAX_FIELDS) {
      cli_usage_error("inspect", "--fields: unknown trace header field '%s' "
                                 "(tzero inspect --fields help lists them)", t);
      return -1;
    }
    idx[(*n)++] = k;
  }
  return 0;
}

static void list_fields(void)
{
  printf("trace header fields (name, standard bytes):\n");
  for (size_t i = 0; i < segy_field_count(); i++)
    printf("  %-22s %d-%d\n", segy_field_name(i), segy_field_byte(i),
           segy_field_byte(i) + segy_field_width(i) - 1);
}

static void fmt_num(char *buf, size_t n, double v)
{
  if (v == floor(v) && fabs(v) < 1e15)
    snprintf(buf, n, "%.0f", v);
  else
    snprintf(buf, n, "%.10g", v);
}

/* ---- one file ---- */

typedef struct total {
  long long files, failed, traces, bytes;
  int exit_status;
} total;

/* The traces segy_scan singled out (trace numbers 1-based, as printed everywhere). */
static cJSON *notes_json(const segy_trace_note *t, int n)
{
  cJSON *a = cJSON_CreateArray();
  for (int i = 0; a && i < n; i++) {
    cJSON *e = cJSON_CreateObject();
    if (!e)
      break;
    cJSON_AddNumberToObject(e, "trace", (double)t[i].trace + 1);
    cJSON_AddNumberToObject(e, "field_record", t[i].field_record);
    cJSON_AddNumberToObject(e, "channel", t[i].channel);
    cJSON_AddNumberToObject(e, "trace_kind", t[i].kind);
    if (t[i].rms_ratio > 0) {
      cJSON_AddNumberToObject(e, "rms", t[i].rms);
      cJSON_AddNumberToObject(e, "rms_over_record_median", t[i].rms_ratio);
    }
    cJSON_AddItemToArray(a, e);
  }
  return a;
}

static void print_notes(const char *what, int64_t count, const segy_trace_note *t, int n,
                        int noisy)
{
  if (!count)
    return;
  printf("  %s: %lld", what, (long long)count);
  if (noisy)
    printf(" (RMS above %g x the record's median)", SEGY_NOISY_RATIO);
  printf("%s\n", count > n ? ", the first listed:" : ":");
  for (int i = 0; i < n; i++) {
    printf("    trace %lld: record %d channel %d", (long long)t[i].trace + 1,
           (int)t[i].field_record, (int)t[i].channel);
    if (noisy)
      printf(", RMS %.4g = %.1f x the record's median", t[i].rms, t[i].rms_ratio);
    else if (t[i].kind == SEGY_KIND_DEAD)
      printf(" (coded dead)");
    printf("\n");
  }
}

static void add_anomalies_json(cJSON *o, const segy_info *in, const segy_stats *st)
{
  cJSON *a = cJSON_AddArrayToObject(o, "anomalies");
  for (int i = 0; i < in->nwarnings; i++)
    cJSON_AddItemToArray(a, cJSON_CreateString(in->warnings[i]));
  for (int i = 0; st && i < st->nanomalies; i++)
    cJSON_AddItemToArray(a, cJSON_CreateString(st->anomalies[i]));
}

static cJSON *header_json(const segy_trace_header *h, long long trace, const long *idx,
                          size_t n)
{
  cJSON *o = cJSON_CreateObject();
  cJSON_AddNumberToObject(o, "trace", (double)trace);
  for (size_t k = 0; k < n; k++)
    cJSON_AddNumberToObject(o, segy_field_name((size_t)idx[k]),
                            segy_field_value(h, (size_t)idx[k]));
  return o;
}

static cJSON *file_json(const char *path, const segy_info *in, const segy_stats *st)
{
  cJSON *o = cJSON_CreateObject();
  char rev[16];
  snprintf(rev, sizeof rev, "%d.%d", in->revision_major, in->revision_minor);
  cJSON_AddStringToObject(o, "path", path);
  cJSON_AddNumberToObject(o, "bytes", (double)in->file_bytes);
  cJSON_AddNumberToObject(o, "traces", (double)in->trace_count);
  cJSON_AddNumberToObject(o, "samples_per_trace", in->samples);
  cJSON_AddNumberToObject(o, "sample_interval_us", in->interval_us);
  cJSON_AddNumberToObject(o, "record_length_ms", record_ms(in));
  cJSON_AddNumberToObject(o, "format_code", in->format_code);
  cJSON_AddStringToObject(o, "format", segy_format_name(in->format_code));
  cJSON_AddNumberToObject(o, "bytes_per_sample", in->bytes_per_sample);
  cJSON_AddStringToObject(o, "byte_order", order_name(in->byte_order));
  cJSON_AddStringToObject(o, "revision", rev);
  cJSON_AddNumberToObject(o, "revision_raw", in->revision_raw);
  cJSON_AddStringToObject(o, "text_encoding", in->text_encoding == SEGY_TEXT_ASCII ? "ascii" : "ebcdic");
  cJSON_AddNumberToObject(o, "extended_textual_headers", in->extended_text_count);
  cJSON_AddNumberToObject(o, "extended_textual_header_count_field", in->extended_text_declared);
  cJSON_AddNumberToObject(o, "trace_header_extensions", in->trace_header_extensions);
  if (in->extension_count_bytes)
    cJSON_AddStringToObject(o, "trace_header_extensions_from",
                            in->extension_count_bytes == 2 ? "3507-3508" : "3507-3510");
  cJSON_AddNumberToObject(o, "data_trailer_records", in->trailer_records);
  if (in->declared_traces)
    cJSON_AddNumberToObject(o, "declared_traces", (double)in->declared_traces);
  cJSON_AddStringToObject(o, "sample_interval_from", interval_from(in));
  cJSON *sz = cJSON_AddArrayToObject(o, "stanzas");
  for (int k = 0; k < in->nstanzas; k++) {
    const segy_stanza *z = &in->stanzas[k];
    cJSON *e = cJSON_CreateObject();
    cJSON_AddStringToObject(e, "name", z->name);
    cJSON_AddStringToObject(e, "part", z->trailer ? "data trailer" : "extended textual header");
    cJSON_AddNumberToObject(e, "record", z->record);
    cJSON_AddBoolToObject(e, "layout", z->layout);
    cJSON_AddItemToArray(sz, e);
  }
  cJSON_AddBoolToObject(o, "fixed_length", in->fixed_length);
  cJSON_AddNumberToObject(o, "first_trace_byte", (double)in->first_trace_offset);
  cJSON_AddNumberToObject(o, "trailing_bytes", (double)in->trailing_bytes);
  cJSON *text = cJSON_AddArrayToObject(o, "textual_header");
  for (int l = 0; l < 40; l++) {
    char line[81];
    memcpy(line, in->text + 80 * l, 80);
    int e = 80;
    while (e > 0 && line[e - 1] == ' ')
      e--;
    line[e] = '\0';
    cJSON_AddItemToArray(text, cJSON_CreateString(line));
  }
  cJSON *bin = cJSON_AddArrayToObject(o, "binary_header");
  for (size_t i = 0; i < NBIN; i++) {
    const struct bin_field *b = &bin_fields[i];
    if (b->rev2 && in->revision_major < 2)
      continue;
    cJSON *e = cJSON_CreateObject();
    char pos[16];
    snprintf(pos, sizeof pos, "%d-%d", b->pos, b->pos + b->width - 1);
    cJSON_AddStringToObject(e, "bytes", pos);
    cJSON_AddStringToObject(e, "name", b->name);
    cJSON_AddNumberToObject(e, "value", (double)segy_binary_value(in, b->pos, b->width));
    cJSON_AddItemToArray(bin, e);
  }
  if (st) {
    cJSON_AddNumberToObject(o, "field_records", (double)st->field_records);
    cJSON_AddNumberToObject(o, "channels", (double)st->channels);
    cJSON_AddNumberToObject(o, "traces_per_record_min", (double)st->traces_per_record_min);
    cJSON_AddNumberToObject(o, "traces_per_record_max", (double)st->traces_per_record_max);
    cJSON_AddNumberToObject(o, "dead_traces", (double)st->dead);
    cJSON_AddNumberToObject(o, "dummy_traces", (double)st->dummy);
    cJSON_AddNumberToObject(o, "auxiliary_traces", (double)st->auxiliary);
    if (st->with_samples) {
      cJSON_AddNumberToObject(o, "all_zero_traces", (double)st->all_zero);
      cJSON *a = cJSON_AddObjectToObject(o, "amplitude");
      cJSON_AddNumberToObject(a, "min", st->amp_min);
      cJSON_AddNumberToObject(a, "max", st->amp_max);
      cJSON_AddNumberToObject(a, "rms", st->amp_rms);
      cJSON_AddNumberToObject(o, "nonfinite_samples", (double)st->bad_samples);
      cJSON_AddItemToObject(o, "all_zero", notes_json(st->zero_noted, st->nzero_noted));
      cJSON_AddNumberToObject(o, "noisy_traces", (double)st->noisy);
      cJSON_AddNumberToObject(o, "noisy_rms_ratio", SEGY_NOISY_RATIO);
      cJSON_AddItemToObject(o, "noisy", notes_json(st->noisy_noted, st->nnoisy_noted));
    }
    cJSON *r = cJSON_AddObjectToObject(o, "trace_header_ranges");
    for (size_t k = 0; k < segy_field_count() && k < SEGY_MAX_FIELDS; k++) {
      cJSON *e = cJSON_AddObjectToObject(r, segy_field_name(k));
      char pos[16];
      snprintf(pos, sizeof pos, "%d-%d", segy_field_byte(k),
               segy_field_byte(k) + segy_field_width(k) - 1);
      cJSON_AddStringToObject(e, "bytes", pos);
      cJSON_AddNumberToObject(e, "min", st->traces ? st->field_min[k] : 0);
      cJSON_AddNumberToObject(e, "max", st->traces ? st->field_max[k] : 0);
    }
  }
  add_anomalies_json(o, in, st);
  return o;
}

static void print_text(const char *path, const segy_info *in, const segy_stats *st)
{
  printf("file: %s\n", path);
  printf("  bytes: %lld\n", (long long)in->file_bytes);
  printf("  revision: %d.%d (bytes 3501-3502 = 0x%04x)\n", in->revision_major,
         in->revision_minor, in->revision_raw);
  printf("  byte order: %s-endian%s\n", order_name(in->byte_order),
         in->byte_order == SEGY_ORDER_PAIRS ? " (pairs swapped)" : "");
  printf("  textual header: %s, %d extended records\n",
         in->text_encoding == SEGY_TEXT_ASCII ? "ASCII" : "EBCDIC", in->extended_text_count);
  if (in->trailer_records)
    printf("  data trailer: %d records\n", in->trailer_records);
  for (int k = 0; k < in->nstanzas; k++)
    printf("  stanza: ((%s)) in %s record %d%s\n", in->stanzas[k].name,
           in->stanzas[k].trailer ? "data trailer" : "extended textual header",
           in->stanzas[k].record, in->stanzas[k].layout ? " (header layout: seen, not applied)"
                                                        : "");
  printf("  sample format: %d (%s, %d bytes per sample)\n", in->format_code,
         segy_format_name(in->format_code), in->bytes_per_sample);
  printf("  traces: %lld (%s; first trace at byte %lld", (long long)in->trace_count,
         in->fixed_length ? "fixed length" : "variable length",
         (long long)in->first_trace_offset);
  if (in->trace_header_extensions)
    printf("; %d header extensions per trace, count from bytes %s",
           in->trace_header_extensions,
           in->extension_count_bytes == 4 ? "3507-3510" : "3507-3508");
  if (in->trailing_bytes)
    printf("; %lld trailing bytes ignored", (long long)in->trailing_bytes);
  printf(")\n");
  printf("  samples per trace: %u\n", in->samples);
  printf("  sample interval: %u us (%s)\n", in->interval_us, interval_from(in));
  printf("  record length: %.3f ms (time of the last sample after the first)\n",
         record_ms(in));
  if (st) {
    printf("  field records: %lld (%lld to %lld traces each)\n", (long long)st->field_records,
           (long long)st->traces_per_record_min, (long long)st->traces_per_record_max);
    printf("  channels: %lld distinct\n", (long long)st->channels);
    printf("  dead traces: %lld (dummy %lld, auxiliary %lld", (long long)st->dead,
           (long long)st->dummy, (long long)st->auxiliary);
    if (st->with_samples)
      printf(", all-zero samples %lld", (long long)st->all_zero);
    printf(")\n");
    if (st->with_samples) {
      printf("  amplitude: min %.7g, max %.7g, RMS %.7g\n", st->amp_min, st->amp_max,
             st->amp_rms);
      printf("  NaN/Inf samples: %lld\n", (long long)st->bad_samples);
      print_notes("all-zero traces", st->all_zero, st->zero_noted, st->nzero_noted, 0);
      print_notes("noisy traces", st->noisy, st->noisy_noted, st->nnoisy_noted, 1);
    }
  }
  printf("\ntextual header:\n");
  for (int l = 0; l < 40; l++) {
    int e = 80;
    while (e > 0 && in->text[80 * l + e - 1] == ' ')
      e--;
    char raw[81], safe[81 * 6];   /* a card from the file, control characters escaped */
    memcpy(raw, in->text + 80 * l, (size_t)e);
    raw[e] = '\0';
    tz_escape(raw, safe, sizeof safe);
    printf("  %s\n", safe);
  }
  printf("\nbinary header:\n  %-11s %20s  %s\n", "bytes", "value", "meaning");
  for (size_t i = 0; i < NBIN; i++) {
    const struct bin_field *b = &bin_fields[i];
    if (b->rev2 && in->revision_major < 2)
      continue;
    char pos[16];
    snprintf(pos, sizeof pos, "%d-%d", b->pos, b->pos + b->width - 1);
    printf("  %-11s %20lld  %s\n", pos, (long long)segy_binary_value(in, b->pos, b->width),
           b->name);
  }
  if (st && st->traces) {
    printf("\ntrace header ranges:\n  %-22s %-9s %16s %16s\n", "field", "bytes", "min", "max");
    for (size_t i = 0; i < NKEY; i++) {
      long k = field_index(key_fields[i]);
      char pos[16], a[32], b[32];
      snprintf(pos, sizeof pos, "%d-%d", segy_field_byte((size_t)k),
               segy_field_byte((size_t)k) + segy_field_width((size_t)k) - 1);
      fmt_num(a, sizeof a, st->field_min[k]);
      fmt_num(b, sizeof b, st->field_max[k]);
      printf("  %-22s %-9s %16s %16s\n", key_fields[i], pos, a, b);
    }
  }
  printf("\nanomalies:\n");
  int any = 0;
  for (int i = 0; i < in->nwarnings; i++, any = 1)
    printf("  - %s\n", in->warnings[i]);
  for (int i = 0; st && i < st->nanomalies; i++, any = 1)
    printf("  - %s\n", st->anomalies[i]);
  if (!any)
    printf("  (none found)\n");
}

static void print_line(const char *path, const segy_info *in, const segy_stats *st)
{
  printf("%s: %lld traces, %u samples, %u us, format %d, rev %d.%d, %s-endian",
         path, (long long)in->trace_count, in->samples, in->interval_us, in->format_code,
         in->revision_major, in->revision_minor, order_name(in->byte_order));
  if (st)
    printf(", %lld records, %lld dead, %d anomalies", (long long)st->field_records,
           (long long)st->dead, in->nwarnings + st->nanomalies);
  printf("\n");
}

#define MAX_EXT_BYTES (3 * 1000 * SEGY_TRACE_HEADER_BYTES)

/* The trace header extensions of one trace: extension 1 by field (rev 2.0
 * trace header extension 1), later blocks as raw bytes. */
static void print_extensions(long long trace, const unsigned char *x, int nb, int order)
{
  for (int b = 0; b < nb; b++) {
    const unsigned char *blk = x + (size_t)b * SEGY_TRACE_HEADER_BYTES;
    char name[9];
    segy_block_name(blk, name);
    printf("  trace %lld, extension %d%s%s%s:\n", trace, b + 1, name[0] ? " (" : "", name,
           name[0] ? ")" : "");
    if (b == 0) {
      int shown = 0;
      for (size_t k = 0; k < segy_ext1_field_count(); k++) {
        double v = segy_ext1_field_value(blk, order, k);
        if (v == 0)
          continue;
        char num[32];
        fmt_num(num, sizeof num, v);
        printf("    %-26s %3d-%-3d %s\n", segy_ext1_field_name(k), segy_ext1_field_byte(k),
               segy_ext1_field_byte(k) + segy_ext1_field_width(k) - 1, num);
        shown++;
      }
      printf("    (%s fields 0)\n", shown ? "other" : "all");
      continue;
    }
    int any = 0;
    for (int l = 0; l < SEGY_TRACE_HEADER_BYTES; l += 24) {
      int nz = 0;
      for (int k = 0; k < 24; k++)
        nz |= blk[l + k];
      if (!nz)
        continue;
      any = 1;
      printf("    %3d:", l + 1);
      for (int k = 0; k < 24; k++)
        printf(" %02x", blk[l + k]);
      printf("\n");
    }
    printf("    (raw bytes, 24 per line from the byte shown; %s)\n",
           any ? "lines of zeros left out" : "all zero");
  }
}

static cJSON *extensions_json(const unsigned char *x, int nb, int order)
{
  cJSON *arr = cJSON_CreateArray();
  for (int b = 0; b < nb; b++) {
    const unsigned char *blk = x + (size_t)b * SEGY_TRACE_HEADER_BYTES;
    cJSON *e = cJSON_CreateObject();
    char name[9];
    segy_block_name(blk, name);
    cJSON_AddNumberToObject(e, "block", b + 1);
    cJSON_AddStringToObject(e, "name", name);
    if (b == 0) {
      cJSON *fl = cJSON_AddObjectToObject(e, "fields");
      for (size_t k = 0; k < segy_ext1_field_count(); k++)
        cJSON_AddNumberToObject(fl, segy_ext1_field_name(k), segy_ext1_field_value(blk, order, k));
    } else {
      char hex[2 * SEGY_TRACE_HEADER_BYTES + 1];
      for (int k = 0; k < SEGY_TRACE_HEADER_BYTES; k++)
        snprintf(hex + 2 * k, 3, "%02x", blk[k]);
      cJSON_AddStringToObject(e, "hex", hex);
    }
    cJSON_AddItemToArray(arr, e);
  }
  return arr;
}

/* --headers and --samples: a second, sequential pass over the first traces. */
static int extras(segy_file *f, const opts *o, const long *idx, size_t nidx, cJSON *fo,
                  tz_err *err)
{
  const segy_info *in = segy_get_info(f);
  int64_t n = segy_trace_count(f);
  int64_t nh = o->headers < n ? o->headers : n;
  segy_trace_header h;
  if (nh > 0) {
    cJSON *arr = fo ? cJSON_AddArrayToObject(fo, "headers") : NULL;
    if (!fo) {
      printf("\ntrace headers:\n  %8s", "trace");
      for (size_t k = 0; k < nidx; k++)
        printf(" %14s", segy_field_name((size_t)idx[k]));
      printf("\n");
    }
    for (int64_t i = 0; i < nh; i++) {
      if (segy_header_read(f, i, &h, err))
        return err->status;
      if (arr) {
        cJSON_AddItemToArray(arr, header_json(&h, i + 1, idx, nidx));
        continue;
      }
      printf("  %8lld", (long long)i + 1);
      for (size_t k = 0; k < nidx; k++) {
        char v[32];
        fmt_num(v, sizeof v, segy_field_value(&h, (size_t)idx[k]));
        printf(" %14s", v);
      }
      printf("\n");
    }
    if (in->trace_header_extensions > 0) {
      unsigned char *x = malloc(MAX_EXT_BYTES);
      if (!x)
        return tz_fail(err, TZ_E_NOMEM, "trace header extensions");
      if (!fo)
        printf("\ntrace header extensions (extension 1 by field, later blocks raw):\n");
      cJSON *item = arr ? arr->child : NULL;
      for (int64_t i = 0; i < nh; i++) {
        int nb;
        if (segy_extensions_read(f, i, x, MAX_EXT_BYTES, &nb, err)) {
          free(x);
          return err->status;
        }
        if (item) {
          cJSON_AddItemToObject(item, "extensions", extensions_json(x, nb, in->byte_order));
          item = item->next;
        } else if (!fo) {
          print_extensions((long long)i + 1, x, nb, in->byte_order);
        }
      }
      free(x);
    }
  }
  if (!o->samples_trace)
    return TZ_OK;
  if (o->samples_trace < 0 && n == 0)
    return TZ_OK;                       /* --samples all of a file without traces */
  int64_t first = o->samples_trace > 0 ? o->samples_trace - 1 : 0;
  int64_t last = o->samples_trace > 0 ? first + 1 : n;
  if (first >= n)
    return tz_fail_at(err, TZ_E_ARG, first, -1, "--samples: no such trace (the file has %lld)",
                      (long long)n);
  float *s = malloc((size_t)in->samples * sizeof *s);
  if (!s)
    return tz_fail(err, TZ_E_NOMEM, "sample buffer");
  cJSON *arr = fo ? cJSON_AddArrayToObject(fo, "trace_samples") : NULL;
  int rc = TZ_OK;
  for (int64_t i = first; i < last && !rc; i++) {
    if ((rc = segy_trace_read(f, i, &h, s, in->samples, err)))
      break;
    double t0 = h.delay_ms;
    if (arr) {
      cJSON *e = cJSON_CreateObject();
      cJSON_AddNumberToObject(e, "trace", (double)i + 1);
      cJSON_AddNumberToObject(e, "first_time_ms", t0);
      cJSON *v = cJSON_AddArrayToObject(e, "values");
      for (uint32_t k = 0; k < h.samples; k++)
        cJSON_AddItemToArray(v, cJSON_CreateNumber(s[k]));
      cJSON_AddItemToArray(arr, e);
    } else {
      printf("\nsamples of trace %lld (time_ms amplitude):\n", (long long)i + 1);
      for (uint32_t k = 0; k < h.samples; k++)
        printf("  %.3f %.9g\n", t0 + k * (double)h.interval_us / 1000.0, s[k]);
    }
  }
  free(s);
  return rc;
}

static void note_failure(total *t, const tz_err *err, cJSON *files, const char *path)
{
  int ex = cli_report("inspect", err);
  t->failed++;
  if (!t->exit_status)
    t->exit_status = ex;
  if (files) {
    char buf[1200];
    tz_err_format(err, buf, sizeof buf);
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "path", path);
    cJSON_AddStringToObject(o, "error", buf);
    cJSON_AddNumberToObject(o, "exit_status", ex);
    cJSON_AddItemToArray(files, o);
  }
}

static void inspect_one(const char *path, const opts *o, int brief, const long *idx,
                        size_t nidx, cJSON *files, total *t)
{
  tz_err err;
  tz_err_init(&err);
  segy_file *f = NULL;
  segy_stats *st = malloc(sizeof *st);
  t->files++;
  if (!st) {
    tz_fail(&err, TZ_E_NOMEM, "statistics");
    note_failure(t, &err, files, path);
    return;
  }
  if (segy_open(&f, path, &o->open, &err) || segy_scan(f, o->amplitudes, st, &err)) {
    tz_err_path(&err, path);
    note_failure(t, &err, files, path);
    segy_close(f);
    free(st);
    return;
  }
  const segy_info *in = segy_get_info(f);
  t->traces += in->trace_count;
  t->bytes += in->file_bytes;
  cJSON *fo = files ? file_json(path, in, st) : NULL;
  if (fo)
    cJSON_AddItemToArray(files, fo);
  else if (brief)
    print_line(path, in, st);
  else
    print_text(path, in, st);
  if (extras(f, o, idx, nidx, fo, &err)) {
    tz_err_path(&err, path);
    int ex = cli_report("inspect", &err);
    if (!t->exit_status)
      t->exit_status = ex;
  }
  segy_close(f);
  free(st);
}

static int is_segy_name(const char *n)
{
  size_t l = strlen(n);
  return (l > 4 && !strcasecmp(n + l - 4, ".sgy")) || (l > 5 && !strcasecmp(n + l - 5, ".segy"));
}

static int cmp_str(const void *a, const void *b)
{
  return strcmp(*(char *const *)a, *(char *const *)b);
}

/* The *.sgy / *.segy files of a folder, sorted; caller frees. -1 on failure. */
static int list_dir(const char *dir, char ***out, size_t *n, tz_err *err)
{
  DIR *d = opendir(dir);
  *n = 0;
  *out = NULL;
  if (!d) {
    tz_err_path(err, dir);
    return tz_fail(err, TZ_E_NOINPUT, "cannot read folder");
  }
  size_t cap = 0;
  struct dirent *e;
  int rc = TZ_OK;
  while ((e = readdir(d))) {
    if (!is_segy_name(e->d_name))
      continue;
    if (*n == cap) {
      cap = cap ? cap * 2 : 64;
      char **nl = cap <= MAX_FILES ? realloc(*out, cap * sizeof *nl) : NULL;
      if (!nl) {
        rc = tz_fail(err, TZ_E_NOMEM, "file list");
        break;
      }
      *out = nl;
    }
    char *p = fileio_path_join(dir, e->d_name);   /* "dir/" + name without "//" */
    if (!p) {
      rc = tz_fail(err, TZ_E_NOMEM, "file list");
      break;
    }
    (*out)[(*n)++] = p;
  }
  closedir(d);
  if (!rc && !*n) {
    tz_err_path(err, dir);
    rc = tz_fail(err, TZ_E_NOINPUT, "no *.sgy or *.segy files in the folder");
  }
  if (*n)
    qsort(*out, *n, sizeof **out, cmp_str);
  return rc;
}

static int parse_order(const char *s, int *out)
{
  if (!strcmp(s, "big"))
    *out = SEGY_ORDER_BIG;
  else if (!strcmp(s, "little"))
    *out = SEGY_ORDER_LITTLE;
  else if (!strcmp(s, "pairs"))
    *out = SEGY_ORDER_PAIRS;
  else
    return cli_usage_error("inspect", "--byte-order: expected big, little or pairs, got '%s'", s);
  return 0;
}

int cmd_inspect(int argc, char **argv)
{
  static const struct option lo[] = {
    { "headers", required_argument, NULL, 'H' },
    { "fields", required_argument, NULL, 'F' },
    { "samples", required_argument, NULL, 'S' },
    { "no-amplitudes", no_argument, NULL, 'n' },
    { "byte-order", required_argument, NULL, 'b' },
    { "format", required_argument, NULL, 'f' },
    { "header-map", required_argument, NULL, 'm' },
    { "allow-partial", no_argument, NULL, 'p' },
    { "interval-us", required_argument, NULL, 'i' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  opts o;
  memset(&o, 0, sizeof o);
  o.amplitudes = 1;
  const char *map_path = NULL;
  long long v;
  int c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", lo)) != -1) {
    switch (c) {
    case 'H':
      if (cli_parse_i64("inspect", "--headers", optarg, &v))
        return EX_USAGE;
      if (v < 0)
        return cli_usage_error("inspect", "--headers: expected a count >= 0, got %lld", v);
      o.headers = v;
      break;
    case 'F':
      if (!strcmp(optarg, "help")) {
        list_fields();
        return EX_OK;
      }
      o.fields = optarg;
      break;
    case 'S':
      if (!strcmp(optarg, "all"))
        o.samples_trace = -1;
      else if (cli_parse_i64("inspect", "--samples", optarg, &o.samples_trace))
        return EX_USAGE;
      else if (o.samples_trace < 1)
        return cli_usage_error("inspect", "--samples: traces are counted from 1, got %lld",
                               o.samples_trace);
      break;
    case 'n': o.amplitudes = 0; break;
    case 'b':
      if (parse_order(optarg, &o.open.byte_order))
        return EX_USAGE;
      break;
    case 'f':
      if (cli_parse_i64("inspect", "--format", optarg, &v))
        return EX_USAGE;
      if (v == 4 || !segy_format_bytes((int)v) || v != (int)v)
        return cli_usage_error("inspect", "--format: %lld is not a readable sample format "
                                          "code", v);
      o.open.format_code = (int)v;
      break;
    case 'm': map_path = optarg; break;
    case 'p': o.open.allow_partial = 1; break;
    case 'i':
      if (cli_parse_i64("inspect", "--interval-us", optarg, &v))
        return EX_USAGE;
      if (v < 1 || v > 1000000)
        return cli_usage_error("inspect", "--interval-us: expected 1 to 1000000 microseconds, "
                                          "got %lld", v);
      o.open.interval_us = (uint32_t)v;
      break;
    case 'j': o.json = 1; break;
    case 'q': o.quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("inspect", argv, lo);
    }
  }
  if (optind >= argc)
    return cli_usage_error("inspect", "expected at least one FILE or DIR");
  long idx[SEGY_MAX_FIELDS];
  size_t nidx;
  if (parse_fields(o.fields, idx, &nidx))
    return EX_USAGE;
  if (map_path) {
    tz_err err;
    tz_err_init(&err);
    if (segy_header_map_load(&o.map, map_path, &err))
      return cli_report("inspect", &err);
    o.open.map = &o.map;
  }
  total t;
  memset(&t, 0, sizeof t);
  cJSON *root = o.json ? cJSON_CreateObject() : NULL;
  cJSON *files = root ? cJSON_AddArrayToObject(root, "files") : NULL;
  int listed = argc - optind > 1;
  for (int a = optind; a < argc; a++) {
    struct stat sb;
    if (stat(argv[a], &sb) == 0 && S_ISDIR(sb.st_mode)) {
      listed = 1;
      char **names;
      size_t n;
      tz_err err;
      tz_err_init(&err);
      if (list_dir(argv[a], &names, &n, &err)) {
        t.files++;
        note_failure(&t, &err, files, argv[a]);
      }
      for (size_t i = 0; i < n; i++) {
        inspect_one(names[i], &o, 1, idx, nidx, files, &t);
        free(names[i]);
      }
      free(names);
    } else {
      inspect_one(argv[a], &o, o.quiet, idx, nidx, files, &t);
      if (!o.json && !o.quiet && a + 1 < argc)
        printf("\n");
    }
  }
  if (root) {
    cJSON *to = cJSON_AddObjectToObject(root, "total");
    cJSON_AddNumberToObject(to, "files", (double)t.files);
    cJSON_AddNumberToObject(to, "failed", (double)t.failed);
    cJSON_AddNumberToObject(to, "traces", (double)t.traces);
    cJSON_AddNumberToObject(to, "bytes", (double)t.bytes);
    cli_print_json(root);
  } else if (listed) {
    printf("total: %lld files, %lld traces, %lld bytes, %lld failed\n", t.files, t.traces,
           t.bytes, t.failed);
  }
  return t.exit_status;
}
