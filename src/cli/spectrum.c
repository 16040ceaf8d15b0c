/* spectrum.c -- `tzero spectrum`: average amplitude spectra of chosen traces. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/fileio.h"
#include "tzero/flow.h"
#include "tzero/job.h"
#include "tzero/segy.h"
#include "tzero/spectrum.h"

static void help(void)
{
  printf("usage: tzero spectrum [OPTIONS] FILE...\n"
         "       tzero spectrum --job JOB [OPTIONS]\n"
         "\n"
         "Average amplitude spectrum of chosen traces of SEG-Y shot files or of a\n"
         "stacked section: each trace's time window is tapered (cosine ends),\n"
         "zero-padded to at least twice its length, transformed (FFTW), and the\n"
         "amplitudes |X(f)| are averaged over the traces, then normalised to 1 (0 dB)\n"
         "at the peak. Used to choose band-pass corners and to compare data before\n"
         "and after deconvolution.\n"
         "\n"
         "options:\n"
         "  --job FILE          take the shot files (and header map) of a job file\n"
         "  --conditioned       with --job and --records: the traces after the job's\n"
         "                      edits, statics and conditioning (whole records, as the\n"
         "                      stack sees them before NMO), not as recorded\n"
         "  --traces-out FILE   with --conditioned: also write the selected traces as\n"
         "                      SEG-Y (IEEE floats), e.g. for tzero picture\n"
         "  --records LIST      field record numbers (trace bytes 9-12), e.g. 10-20,25\n"
         "  --channels LIST     channels within the record (bytes 13-16), e.g. 1-24\n"
         "  --offsets MIN:MAX   |offset| range in metres (bytes 37-40); MAX may be empty\n"
         "  --window START:END  time window in ms on the trace axis (default: the trace)\n"
         "  --taper-pct P       taper, percent of the window at each end (0-50, default 10;\n"
         "                      50 is a Hann window)\n"
         "  --max-hz F          print frequencies up to F Hz only (default: Nyquist)\n"
         "  --out FILE          write the CSV here instead of standard output\n"
         "  --json              print JSON instead of CSV\n"
         "  --quiet             with --out, print nothing on success\n"
         "  -h, --help          this text\n"
         "\n"
         "CSV columns: frequency_hz, amplitude (linear, 1 at the peak), amplitude_db\n"
         "(20 log10 of it, dB; %g for zero); '#' lines give the traces, window and peak.\n"
         "Only data traces (identification code 1, or 0) are used; traces that are zero\n"
         "throughout the window are counted and left out. `tzero picture --spectrum`\n"
         "draws the CSV.\n"
         "Exit status: 0 success, 64 bad option or selection matching nothing, 65 bad\n"
         "data or job, 66 missing input, 73 cannot create output.\n"
         "\n%s", SPECTRUM_FLOOR_DB, CLI_CAUTION);
}

/* "A:B" with either side possibly empty. */
static int parse_pair(const char *opt, const char *s, double *a, double *b, int *has_b)
{
  const char *c = strchr(s, ':');
  if (!c)
    return cli_usage_error("spectrum", "%s: expected MIN:MAX, got '%s'", opt, s);
  char left[64];
  size_t n = (size_t)(c - s);
  if (n >= sizeof left)
    return cli_usage_error("spectrum", "%s: '%s' is too long", opt, s);
  memcpy(left, s, n);
  left[n] = '\0';
  if (n && cli_parse_f64("spectrum", opt, left, a))
    return EX_USAGE;
  *has_b = c[1] != '\0';
  if (*has_b && cli_parse_f64("spectrum", opt, c + 1, b))
    return EX_USAGE;
  return EX_OK;
}

static int ranges(const char *opt, const char *s, spectrum_range *r, size_t *n)
{
  tz_err e;
  tz_err_init(&e);
  if (spectrum_parse_ranges(s, r, SPECTRUM_MAX_RANGES, n, &e))
    return cli_usage_error("spectrum", "%s: %s", opt, e.msg);
  return EX_OK;
}

static void write_csv(FILE *fp, const spectrum_result *r, size_t nout)
{
  fprintf(fp, "# tzero spectrum: %lld traces averaged (%lld dead left out), window %.6g-%.6g ms "
          "(%zu samples at %.6g ms), peak %.6g Hz\n", (long long)r->traces,
          (long long)r->traces_dead, r->start_ms, r->end_ms, r->samples, r->interval_ms,
          r->peak_hz);
  fprintf(fp, "frequency_hz,amplitude,amplitude_db\n");
  for (size_t k = 0; k < nout; k++)
    fprintf(fp, "%.6g,%.6g,%.4f\n", (double)k * r->df_hz, r->amplitude[k], r->db[k]);
}

