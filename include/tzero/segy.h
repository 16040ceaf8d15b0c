/* segy.h -- SEG-Y rev 0/1/2 reader and rev 1/2 writer; samples always arrive as float. */
#ifndef TZERO_SEGY_H
#define TZERO_SEGY_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

#define SEGY_TEXT_BYTES 3200
#define SEGY_BINARY_BYTES 400
#define SEGY_TRACE_HEADER_BYTES 240
#define SEGY_MAX_SAMPLES 1000000u     /* cap on samples per trace before any allocation */

enum segy_byte_order { SEGY_ORDER_AUTO = 0, SEGY_ORDER_BIG, SEGY_ORDER_LITTLE, SEGY_ORDER_PAIRS };
enum segy_text_encoding { SEGY_TEXT_EBCDIC = 0, SEGY_TEXT_ASCII };

/* Trace identification codes (bytes 29-30) that matter to processing. */
enum {
  SEGY_KIND_UNKNOWN = 0, SEGY_KIND_SEISMIC = 1, SEGY_KIND_DEAD = 2, SEGY_KIND_DUMMY = 3
};

/* One decoded trace header, host order, scalars applied. Names are tzero's own;
 * the SEG-Y byte positions are given beside each field (1-based, rev 1). */
typedef struct segy_trace_header {
  int32_t line_seq;          /* 1-4   trace sequence number within line */
  int32_t file_seq;          /* 5-8   trace sequence number within file */
  int32_t field_record;      /* 9-12  original field record number */
  int32_t channel;           /* 13-16 trace number within the field record */
  int32_t source_point;      /* 17-20 energy source point number */
  int32_t cmp;               /* 21-24 ensemble (CMP) number */
  int32_t cmp_trace;         /* 25-28 trace number within the ensemble */
  int16_t kind;              /* 29-30 trace identification code */
  int16_t vertical_sum;      /* 31-32 */
  int16_t stacked_traces;    /* 33-34 number of horizontally stacked traces (fold) */
  int16_t data_use;          /* 35-36 */
  double offset;             /* 37-40 source-receiver distance, signed (not scaled) */
  double receiver_elev;      /* 41-44 scaled by elev_scalar */
  double source_elev;        /* 45-48 */
  double source_depth;       /* 49-52 */
  double receiver_datum;     /* 53-56 */
  double source_datum;       /* 57-60 */
  double source_water_depth; /* 61-64 */
  double receiver_water_depth; /* 65-68 */
  int16_t elev_scalar;       /* 69-70 as stored (0 means 1) */
  int16_t coord_scalar;      /* 71-72 as stored (0 means 1) */
  double source_x, source_y;     /* 73-80 scaled by coord_scalar */
  double receiver_x, receiver_y; /* 81-88 scaled by coord_scalar */
  int16_t coord_units;       /* 89-90 1 length, 2 arc-seconds, 3 degrees, 4 DMS */
  double uphole_source_ms;   /* 95-96  uphole time at the source, scaled by 215-216 */
  double uphole_receiver_ms; /* 97-98  uphole time at the group */
  double source_static_ms;   /* 99-100 source static correction */
  double receiver_static_ms; /* 101-102 group static correction */
  double total_static_ms;    /* 103-104 total static applied */
  int16_t delay_ms;          /* 109-110 delay recording time (scaled by 215-216 on read) */
  int16_t mute_start_ms;     /* 111-112 */
  int16_t mute_end_ms;       /* 113-114 */
  uint32_t samples;          /* 115-116 (u16), or rev 2 extension 137-140; on read, the
                              * count actually delivered (0 in the file: the file's) */
  uint32_t interval_us;      /* 117-118 (u16); on read 0 or an invalid value (negative
                              * as i16), or any value when an interval is given, is
                              * replaced by the file's interval in use */
  double cmp_x, cmp_y;       /* 181-188 scaled by coord_scalar */
  int32_t inline_no;         /* 189-192 */
  int32_t crossline_no;      /* 193-196 */
  int32_t shotpoint;         /* 197-200 */
  int16_t shotpoint_scalar;  /* 201-202 */
  int16_t time_scalar;       /* 215-216 scalar for the times 95-114, as stored (0 means 1) */
  unsigned char raw[SEGY_TRACE_HEADER_BYTES]; /* the bytes as read, for pass-through */
} segy_trace_header;

/* Where the sample interval in use came from (segy_info.interval_source). */
enum segy_interval_source {
  SEGY_INTERVAL_BINARY = 0,        /* binary header 3217-3218 */
  SEGY_INTERVAL_EXTENDED,          /* rev 2 binary header 3273-3280 (f64) */
  SEGY_INTERVAL_TRACE,             /* first trace header 117-118 */
  SEGY_INTERVAL_GIVEN              /* segy_open_opts.interval_us */
};

