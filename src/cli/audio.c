/* audio.c -- `tzero audio`: convert multichannel audio shot records to SEG-Y shot files. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/audio.h"
#include "tzero/geometry.h"
#include "tzero/table.h"

static void help(void)
{
  printf("usage: tzero audio FILE|FOLDER... --out DIR [OPTIONS]\n"
         "\n"
         "Converts shot records made by an audio recorder (one file per shot, one\n"
         "channel per geophone group; WAV, FLAC, AIFF and every other format\n"
         "libsndfile reads) into SEG-Y shot files DIR/NAME.sgy, one trace per\n"
         "channel, so that every other tzero stage can read them. A folder stands\n"
         "for the audio files in it. Files are taken in name order, numbers compared\n"
         "by value (shot9 before shot10). Every file is checked before anything is\n"
         "written; the files appear in DIR only when all of them are converted.\n"
         "\n"
         "Samples are read as fractions of the recorder's full scale (16-bit 32767 ->\n"
         "0.99997), cut to a window from the trigger time and resampled to the\n"
         "output interval with libsamplerate's band-limited sinc converter, which\n"
         "low-passes below the new Nyquist frequency before decimating.\n"
         "Trace headers get the field record, channel 1..N, trace sequence numbers,\n"
         "trace kind seismic, sample count and interval; geometry from --layout, or\n"
         "afterwards with tzero geometry --layout FILE --write (which also bins CMPs).\n"
         "\n"
         "options:\n"
         "  --out DIR             output folder (created if missing, one level)\n"
         "  --interval-us US      output sample interval, whole microseconds\n"
         "                        (default %u, i.e. 4000 samples per second)\n"
         "  --start-ms MS         window start in the file, milliseconds: the trigger,\n"
         "                        becomes time zero (default 0; rounded to the nearest\n"
         "                        input sample)\n"
         "  --length-ms MS        record length, milliseconds, time of the last sample\n"
         "                        (default: to the end of the file)\n"
         "  --channels LIST       file channels to keep, in trace order, 1-based:\n"
         "                        e.g. 1-12,24 or 24-1 (default all, in file order)\n"
         "  --first-record N      field record of the first file; the k-th file (name\n"
         "                        order, from 0) gets N+k (default 1)\n"
         "  --record-table FILE   field records from a CSV with the header row\n"
         "                        file,field_record (file names without folders)\n"
         "  --layout FILE         source and receiver positions and offsets from a\n"
         "                        layout (docs/layout.md), by field record and channel\n"
         "  --reverse-polarity    multiply every sample by -1\n"
         "  --scale F             multiply every sample by F (default 1)\n"
         "  --format ieee|ibm     SEG-Y sample format (default ieee)\n"
         "  --resampler best|medium|fast\n"
         "                        libsamplerate sinc converter (default best)\n"
         "  --line-name NAME      line name for the textual header\n"
         "  --threads N           files converted at once (default 0 = all cores; the\n"
         "                        output is the same for any N)\n"
         "  --json                print the summary as JSON\n"
         "  --quiet               print nothing but errors\n"
         "  -h, --help            this text\n"
         "\n"
         "Exit status: 0 done, 64 bad option (or a window beyond a file), 65 a file\n"
         "that is not audio or breaks a limit, 66 an input missing or unreadable,\n"
         "73 the output cannot be created, 74 read or write error.\n"
         "\n%s", AUDIO_DEFAULT_INTERVAL_US, CLI_CAUTION);
}

/* "1-12,24,13-23" -> 1-based channel numbers in order; no number twice. */
static int parse_channels(const char *cmd, const char *s, int32_t **out, size_t *n)
{
  int32_t *v = malloc(AUDIO_MAX_CHANNELS * sizeof *v);
  unsigned char seen[AUDIO_MAX_CHANNELS + 1] = { 0 };
  size_t k = 0;
  if (!v)
    return EX_OSERR;
  char *copy = strdup(s), *save = NULL;
  if (!copy) {
    free(v);
    return EX_OSERR;
  }
  int rc = 0;
  for (char *tok = strtok_r(copy, ",", &save); tok && !rc; tok = strtok_r(NULL, ",", &save)) {
    char *dash = strchr(tok + 1, '-');
    int64_t a, b;
    if (dash)
      *dash = '\0';
    if (table_parse_i64(tok, &a) || (dash && table_parse_i64(dash + 1, &b))) {
      rc = cli_usage_error(cmd, "--channels: expected numbers and ranges like 1-12,24, got '%s'",
                           s);
      break;
    }
    if (!dash)
      b = a;
    if (a < 1 || b < 1 || a > AUDIO_MAX_CHANNELS || b > AUDIO_MAX_CHANNELS) {
      rc = cli_usage_error(cmd, "--channels: channel numbers are 1..%d", AUDIO_MAX_CHANNELS);
      break;
    }
    int64_t step = b >= a ? 1 : -1;
    for (int64_t c = a;; c += step) {
      if (seen[c]) {
        rc = cli_usage_error(cmd, "--channels: channel %lld is listed twice", (long long)c);
        break;
      }
      seen[c] = 1;
      v[k++] = (int32_t)c;
      if (c == b)
        break;
    }
  }
  free(copy);
  if (!rc && k == 0)
    rc = cli_usage_error(cmd, "--channels: no channel given");
  if (rc) {
    free(v);
    return rc;
  }
  *out = v;
  *n = k;
  return 0;
}