static cJSON *to_json(const spectrum_result *r, size_t nout)
{
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return NULL;
  cJSON_AddNumberToObject(o, "traces", (double)r->traces);
  cJSON_AddNumberToObject(o, "traces_dead", (double)r->traces_dead);
  cJSON_AddNumberToObject(o, "window_start_ms", r->start_ms);
  cJSON_AddNumberToObject(o, "window_end_ms", r->end_ms);
  cJSON_AddNumberToObject(o, "window_samples", (double)r->samples);
  cJSON_AddNumberToObject(o, "interval_ms", r->interval_ms);
  cJSON_AddNumberToObject(o, "frequency_step_hz", r->df_hz);
  cJSON_AddNumberToObject(o, "peak_hz", r->peak_hz);
  cJSON *f = cJSON_AddArrayToObject(o, "frequency_hz");
  cJSON *a = cJSON_AddArrayToObject(o, "amplitude");
  cJSON *d = cJSON_AddArrayToObject(o, "amplitude_db");
  for (size_t k = 0; f && a && d && k < nout; k++) {
    cJSON_AddItemToArray(f, cJSON_CreateNumber((double)k * r->df_hz));
    cJSON_AddItemToArray(a, cJSON_CreateNumber(r->amplitude[k]));
    cJSON_AddItemToArray(d, cJSON_CreateNumber(r->db[k]));
  }
  return o;
}

static int emit(const spectrum_result *rp, const char *out, int json, int quiet, double max_hz)
{
  const spectrum_result r = *rp;
  tz_err err;
  tz_err_init(&err);
  fileio_out *fo = NULL;
  int rc, ex;
  size_t nout = r.nfreq;
  while (nout > 1 && (double)(nout - 1) * r.df_hz > max_hz)
    nout--;
  ex = EX_OK;
  if (json && !out) {
    ex = cli_print_json(to_json(&r, nout));
  } else if (!out) {
    write_csv(stdout, &r, nout);
  } else if ((rc = fileio_create(&fo, out, &err))) {
    ex = cli_report("spectrum", &err);
  } else {
    if (json) {
      cJSON *o = to_json(&r, nout);
      char *text = o ? cJSON_Print(o) : NULL;
      if (text)
        fprintf(fileio_stream(fo), "%s\n", text);
      free(text);
      cJSON_Delete(o);
    } else {
      write_csv(fileio_stream(fo), &r, nout);
    }
    if ((rc = fileio_commit(fo, &err)))
      ex = cli_report("spectrum", &err);
    else if (!quiet)
      printf("spectrum of %lld traces (window %.6g-%.6g ms), peak %.6g Hz: %s\n",
             (long long)r.traces, r.start_ms, r.end_ms, r.peak_hz, out);
  }
  return ex;
}

/* Writes the selected traces (IEEE floats, headers as read) through a temporary file. */
static int write_traces(const char *path, const stack_record_traces *rt,
                        const spectrum_request *rq, tz_err *err)
{
  segy_writer_opts o = { .revision = 1, .format_code = 5, .samples = (uint32_t)rt->ns,
                         .interval_us = rt->interval_us, .sorting_code = 1,
                         .text = "tzero spectrum --conditioned: traces after the job's chain" };
  segy_writer *w = NULL;
  int rc = segy_writer_open(&w, path, &o, err);
  for (size_t j = 0; j < rt->n && !rc; j++)
    if (spectrum_selects(rq, &rt->headers[j]))
      rc = segy_trace_write(w, &rt->headers[j], rt->samples + j * rt->ns, err);
  if (rc) {
    segy_writer_abort(w);
    return rc;
  }
  return segy_writer_finish(w, err);
}

static int conditioned_spectrum(const char *job_path, const spectrum_request *rq,
                                const char *out, const char *traces_out, int json, int quiet,
                                double max_hz)
{
  tz_err err;
  tz_err_init(&err);
  flow_setup fs;
  memset(&fs, 0, sizeof fs);
  int64_t rg[SPECTRUM_MAX_RANGES][2];
  for (size_t i = 0; i < rq->nrecords; i++) {
    rg[i][0] = rq->records[i].lo;
    rg[i][1] = rq->records[i].hi;
  }
  stack_record_traces rt;
  memset(&rt, 0, sizeof rt);
  spectrum_result r;
  memset(&r, 0, sizeof r);
  int rc = flow_setup_load(&fs, job_path, NULL, 0, NULL, NULL, &err);
  if (!rc && out)
    rc = fileio_probe(out, &err);
  if (!rc)
    rc = stack_collect_records(fs.plan, (const int64_t(*)[2])rg, rq->nrecords,
                               fs.job->conditioning.n ? &fs.job->conditioning : NULL,
                               fs.velocity, &rt, &err);
  if (!rc)
    rc = spectrum_of_traces(rt.headers, rt.samples, rt.n, rt.ns, rt.interval_us, rq, &r, &err);
  if (!rc && traces_out)
    rc = write_traces(traces_out, &rt, rq, &err);
  int ex = rc ? (rc == TZ_E_ARG ? cli_usage_error("spectrum", "%s", err.msg)
                                : cli_report("spectrum", &err))
              : emit(&r, out, json, quiet, max_hz);
  spectrum_result_free(&r);
  stack_record_traces_free(&rt);
  flow_setup_free(&fs);
  return ex;
}