/* A stanza header "((...))" found in the extended textual header records or in
 * the rev 2 data trailer records (SEG-Y rev 1 (2002) section 6, rev 2.0). */
#define SEGY_MAX_STANZAS 16
typedef struct segy_stanza {
  char name[72];                   /* text between "((" and "))", blanks trimmed */
  int record;                      /* 1-based record number within its part */
  int trailer;                     /* 0: extended textual header, 1: data trailer */
  int layout;                      /* 1: names a trace header layout (not applied) */
} segy_stanza;

/* What the file-level headers say, after detection and fallbacks. */
typedef struct segy_info {
  char text[SEGY_TEXT_BYTES + 1];  /* textual header decoded to printable ASCII */
  int text_encoding;               /* enum segy_text_encoding */
  int byte_order;                  /* enum segy_byte_order, as detected or forced */
  int revision_major, revision_minor;
  uint16_t revision_raw;           /* bytes 3501-3502 as a big-endian u16 */
  int format_code;                 /* 3225-3226 (or the override) */
  int bytes_per_sample;
  uint32_t samples;                /* samples per trace in use (see fallbacks) */
  uint32_t interval_us;            /* sample interval in use, microseconds */
  uint32_t bin_samples;            /* 3221-3222 (or 3269-3272) as stored */
  uint32_t bin_interval_us;        /* 3217-3218 (or 3273-3280) as stored */
  int fixed_length;                /* 3503-3504, or 1 when the file walk found it so */
  uint32_t interval_us_raw;        /* 3217-3218 as stored (unsigned) */
  int interval_source;             /* enum segy_interval_source */
  int extended_text_count;         /* 3200-byte records skipped after the binary header */
  int extended_text_declared;      /* 3505-3506 as stored (signed), whatever was used */
  int trace_header_extensions;     /* rev 2: extra 240-byte blocks per trace */
  int extension_count_bytes;       /* rev 2: 2 = count read from 3507-3508 (rev 2.1
                                    * layout), 4 = from 3507-3510 as one 4-byte
                                    * value; 0 = not a rev 2 file */
  int64_t declared_traces;         /* rev 2 3513-3520 (0 = not given) */
  int trailer_records;             /* rev 2 data trailer records excluded from traces */
  int16_t sorting_code;            /* 3229-3230 */
  int16_t ensemble_fold;           /* 3227-3228 */
  int16_t measurement_system;      /* 3255-3256 */
  int32_t job_id, line_no, reel_no;/* 3201-3212 */
  int16_t traces_per_ensemble;     /* 3213-3214 */
  int16_t aux_per_ensemble;        /* 3215-3216 */
  int64_t first_trace_offset;      /* byte offset of the first trace header */
  int64_t trace_count;
  int64_t file_bytes;
  int64_t trailing_bytes;          /* bytes after the last whole trace (ignored) */
  unsigned char binary[SEGY_BINARY_BYTES]; /* binary header as read */
  int nstanzas;                    /* stanza headers found (at most SEGY_MAX_STANZAS) */
  segy_stanza stanzas[SEGY_MAX_STANZAS];
  /* Anomalies found while opening (not fatal): one short sentence each. */
  int nwarnings;
  char warnings[12][200];
} segy_info;

/* A header map moves one decoded field to another byte position and width
 * (for files that put geometry in non-standard places). Field names are the
 * struct member names above ("source_x", "cmp", ...). */
typedef struct segy_field_override {
  char field[32];
  int byte;                        /* 1-based position within the 240-byte header */
  int width;                       /* 2 or 4 bytes */
  int is_float;                    /* 4-byte IEEE float stored in an integer slot */
} segy_field_override;

typedef struct segy_header_map {
  int n;
  segy_field_override f[32];
} segy_header_map;

/* Parses a header map from JSON text, e.g.
 * {"source_x": {"byte": 181, "width": 4}, "cmp": {"byte": 9, "width": 4}}. */
int segy_header_map_parse(segy_header_map *map, const char *json, const char *name,
                          tz_err *err);
int segy_header_map_load(segy_header_map *map, const char *path, tz_err *err);

typedef struct segy_open_opts {
  int byte_order;                  /* SEGY_ORDER_AUTO (default) or forced */
  int format_code;                 /* 0 = from the binary header, else forced */
  const segy_header_map *map;      /* borrowed; NULL for the standard positions */
  int allow_partial;               /* 1: a truncated last trace is ignored with a warning
                                    * instead of being an error */
  uint32_t interval_us;            /* 0 = from the file; else the sample interval in
                                    * microseconds, replacing the file's (1-1000000) */
  int no_map;                      /* 1: read with pread() through a buffer even when the
                                    * file could be mapped (the path pipes and files too
                                    * large to map take; the results are the same) */
  int64_t map_bytes;               /* bytes mapped at a time (0: 16 MiB, rounded up to
                                    * whole pages); small values exercise the
                                    * piece boundaries in tests */
} segy_open_opts;

