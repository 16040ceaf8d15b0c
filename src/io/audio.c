/* audio.c -- multichannel audio shot records to SEG-Y shot files.
 *
 * One pass over each audio file, in blocks of AUDIO_BLOCK frames: libsndfile
 * decodes (any format it knows) to interleaved float, the chosen channels are
 * gathered with polarity and scale applied later, and libsamplerate's sinc
 * converter (one state, interleaved channels) resamples to the output interval.
 * The output record (channels x samples floats) is the only thing that grows
 * with the file; it is capped by AUDIO_MAX_SAMPLES and AUDIO_MAX_CHANNELS.
 *
 * Time alignment. libsamplerate's output sample k sits at input time k / ratio
 * from the first frame it was given. To keep the window start free of the
 * filter's edge effect, the converter is primed with M frames before the trigger,
 * where M is a multiple of the frame count after which the input and output
 * grids coincide again (rate * interval / gcd(rate * interval, 10^6)), so the
 * trigger frame falls exactly on an output sample; the first M * ratio outputs
 * are dropped. Near the file start, M shrinks (to 0 if need be) and the start
 * sees the silence before the file, as any resampler would.
 *
 * Geometry is optional: with a geometry source (layout or table, geometry.h)
 * the positions go into the headers as tzero geometry --write puts them.
 * Not here: CMP binning (tzero geometry), trigger detection, and any filtering
 * beyond the converter's anti-alias low-pass.
 */
#include "tzero/audio.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <pthread.h>
#include <samplerate.h>
#include <sndfile.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <unistd.h>

#include "tzero/fileio.h"
#include "tzero/geometry.h"
#include "tzero/segy.h"
#include "tzero/table.h"

#define AUDIO_BLOCK 4096          /* input frames decoded per read */
#define AUDIO_OUT_BLOCK 4096      /* output frames per converter call */
#define AUDIO_SRC_CHANNELS 128   /* libsamplerate's most channels per converter */
#define AUDIO_FILTER_REACH 160.0  /* input samples each side that the best sinc filter
                                   * reaches at ratio >= 1 (its 340239 coefficients at
                                   * 2381 per zero crossing: about 143) */

void audio_params_init(audio_params *p)
{
  memset(p, 0, sizeof *p);
  p->interval_us = AUDIO_DEFAULT_INTERVAL_US;
  p->length_ms = -1;
  p->scale = 1.0;
  p->format_code = 5;
  p->quality = AUDIO_QUALITY_BEST;
}

/* ---- opening ---- */

typedef struct sfin {
  SNDFILE *sf;
  int fd;
  SF_INFO si;
} sfin;

static void sfin_close(sfin *f)
{
  if (f->sf)
    sf_close(f->sf);
  if (f->fd >= 0)
    close(f->fd);
  f->sf = NULL;
  f->fd = -1;
}

static void format_name(int format, char *buf, size_t cap)
{
  SF_FORMAT_INFO major = { .format = format & SF_FORMAT_TYPEMASK };
  SF_FORMAT_INFO sub = { .format = format & SF_FORMAT_SUBMASK };
  const char *a = sf_command(NULL, SFC_GET_FORMAT_INFO, &major, sizeof major) == 0 && major.name
                      ? major.name : "unknown container";
  const char *b = sf_command(NULL, SFC_GET_FORMAT_INFO, &sub, sizeof sub) == 0 && sub.name
                      ? sub.name : "unknown encoding";
  snprintf(buf, cap, "%s, %s", a, b);
}

/* Largest magnitude of an integer encoding after libsndfile's normalisation. */
static double full_scale(int format)
{
  switch (format & SF_FORMAT_SUBMASK) {
  case SF_FORMAT_PCM_S8:
  case SF_FORMAT_PCM_U8: return 127.0 / 128.0;
  case SF_FORMAT_PCM_16: return 32767.0 / 32768.0;
  case SF_FORMAT_PCM_24: return 8388607.0 / 8388608.0;
  case SF_FORMAT_PCM_32: return 2147483647.0 / 2147483648.0;
  default: return 0;
  }
}

static int sfin_open(sfin *f, const char *path, audio_info *info, tz_err *err)
{
  memset(f, 0, sizeof *f);
  f->fd = -1;
  if (fileio_open_input(path, &f->fd, err))   /* a named pipe would block the open */
    return err->status;
  struct stat st;
  if (fstat(f->fd, &st) != 0) {
    int e = errno;
    sfin_close(f);
    tz_err_path(err, path);
    return tz_fail_os(err, TZ_E_NOINPUT, e, "cannot open");
  }
  if (st.st_size == 0) {
    sfin_close(f);
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_FORMAT, "empty file (0 bytes): not an audio record");
  }
  f->sf = sf_open_fd(f->fd, SFM_READ, &f->si, 0);
  if (!f->sf) {
    char why[256];
    snprintf(why, sizeof why, "%s", sf_strerror(NULL));
    size_t n = strlen(why);
    while (n && (why[n - 1] == '\n' || why[n - 1] == '.' || why[n - 1] == ' '))
      why[--n] = '\0';
    sfin_close(f);
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_FORMAT, "not an audio file that libsndfile can read: %s", why);
  }
  const SF_INFO *si = &f->si;
  int rc = TZ_OK;
  if (si->channels <= 0)
    rc = tz_fail(err, TZ_E_FORMAT, "the file has no channels");
  else if (si->channels > AUDIO_MAX_CHANNELS)
    rc = tz_fail(err, TZ_E_FORMAT, "%d channels: more than the %d a shot file may have",
                 si->channels, AUDIO_MAX_CHANNELS);
  else if (si->samplerate < AUDIO_MIN_RATE_HZ || si->samplerate > AUDIO_MAX_RATE_HZ)
    rc = tz_fail(err, TZ_E_FORMAT, "sample rate %d Hz is out of range (%d..%d Hz)",
                 si->samplerate, AUDIO_MIN_RATE_HZ, AUDIO_MAX_RATE_HZ);
  else if (si->frames <= 0)
    rc = tz_fail(err, TZ_E_FORMAT, "the file holds no samples");
  else if ((double)si->frames / si->samplerate > AUDIO_MAX_SECONDS)
    rc = tz_fail(err, TZ_E_FORMAT,
                 "the header claims %lld samples per channel (%.0f s at %d Hz): more than "
                 "the %.0f s a shot file may last",
                 (long long)si->frames, (double)si->frames / si->samplerate, si->samplerate,
                 AUDIO_MAX_SECONDS);
  if (rc) {
    sfin_close(f);
    tz_err_path(err, path);
    return rc;
  }
  if (info) {
    memset(info, 0, sizeof *info);
    info->channels = si->channels;
    info->rate_hz = si->samplerate;
    info->frames = si->frames;
    info->duration_s = (double)si->frames / si->samplerate;
    info->format = si->format;
    format_name(si->format, info->format_name, sizeof info->format_name);
    info->full_scale = full_scale(si->format);
  }
  return TZ_OK;
}

