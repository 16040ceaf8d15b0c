/* check_audio.c -- audio shot records to SEG-Y: probing, windows, resampling, batches, errors.
 *
 * Test files are written here with libsndfile (an independent writer of the
 * WAV format); the SEG-Y output is read back with tzero's reader. Every
 * expected value comes from the samples written or from sampling theory, never
 * from an earlier tzero run.
 */
#include <math.h>
#include <sndfile.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "tzero/audio.h"
#include "tzero/segy.h"
#include "unit.h"

static char dir[512];

static const char *tmp_path(const char *name)
{
  static char buf[8][700];
  static int k;
  if (!dir[0]) {
    const char *w = getenv("WORK");
    snprintf(dir, sizeof dir, "%s/check_audio.XXXXXX", w && *w ? w : "/tmp");
    ck_assert_ptr_nonnull(mkdtemp(dir));
  }
  k = (k + 1) % 8;
  snprintf(buf[k], sizeof buf[k], "%s/%s", dir, name);
  return buf[k];
}

/* Writes a 16-bit PCM WAV whose channel c, frame i holds value(c, i) (counts). */
static void write_wav(const char *path, int rate, int nch, int64_t frames,
                      short (*value)(int c, int64_t i))
{
  SF_INFO si = { .samplerate = rate, .channels = nch,
                 .format = SF_FORMAT_WAV | SF_FORMAT_PCM_16 };
  SNDFILE *sf = sf_open(path, SFM_WRITE, &si);
  ck_assert_msg(sf != NULL, "sf_open: %s", sf_strerror(NULL));
  short *fr = malloc((size_t)nch * sizeof *fr);
  for (int64_t i = 0; i < frames; i++) {
    for (int c = 0; c < nch; c++)
      fr[c] = value(c, i);
    ck_assert_int_eq(sf_writef_short(sf, fr, 1), 1);
  }
  free(fr);
  sf_close(sf);
}

/* Channel c: (c + 1) * 1000 + i % 500 counts: every sample tells its place. */
static short ramp(int c, int64_t i) { return (short)((c + 1) * 1000 + i % 500); }
/* One spike of 32767 counts at frame 4410 + 441 c on channel c. */
static short spikes(int c, int64_t i) { return i == 4410 + 441 * c ? 32767 : 0; }
static short dc(int c, int64_t i) { return 8192; }

static void read_back(const char *path, segy_file **f, const segy_info **info)
{
  tz_err err;
  tz_err_init(&err);
  ck_assert_msg(segy_open(f, path, NULL, &err) == TZ_OK, "%s", err.msg);
  *info = segy_get_info(*f);
}

/* 8000 Hz is exactly 125 us: no resampling, so every output sample is an input
 * sample / 32768 (libsndfile's normalisation of 16-bit PCM, documented in its
 * sf_read_float manual: full scale 1.0), in the channel order asked for. */
