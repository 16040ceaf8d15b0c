/* synth.c -- `tzero synth`: a synthetic survey (one SEG-Y file per shot) from a model and a layout. */
#include <cjson/cJSON.h>
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>

#include "cli.h"
#include "tzero/bins.h"
#include "tzero/fileio.h"
#include "tzero/synth.h"

static void help(void)
{
  printf("usage: tzero synth --model MODEL.json --layout LAYOUT.json --out DIR [OPTIONS]\n"
         "\n"
         "Writes one SEG-Y file per recorded shot of the layout into DIR\n"
         "(DIR/shot_NNNNNN.sgy, by field record), from a layered-earth model:\n"
         "flat-layer reflections by exact ray tracing, an optional dipping interface\n"
         "(image source), the direct wave and the head wave of the first interface,\n"
         "Ricker wavelets, optional random noise and a slow linear noise train.\n"
         "Also writes the model's exact RMS velocity table (DIR/rms_velocity.csv).\n"
         "See docs/earth-model.md and docs/layout.md for the two JSON files.\n"
         "\n"
         "options:\n"
         "  --model FILE              layered-earth model (JSON)\n"
         "  --layout FILE             line layout (JSON)\n"
         "  --out DIR                 output folder (created; existing files of the\n"
         "                            same names are replaced only when all are written)\n"
         "  --samples N               samples per trace (default 1001)\n"
         "  --interval-ms MS          sample interval, milliseconds (default 1)\n"
         "  --record-ms MS            record length, milliseconds (sets --samples)\n"
         "  --peak-hz HZ              Ricker peak frequency, hertz (default 30)\n"
         "  --format ibm|ieee         sample format (default ibm)\n"
         "  --noise RMS               random noise RMS, trace amplitude units (default 0)\n"
         "  --seed N                  random noise seed (default 1)\n"
         "  --noise-train-amplitude A linear noise train amplitude (default 0 = none)\n"
         "  --noise-train-velocity V  its velocity, m/s (default 300)\n"
         "  --noise-train-hz HZ       its Ricker peak frequency, hertz (default 8)\n"
         "  --noise-train-velocity-max V\n"
         "                            a dispersive train (ground roll): phase velocity V\n"
         "                            m/s at low frequencies falling to\n"
         "                            --noise-train-velocity at high ones (default: none)\n"
         "  --wavelet ricker|minimum-phase\n"
         "                            source wavelet of the body waves (default ricker;\n"
         "                            minimum-phase: a damped resonance at --peak-hz)\n"
         "  --reverb-period-ms MS     body waves through the reverberation filter\n"
         "                            1/(1 + c z^P) of period MS (default none)\n"
         "  --reverb-coefficient C    its c, -1 < c < 1 (default 0.5)\n"
         "  --no-reflections, --no-dipping, --no-direct, --no-head-wave\n"
         "                            leave an event out\n"
         "  --bare-headers            leave geometry (coordinates, offsets, elevations,\n"
         "                            CMP) out of the trace headers\n"
         "  --bin-size M              CMP bin size, metres (default half the receiver\n"
         "                            interval); CMP numbers use the layout's line\n"
         "  --first-cmp N             number of the first CMP (default 1)\n"
         "  --line-name NAME          line name for the textual header\n"
         "  --rms-table FILE          where to write the RMS velocity table\n"
         "                            (default DIR/rms_velocity.csv)\n"
         "  --json                    print a summary as JSON\n"
         "  --quiet                   print nothing on success\n"
         "  -h, --help                this text\n"
         "\n"
         "Amplitudes are reflection coefficient x 1000 m / spreading distance.\n"
         "A model with a near_surface object (docs/earth-model.md) delays every\n"
         "reflection by each station's vertical time to its datum, adds the direct\n"
         "and head waves of the weathering layer, writes uphole times (bytes 95-96)\n"
         "for buried sources and the true station statics to DIR/true_statics.csv.\n"
         "\n%s", CLI_CAUTION);
}