int audio_probe(const char *path, audio_info *info, tz_err *err)
{
  sfin f;
  int rc = sfin_open(&f, path, info, err);
  sfin_close(&f);
  return rc;
}

/* ---- planning ---- */

static int64_t gcd64(int64_t a, int64_t b)
{
  while (b) {
    int64_t t = a % b;
    a = b;
    b = t;
  }
  return a;
}

int audio_plan(const audio_info *in, const audio_params *p, audio_window *w, tz_err *err)
{
  memset(w, 0, sizeof *w);
  uint32_t dt = p->interval_us ? p->interval_us : AUDIO_DEFAULT_INTERVAL_US;
  if (dt > 65535)
    return tz_fail(err, TZ_E_ARG, "output interval %u us cannot be written (1..65535 us)", dt);
  if (p->format_code != 0 && p->format_code != 1 && p->format_code != 5)
    return tz_fail(err, TZ_E_ARG, "SEG-Y sample format %d cannot be written (1 or 5)",
                   p->format_code);
  if (p->quality < AUDIO_QUALITY_BEST || p->quality > AUDIO_QUALITY_FAST)
    return tz_fail(err, TZ_E_ARG, "unknown resampler quality %d", p->quality);
  if (!isfinite(p->scale) || p->scale == 0)
    return tz_fail(err, TZ_E_ARG, "scale factor %g: must be a finite number other than 0",
                   p->scale);
  size_t nch = p->channels ? p->nchannels : (size_t)in->channels;
  if (nch == 0 || nch > AUDIO_MAX_CHANNELS)
    return tz_fail(err, TZ_E_ARG, "%zu output channels (1..%d)", nch, AUDIO_MAX_CHANNELS);
  for (size_t j = 0; p->channels && j < nch; j++)
    if (p->channels[j] < 1 || p->channels[j] > in->channels)
      return tz_fail(err, TZ_E_ARG, "channel %d is asked for, but the file has %d channel%s",
                     (int)p->channels[j], in->channels, in->channels == 1 ? "" : "s");
  int64_t rate_dt = (int64_t)in->rate_hz * dt;   /* ratio out/in = 10^6 / rate_dt */
  double ratio = 1e6 / (double)rate_dt;
  if (ratio < 1.0 / 256.0 || ratio > 256.0)
    return tz_fail(err, TZ_E_ARG,
                   "an interval of %u us from %d Hz is a rate change of %g: beyond the "
                   "converter's 1/256..256", dt, in->rate_hz, ratio);
  if (!(p->start_ms >= 0) || !(p->start_ms < AUDIO_MAX_SECONDS * 1000.0))
    return tz_fail(err, TZ_E_ARG, "window start %g ms: must be 0 or more", p->start_ms);
  int64_t s = llround(p->start_ms * in->rate_hz / 1000.0);
  double file_ms = in->duration_s * 1000.0;
  if (s >= in->frames)
    return tz_fail(err, TZ_E_ARG, "the window starts at %.3f ms, after the end of the file "
                   "(%.3f ms)", p->start_ms, file_ms);
  int64_t last = in->frames - 1 - s;             /* input samples after the start frame */
  int64_t nout;
  if (p->length_ms >= 0) {
    if (!(p->length_ms <= 65535.0 * 65535.0 / 1000.0))
      return tz_fail(err, TZ_E_ARG, "record length %g ms is too long", p->length_ms);
    nout = llround(p->length_ms * 1000.0 / dt) + 1;
    if (nout > (int64_t)AUDIO_MAX_SAMPLES)
      return tz_fail(err, TZ_E_ARG, "a record of %.3f ms at %u us has %lld samples: more "
                     "than %u", p->length_ms, dt, (long long)nout, AUDIO_MAX_SAMPLES);
    if ((nout - 1) * rate_dt > last * 1000000)
      return tz_fail(err, TZ_E_ARG, "the window %.3f to %.3f ms ends beyond the end of the "
                     "file (%.3f ms; last sample at %.3f ms)", (double)s * 1000.0 / in->rate_hz,
                     (double)s * 1000.0 / in->rate_hz + (double)(nout - 1) * dt / 1000.0,
                     file_ms, (double)(in->frames - 1) * 1000.0 / in->rate_hz);
  } else {
    nout = last * 1000000 / rate_dt + 1;
    if (nout > (int64_t)AUDIO_MAX_SAMPLES)
      return tz_fail(err, TZ_E_ARG, "the file's %.3f ms after the start at %u us make %lld "
                     "samples: more than %u (give a shorter record length)",
                     (double)last * 1000.0 / in->rate_hz, dt, (long long)nout,
                     AUDIO_MAX_SAMPLES);
  }
  w->start_frame = s;
  w->start_ms = (double)s * 1000.0 / in->rate_hz;
  w->samples = (uint32_t)nout;
  w->interval_us = dt;
  w->record_ms = (double)(nout - 1) * dt / 1000.0;
  w->channels = nch;
  w->resampled = rate_dt != 1000000;
  return TZ_OK;
}