START_TEST(test_copy_exact_channels_polarity)
{
  const char *in = tmp_path("ramp.wav"), *out = tmp_path("ramp.sgy");
  write_wav(in, 8000, 4, 2000, ramp);
  tz_err err;
  tz_err_init(&err);
  audio_info ai;
  ck_assert_int_eq(audio_probe(in, &ai, &err), TZ_OK);
  ck_assert_int_eq(ai.channels, 4);
  ck_assert_int_eq(ai.rate_hz, 8000);
  ck_assert_int_eq(ai.frames, 2000);
  ck_assert_double_eq_tol(ai.duration_s, 0.25, 1e-12);
  ck_assert_double_eq(ai.full_scale, 32767.0 / 32768.0);
  ck_assert_ptr_nonnull(strstr(ai.format_name, "WAV"));

  audio_params p;
  audio_params_init(&p);
  int32_t ch[] = { 3, 1 };
  p.interval_us = 125;
  p.channels = ch;
  p.nchannels = 2;
  p.reverse_polarity = 1;
  p.scale = 2.0;
  p.start_ms = 10.0;                  /* frame 80 */
  p.length_ms = 100.0;                /* 801 samples (time of the last sample) */
  audio_result r;
  ck_assert_msg(audio_convert(in, out, &p, 77, 1001, &r, &err) == TZ_OK, "%s", err.msg);
  ck_assert_int_eq(r.win.resampled, 0);
  ck_assert_int_eq(r.win.samples, 801);
  ck_assert_int_eq(r.win.start_frame, 80);
  segy_file *f;
  const segy_info *info;
  read_back(out, &f, &info);
  ck_assert_int_eq(segy_trace_count(f), 2);
  ck_assert_uint_eq(info->interval_us, 125);
  ck_assert_uint_eq(info->samples, 801);
  float s[801];
  for (int t = 0; t < 2; t++) {
    segy_trace_header h;
    ck_assert_int_eq(segy_trace_read(f, t, &h, s, 801, &err), TZ_OK);
    ck_assert_int_eq(h.field_record, 77);
    ck_assert_int_eq(h.channel, t + 1);
    ck_assert_int_eq(h.line_seq, 1001 + t);
    ck_assert_int_eq(h.file_seq, t + 1);
    ck_assert_int_eq(h.kind, SEGY_KIND_SEISMIC);
    int c = ch[t] - 1;
    for (int k = 0; k < 801; k++)
      ck_assert_float_eq(s[k], -2.0f * (float)ramp(c, 80 + k) / 32768.0f);
  }
  segy_close(f);
  ck_assert_double_eq_tol(r.peak, (3000 + 499) / 32768.0, 1e-9);   /* file channel 3 */
  ck_assert_int_eq(r.clipped, 0);
}
END_TEST

/* 44100 Hz to 250 us (4 kHz). A spike is band-limited by the anti-alias
 * low-pass: it lands on the output sample at its own time (the input and
 * output grids meet every 441 input frames), with a peak near the rate ratio
 * 4000/44100, since an ideal low-pass at the new Nyquist has impulse response
 * ratio * sinc (sampling theorem, common practice). A constant comes through
 * at unit gain. */
START_TEST(test_resample_spike_and_dc)
{
  const char *in = tmp_path("spikes.wav"), *out = tmp_path("spikes.sgy");
  write_wav(in, 44100, 3, 22050, spikes);
  tz_err err;
  tz_err_init(&err);
  audio_params p;
  audio_params_init(&p);               /* 250 us by default */
  audio_result r;
  ck_assert_msg(audio_convert(in, out, &p, 5, 1, &r, &err) == TZ_OK, "%s", err.msg);
  ck_assert_int_eq(r.win.resampled, 1);
  ck_assert_int_eq(r.win.samples, 2000);        /* last sample 499.75 ms <= 22049/44100 s */
  ck_assert_int_eq(r.clipped, 3);
  segy_file *f;
  const segy_info *info;
  read_back(out, &f, &info);
  float s[2000];
  double ratio = 4000.0 / 44100.0;
  for (int t = 0; t < 3; t++) {
    segy_trace_header h;
    ck_assert_int_eq(segy_trace_read(f, t, &h, s, 2000, &err), TZ_OK);
    int best = 0;
    for (int k = 1; k < 2000; k++)
      if (fabsf(s[k]) > fabsf(s[best]))
        best = k;
    ck_assert_int_eq(best, 400 + 40 * t);       /* 100 ms + 10 ms per channel */
    double peak = s[best] / (32767.0 / 32768.0);
    ck_assert_msg(peak > 0.95 * ratio && peak < 1.01 * ratio, "peak %g, ratio %g", peak, ratio);
    /* symmetric about the spike: the converter is linear-phase */
    for (int d = 1; d < 30; d++)
      ck_assert_float_eq_tol(s[best - d], s[best + d], 2e-5f);
  }
  segy_close(f);

  /* window from 50 ms: the spike of channel 1 at 100 ms moves to 50 ms */
  p.start_ms = 50.0;
  p.length_ms = 200.0;
  ck_assert_int_eq(audio_convert(in, out, &p, 5, 1, &r, &err), TZ_OK);
  read_back(out, &f, &info);
  ck_assert_uint_eq(info->samples, 801);
  segy_trace_header h;
  ck_assert_int_eq(segy_trace_read(f, 0, &h, s, 2000, &err), TZ_OK);
  int best = 0;
  for (int k = 1; k < 801; k++)
    if (fabsf(s[k]) > fabsf(s[best]))
      best = k;
  ck_assert_int_eq(best, 200);
  segy_close(f);

  const char *din = tmp_path("dc.wav");
  write_wav(din, 48000, 2, 24000, dc);
  audio_params_init(&p);
  p.interval_us = 500;
  ck_assert_int_eq(audio_convert(din, out, &p, 1, 1, &r, &err), TZ_OK);
  read_back(out, &f, &info);
  ck_assert_int_eq(segy_trace_read(f, 1, &h, s, 2000, &err), TZ_OK);
  for (int k = 100; k < (int)info->samples - 100; k++)
    ck_assert_float_eq_tol(s[k], 0.25f, 1e-4f);
  segy_close(f);
}
END_TEST