static cJSON *json_summary(const audio_batch *b, const audio_result *res, const char *out)
{
  cJSON *o = cJSON_CreateObject();
  if (o) {
    cJSON_AddStringToObject(o, "format", "tzero-audio/1");
    cJSON_AddStringToObject(o, "folder", out);
  }
  cJSON *files = o ? cJSON_AddArrayToObject(o, "files") : NULL;
  if (!files) {
    cJSON_Delete(o);
    return NULL;
  }
  int64_t traces = 0;
  for (size_t i = 0; i < audio_batch_count(b); i++) {
    const audio_result *r = &res[i];
    cJSON *f = cJSON_CreateObject();
    if (!f || !cJSON_AddItemToArray(files, f)) {
      cJSON_Delete(f);
      cJSON_Delete(o);
      return NULL;
    }
    char path[4200];
    snprintf(path, sizeof path, "%s/%s", out, audio_batch_output_name(b, i));
    cJSON_AddStringToObject(f, "input", audio_batch_input(b, i));
    cJSON_AddStringToObject(f, "output", path);
    cJSON_AddStringToObject(f, "audio_format", r->in.format_name);
    cJSON_AddNumberToObject(f, "channels_in_file", r->in.channels);
    cJSON_AddNumberToObject(f, "rate_hz", r->in.rate_hz);
    cJSON_AddNumberToObject(f, "duration_s", r->in.duration_s);
    cJSON_AddNumberToObject(f, "field_record", r->field_record);
    cJSON_AddNumberToObject(f, "traces", (double)r->win.channels);
    cJSON_AddNumberToObject(f, "samples", r->win.samples);
    cJSON_AddNumberToObject(f, "interval_us", r->win.interval_us);
    cJSON_AddNumberToObject(f, "start_ms", r->win.start_ms);
    cJSON_AddNumberToObject(f, "record_ms", r->win.record_ms);
    cJSON_AddBoolToObject(f, "resampled", r->win.resampled);
    cJSON_AddNumberToObject(f, "peak_full_scale", r->peak);
    cJSON_AddNumberToObject(f, "clipped_samples", (double)r->clipped);
    cJSON_AddNumberToObject(f, "nonfinite_samples", (double)r->nonfinite);
    traces += (int64_t)r->win.channels;
  }
  cJSON_AddNumberToObject(o, "traces", (double)traces);
  return o;
}

static void print_text(const audio_batch *b, const audio_result *res, const char *out)
{
  for (size_t i = 0; i < audio_batch_count(b); i++) {
    const audio_result *r = &res[i];
    printf("%s: %d ch at %d Hz, %.3f s (%s)\n", audio_batch_input(b, i), r->in.channels,
           r->in.rate_hz, r->in.duration_s, r->in.format_name);
    printf("  -> %s/%s: field record %d, %zu traces x %u samples at %u us "
           "(%.3f ms from %.3f ms)%s\n", out, audio_batch_output_name(b, i),
           (int)r->field_record, r->win.channels, r->win.samples, r->win.interval_us,
           r->win.record_ms, r->win.start_ms, r->win.resampled ? ", resampled" : "");
    if (r->clipped)
      printf("  warning: %lld samples at full scale (clipped); peak %.5f\n",
             (long long)r->clipped, r->peak);
    if (r->nonfinite)
      printf("  warning: %lld NaN or infinite samples replaced by 0\n",
             (long long)r->nonfinite);
  }
  printf("converted %zu file%s into %s\n", audio_batch_count(b),
         audio_batch_count(b) == 1 ? "" : "s", out);
}

enum {
  O_OUT = 256, O_INTERVAL, O_START, O_LENGTH, O_CHANNELS, O_FIRST, O_TABLE, O_REVERSE, O_SCALE,
  O_FORMAT, O_RESAMPLER, O_LINENAME, O_THREADS, O_LAYOUT, O_JSON, O_QUIET,
};