/* ---- conversion ---- */

typedef struct stats {
  float peak;
  float clip;        /* full scale, or +Inf for float encodings */
  int64_t clipped, nonfinite;
} stats;

/* Picks the chosen channels of frames [a, b) of an interleaved block (nch per
 * frame) into dst (nsel per frame, starting at frame a), replacing NaN/Inf by 0;
 * with st, also the peak and clip counts. */
static void gather(const float *src, size_t nch, const int *chan, size_t nsel, size_t a,
                   size_t b, float *dst, stats *st)
{
  float peak = st ? st->peak : 0, clip = st ? st->clip : INFINITY;
  int64_t clipped = 0, bad = 0;
  for (size_t f = a; f < b; f++) {
    const float *in = src + f * nch;
    float *out = dst + f * nsel;
    for (size_t j = 0; j < nsel; j++) {
      float v = in[chan[j]];
      int nf = !isfinite(v);
      bad += nf;
      v = nf ? 0.0f : v;
      float m = fabsf(v);
      peak = fmaxf(peak, m);
      clipped += m >= clip;
      out[j] = v;
    }
  }
  if (st) {
    st->peak = peak;
    st->clipped += clipped;
    st->nonfinite += bad;
  }
}

/* Output frames [a, b) of an interleaved block to the channel-major record at
 * sample k0, times factor. */
static void scatter(const float *ob, size_t nsel, size_t a, size_t b, float factor,
                    float *rec, size_t nout, size_t k0)
{
  for (size_t j = 0; j < nsel; j++) {
    float *dst = rec + j * nout + k0;
    for (size_t i = a; i < b; i++)
      dst[i - a] = ob[i * nsel + j] * factor;
  }
}

static size_t min_size(size_t a, size_t b) { return a < b ? a : b; }

static int read_frames(sfin *f, float *buf, int64_t at, size_t n, const char *path,
                       tz_err *err)
{
  if (n == 0)
    return TZ_OK;
  sf_count_t got = sf_readf_float(f->sf, buf, (sf_count_t)n);
  if (got != (sf_count_t)n) {
    tz_err_path(err, path);
    int e = sf_error(f->sf);
    return tz_fail(err, e ? TZ_E_IO : TZ_E_FORMAT,
                   "the data end at sample %lld of each channel, but the header says %lld%s%s",
                   (long long)(at + (got > 0 ? got : 0)), (long long)f->si.frames,
                   e ? ": " : " (truncated file)", e ? sf_strerror(f->sf) : "");
  }
  return TZ_OK;
}

static int seek_to(sfin *f, int64_t frame, const char *path, tz_err *err)
{
  if (sf_seek(f->sf, (sf_count_t)frame, SEEK_SET) != (sf_count_t)frame) {
    tz_err_path(err, path);
    return tz_fail(err, TZ_E_IO, "cannot seek to sample %lld: %s", (long long)frame,
                   sf_strerror(f->sf));
  }
  return TZ_OK;
}

/* Input frames [s, s + nout) copied straight (the input interval is the output's). */
static int copy_window(sfin *f, const audio_window *w, const int *chan, float factor,
                       float *rec, float *ib, float *sb, stats *st, const char *path,
                       tz_err *err)
{
  size_t nch = (size_t)f->si.channels, nsel = w->channels, nout = w->samples;
  int rc = seek_to(f, w->start_frame, path, err);
  for (size_t k = 0; !rc && k < nout;) {
    size_t n = min_size(AUDIO_BLOCK, nout - k);
    if ((rc = read_frames(f, ib, w->start_frame + (int64_t)k, n, path, err)))
      break;
    gather(ib, nch, chan, nsel, 0, n, sb, st);
    scatter(sb, nsel, 0, n, factor, rec, nout, k);
    k += n;
  }
  return rc;
}

static const int converter_type[] = {
  [AUDIO_QUALITY_BEST] = SRC_SINC_BEST_QUALITY,
  [AUDIO_QUALITY_MEDIUM] = SRC_SINC_MEDIUM_QUALITY,
  [AUDIO_QUALITY_FAST] = SRC_SINC_FASTEST,
};