/* More channels than libsamplerate takes in one converter (128): channel c has
 * its spike 10 + c frames later, so each trace must find its own spike. */
static short late_spike(int c, int64_t i) { return i == 4410 + 441 * (c % 7) ? 16384 : 0; }

START_TEST(test_many_channels)
{
  const char *in = tmp_path("wide.wav"), *out = tmp_path("wide.sgy");
  write_wav(in, 44100, 200, 8820, late_spike);
  tz_err err;
  tz_err_init(&err);
  audio_params p;
  audio_params_init(&p);
  audio_result r;
  ck_assert_msg(audio_convert(in, out, &p, 1, 1, &r, &err) == TZ_OK, "%s", err.msg);
  segy_file *f;
  const segy_info *info;
  read_back(out, &f, &info);
  ck_assert_int_eq(segy_trace_count(f), 200);
  float s[800];
  for (int t = 0; t < 200; t++) {
    segy_trace_header h;
    ck_assert_int_eq(segy_trace_read(f, t, &h, s, 800, &err), TZ_OK);
    int best = 0;
    for (int k = 1; k < (int)info->samples; k++)
      if (fabsf(s[k]) > fabsf(s[best]))
        best = k;
    ck_assert_int_eq(best, 400 + 40 * (t % 7));   /* 441 frames = 40 samples at 250 us */
  }
  segy_close(f);
}
END_TEST

/* NaN and infinities in a float file are counted and replaced by 0, so the
 * resampler never spreads them (common practice, as segy_trace_read does). */
START_TEST(test_nonfinite_float)
{
  const char *in = tmp_path("nan.wav"), *out = tmp_path("nan.sgy");
  SF_INFO si = { .samplerate = 44100, .channels = 2, .format = SF_FORMAT_WAV | SF_FORMAT_FLOAT };
  SNDFILE *sf = sf_open(in, SFM_WRITE, &si);
  ck_assert_ptr_nonnull(sf);
  float fr[2 * 4410];
  for (int i = 0; i < 2 * 4410; i++)
    fr[i] = 1.5f;                                   /* float files may pass 1.0 */
  fr[2 * 1000] = NAN;
  fr[2 * 2000 + 1] = INFINITY;
  fr[2 * 3000 + 1] = -INFINITY;
  ck_assert_int_eq(sf_writef_float(sf, fr, 4410), 4410);
  sf_close(sf);
  tz_err err;
  tz_err_init(&err);
  audio_params p;
  audio_params_init(&p);
  audio_result r;
  ck_assert_msg(audio_convert(in, out, &p, 1, 1, &r, &err) == TZ_OK, "%s", err.msg);
  ck_assert_int_eq(r.nonfinite, 3);
  ck_assert_int_eq(r.clipped, 0);                   /* no full scale for float */
  ck_assert_double_eq_tol(r.peak, 1.5, 1e-9);
  segy_file *f;
  const segy_info *info;
  read_back(out, &f, &info);
  float s[400];
  for (int t = 0; t < 2; t++) {
    segy_trace_header h;
    ck_assert_int_eq(segy_trace_read(f, t, &h, s, 400, &err), TZ_OK);
    ck_assert_int_eq(segy_bad_samples(f), 0);
    for (int k = 0; k < (int)info->samples; k++)
      ck_assert(isfinite(s[k]));
  }
  segy_close(f);
}
END_TEST