enum {
  O_MODEL = 256, O_LAYOUT, O_OUT, O_SAMPLES, O_INTERVAL, O_RECORD, O_PEAK, O_FORMAT, O_NOISE,
  O_SEED, O_TRAIN_A, O_TRAIN_V, O_TRAIN_HZ, O_NOREFL, O_NODIP, O_NODIRECT, O_NOHEAD, O_BARE,
  O_BIN, O_FIRSTCMP, O_LINENAME, O_RMS, O_JSON, O_QUIET, O_TRAIN_VMAX, O_WAVELET, O_REV_P,
  O_REV_C,
};

int cmd_synth(int argc, char **argv)
{
  static const struct option opts[] = {
    { "model", required_argument, NULL, O_MODEL },
    { "layout", required_argument, NULL, O_LAYOUT },
    { "out", required_argument, NULL, O_OUT },
    { "samples", required_argument, NULL, O_SAMPLES },
    { "interval-ms", required_argument, NULL, O_INTERVAL },
    { "record-ms", required_argument, NULL, O_RECORD },
    { "peak-hz", required_argument, NULL, O_PEAK },
    { "format", required_argument, NULL, O_FORMAT },
    { "noise", required_argument, NULL, O_NOISE },
    { "seed", required_argument, NULL, O_SEED },
    { "noise-train-amplitude", required_argument, NULL, O_TRAIN_A },
    { "noise-train-velocity", required_argument, NULL, O_TRAIN_V },
    { "noise-train-hz", required_argument, NULL, O_TRAIN_HZ },
    { "noise-train-velocity-max", required_argument, NULL, O_TRAIN_VMAX },
    { "wavelet", required_argument, NULL, O_WAVELET },
    { "reverb-period-ms", required_argument, NULL, O_REV_P },
    { "reverb-coefficient", required_argument, NULL, O_REV_C },
    { "no-reflections", no_argument, NULL, O_NOREFL },
    { "no-dipping", no_argument, NULL, O_NODIP },
    { "no-direct", no_argument, NULL, O_NODIRECT },
    { "no-head-wave", no_argument, NULL, O_NOHEAD },
    { "bare-headers", no_argument, NULL, O_BARE },
    { "bin-size", required_argument, NULL, O_BIN },
    { "first-cmp", required_argument, NULL, O_FIRSTCMP },
    { "line-name", required_argument, NULL, O_LINENAME },
    { "rms-table", required_argument, NULL, O_RMS },
    { "json", no_argument, NULL, O_JSON },
    { "quiet", no_argument, NULL, O_QUIET },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *cmd = "synth";
  const char *model_path = NULL, *layout_path = NULL, *out = NULL, *rms = NULL;
  synth_params p;
  synth_params_init(&p);
  double interval_ms = 1.0, record_ms = -1, d;
  long long ll, samples = -1;
  double reverb_c = 0.5;
  int json = 0, quiet = 0, c;
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    switch (c) {
    case O_MODEL: model_path = optarg; break;
    case O_LAYOUT: layout_path = optarg; break;
    case O_OUT: out = optarg; break;
    case O_SAMPLES:
      if (cli_parse_i64(cmd, "--samples", optarg, &samples)) return EX_USAGE;
      if (samples < 1 || samples > 65535)
        return cli_usage_error(cmd, "--samples: must be 1..65535");
      break;
    case O_INTERVAL:
      if (cli_parse_f64(cmd, "--interval-ms", optarg, &interval_ms)) return EX_USAGE;
      if (!(interval_ms >= 0.001 && interval_ms <= 65.535))
        return cli_usage_error(cmd, "--interval-ms: must be 0.001..65.535 ms");
      break;
    case O_RECORD:
      if (cli_parse_f64(cmd, "--record-ms", optarg, &record_ms)) return EX_USAGE;
      if (!(record_ms > 0))
        return cli_usage_error(cmd, "--record-ms: must be > 0");
      break;
    case O_PEAK:
      if (cli_parse_f64(cmd, "--peak-hz", optarg, &p.peak_hz)) return EX_USAGE;
      if (!(p.peak_hz > 0 && p.peak_hz < 1e5))
        return cli_usage_error(cmd, "--peak-hz: must be > 0");
      break;
    case O_FORMAT:
      if (!strcmp(optarg, "ibm")) p.format_code = 1;
      else if (!strcmp(optarg, "ieee")) p.format_code = 5;
      else return cli_usage_error(cmd, "--format: expected ibm or ieee, got '%s'", optarg);
      break;
    case O_NOISE:
      if (cli_parse_f64(cmd, "--noise", optarg, &p.noise_rms)) return EX_USAGE;
      if (!(p.noise_rms >= 0))
        return cli_usage_error(cmd, "--noise: must be >= 0");
      break;
    case O_SEED:
      if (cli_parse_i64(cmd, "--seed", optarg, &ll)) return EX_USAGE;
      p.seed = (uint64_t)ll;
      break;
    case O_TRAIN_A:
      if (cli_parse_f64(cmd, "--noise-train-amplitude", optarg, &p.train_amplitude))
        return EX_USAGE;
      break;
    case O_TRAIN_V:
      if (cli_parse_f64(cmd, "--noise-train-velocity", optarg, &d)) return EX_USAGE;
      if (!(d > 0))
        return cli_usage_error(cmd, "--noise-train-velocity: must be > 0");
      p.train_velocity_mps = d;
      break;
    case O_TRAIN_HZ:
      if (cli_parse_f64(cmd, "--noise-train-hz", optarg, &d)) return EX_USAGE;
      if (!(d > 0))
        return cli_usage_error(cmd, "--noise-train-hz: must be > 0");
      p.train_peak_hz = d;
      break;
    case O_TRAIN_VMAX:
      if (cli_parse_f64(cmd, "--noise-train-velocity-max", optarg, &d)) return EX_USAGE;
      if (!(d > 0 && d < 1e5))
        return cli_usage_error(cmd, "--noise-train-velocity-max: must be > 0");
      p.train_velocity_max_mps = d;
      break;
    case O_WAVELET:
      if (!strcmp(optarg, "ricker")) p.wavelet = SYNTH_WAVELET_RICKER;
      else if (!strcmp(optarg, "minimum-phase")) p.wavelet = SYNTH_WAVELET_MINIMUM_PHASE;
      else return cli_usage_error(cmd, "--wavelet: expected ricker or minimum-phase, got '%s'",
                                  optarg);
      break;
    case O_REV_P:
      if (cli_parse_f64(cmd, "--reverb-period-ms", optarg, &d)) return EX_USAGE;
      if (!(d > 0 && d < 1e5))
        return cli_usage_error(cmd, "--reverb-period-ms: must be > 0");
      p.reverb_period_s = d * 1e-3;
      break;
    case O_REV_C:
      if (cli_parse_f64(cmd, "--reverb-coefficient", optarg, &d)) return EX_USAGE;
      if (!(d > -1 && d < 1))
        return cli_usage_error(cmd, "--reverb-coefficient: must be between -1 and 1 (exclusive)");
      reverb_c = d;
      break;
    case O_NOREFL: p.reflections = 0; break;
    case O_NODIP: p.dipping = 0; break;
    case O_NODIRECT: p.direct = 0; break;
    case O_NOHEAD: p.head = 0; break;
    case O_BARE: p.bare_headers = 1; break;
    case O_BIN:
      if (cli_parse_f64(cmd, "--bin-size", optarg, &p.bin_size_m)) return EX_USAGE;
      if (!(p.bin_size_m > 0))
        return cli_usage_error(cmd, "--bin-size: must be > 0 m");
      break;
    case O_FIRSTCMP:
      if (cli_parse_i64(cmd, "--first-cmp", optarg, &ll)) return EX_USAGE;
      if (ll < -1000000000LL || ll > 1000000000LL)
        return cli_usage_error(cmd, "--first-cmp: out of range");
      p.first_cmp = (int32_t)ll;
      break;
    case O_LINENAME: p.line_name = optarg; break;
    case O_RMS: rms = optarg; break;
    case O_JSON: json = 1; break;
    case O_QUIET: quiet = 1; break;
    case 'h': help(); return EX_OK;
    default: return cli_opt_error(cmd, argv, opts);
    }
  }
  if (p.reverb_period_s > 0)
    p.reverb_coefficient = reverb_c;
  if (optind < argc)
    return cli_usage_error(cmd, "unexpected argument '%s'", argv[optind]);
  if (!model_path || !layout_path || !out)
    return cli_usage_error(cmd, "--model, --layout and --out are required");
  p.interval_us = (uint32_t)llround(interval_ms * 1000.0);
  if (record_ms > 0) {
    if (samples > 0)
      return cli_usage_error(cmd, "give --samples or --record-ms, not both");
    samples = llround(record_ms / interval_ms) + 1;
    if (samples > 65535)
      return cli_usage_error(cmd, "--record-ms: more than 65535 samples");
  }
  if (samples > 0)
    p.samples = (uint32_t)samples;

  tz_err err;
  tz_err_init(&err);
  synth_model m;
  geometry_layout l;
  geometry_layout_init(&l);
  if (fileio_check_not_input(rms, model_path, "--rms-table", &err) ||
      fileio_check_not_input(rms, layout_path, "--rms-table", &err) ||
      synth_model_load(&m, model_path, &err) || geometry_layout_load(&l, layout_path, &err))
    return cli_report(cmd, &err);
  synth_summary s;
  int rc = synth_survey(&m, &l, &p, out, &s, &err);
  char rms_path[4200], true_path[4200] = "";
  if (!rc) {
    if (!rms) {
      snprintf(rms_path, sizeof rms_path, "%s/rms_velocity.csv", out);
      rms = rms_path;
    }
    int32_t first = s.first_cmp, last = s.last_cmp;
    if (last < first) {            /* bare headers: the layout's line still numbers CMPs */
      bins_params bp;
      bins_line *line = NULL;
      bins_fold *f = NULL;
      rc = bins_params_from_layout(&l, p.bin_size_m, p.first_cmp, &bp, &err);
      if (!rc) rc = bins_line_straight(&line, &bp, &err);
      if (!rc) rc = bins_fold_new(&f, line, 100, &err);
      if (!rc) rc = bins_fold_predict(f, line, &l, NULL, &err);
      if (!rc) {
        bins_fold_summary fs;
        bins_fold_summarise(f, &fs);
        first = fs.first_cmp;
        last = fs.last_cmp;
      }
      bins_fold_free(f);
      bins_line_free(line);
    }
    if (!rc)
      rc = synth_write_rms_table(&m, first, last, rms, &err);
    if (!rc && m.ns.present) {
      snprintf(true_path, sizeof true_path, "%s/true_statics.csv", out);
      rc = synth_write_true_statics(&m, &l, true_path, &err);
    }
  }
  geometry_layout_free(&l);
  if (rc)
    return cli_report(cmd, &err);
  if (json) {
    cJSON *o = cJSON_CreateObject();
    if (!o)
      return EX_OSERR;
    cJSON_AddStringToObject(o, "folder", out);
    cJSON_AddNumberToObject(o, "files", (double)s.files);
    cJSON_AddNumberToObject(o, "traces", (double)s.traces);
    cJSON_AddNumberToObject(o, "bytes", (double)s.bytes);
    cJSON_AddNumberToObject(o, "first_field_record", s.first_field_record);
    cJSON_AddNumberToObject(o, "last_field_record", s.last_field_record);
    if (s.last_cmp >= s.first_cmp) {
      cJSON_AddNumberToObject(o, "first_cmp", s.first_cmp);
      cJSON_AddNumberToObject(o, "last_cmp", s.last_cmp);
    }
    cJSON_AddStringToObject(o, "rms_table", rms);
    if (true_path[0])
      cJSON_AddStringToObject(o, "true_statics", true_path);
    if (cli_print_json(o) != EX_OK)
      return EX_OSERR;
  } else if (!quiet) {
    printf("wrote %zu shot files (%lld traces, %.1f MB) to %s\n", s.files, (long long)s.traces,
           (double)s.bytes / 1e6, out);
    printf("field records %d to %d", (int)s.first_field_record, (int)s.last_field_record);
    if (s.last_cmp >= s.first_cmp)
      printf(", CMPs %d to %d", (int)s.first_cmp, (int)s.last_cmp);
    printf("\nRMS velocity table: %s\n", rms);
    if (true_path[0])
      printf("true station statics (near-surface model): %s\n", true_path);
  }
  return EX_OK;
}