/* Resamples the nsel channels chan[] (at most AUDIO_SRC_CHANNELS) into rec. */
static int resample_window(sfin *f, const audio_window *w, int quality, const int *chan,
                           size_t nsel, float factor, float *rec, float *ib, float *sb,
                           float *ob, stats *st, const char *path, tz_err *err)
{
  size_t nch = (size_t)f->si.channels, nout = w->samples;
  int64_t rate_dt = (int64_t)f->si.samplerate * w->interval_us;
  int64_t period = rate_dt / gcd64(rate_dt, 1000000);      /* frames between coincidences */
  double ratio = 1e6 / (double)rate_dt;
  int64_t reach = (int64_t)ceil(AUDIO_FILTER_REACH / (ratio < 1 ? ratio : 1.0));
  int64_t s = w->start_frame, lead = (reach + period - 1) / period * period;
  if (lead > s)
    lead = s / period * period;
  int64_t lead_out = lead * 1000000 / rate_dt;               /* exact by construction */
  int64_t span = ((int64_t)(nout - 1) * rate_dt + 999999) / 1000000; /* window, input frames */
  int64_t win_end = s + span + 1 < f->si.frames ? s + span + 1 : f->si.frames;
  int64_t in_end = win_end + reach;          /* past the file's end: silence */
  int64_t want_out = lead_out + (int64_t)nout;

  int e = 0;
  SRC_STATE *state = src_new(converter_type[quality], (int)nsel, &e);
  if (!state)
    return tz_fail(err, TZ_E_NOMEM, "cannot start the sample-rate converter: %s",
                   src_strerror(e));
  int rc = seek_to(f, s - lead, path, err);
  int64_t next = s - lead, q = 0;
  size_t have = 0, off = 0;
  int eof = 0;
  while (!rc && q < want_out) {
    if (have == 0 && !eof) {
      size_t n = (size_t)(in_end - next < AUDIO_BLOCK ? in_end - next : AUDIO_BLOCK);
      size_t real = next >= f->si.frames ? 0 : min_size(n, (size_t)(f->si.frames - next));
      if ((rc = read_frames(f, ib, next, real, path, err)))
        break;
      memset(ib + real * nch, 0, (n - real) * nch * sizeof *ib);
      /* statistics only over the window's own frames */
      size_t a = next < s ? min_size((size_t)(s - next), n) : 0;
      size_t b = next + (int64_t)n > win_end ? (size_t)(win_end > next ? win_end - next : 0) : n;
      if (b < a)
        b = a;
      gather(ib, nch, chan, nsel, 0, a, sb, NULL);
      gather(ib, nch, chan, nsel, a, b, sb, st);
      gather(ib, nch, chan, nsel, b, n, sb, NULL);
      next += (int64_t)n;
      have = n;
      off = 0;
      eof = next >= in_end;
    }
    SRC_DATA d = { .data_in = sb + off * nsel, .data_out = ob, .input_frames = (long)have,
                   .output_frames = AUDIO_OUT_BLOCK, .end_of_input = eof, .src_ratio = ratio };
    if ((e = src_process(state, &d))) {
      rc = tz_fail(err, TZ_E_INTERNAL, "sample-rate converter: %s", src_strerror(e));
      break;
    }
    off += (size_t)d.input_frames_used;
    have -= (size_t)d.input_frames_used;
    int64_t gen = d.output_frames_gen;
    int64_t a = lead_out - q > 0 ? lead_out - q : 0;
    int64_t b = want_out - q < gen ? want_out - q : gen;
    if (b > a)
      scatter(ob, nsel, (size_t)a, (size_t)b, factor, rec, nout, (size_t)(q + a - lead_out));
    q += gen;
    if (eof && have == 0 && gen == 0)
      break;                              /* flushed */
  }
  src_delete(state);
  if (!rc && q < want_out)
    rc = tz_fail(err, TZ_E_INTERNAL, "the sample-rate converter gave %lld of %lld samples",
                 (long long)(q > lead_out ? q - lead_out : 0), (long long)nout);
  return rc;
}

/* The textual header: where the record came from and how it was made. */
static void cards(char *buf, size_t cap, const char *in_path, const audio_info *in,
                  const audio_window *w, const audio_params *p, int32_t field_record)
{
  static const char *const qname[] = { "BEST", "MEDIUM", "FASTEST" };
  const char *base = strrchr(in_path, '/');
  base = base ? base + 1 : in_path;
  char chans[80] = "ALL IN FILE ORDER";
  if (p->channels) {
    size_t n = 0;
    for (size_t j = 0; j < p->nchannels && n + 12 < sizeof chans; j++)
      n += (size_t)snprintf(chans + n, sizeof chans - n, "%s%d", j ? "," : "",
                            (int)p->channels[j]);
    if (p->nchannels && n + 12 >= sizeof chans)
      snprintf(chans + n, sizeof chans - n, ",...");
  }
  char resamp[96];
  if (w->resampled)
    snprintf(resamp, sizeof resamp, "RESAMPLED TO %u US BY LIBSAMPLERATE %s SINC (ANTI-ALIAS)",
             w->interval_us, qname[p->quality]);
  else
    snprintf(resamp, sizeof resamp, "NOT RESAMPLED (%u US IN THE FILE)", w->interval_us);
  snprintf(buf, cap,
           "SHOT RECORD CONVERTED FROM AUDIO BY TZERO AUDIO\n"
           "LINE %.60s\n"
           "FIELD RECORD %d\n"
           "SOURCE FILE %.64s\n"
           "%.76s\n"
           "%d CHANNELS AT %d HZ, %.3f S IN THE FILE\n"
           "WINDOW FROM %.3f MS IN THE FILE (TIME ZERO), RECORD %.3f MS\n"
           "%s\n"
           "CHANNELS (FILE NUMBERS, IN TRACE ORDER) %.40s\n"
           "AMPLITUDE: FRACTION OF FULL SCALE TIMES %g%s\n"
           "%s\n",
           p->line_name ? p->line_name : "(NOT GIVEN)", (int)field_record, base,
           in->format_name, in->channels, in->rate_hz, in->duration_s, w->start_ms,
           w->record_ms, resamp, chans, p->scale,
           p->reverse_polarity ? ", POLARITY REVERSED" : "",
           p->geometry ? "GEOMETRY FROM A LAYOUT OR GEOMETRY TABLE (SOURCE/RECEIVER X Y, OFFSET)"
                       : "GEOMETRY NOT SET: USE TZERO GEOMETRY --LAYOUT --WRITE");
}

