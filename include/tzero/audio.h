/* audio.h -- multichannel audio shot records (WAV, FLAC, ... via libsndfile) to SEG-Y.
 *
 * A low-cost recorder writes one audio file per shot, one channel per geophone
 * group. This module converts each such file once into a SEG-Y shot file (one
 * trace per channel), so every later stage reads SEG-Y only. Samples are read
 * as float (integer PCM normalised by libsndfile so that full scale is 1.0),
 * streamed in blocks, windowed from a trigger time, and resampled to a whole
 * number of microseconds with libsamplerate's band-limited sinc converter
 * (which includes the anti-alias low-pass when the rate goes down).
 *
 * Thread rule: handles share nothing; one audio_batch per thread. libsndfile
 * reports a failed open through a process-wide slot (sf_strerror(NULL)), so two
 * threads whose opens fail at the same moment may see each other's message.
 */
#ifndef TZERO_AUDIO_H
#define TZERO_AUDIO_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

struct geometry_source;              /* geometry.h */

#define AUDIO_MAX_CHANNELS 1024        /* cap on channels in one file (libsndfile's own) */
#define AUDIO_MIN_RATE_HZ 200          /* slower than 5 ms sampling is not a seismic record */
#define AUDIO_MAX_RATE_HZ 768000       /* the fastest audio rate in common use */
#define AUDIO_MAX_SECONDS 86400.0      /* a file claiming more than a day is refused */
#define AUDIO_MAX_SAMPLES 65535u       /* output samples per trace (SEG-Y rev 1 u16) */
#define AUDIO_MAX_FILES 1000000        /* inputs of one run */
#define AUDIO_DEFAULT_INTERVAL_US 250u /* 4 kHz: common practice for shallow reflection */
#define AUDIO_MAX_THREADS 256

/* libsamplerate's three band-limited sinc converters. */
enum audio_quality { AUDIO_QUALITY_BEST = 0, AUDIO_QUALITY_MEDIUM, AUDIO_QUALITY_FAST };

typedef struct audio_params {
  uint32_t interval_us;       /* output sample interval, 1..65535 us (0 = the default) */
  double start_ms;            /* window start in the file (the trigger), >= 0 */
  double length_ms;           /* record length = time of the last sample; < 0: to the
                               * end of the file */
  const int32_t *channels;    /* borrowed: 1-based input channels in output order;
                               * NULL = all, in file order */
  size_t nchannels;
  double scale;               /* multiplies every sample (default 1) */
  int reverse_polarity;       /* 1: multiply by -1 as well */
  int format_code;            /* SEG-Y sample format: 5 IEEE (default when 0) or 1 IBM */
  int quality;                /* enum audio_quality (default best) */
  const char *line_name;      /* for the textual header; NULL = none */
  const struct geometry_source *geometry; /* borrowed; NULL = no geometry. Else the
                               * source and receiver positions and offset of every
                               * trace (by field record and channel) go into its
                               * header, as geometry_to_header() writes them */
  int threads;                /* audio_batch_run: files converted at once (0 = the
                               * online cores); the output does not depend on it */
} audio_params;

void audio_params_init(audio_params *p);

/* What an audio file holds, from its header. */
typedef struct audio_info {
  int channels;
  int rate_hz;
  int64_t frames;             /* samples per channel */
  double duration_s;          /* frames / rate */
  int format;                 /* libsndfile SF_FORMAT_* major | subtype */
  char format_name[96];       /* e.g. "WAV (Microsoft), Signed 16 bit PCM" */
  double full_scale;          /* largest magnitude an integer format can hold (as read);
                               * 0 for float formats (no clipping level) */
} audio_info;

/* Opens and reads the header only. A missing or unreadable file is TZ_E_NOINPUT
 * (with errno); a file libsndfile cannot read is TZ_E_FORMAT with its message;
 * zero channels, more than AUDIO_MAX_CHANNELS, a rate outside
 * AUDIO_MIN_RATE_HZ..AUDIO_MAX_RATE_HZ, or more than AUDIO_MAX_SECONDS are
 * TZ_E_FORMAT. The path is recorded in err. */
int audio_probe(const char *path, audio_info *info, tz_err *err);