int cmd_audio(int argc, char **argv)
{
  static const struct option opts[] = {
    { "out", required_argument, NULL, O_OUT },
    { "interval-us", required_argument, NULL, O_INTERVAL },
    { "start-ms", required_argument, NULL, O_START },
    { "length-ms", required_argument, NULL, O_LENGTH },
    { "channels", required_argument, NULL, O_CHANNELS },
    { "first-record", required_argument, NULL, O_FIRST },
    { "record-table", required_argument, NULL, O_TABLE },
    { "reverse-polarity", no_argument, NULL, O_REVERSE },
    { "scale", required_argument, NULL, O_SCALE },
    { "format", required_argument, NULL, O_FORMAT },
    { "resampler", required_argument, NULL, O_RESAMPLER },
    { "line-name", required_argument, NULL, O_LINENAME },
    { "threads", required_argument, NULL, O_THREADS },
    { "layout", required_argument, NULL, O_LAYOUT },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *cmd = "audio", *out = NULL, *table = NULL, *layout = NULL;
  audio_params p;
  audio_params_init(&p);
  int32_t *chans = NULL;
  long long ll, first = 1;
  int json = 0, quiet = 0, have_first = 0, c, rc;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    rc = 0;
    switch (c) {
    case O_OUT: out = optarg; break;
    case O_INTERVAL:
      if ((rc = cli_parse_i64(cmd, "--interval-us", optarg, &ll)))
        break;
      if (ll < 1 || ll > 65535)
        rc = cli_usage_error(cmd, "--interval-us: must be 1..65535 us");
      else
        p.interval_us = (uint32_t)ll;
      break;
    case O_START:
      if (!(rc = cli_parse_f64(cmd, "--start-ms", optarg, &p.start_ms)) && !(p.start_ms >= 0))
        rc = cli_usage_error(cmd, "--start-ms: must be 0 or more");
      break;
    case O_LENGTH:
      if (!(rc = cli_parse_f64(cmd, "--length-ms", optarg, &p.length_ms)) && !(p.length_ms > 0))
        rc = cli_usage_error(cmd, "--length-ms: must be more than 0");
      break;
    case O_CHANNELS:
      free(chans);
      chans = NULL;
      rc = parse_channels(cmd, optarg, &chans, &p.nchannels);
      p.channels = chans;
      break;
    case O_FIRST:
      if (!(rc = cli_parse_i64(cmd, "--first-record", optarg, &first)))
        have_first = 1;
      break;
    case O_TABLE: table = optarg; break;
    case O_REVERSE: p.reverse_polarity = 1; break;
    case O_SCALE:
      if (!(rc = cli_parse_f64(cmd, "--scale", optarg, &p.scale)) && p.scale == 0)
        rc = cli_usage_error(cmd, "--scale: must not be 0");
      break;
    case O_FORMAT:
      if (!strcmp(optarg, "ieee")) p.format_code = 5;
      else if (!strcmp(optarg, "ibm")) p.format_code = 1;
      else rc = cli_usage_error(cmd, "--format: expected ieee or ibm, got '%s'", optarg);
      break;
    case O_RESAMPLER:
      if (!strcmp(optarg, "best")) p.quality = AUDIO_QUALITY_BEST;
      else if (!strcmp(optarg, "medium")) p.quality = AUDIO_QUALITY_MEDIUM;
      else if (!strcmp(optarg, "fast")) p.quality = AUDIO_QUALITY_FAST;
      else rc = cli_usage_error(cmd, "--resampler: expected best, medium or fast, got '%s'",
                                optarg);
      break;
    case O_LINENAME: p.line_name = optarg; break;
    case O_LAYOUT: layout = optarg; break;
    case O_THREADS:
      if ((rc = cli_parse_i64(cmd, "--threads", optarg, &ll)))
        break;
      if (ll < 0 || ll > AUDIO_MAX_THREADS)
        rc = cli_usage_error(cmd, "--threads: expected 0 to %d", AUDIO_MAX_THREADS);
      else
        p.threads = (int)ll;
      break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case 'h': free(chans); help(); return EX_OK;
    default: rc = cli_opt_error(cmd, argv, opts);
    }
    if (rc) {
      free(chans);
      return rc;
    }
  }
  if (!out)
    rc = cli_usage_error(cmd, "--out DIR is required");
  else if (optind >= argc)
    rc = cli_usage_error(cmd, "give the audio files or folders to convert");
  else if (table && have_first)
    rc = cli_usage_error(cmd, "give --first-record or --record-table, not both");
  if (rc) {
    free(chans);
    return rc;
  }

  tz_err err;
  tz_err_init(&err);
  audio_batch *b = NULL;
  audio_result *res = NULL;
  geometry_source *geo = NULL;
  if (layout) {
    geometry_layout l;
    geometry_layout_init(&l);
    if (!(rc = geometry_layout_load(&l, layout, &err)))
      rc = geometry_source_layout(&geo, &l, &err);
    geometry_layout_free(&l);
  }
  p.geometry = geo;
  if (!rc)
    rc = audio_batch_new(&b, argv + optind, (size_t)(argc - optind), &err);
  if (!rc)
    rc = table ? audio_batch_load_records(b, table, &err) : audio_batch_number(b, first, &err);
  if (!rc && !(res = calloc(audio_batch_count(b), sizeof *res)))
    rc = tz_fail(&err, TZ_E_NOMEM, "results");
  if (!rc)
    rc = audio_batch_run(b, out, &p, res, &err);
  if (!rc && json) {
    if (cli_print_json(json_summary(b, res, out)) != EX_OK)
      rc = tz_fail(&err, TZ_E_NOMEM, "JSON summary");
  } else if (!rc && !quiet) {
    print_text(b, res, out);
  }
  free(res);
  audio_batch_free(b);
  geometry_source_free(geo);
  free(chans);
  return rc ? cli_report(cmd, &err) : EX_OK;
}