/* The header of output trace j (0-based), with geometry when p has a source. */
static int trace_header(const audio_params *p, int32_t field_record, size_t j,
                        int64_t first_line_seq, segy_trace_header *h, tz_err *err)
{
  memset(h, 0, sizeof *h);
  h->line_seq = (int32_t)(first_line_seq + (int64_t)j);
  h->file_seq = (int32_t)(j + 1);
  h->field_record = field_record;
  h->channel = (int32_t)(j + 1);
  h->kind = SEGY_KIND_SEISMIC;
  h->vertical_sum = 1;
  h->stacked_traces = 1;
  h->data_use = 1;              /* production */
  h->coord_units = 1;
  if (p->geometry) {
    geometry_trace g;
    int rc = geometry_source_trace(p->geometry, h, (int64_t)j, &g, err);
    if (rc)
      return rc;
    geometry_to_header(&g, h);
  }
  return TZ_OK;
}

int audio_convert(const char *in_path, const char *out_path, const audio_params *p,
                  int32_t field_record, int64_t first_line_seq, audio_result *res,
                  tz_err *err)
{
  sfin f;
  audio_info in;
  audio_window w;
  int rc = sfin_open(&f, in_path, &in, err);
  if (rc)
    return rc;
  int *chan = NULL;
  float *rec = NULL, *ib = NULL, *sb = NULL, *ob = NULL;
  segy_writer *wr = NULL;
  stats st = { .clip = in.full_scale > 0 ? (float)in.full_scale : INFINITY };
  if ((rc = audio_plan(&in, p, &w, err)))
    goto done;
  size_t nsel = w.channels, nch = (size_t)in.channels;
  chan = malloc(nsel * sizeof *chan);
  rec = calloc(nsel * (size_t)w.samples, sizeof *rec);
  ib = malloc((size_t)AUDIO_BLOCK * nch * sizeof *ib);
  sb = malloc((size_t)AUDIO_BLOCK * nsel * sizeof *sb);
  ob = malloc((size_t)AUDIO_OUT_BLOCK * nsel * sizeof *ob);
  if (!chan || !rec || !ib || !sb || !ob) {
    rc = tz_fail(err, TZ_E_NOMEM, "%zu channels x %u samples", nsel, w.samples);
    goto done;
  }
  for (size_t j = 0; j < nsel; j++)
    chan[j] = p->channels ? (int)p->channels[j] - 1 : (int)j;
  float factor = (float)(p->reverse_polarity ? -p->scale : p->scale);
  if (!w.resampled)
    rc = copy_window(&f, &w, chan, factor, rec, ib, sb, &st, in_path, err);
  /* libsamplerate takes at most AUDIO_SRC_CHANNELS per converter: more channels
   * are done in groups, one pass over the file each */
  for (size_t g = 0; w.resampled && !rc && g < nsel; g += AUDIO_SRC_CHANNELS)
    rc = resample_window(&f, &w, p->quality, chan + g, min_size(AUDIO_SRC_CHANNELS, nsel - g),
                         factor, rec + g * w.samples, ib, sb, ob, &st, in_path, err);
  if (rc)
    goto done;

  char text[38 * 78];
  cards(text, sizeof text, in_path, &in, &w, p, field_record);
  segy_writer_opts wo = { .revision = 1, .format_code = p->format_code ? p->format_code : 5,
                         .samples = w.samples, .interval_us = w.interval_us,
                         .sorting_code = 1, .traces_per_ensemble = (int16_t)nsel,
                         .measurement_system = 1, .text = text };
  if ((rc = segy_writer_open(&wr, out_path, &wo, err)))
    goto done;
  for (size_t j = 0; j < nsel; j++) {
    segy_trace_header h;
    if ((rc = trace_header(p, field_record, j, first_line_seq, &h, err)) ||
        (rc = segy_trace_write(wr, &h, rec + j * w.samples, err)))
      goto done;
  }
  rc = segy_writer_finish(wr, err);
  wr = NULL;
done:
  segy_writer_abort(wr);
  sfin_close(&f);
  free(chan);
  free(rec);
  free(ib);
  free(sb);
  free(ob);
  if (rc) {
    tz_err_path(err, in_path);
    return rc;
  }
  if (res) {
    res->in = in;
    res->win = w;
    res->field_record = field_record;
    res->peak = st.peak;
    res->clipped = st.clipped;
    res->nonfinite = st.nonfinite;
  }
  return TZ_OK;
}

/* ---- batches ---- */

struct audio_batch {
  size_t n, cap;
  char **paths;            /* owned */
  char **names;            /* output names "STEM.sgy", owned */
  int32_t *records;
};

static const char *base_name(const char *path)
{
  const char *b = strrchr(path, '/');
  return b ? b + 1 : path;
}

int audio_known_extension(const char *ext)
{
  static const char *const extra[] = { "aif", "wave", "oga", "opus" };
  if (!ext || !*ext || !strcasecmp(ext, "raw"))
    return 0;
  for (size_t i = 0; i < sizeof extra / sizeof extra[0]; i++)
    if (!strcasecmp(ext, extra[i]))
      return 1;
  int count = 0;
  sf_command(NULL, SFC_GET_FORMAT_MAJOR_COUNT, &count, sizeof count);
  for (int k = 0; k < count; k++) {
    SF_FORMAT_INFO fi = { .format = k };
    if (sf_command(NULL, SFC_GET_FORMAT_MAJOR, &fi, sizeof fi) == 0 && fi.extension &&
        !strcasecmp(ext, fi.extension))
      return 1;
  }
  return 0;
}