/* Where the output record comes from and what it holds. */
typedef struct audio_window {
  int64_t start_frame;        /* first input frame at output time 0 */
  double start_ms;            /* start_frame / rate (the requested start, rounded to the
                               * nearest input sample) */
  uint32_t samples;           /* output samples per trace */
  uint32_t interval_us;
  double record_ms;           /* (samples - 1) * interval */
  size_t channels;            /* output traces */
  int resampled;              /* 0 when the input interval is already interval_us */
} audio_window;

/* Checks params against one file: channels exist, the window lies inside the
 * file, the output fits AUDIO_MAX_SAMPLES, the rate ratio is within
 * libsamplerate's 1/256..256. Failures are TZ_E_ARG (bad option for this file)
 * or TZ_E_FORMAT; the message names the numbers involved. */
int audio_plan(const audio_info *in, const audio_params *p, audio_window *w, tz_err *err);

/* One converted file. */
typedef struct audio_result {
  audio_info in;
  audio_window win;
  int32_t field_record;
  double peak;                /* largest |input sample| on the chosen channels, inside the
                               * window (fraction of full scale for integer formats) */
  int64_t clipped;            /* of those, samples at full scale (integer formats) */
  int64_t nonfinite;          /* NaN/Inf samples (float formats), replaced by 0 */
} audio_result;

/* Converts one file to a SEG-Y file at out_path (written under a temporary name
 * and renamed on success; nothing appears on failure). Trace headers: field
 * record, channel 1..N in output order, trace sequence numbers (within the line
 * from first_line_seq, within the file from 1), trace kind seismic, sample count
 * and interval. Memory: the output record (channels x samples floats) plus a few
 * blocks of input; the input file is never loaded whole. res may be NULL. */
int audio_convert(const char *in_path, const char *out_path, const audio_params *p,
                  int32_t field_record, int64_t first_line_seq, audio_result *res,
                  tz_err *err);

/* ---- a run over many files ---- */

typedef struct audio_batch audio_batch;

/* Collects the inputs: a file argument is taken as it is; a folder contributes
 * its regular files whose extension is one libsndfile knows (wav, flac, aiff,
 * ...; any letter case), not its subfolders. The whole list is sorted by file
 * name, numbers compared by value (shot9 before shot10), then by path. A folder
 * with no audio file is TZ_E_NOINPUT; a path given twice, or two inputs that
 * would write the same output name (same name less extension), is TZ_E_ARG.
 * Field records default to 1 + index. On success *out owns the batch. */
int audio_batch_new(audio_batch **out, char *const *args, size_t nargs, tz_err *err);
void audio_batch_free(audio_batch *b);                 /* NULL is a no-op */
size_t audio_batch_count(const audio_batch *b);
const char *audio_batch_input(const audio_batch *b, size_t i);   /* borrowed */
const char *audio_batch_output_name(const audio_batch *b, size_t i); /* "NAME.sgy" */
int32_t audio_batch_record(const audio_batch *b, size_t i);
/* Field record = first + index in sorted order (checked against int32). */
int audio_batch_number(audio_batch *b, int64_t first, tz_err *err);
/* Field records from a CSV table with the header row file,field_record; `file`
 * matches an input's file name (no folder). Every input must have a row; rows
 * naming no input are ignored. Duplicate names or records are TZ_E_FORMAT naming
 * the line. */
int audio_batch_load_records(audio_batch *b, const char *csv_path, tz_err *err);

/* Converts every input into out_dir/NAME.sgy. Every file is probed and planned
 * first, so bad data is found before anything is written; out_dir is created if
 * missing (one level); the files are written into a hidden folder inside it and
 * moved into place only when all succeeded. On failure nothing is left: the
 * hidden folder is removed, and out_dir too when this call created it.
 * results (may be NULL) must hold audio_batch_count(b) entries. Field records
 * must be distinct (TZ_E_ARG). Files are converted p->threads at a time; when
 * several fail, the error reported is that of the first in sorted order.
 * Trace sequence numbers within the line run on across the files. */
int audio_batch_run(const audio_batch *b, const char *out_dir, const audio_params *p,
                    audio_result *results, tz_err *err);

/* "flac" -> 1 when libsndfile reads files with that extension (any case). */
int audio_known_extension(const char *ext);

#endif