/* Window, channel, interval and ratio limits are refused with the numbers. */
START_TEST(test_plan_errors)
{
  audio_info in = { .channels = 4, .rate_hz = 44100, .frames = 44100, .duration_s = 1.0 };
  audio_params p;
  audio_window w;
  tz_err err;
  audio_params_init(&p);
  tz_err_init(&err);
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_OK);
  ck_assert_uint_eq(w.samples, 4000);
  p.start_ms = 1000.0;
  tz_err_init(&err);
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(err.msg, "after the end of the file"));
  p.start_ms = 500.0;
  p.length_ms = 600.0;
  tz_err_init(&err);
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(err.msg, "ends beyond the end"));
  p.length_ms = 499.0;                   /* last sample at 999 ms < 999.977 ms */
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_OK);
  ck_assert_uint_eq(w.samples, 1997);
  int32_t ch[] = { 2, 5 };
  p.channels = ch;
  p.nchannels = 2;
  tz_err_init(&err);
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(err.msg, "channel 5"));
  audio_params_init(&p);
  p.interval_us = 20;                    /* 50 kHz from 44.1 kHz: upsampling is fine */
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_OK);
  p.interval_us = 1;                     /* 1 MHz: 44100 * 1 us -> ratio 22.7, fine */
  tz_err_init(&err);
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_E_ARG);  /* but 1e6 samples > 65535 */
  ck_assert_ptr_nonnull(strstr(err.msg, "more than 65535"));
  p.interval_us = 60000;                 /* ratio 1/2646: beyond libsamplerate's 1/256 */
  tz_err_init(&err);
  ck_assert_int_eq(audio_plan(&in, &p, &w, &err), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(err.msg, "1/256"));
}
END_TEST

/* Files that are not audio, or break a limit, are refused naming the file. */
START_TEST(test_probe_errors)
{
  tz_err err;
  audio_info ai;
  tz_err_init(&err);
  ck_assert_int_eq(audio_probe(tmp_path("missing.wav"), &ai, &err), TZ_E_NOINPUT);
  ck_assert_ptr_nonnull(strstr(err.path, "missing.wav"));
  const char *txt = tmp_path("notes.wav");
  FILE *fp = fopen(txt, "w");
  fputs("field notes, line 3, shots 1-40\n", fp);
  fclose(fp);
  tz_err_init(&err);
  ck_assert_int_eq(audio_probe(txt, &ai, &err), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(err.msg, "libsndfile"));
  ck_assert_ptr_nonnull(strstr(err.path, "notes.wav"));
  fp = fopen(tmp_path("empty.wav"), "w");
  fclose(fp);
  tz_err_init(&err);
  ck_assert_int_eq(audio_probe(tmp_path("empty.wav"), &ai, &err), TZ_E_FORMAT);
  /* 100 Hz is below AUDIO_MIN_RATE_HZ */
  const char *slow = tmp_path("slow.wav");
  write_wav(slow, 100, 2, 100, dc);
  tz_err_init(&err);
  ck_assert_int_eq(audio_probe(slow, &ai, &err), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(err.msg, "100 Hz"));
  /* a WAV header with no frames */
  const char *none = tmp_path("none.wav");
  write_wav(none, 8000, 2, 0, dc);
  tz_err_init(&err);
  ck_assert_int_eq(audio_probe(none, &ai, &err), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(err.msg, "no samples"));
  /* truncated to half its data: libsndfile reads what is there (its header
   * walk trusts the file size), and the conversion still works */
  const char *full = tmp_path("full.wav"), *cut = tmp_path("cut.wav");
  write_wav(full, 8000, 2, 1000, ramp);
  FILE *a = fopen(full, "rb"), *b = fopen(cut, "wb");
  char buf[2044];
  ck_assert_uint_eq(fread(buf, 1, sizeof buf, a), sizeof buf);
  fwrite(buf, 1, sizeof buf, b);
  fclose(a);
  fclose(b);
  tz_err_init(&err);
  ck_assert_int_eq(audio_probe(cut, &ai, &err), TZ_OK);
  ck_assert_int_eq(ai.frames, (2044 - 44) / 4);
}
END_TEST