static int add_path(audio_batch *b, char *path, tz_err *err)
{
  if (b->n == b->cap) {
    if (b->n >= AUDIO_MAX_FILES) {
      free(path);
      return tz_fail(err, TZ_E_ARG, "more than %d input files", AUDIO_MAX_FILES);
    }
    size_t nc = b->cap ? b->cap * 2 : 64;
    char **np = realloc(b->paths, nc * sizeof *np);
    if (!np) {
      free(path);
      return tz_fail(err, TZ_E_NOMEM, "input list");
    }
    b->paths = np;
    b->cap = nc;
  }
  b->paths[b->n++] = path;
  return TZ_OK;
}

static char *join(const char *dir, const char *name)
{
  size_t a = strlen(dir), c = strlen(name);
  char *s = malloc(a + c + 2);
  if (s) {
    memcpy(s, dir, a);
    size_t k = a;
    if (a && dir[a - 1] != '/')
      s[k++] = '/';
    memcpy(s + k, name, c + 1);
  }
  return s;
}

static int add_folder(audio_batch *b, const char *dir, tz_err *err)
{
  DIR *d = opendir(dir);
  if (!d) {
    int e = errno;
    tz_err_path(err, dir);
    return tz_fail_os(err, TZ_E_NOINPUT, e, "cannot read the folder");
  }
  size_t before = b->n;
  int rc = TZ_OK;
  struct dirent *de;
  while (!rc && (de = readdir(d))) {
    const char *dot = strrchr(de->d_name, '.');
    if (de->d_name[0] == '.' || !dot || !audio_known_extension(dot + 1))
      continue;
    char *p = join(dir, de->d_name);
    struct stat st;
    if (!p) {
      rc = tz_fail(err, TZ_E_NOMEM, "input list");
    } else if (lstat(p, &st) == 0 && S_ISDIR(st.st_mode)) {
      free(p);
    } else if ((rc = fileio_check_input(p, err))) {
      free(p);   /* a named pipe would block the run: refused, not skipped */
    } else {
      rc = add_path(b, p, err);
    }
  }
  closedir(d);
  if (!rc && b->n == before) {
    tz_err_path(err, dir);
    rc = tz_fail(err, TZ_E_NOINPUT, "no audio files in this folder (looked for the "
                 "extensions libsndfile reads: wav, flac, aiff, ...)");
  }
  return rc;
}

static int by_name(const void *pa, const void *pb)
{
  const char *a = *(const char *const *)pa, *b = *(const char *const *)pb;
  int c = strverscmp(base_name(a), base_name(b));
  return c ? c : strcmp(a, b);
}

static int by_string(const void *pa, const void *pb)
{
  return strcmp(*(const char *const *)pa, *(const char *const *)pb);
}

int audio_batch_new(audio_batch **out, char *const *args, size_t nargs, tz_err *err)
{
  audio_batch *b = calloc(1, sizeof *b);
  if (!b)
    return tz_fail(err, TZ_E_NOMEM, "input list");
  int rc = TZ_OK;
  for (size_t i = 0; !rc && i < nargs; i++) {
    struct stat st;
    if (stat(args[i], &st) != 0) {
      int e = errno;
      tz_err_path(err, args[i]);
      rc = tz_fail_os(err, TZ_E_NOINPUT, e, "cannot open");
    } else if (S_ISDIR(st.st_mode)) {
      rc = add_folder(b, args[i], err);
    } else {
      char *p = strdup(args[i]);
      rc = p ? add_path(b, p, err) : tz_fail(err, TZ_E_NOMEM, "input list");
    }
  }
  if (!rc && b->n == 0)
    rc = tz_fail(err, TZ_E_ARG, "no input files");
  if (!rc) {
    qsort(b->paths, b->n, sizeof *b->paths, by_name);
    b->names = calloc(b->n, sizeof *b->names);
    b->records = calloc(b->n, sizeof *b->records);
    if (!b->names || !b->records)
      rc = tz_fail(err, TZ_E_NOMEM, "input list");
  }
  for (size_t i = 0; !rc && i < b->n; i++) {
    if (i && !strcmp(b->paths[i], b->paths[i - 1])) {
      tz_err_path(err, b->paths[i]);
      rc = tz_fail(err, TZ_E_ARG, "given twice");
      break;
    }
    const char *base = base_name(b->paths[i]);
    const char *dot = strrchr(base, '.');
    size_t stem = dot && dot != base ? (size_t)(dot - base) : strlen(base);
    if (!(b->names[i] = malloc(stem + 5))) {
      rc = tz_fail(err, TZ_E_NOMEM, "input list");
      break;
    }
    memcpy(b->names[i], base, stem);
    memcpy(b->names[i] + stem, ".sgy", 5);
    b->records[i] = (int32_t)(i + 1);
  }
  if (!rc && b->n > 1) {             /* two inputs, one output name? */
    char **sorted = malloc(b->n * sizeof *sorted);
    if (!sorted) {
      rc = tz_fail(err, TZ_E_NOMEM, "input list");
    } else {
      memcpy(sorted, b->names, b->n * sizeof *sorted);
      qsort(sorted, b->n, sizeof *sorted, by_string);
      for (size_t i = 1; i < b->n; i++)
        if (!strcmp(sorted[i], sorted[i - 1])) {
          rc = tz_fail(err, TZ_E_ARG, "two inputs would both be written as %s: rename one",
                       sorted[i]);
          break;
        }
      free(sorted);
    }
  }
  if (rc) {
    audio_batch_free(b);
    return rc;
  }
  *out = b;
  return TZ_OK;
}