/* Thread rule: one handle per thread; handles share nothing, so several
 * threads may each open and read the same file. */
typedef struct segy_file segy_file;

/* Opens and validates a file: headers decoded, byte order and text encoding
 * detected, trace count found (from the file size for fixed-length files, by a
 * header walk otherwise). opts may be NULL. On success *out owns the handle. */
int segy_open(segy_file **out, const char *path, const segy_open_opts *opts, tz_err *err);
void segy_close(segy_file *f);                         /* NULL is a no-op */
const segy_info *segy_get_info(const segy_file *f);    /* borrowed, valid until close */
int64_t segy_trace_count(const segy_file *f);

/* The rev 2 trace header extension blocks of trace i (0-based): copies
 * 240 * *nblocks bytes, as stored (file byte order), into out (cap bytes).
 * *nblocks is 0 for a file without extensions. */
int segy_extensions_read(segy_file *f, int64_t i, unsigned char *out, size_t cap,
                         int *nblocks, tz_err *err);

/* Trace header extension 1 (SEG-Y rev 2.0 (2017), the first 240-byte block
 * after the standard header), field by index: name of our own, 1-based
 * position within the block, width in bytes, and the value decoded from the
 * block `ext` in byte order `order` (integers exact up to 2^53). */
size_t segy_ext1_field_count(void);
const char *segy_ext1_field_name(size_t i);
int segy_ext1_field_byte(size_t i);
int segy_ext1_field_width(size_t i);
double segy_ext1_field_value(const unsigned char *ext, int order, size_t i);
/* The 8-character name at bytes 233-240 of a header block, printable ASCII
 * (EBCDIC decoded when it looks so), into out[9]. */
void segy_block_name(const unsigned char *block, char out[9]);

/* Header of trace i (0-based) without reading its samples. */
int segy_header_read(segy_file *f, int64_t i, segy_trace_header *h, tz_err *err);
/* Header and samples of trace i. `cap` must be >= the trace's sample count;
 * samples are converted to float. Non-finite values are replaced by 0 and
 * counted (see segy_bad_samples). Sequential access does not seek. */
int segy_trace_read(segy_file *f, int64_t i, segy_trace_header *h, float *samples,
                    size_t cap, tz_err *err);
int64_t segy_bad_samples(const segy_file *f);   /* NaN/Inf/out-of-range seen so far */
/* Says that the reads to come stop before trace `end` (0-based; past the last
 * trace: the file's end): a mapped file is then mapped no further than that
 * trace, so threads reading slices of one file each map only their own slice.
 * A read beyond it still works. */
void segy_window_end(segy_file *f, int64_t end);

/* ---- writer ---- */

typedef struct segy_writer_opts {
  int revision;              /* 1 (default when 0) or 2 */
  int format_code;           /* 5 (default when 0) or 1 */
  uint32_t samples;          /* per trace, all traces the same */
  uint32_t interval_us;
  int16_t sorting_code;      /* 3229-3230: 1 as recorded, 2 CMP gather, 4 stacked ... */
  int16_t ensemble_fold;     /* 3227-3228 */
  int16_t traces_per_ensemble; /* 3213-3214 */
  int16_t measurement_system;  /* 1 metres (default when 0), 2 feet */
  int32_t line_no;             /* 3205-3208 */
  int16_t polarity;            /* 3257-3258 impulse polarity: 1 a pressure increase or
                                * upward case motion is negative, 2 positive, 0 unknown */
  const char *text;          /* card text, lines separated by '\n', at most 38 lines of
                              * 76 characters; tzero adds "C nn " prefixes, the
                              * revision card 39 and the end card 40. NULL = minimal. */
} segy_writer_opts;

typedef struct segy_writer segy_writer;

/* Creates `path` under a temporary name (see fileio.h); nothing appears at
 * `path` until segy_writer_finish() succeeds. On success *out owns the writer. */
int segy_writer_open(segy_writer **out, const char *path, const segy_writer_opts *o,
                     tz_err *err);
/* Encodes the header fields from `h` (scalars chosen from h->coord_scalar and
 * h->elev_scalar; 0 picks -100, i.e. centimetres), sets the sample count and
 * interval from the writer, and writes `samples` (opts.samples values).
 * The 240 bytes start as h->raw (so fields tzero does not decode pass through;
 * zero it for a fresh header), then every decoded field is written big-endian
 * at its standard position. A value that does not fit its slot is TZ_E_ARG. */