/* Folders, name order, numbering, record tables, and no output after failure. */
START_TEST(test_batch)
{
  char folder[700];
  snprintf(folder, sizeof folder, "%s", tmp_path("field"));
  ck_assert_int_eq(mkdir(folder, 0777), 0);
  char p1[800], p2[800], p3[800];
  snprintf(p1, sizeof p1, "%s/shot10.wav", folder);
  snprintf(p2, sizeof p2, "%s/shot9.WAV", folder);
  snprintf(p3, sizeof p3, "%s/notes.txt", folder);
  write_wav(p1, 8000, 2, 800, ramp);
  write_wav(p2, 8000, 2, 800, ramp);
  FILE *fp = fopen(p3, "w");
  fputs("not audio\n", fp);
  fclose(fp);
  tz_err err;
  tz_err_init(&err);
  audio_batch *b;
  char *args[] = { folder };
  ck_assert_int_eq(audio_batch_new(&b, args, 1, &err), TZ_OK);
  ck_assert_uint_eq(audio_batch_count(b), 2);
  ck_assert_ptr_nonnull(strstr(audio_batch_input(b, 0), "shot9.WAV"));   /* 9 before 10 */
  ck_assert_str_eq(audio_batch_output_name(b, 1), "shot10.sgy");
  ck_assert_int_eq(audio_batch_record(b, 1), 2);
  ck_assert_int_eq(audio_batch_number(b, 300, &err), TZ_OK);
  ck_assert_int_eq(audio_batch_record(b, 0), 300);
  ck_assert_int_eq(audio_batch_number(b, INT32_MAX, &err), TZ_E_ARG);

  const char *csv = tmp_path("records.csv");
  fp = fopen(csv, "w");
  fputs("# field records by file\nfile,field_record\nshot10.wav,1201\nshot9.WAV,1200\n"
        "shot11.wav,1202\n", fp);
  fclose(fp);
  tz_err_init(&err);
  ck_assert_int_eq(audio_batch_load_records(b, csv, &err), TZ_OK);
  ck_assert_int_eq(audio_batch_record(b, 0), 1200);
  ck_assert_int_eq(audio_batch_record(b, 1), 1201);
  fp = fopen(csv, "w");
  fputs("file,field_record\nshot10.wav,1\nshot10.wav,2\n", fp);
  fclose(fp);
  tz_err_init(&err);
  ck_assert_int_eq(audio_batch_load_records(b, csv, &err), TZ_E_FORMAT);
  ck_assert_int_eq(err.line, 3);
  fp = fopen(csv, "w");
  fputs("file,field_record\nshot10.wav,1\n", fp);
  fclose(fp);
  tz_err_init(&err);
  ck_assert_int_eq(audio_batch_load_records(b, csv, &err), TZ_E_FORMAT);
  ck_assert_ptr_nonnull(strstr(err.msg, "shot9.WAV"));

  audio_params p;
  audio_params_init(&p);
  p.interval_us = 125;
  ck_assert_int_eq(audio_batch_number(b, 1, &err), TZ_OK);
  char out[800], o1[900];
  snprintf(out, sizeof out, "%s/sgy", folder);
  audio_result res[2];
  tz_err_init(&err);
  ck_assert_msg(audio_batch_run(b, out, &p, res, &err) == TZ_OK, "%s", err.msg);
  snprintf(o1, sizeof o1, "%s/shot10.sgy", out);
  ck_assert_int_eq(access(o1, F_OK), 0);
  ck_assert_int_eq(res[1].field_record, 2);
  /* a window longer than the files: refused before anything is written */
  char out2[800];
  snprintf(out2, sizeof out2, "%s/sgy2", folder);
  p.length_ms = 500;
  tz_err_init(&err);
  ck_assert_int_eq(audio_batch_run(b, out2, &p, res, &err), TZ_E_ARG);
  ck_assert_int_ne(access(out2, F_OK), 0);
  audio_batch_free(b);

  /* an empty folder; a name twice; two inputs with one output name */
  char empty[800];
  snprintf(empty, sizeof empty, "%s/empty", folder);
  ck_assert_int_eq(mkdir(empty, 0777), 0);
  char *a2[] = { empty };
  tz_err_init(&err);
  ck_assert_int_eq(audio_batch_new(&b, a2, 1, &err), TZ_E_NOINPUT);
  char *a3[] = { p1, p1 };
  tz_err_init(&err);
  ck_assert_int_eq(audio_batch_new(&b, a3, 2, &err), TZ_E_ARG);
  char p4[800];
  snprintf(p4, sizeof p4, "%s/shot10.aiff", folder);
  fp = fopen(p4, "w");
  fclose(fp);
  char *a4[] = { p1, p4 };
  tz_err_init(&err);
  ck_assert_int_eq(audio_batch_new(&b, a4, 2, &err), TZ_E_ARG);
  ck_assert_ptr_nonnull(strstr(err.msg, "shot10.sgy"));
}
END_TEST