void audio_batch_free(audio_batch *b)
{
  if (!b)
    return;
  for (size_t i = 0; i < b->n; i++) {
    free(b->paths[i]);
    if (b->names)
      free(b->names[i]);
  }
  free(b->paths);
  free(b->names);
  free(b->records);
  free(b);
}

size_t audio_batch_count(const audio_batch *b) { return b->n; }
const char *audio_batch_input(const audio_batch *b, size_t i) { return b->paths[i]; }
const char *audio_batch_output_name(const audio_batch *b, size_t i) { return b->names[i]; }
int32_t audio_batch_record(const audio_batch *b, size_t i) { return b->records[i]; }

int audio_batch_number(audio_batch *b, int64_t first, tz_err *err)
{
  if (first < INT32_MIN || first > (int64_t)INT32_MAX - (int64_t)b->n + 1)
    return tz_fail(err, TZ_E_ARG, "first field record %lld: the %zu files would number "
                   "beyond the 32-bit range", (long long)first, b->n);
  for (size_t i = 0; i < b->n; i++)
    b->records[i] = (int32_t)(first + (int64_t)i);
  return TZ_OK;
}

typedef struct record_row {
  char *name;
  int32_t record;
  int64_t line;
} record_row;

static int by_row_name(const void *pa, const void *pb)
{
  return strcmp(((const record_row *)pa)->name, ((const record_row *)pb)->name);
}

int audio_batch_load_records(audio_batch *b, const char *csv_path, tz_err *err)
{
  table_reader *t;
  int rc = table_open(&t, csv_path, err);
  if (rc)
    return rc;
  record_row *rows = NULL;
  size_t n = 0, cap = 0, nf;
  int cf = -1, cr = -1;
  if (!(rc = table_next(t, &nf, err))) {
    for (size_t i = 0; i < nf; i++) {
      const char *f = table_field(t, i);
      if (!strcmp(f, "file") && cf < 0)
        cf = (int)i;
      else if (!strcmp(f, "field_record") && cr < 0)
        cr = (int)i;
      else {
        rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "unknown column '%s' (expected "
                          "the header row file,field_record)", f);
        break;
      }
    }
    if (!rc && (cf < 0 || cr < 0))
      rc = tz_fail_line(err, TZ_E_FORMAT, nf ? table_line(t) : 1,
                        "expected the header row file,field_record");
  }
  while (!rc) {
    if ((rc = table_next(t, &nf, err)) || nf == 0)
      break;
    if (nf != 2) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "expected 2 fields, found %zu", nf);
      break;
    }
    int64_t v;
    if ((rc = table_field_i64(t, (size_t)cr, "field_record", &v, err)))
      break;
    if (v < INT32_MIN || v > INT32_MAX) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "field record %lld is beyond the "
                        "32-bit range", (long long)v);
      break;
    }
    if (n == cap) {
      if (cap >= (size_t)AUDIO_MAX_FILES * 2) {
        rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "more than %d rows",
                          AUDIO_MAX_FILES * 2);
        break;
      }
      size_t nc = cap ? cap * 2 : 64;
      record_row *nr = realloc(rows, nc * sizeof *nr);
      if (!nr) {
        rc = tz_fail(err, TZ_E_NOMEM, "record table");
        break;
      }
      rows = nr;
      cap = nc;
    }
    if (!(rows[n].name = strdup(base_name(table_field(t, (size_t)cf))))) {
      rc = tz_fail(err, TZ_E_NOMEM, "record table");
      break;
    }
    rows[n].record = (int32_t)v;
    rows[n].line = table_line(t);
    n++;
  }
  if (!rc) {
    qsort(rows, n, sizeof *rows, by_row_name);
    for (size_t i = 1; i < n; i++)
      if (!strcmp(rows[i].name, rows[i - 1].name)) {
        int64_t l1 = rows[i].line, l0 = rows[i - 1].line;
        rc = tz_fail_line(err, TZ_E_FORMAT, l1 > l0 ? l1 : l0, "file %s is listed again "
                          "(first on line %lld)", rows[i].name, (long long)(l1 > l0 ? l0 : l1));
        break;
      }
  }
  for (size_t i = 0; !rc && i < b->n; i++) {
    record_row key = { .name = (char *)base_name(b->paths[i]) };
    const record_row *r = n ? bsearch(&key, rows, n, sizeof *rows, by_row_name) : NULL;
    if (!r)
      rc = tz_fail(err, TZ_E_FORMAT, "no row for the input %s", key.name);
    else
      b->records[i] = r->record;
  }
  if (rc)
    tz_err_path(err, csv_path);
  for (size_t i = 0; i < n; i++)
    free(rows[i].name);
  free(rows);
  table_close(t);
  return rc;
}

static int by_record(const void *pa, const void *pb)
{
  int32_t a = *(const int32_t *)pa, b = *(const int32_t *)pb;
  return (a > b) - (a < b);
}

/* Workers take files in index order from a shared counter; each file's result
 * and error have their own slot, so the outcome does not depend on timing. */
typedef struct batch_work {
  const audio_batch *b;
  const audio_params *p;
  const char *stage;
  const int64_t *seq;            /* first line sequence number of each file */
  audio_result *res;
  tz_err *errs;
  int *rcs;
  atomic_size_t next;
  atomic_int failed;
} batch_work;

