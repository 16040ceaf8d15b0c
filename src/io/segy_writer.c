/* segy_writer.c -- writing SEG-Y rev 1 (rev 2 on request), big-endian,
 * IEEE (format 5, default) or IBM (format 1) samples.
 *
 * The file is written under a temporary name (fileio.h) and appears at its
 * path only when segy_writer_finish() succeeds. The textual header is EBCDIC
 * with our own card content, cards 39-40 as the standard recommends
 * (IBM code page 037). The binary header carries interval, samples, format,
 * sorting code, ensemble fold, measurement system, impulse polarity, revision and the
 * fixed-length flag (SEG-Y rev 1 (2002) binary header). Trace headers are encoded from
 * segy_trace_header by segy_header_encode() (segy_map.c).
 *
 * Not here: reading (segy_reader.c).
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "segy_priv.h"
#include "tzero/fileio.h"

struct segy_writer {
  fileio_out *out;
  segy_writer_opts o;
  unsigned char *buf;       /* one trace: header + samples */
  size_t len;
  int64_t traces;
};

static void text_header(const segy_writer_opts *o, unsigned char *text)
{
  char card[81];
  const char *p = o->text;
  for (int line = 1; line <= 40; line++) {
    int n = snprintf(card, sizeof card, "C%2d ", line);
    if (line == 39)
      n += snprintf(card + n, sizeof card - (size_t)n, "%s",
                    o->revision == 2 ? "SEG-Y_REV2.0" : "SEG Y REV1");
    else if (line == 40)
      n += snprintf(card + n, sizeof card - (size_t)n, "END TEXTUAL HEADER");
    else if (p && *p) {
      const char *e = strchr(p, '\n');
      size_t len = e ? (size_t)(e - p) : strlen(p);
      for (size_t k = 0; k < len && n < 80; k++)
        card[n++] = p[k];
      p = e ? e + 1 : p + len;
    }
    while (n < 80)
      card[n++] = ' ';
    for (int k = 0; k < 80; k++)
      text[(line - 1) * 80 + k] = segy_ascii_to_ebcdic((unsigned char)card[k]);
  }
}

static void binary_header(const segy_writer_opts *o, unsigned char *b)
{
  memset(b, 0, SEGY_BINARY_BYTES);
#define AT(pos) (b + (pos) - 3201)
  be32_store(AT(3205), (uint32_t)o->line_no);
  be32_store(AT(3209), 1);                                  /* reel number */
  be16_store(AT(3213), (uint16_t)o->traces_per_ensemble);
  be16_store(AT(3217), (uint16_t)o->interval_us);
  be16_store(AT(3219), (uint16_t)o->interval_us);
  be16_store(AT(3221), (uint16_t)o->samples);
  be16_store(AT(3223), (uint16_t)o->samples);
  be16_store(AT(3225), (uint16_t)o->format_code);
  be16_store(AT(3227), (uint16_t)o->ensemble_fold);
  be16_store(AT(3229), (uint16_t)o->sorting_code);
  be16_store(AT(3255), (uint16_t)o->measurement_system);
  be16_store(AT(3257), (uint16_t)o->polarity);               /* impulse polarity */
  if (o->revision == 2) {
    be32_store(AT(3269), o->samples);
    be64_store(AT(3273), f64_bits((double)o->interval_us));
    be32_store(AT(3297), 0x01020304u);                      /* byte-order constant */
    be16_store(AT(3501), 0x0200);
    be64_store(AT(3521), 3600);                             /* first trace offset */
  } else {
    be16_store(AT(3501), 0x0100);
  }
  be16_store(AT(3503), 1);                                  /* fixed-length traces */
#undef AT
}

int segy_writer_open(segy_writer **out, const char *path, const segy_writer_opts *opts,
                     tz_err *err)
{
  segy_writer_opts o = *opts;
  if (!o.revision)
    o.revision = 1;
  if (!o.format_code)
    o.format_code = 5;
  if (!o.measurement_system)
    o.measurement_system = 1;
  if (o.revision != 1 && o.revision != 2)
    return tz_fail(err, TZ_E_ARG, "SEG-Y revision %d cannot be written (1 or 2)", o.revision);
  if (o.format_code != 1 && o.format_code != 5)
    return tz_fail(err, TZ_E_ARG, "sample format %d cannot be written (1 IBM or 5 IEEE)",
                   o.format_code);
  if (o.samples == 0 || o.samples > 65535)
    return tz_fail(err, TZ_E_ARG, "%u samples per trace cannot be written (1..65535)",
                   o.samples);
  if (o.interval_us == 0 || o.interval_us > 65535)
    return tz_fail(err, TZ_E_ARG, "sample interval %u us cannot be written (1..65535)",
                   o.interval_us);
  segy_writer *w = calloc(1, sizeof *w);
  if (!w)
    return tz_fail(err, TZ_E_NOMEM, "writer");
  w->o = o;
  w->o.text = NULL;
  w->len = SEGY_TRACE_HEADER_BYTES + 4 * (size_t)o.samples;
  if (!(w->buf = malloc(w->len > 3600 ? w->len : 3600))) {
    free(w);
    return tz_fail(err, TZ_E_NOMEM, "trace buffer");
  }
  int rc = fileio_create(&w->out, path, err);
  if (rc) {
    free(w->buf);
    free(w);
    return rc;
  }
  text_header(&o, w->buf);
  binary_header(&o, w->buf + SEGY_TEXT_BYTES);
  if (fwrite(w->buf, 1, 3600, fileio_stream(w->out)) != 3600) {
    rc = fileio_fail(w->out, -1, err);   /* with the OS reason */
    segy_writer_abort(w);
    return rc;
  }
  *out = w;
  return TZ_OK;
}

int segy_trace_write(segy_writer *w, const segy_trace_header *h, const float *samples,
                     tz_err *err)
{
  int rc = segy_header_encode(h, w->o.samples, w->o.interval_us, w->buf, err);
  if (rc) {
    err->trace = w->traces;
    return tz_err_path(err, fileio_path(w->out));
  }
  unsigned char *p = w->buf + SEGY_TRACE_HEADER_BYTES;
  uint32_t n = w->o.samples;
  if (w->o.format_code == 1)
    for (uint32_t i = 0; i < n; i++, p += 4)
      be32_store(p, segy_float_to_ibm(samples[i]));
  else
    for (uint32_t i = 0; i < n; i++, p += 4)
      be32_store(p, f32_bits(samples[i]));
  if (fwrite(w->buf, 1, w->len, fileio_stream(w->out)) != w->len)
    return fileio_fail(w->out, w->traces, err);   /* with the OS reason */
  w->traces++;
  return TZ_OK;
}

int segy_writer_finish(segy_writer *w, tz_err *err)
{
  FILE *fp = fileio_stream(w->out);
  if (w->o.revision == 2) {             /* rev 2: number of traces, bytes 3513-3520 */
    unsigned char b[8];
    be64_store(b, (uint64_t)w->traces);
    if (fseeko(fp, 3512, SEEK_SET) != 0 || fwrite(b, 1, 8, fp) != 8 ||
        fseeko(fp, 0, SEEK_END) != 0) {
      fileio_fail(w->out, -1, err);
      segy_writer_abort(w);
      return err->status;
    }
  }
  int rc = fileio_commit(w->out, err);
  free(w->buf);
  free(w);
  return rc;
}

void segy_writer_abort(segy_writer *w)
{
  if (!w)
    return;
  fileio_abort(w->out);
  free(w->buf);
  free(w);
}