/* Damaged files never crash: every byte of the first 64 set to four values, and
 * every truncation up to 100 bytes, of a WAV and an AIFF (both written by
 * libsndfile). Each attempt ends in success or a documented status (common
 * practice: a reader must survive any input; Check reports a crash as an error). */
START_TEST(test_damaged_headers)
{
  static const int formats[] = { SF_FORMAT_WAV | SF_FORMAT_PCM_16,
                                 SF_FORMAT_AIFF | SF_FORMAT_PCM_24 };
  static const unsigned char vals[] = { 0x00, 0xff, 0x7f, 0x80 };
  const char *good = tmp_path("good"), *bad = tmp_path("bad"), *out = tmp_path("bad.sgy");
  for (int fm = 0; fm < 2; fm++) {
    SF_INFO si = { .samplerate = 8000, .channels = 3, .format = formats[fm] };
    SNDFILE *sf = sf_open(good, SFM_WRITE, &si);
    ck_assert_ptr_nonnull(sf);
    short fr[3 * 200];
    for (int i = 0; i < 3 * 200; i++)
      fr[i] = (short)(i * 37);
    ck_assert_int_eq(sf_writef_short(sf, fr, 200), 200);
    sf_close(sf);
    unsigned char buf[4096];
    FILE *fp = fopen(good, "rb");
    size_t n = fread(buf, 1, sizeof buf, fp);
    fclose(fp);
    ck_assert_uint_gt(n, 1000);
    for (int k = 0; k < 64 * 4 + 100; k++) {
      unsigned char m[4096];
      memcpy(m, buf, n);
      size_t len = n;
      if (k < 64 * 4)
        m[k / 4] = vals[k % 4];
      else
        len = (size_t)(k - 64 * 4);
      fp = fopen(bad, "wb");
      fwrite(m, 1, len, fp);
      fclose(fp);
      tz_err err;
      tz_err_init(&err);
      audio_params p;
      audio_params_init(&p);
      p.interval_us = 500;
      int rc = audio_convert(bad, out, &p, 1, 1, NULL, &err);
      ck_assert_msg(rc == TZ_OK || rc == TZ_E_FORMAT || rc == TZ_E_ARG || rc == TZ_E_IO,
                    "format %d mutation %d: status %d (%s)", fm, k, rc, err.msg);
      if (rc)
        ck_assert_msg(err.path[0] && err.msg[0], "mutation %d: message and path", k);
    }
  }
}
END_TEST

START_TEST(test_known_extensions)
{
  ck_assert_int_eq(audio_known_extension("wav"), 1);
  ck_assert_int_eq(audio_known_extension("FLAC"), 1);
  ck_assert_int_eq(audio_known_extension("aif"), 1);
  ck_assert_int_eq(audio_known_extension("raw"), 0);   /* headerless: cannot be probed */
  ck_assert_int_eq(audio_known_extension("txt"), 0);
  ck_assert_int_eq(audio_known_extension("sgy"), 0);
}
END_TEST

static Suite *audio_suite(void)
{
  Suite *s = suite_create("audio");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 60);
  tcase_add_test(tc, test_copy_exact_channels_polarity);
  tcase_add_test(tc, test_resample_spike_and_dc);
  tcase_add_test(tc, test_many_channels);
  tcase_add_test(tc, test_nonfinite_float);
  tcase_add_test(tc, test_plan_errors);
  tcase_add_test(tc, test_probe_errors);
  tcase_add_test(tc, test_batch);
  tcase_add_test(tc, test_damaged_headers);
  tcase_add_test(tc, test_known_extensions);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(audio_suite)
