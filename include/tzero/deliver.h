/* deliver.h -- what the interpreter receives with a section: the textual header
 * (processing sequence, line, client, CRS, datum, polarity), the navigation file,
 * velocities with coordinates and the processing history (docs/section.md,
 * docs/deliverables.md).
 *
 * The processing sequence is a list of one-line step descriptions in order
 * (deliver_steps). deliver_steps_job() fills the steps of the job's flow up to
 * the stack; any later stage (post-stack conditioning, migration) appends its own
 * with deliver_steps_add(), and every product written afterwards lists them all.
 */
#ifndef TZERO_DELIVER_H
#define TZERO_DELIVER_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/job.h"
#include "tzero/stack.h"
#include "tzero/velocity.h"

#define DELIVER_MAX_STEPS 48        /* steps kept; more are counted in `dropped` */
#define DELIVER_STEP_BYTES 256      /* one step's text, NUL included */
#define DELIVER_TEXT_BYTES (38 * 80) /* card text of cards 1-38 (segy_writer_opts.text) */

/* The processing sequence: a plain value (no allocation), one step per entry. */
typedef struct deliver_steps {
  size_t n;
  size_t dropped;                    /* steps added beyond DELIVER_MAX_STEPS */
  char step[DELIVER_MAX_STEPS][DELIVER_STEP_BYTES];
} deliver_steps;

void deliver_steps_init(deliver_steps *s);
/* Appends one step (printf format, truncated to DELIVER_STEP_BYTES - 1; a newline
 * becomes a space). A full list counts it in `dropped`. */
void deliver_steps_add(deliver_steps *s, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));
/* The job's flow up to the stack, in order: input, geometry and bins, edits,
 * statics, each conditioning step with its parameters, NMO, mutes, the stack. */
int deliver_steps_job(deliver_steps *s, const job_spec *j, tz_err *err);
/* A post-stack time migration as one step's text (aperture and dip for Kirchhoff;
 * max_hz 0 = Nyquist, not shown). */
void deliver_migration_step(char *out, size_t cap, int kirchhoff, const char *velocity,
                            double velocity_pct, double aperture_m, double max_dip_deg,
                            double max_hz);
/* The job's "migration" object as one step (nothing when the job has none). */
void deliver_steps_migration(deliver_steps *s, const job_spec *j);

/* The run: who wrote a product, when and how it was called. Borrowed strings. */
typedef struct deliver_run {
  const char *version;               /* tzero's version */
  int64_t time_s;                    /* the run's date, seconds since 1970-01-01 UTC */
  int argc;                          /* the command line, for the history */
  char *const *argv;
} deliver_run;

/* The date of time_s as YYYY-MM-DD (UTC) into out[11]. */
void deliver_date(int64_t time_s, char out[11]);

/* SEG-Y rev 1 impulse polarity code for the binary header (bytes 3257-3258):
 * the job's "polarity" (1 or 2), else 0 (not stated). */
int16_t deliver_polarity_code(const job_spec *j);

/* The card text (cards 1-38, '\n' between cards, for segy_writer_opts.text) of a
 * section: `product` ("stacked section"), tzero's version and the date, line,
 * client, contractor, CRS, CMP range and bins (p may be NULL), time reference
 * (datum and replacement velocity), polarity, where the coordinates, elevations,
 * shot points and fold are, then the steps one per card. Steps that do not fit
 * are summarised on the last card. Cards longer than 76 characters are cut. */
void deliver_section_text(const job_spec *j, const stack_plan *p, int32_t first_cmp,
                          int32_t last_cmp, const char *product, const deliver_steps *steps,
                          const deliver_run *run, char *out, size_t cap);

/* A section's textual header carried on by a later step (tzero migrate of a tzero
 * section): in_text is the input's textual header as decoded (segy_info.text, 40
 * cards of 80 characters); when it is tzero's (card 1 starts "tzero ", a card reads
 * "processing sequence:"), `out` gets its cards 1-38 with card 1 naming `product`
 * and the run's date and `step` appended to the sequence, and 1 is returned.
 * Otherwise 0 and `out` is untouched. */
int deliver_section_text_continue(const char *in_text, const char *product, const char *step,
                                  const deliver_run *run, char *out, size_t cap);

/* The navigation file (output.navigation): CSV with the header
 * cmp,shot_point,x_m,y_m,surface_elevation_m,datum_m,fold and one row per trace
 * of the section, each value as the section's trace header stores it
 * (stack_section_header). Written under a temporary name, renamed on success. */
int deliver_navigation_write(const stack_section *s, const stack_plan *p, const char *path,
                             tz_err *err);

/* Velocities with coordinates (`tzero velocity --job J --export FILE`): CSV
 * cmp,shot_point,x_m,y_m,time_ms,rms_mps,interval_mps. every = 0: at the table's
 * control CMPs, at their own knots; every = N > 0: at every N-th CMP of the
 * plan's range (from its first CMP), at the knot times of the nearest control
 * CMP (the lower of two as near), the velocity sampled as the stack samples it
 * (velocity_at). Interval
 * velocities by Dix (1955) between consecutive rows of a CMP; empty where
 * V_rms^2 t does not increase (imaginary). *imaginary (may be NULL) counts
 * those. Written under a temporary name, renamed on success. */
int deliver_velocity_export(const stack_plan *p, const velocity_table *v, int64_t every,
                            const char *path, int64_t *rows, int64_t *imaginary, tz_err *err);

/* The processing history (output.history), markdown: the run, the inputs with
 * their SHA-256 digests, geometry, edits and statics, each step with all its
 * parameters, velocity controls, mutes, QC figures, warnings and the command
 * line. `report` is the run's QC report (JSON text, qc_report_build); `steps`
 * the processing sequence; `outputs` (NULL-terminated, may be NULL) the files
 * the run wrote. Written under a temporary name, renamed on success. */
int deliver_history_write(const job_spec *j, const char *report, const deliver_steps *steps,
                          const deliver_run *run, const char *const *outputs,
                          const char *path, tz_err *err);

#endif