int cmd_spectrum(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "conditioned", no_argument, NULL, 'C' },
    { "traces-out", required_argument, NULL, 'T' },
    { "records", required_argument, NULL, 'r' },
    { "channels", required_argument, NULL, 'c' },
    { "offsets", required_argument, NULL, 'o' },
    { "window", required_argument, NULL, 'w' },
    { "taper-pct", required_argument, NULL, 't' },
    { "max-hz", required_argument, NULL, 'm' },
    { "out", required_argument, NULL, 'O' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  static spectrum_range rec[SPECTRUM_MAX_RANGES], chan[SPECTRUM_MAX_RANGES];
  spectrum_request rq = { .offset_max_m = -1, .taper_pct = 10 };
  const char *job_path = NULL, *out = NULL, *traces_out = NULL;
  int conditioned = 0;
  double max_hz = INFINITY, omax = -1;
  int json = 0, quiet = 0, c, has, ex;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    switch (c) {
    case 'J': job_path = optarg; break;
    case 'C': conditioned = 1; break;
    case 'T': traces_out = optarg; break;
    case 'r':
      if ((ex = ranges("--records", optarg, rec, &rq.nrecords)))
        return ex;
      rq.records = rec;
      break;
    case 'c':
      if ((ex = ranges("--channels", optarg, chan, &rq.nchannels)))
        return ex;
      rq.channels = chan;
      break;
    case 'o':
      if ((ex = parse_pair("--offsets", optarg, &rq.offset_min_m, &omax, &has)))
        return ex;
      rq.offset_max_m = has ? omax : -1;
      if (rq.offset_min_m < 0 || (has && omax < rq.offset_min_m))
        return cli_usage_error("spectrum", "--offsets: expected 0 <= MIN <= MAX, got '%s'",
                               optarg);
      break;
    case 'w':
      if ((ex = parse_pair("--window", optarg, &rq.start_ms, &rq.end_ms, &has)))
        return ex;
      if (!has || !(rq.end_ms > rq.start_ms))
        return cli_usage_error("spectrum", "--window: expected START:END with END > START (ms), "
                               "got '%s'", optarg);
      break;
    case 't':
      if (cli_parse_f64("spectrum", "--taper-pct", optarg, &rq.taper_pct))
        return EX_USAGE;
      if (!(rq.taper_pct >= 0 && rq.taper_pct <= 50))
        return cli_usage_error("spectrum", "--taper-pct: expected 0 to 50, got '%s'", optarg);
      break;
    case 'm':
      if (cli_parse_f64("spectrum", "--max-hz", optarg, &max_hz))
        return EX_USAGE;
      if (!(max_hz > 0))
        return cli_usage_error("spectrum", "--max-hz: expected a frequency > 0, got '%s'", optarg);
      break;
    case 'O': out = optarg; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("spectrum", argv, opts);
    }
  }
  if (!job_path == !(argc - optind))
    return cli_usage_error("spectrum", "give shot or section files, or --job FILE (not both)");
  if (conditioned && (!job_path || !rq.nrecords))
    return cli_usage_error("spectrum", "--conditioned needs --job and --records (the records "
                           "to run through the job's chain)");
  if (traces_out && !conditioned)
    return cli_usage_error("spectrum", "--traces-out writes conditioned traces: give "
                           "--conditioned (the recorded ones are in the shot files)");
  tz_err err;
  tz_err_init(&err);
  job_spec *job = NULL;
  segy_header_map map;
  segy_open_opts oo;
  memset(&oo, 0, sizeof oo);
  const char *const *paths = (const char *const *)argv + optind;
  size_t npaths = (size_t)(argc - optind);
  int rc = TZ_OK;
  if (conditioned)
    return conditioned_spectrum(job_path, &rq, out, traces_out, json, quiet, max_hz);
  if (job_path) {
    if (!(rc = job_load(&job, job_path, &err))) {
      paths = (const char *const *)job->shots;
      npaths = job->nshots;
      if (job->header_map && !(rc = segy_header_map_load(&map, job->header_map, &err))) {
        oo.map = &map;
        rq.open = &oo;
      }
    }
  }
  if (!rc && out) {
    for (size_t i = 0; i < npaths && !rc; i++)
      rc = fileio_check_not_input(out, paths[i], "the spectrum", &err);
    if (!rc)
      rc = fileio_probe(out, &err);
  }
  spectrum_result r;
  memset(&r, 0, sizeof r);
  if (!rc)
    rc = spectrum_of_files(paths, npaths, &rq, &r, &err);
  if (rc) {
    ex = rc == TZ_E_ARG ? cli_usage_error("spectrum", "%s", err.msg) : cli_report("spectrum", &err);
    job_free(job);
    return ex;
  }
  ex = emit(&r, out, json, quiet, max_hz);
  spectrum_result_free(&r);
  job_free(job);
  return ex;
}