int segy_trace_write(segy_writer *w, const segy_trace_header *h, const float *samples,
                     tz_err *err);
/* Flushes and renames into place; takes the writer (always freed). */
int segy_writer_finish(segy_writer *w, tz_err *err);
void segy_writer_abort(segy_writer *w);               /* takes the writer; NULL ok */

/* ---- sample conversion (exposed for tests and benchmarks) ---- */
float segy_ibm_to_float(uint32_t ibm);              /* beyond float range (bad sample): 0 */
uint32_t segy_float_to_ibm(float v);                /* round to nearest */
int segy_format_bytes(int format_code);             /* 0 for undefined codes */
const char *segy_format_name(int format_code);      /* e.g. "IBM hexadecimal float" */

/* A binary header value at 1-based byte `pos` (3201-3600) of `width` 2, 4 or 8
 * bytes, in the file's byte order; 2 and 4 are signed, 8 unsigned. */
int64_t segy_binary_value(const segy_info *in, int pos, int width);

/* Applies the SEG-Y scalar rule: positive multiplies, negative divides, 0 means 1. */
double segy_apply_scalar(int32_t raw, int16_t scalar);

/* ---- trace header fields by index (for tables and statistics) ---- */
size_t segy_field_count(void);
const char *segy_field_name(size_t i);        /* struct member name, e.g. "source_x" */
int segy_field_byte(size_t i);                /* standard 1-based position (rev 1) */
int segy_field_width(size_t i);               /* 2 or 4 bytes */
double segy_field_value(const segy_trace_header *h, size_t i);  /* decoded, scaled */

/* ---- whole-file statistics (what `tzero inspect` prints) ---- */

#define SEGY_MAX_FIELDS 48
#define SEGY_MAX_ANOMALIES 16
#define SEGY_MAX_NOTED 64          /* all-zero and noisy traces listed by name (first ones) */
#define SEGY_NOISY_RATIO 10.0      /* a trace is noisy above this x its record's median RMS */

/* One trace singled out by segy_scan (0-based trace index, its record and
 * channel, its trace identification code and RMS over its record's median). */
typedef struct segy_trace_note {
  int64_t trace;
  int32_t field_record, channel;
  int kind;
  double rms, rms_ratio;
} segy_trace_note;

typedef struct segy_stats {
  int64_t traces;                  /* traces scanned */
  int64_t dead;                    /* trace identification code 2 */
  int64_t dummy;                   /* code 3 */
  int64_t auxiliary;               /* codes 4-10 (time break, uphole, sweep, ...) */
  int64_t all_zero;                /* traces whose samples are all zero (with samples) */
  int64_t field_records;           /* distinct field record numbers (bytes 9-12) */
  int64_t channels;                /* distinct channel numbers (bytes 13-16) */
  int64_t traces_per_record_min, traces_per_record_max;
  int with_samples;                /* 1 when amplitudes were read */
  double amp_min, amp_max, amp_rms;/* over all samples read */
  int64_t bad_samples;             /* NaN/Inf/out-of-range, replaced by 0 */
  double field_min[SEGY_MAX_FIELDS], field_max[SEGY_MAX_FIELDS]; /* by field index */
  int64_t samples_differ;          /* traces whose 115-116 is set and differs from the file's */
  int64_t interval_differ;         /* traces whose 117-118 is set and differs */
  int64_t coord_scalar_zero;       /* traces with coordinates but 71-72 = 0 */
  int64_t elev_scalar_zero;        /* traces with elevations but 69-70 = 0 */
  int64_t scalar_irregular;        /* 69-70 or 71-72 not 0, +-1, +-10, ... +-10000 */
  int64_t coords_zero;             /* traces with source and receiver x/y all 0 */
  int64_t offset_inconsistent;     /* offset 0 while source and receiver differ */
  int64_t angular_units;           /* coordinate units 2, 3 or 4 (not length) */
  /* With samples: the all-zero traces and the noisy ones (RMS above
   * SEGY_NOISY_RATIO x the median RMS of the live, not all-zero traces of the
   * same record, a record being a run of traces with one field record number);
   * the first SEGY_MAX_NOTED of each are listed, in file order. */
  int64_t noisy;
  int nzero_noted, nnoisy_noted;
  segy_trace_note zero_noted[SEGY_MAX_NOTED], noisy_noted[SEGY_MAX_NOTED];
  /* Anomalies found (one short sentence each), most important first. */
  int nanomalies;
  char anomalies[SEGY_MAX_ANOMALIES][200];
} segy_stats;

/* Reads every trace header (and, with with_samples, every sample) once, in
 * order, and fills st. Memory: 8 bytes per trace for the record/channel
 * counts plus one trace of samples. */
int segy_scan(segy_file *f, int with_samples, segy_stats *st, tz_err *err);

#endif