static void *batch_worker(void *arg)
{
  batch_work *w = arg;
  for (;;) {
    size_t i = atomic_fetch_add(&w->next, 1);
    if (i >= w->b->n || atomic_load(&w->failed))
      break;
    char *to = join(w->stage, w->b->names[i]);
    tz_err_init(&w->errs[i]);
    w->rcs[i] = to ? audio_convert(w->b->paths[i], to, w->p, w->b->records[i], w->seq[i],
                                   &w->res[i], &w->errs[i])
                   : tz_fail(&w->errs[i], TZ_E_NOMEM, "output path");
    free(to);
    if (w->rcs[i])
      atomic_store(&w->failed, 1);
  }
  return NULL;
}

/* Converts every file into stage/; on failure copies the first failing file's error. */
static int convert_all(const audio_batch *b, const audio_params *p, const char *stage,
                       const int64_t *seq, audio_result *res, tz_err *err)
{
  batch_work w = { .b = b, .p = p, .stage = stage, .seq = seq, .res = res };
  atomic_init(&w.next, 0);
  atomic_init(&w.failed, 0);
  w.errs = malloc(b->n * sizeof *w.errs);
  w.rcs = calloc(b->n, sizeof *w.rcs);
  if (!w.errs || !w.rcs) {
    free(w.errs);
    free(w.rcs);
    return tz_fail(err, TZ_E_NOMEM, "per-file results");
  }
  long cores = sysconf(_SC_NPROCESSORS_ONLN);
  size_t nt = p->threads > 0 ? (size_t)p->threads : cores > 0 ? (size_t)cores : 1;
  if (nt > b->n)
    nt = b->n;
  if (nt > AUDIO_MAX_THREADS)
    nt = AUDIO_MAX_THREADS;
  pthread_t th[AUDIO_MAX_THREADS];
  size_t started = 0;
  for (size_t t = 1; t < nt; t++) {
    if (pthread_create(&th[started], NULL, batch_worker, &w) != 0)
      break;                               /* fewer threads: same result, slower */
    started++;
  }
  batch_worker(&w);
  for (size_t t = 0; t < started; t++)
    pthread_join(th[t], NULL);
  int rc = TZ_OK;
  for (size_t i = 0; i < b->n; i++)
    if (w.rcs[i]) {
      *err = w.errs[i];
      rc = w.rcs[i];
      break;
    }
  free(w.errs);
  free(w.rcs);
  return rc;
}

int audio_batch_run(const audio_batch *b, const char *out_dir, const audio_params *p,
                    audio_result *results, tz_err *err)
{
  int rc = TZ_OK;
  int32_t *recs = malloc(b->n * sizeof *recs);
  int64_t *seq = malloc(b->n * sizeof *seq);
  audio_result *res = results ? results : malloc(b->n * sizeof *res);
  if (!recs || !seq || !res) {
    rc = tz_fail(err, TZ_E_NOMEM, "field records");
    goto done;
  }
  memcpy(recs, b->records, b->n * sizeof *recs);
  qsort(recs, b->n, sizeof *recs, by_record);
  for (size_t i = 1; i < b->n; i++)
    if (recs[i] == recs[i - 1]) {
      rc = tz_fail(err, TZ_E_ARG, "field record %d is given to two input files", (int)recs[i]);
      goto done;
    }
  /* Every file is checked before anything is written. */
  int64_t line_seq = 1;
  for (size_t i = 0; i < b->n; i++) {
    audio_info in;
    audio_window w;
    if ((rc = audio_probe(b->paths[i], &in, err)))
      goto done;
    if ((rc = audio_plan(&in, p, &w, err))) {
      tz_err_path(err, b->paths[i]);
      goto done;
    }
    for (size_t j = 0; p->geometry && j < w.channels; j++) {
      segy_trace_header h;
      if ((rc = trace_header(p, b->records[i], j, 1, &h, err))) {
        tz_err_path(err, b->paths[i]);
        goto done;
      }
    }
    seq[i] = line_seq;
    line_seq += (int64_t)w.channels;
  }

  int created = 0;
  struct stat st;
  if (stat(out_dir, &st) == 0) {
    if (!S_ISDIR(st.st_mode)) {
      tz_err_path(err, out_dir);
      rc = tz_fail(err, TZ_E_CREATE, "exists and is not a folder");
      goto done;
    }
  } else if (mkdir(out_dir, 0777) != 0) {
    int e = errno;
    tz_err_path(err, out_dir);
    rc = tz_fail_os(err, TZ_E_CREATE, e, "cannot create the output folder");
    goto done;
  } else {
    created = 1;
  }
  /* staged in a temporary folder inside the output folder (registered, so a
   * signal removes it; swept when a killed run left it) */
  fileio_tmpdir *td = NULL;
  char *stage_name = join(out_dir, "tzero-audio");
  const char *stage = NULL;
  if (!stage_name)
    rc = tz_fail(err, TZ_E_NOMEM, "output path");
  else if (!(rc = fileio_tmpdir_create(&td, stage_name, err)))
    stage = fileio_tmpdir_path(td);
  free(stage_name);
  if (!rc)
    rc = convert_all(b, p, stage, seq, res, err);
  for (size_t i = 0; !rc && i < b->n; i++) {
    char *from = join(stage, b->names[i]), *to = join(out_dir, b->names[i]);
    if (!from || !to) {
      rc = tz_fail(err, TZ_E_NOMEM, "output path");
    } else if (rename(from, to) != 0) {
      int e = errno;
      tz_err_path(err, to);
      rc = tz_fail_os(err, TZ_E_CREATE, e, "cannot move the file into place");
    }
    free(from);
    free(to);
  }
  fileio_tmpdir_remove(td);   /* empty after the moves, or what a failure left */
  if (!rc)
    rc = fileio_sync_folder(out_dir, err);
  if (rc && created)
    rmdir(out_dir);
done:
  free(recs);
  free(seq);
  if (res != results)
    free(res);
  return rc;
}
