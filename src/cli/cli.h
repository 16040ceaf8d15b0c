/* cli.h -- what the front-end files share: the subcommand entry points and
 * small printing helpers. Front-end only; the library never includes it. */
#ifndef TZERO_CLI_H
#define TZERO_CLI_H

#include <stdint.h>
#include <stdio.h>
#include "tzero/error.h"

#define TZERO_VERSION "0.1.0"

/* The caution every help text and the README carry. */
/* The professional-review caution: in full on `tzero --help` (as in the README
 * and tzero(1)), once in one line at the foot of each subcommand's page. */
#define CLI_CAUTION_FULL \
  "A processed section is an interpretation aid: have it reviewed by a qualified\n" \
  "geophysicist. Local regulations and licensed practice govern any site work.\n"
#define CLI_CAUTION \
  "Interpretation aid: review by a qualified geophysicist; rules govern site work.\n"

/* Each subcommand: argv[0] is the subcommand name; returns a <sysexits.h> code. */
int cmd_inspect(int argc, char **argv);
int cmd_synth(int argc, char **argv);
int cmd_geometry(int argc, char **argv);
int cmd_velocity(int argc, char **argv);
int cmd_nmo(int argc, char **argv);
int cmd_gathers(int argc, char **argv);
int cmd_stack(int argc, char **argv);
int cmd_report(int argc, char **argv);
int cmd_semblance(int argc, char **argv);
int cmd_cvs(int argc, char **argv);
int cmd_fit(int argc, char **argv);
int cmd_compare(int argc, char **argv);
int cmd_picture(int argc, char **argv);
int cmd_audio(int argc, char **argv);
int cmd_spectrum(int argc, char **argv);
int cmd_merge(int argc, char **argv);
int cmd_migrate(int argc, char **argv);
int cmd_condition(int argc, char **argv);
int cmd_firstbreaks(int argc, char **argv);
int cmd_statics(int argc, char **argv);   /* verbs: src/cli/statics.c */
int cmd_statics_refraction(int argc, char **argv);   /* src/cli/statics_refraction.c */
int cmd_statics_residual(int argc, char **argv);     /* src/cli/statics_residual.c */

/* `tzero picture --spectrum A.csv,B.csv` / `--fk-record N FILE` (picture_spectrum.c):
 * the option strings as given (NULL when absent). */
typedef struct cli_spectrum_pic {
  const char *spectra, *labels, *fk_record, *spacing, *max_hz, *min_db, *fan;
} cli_spectrum_pic;
int cli_picture_spectrum(const cli_spectrum_pic *a, const char *in_path, const char *out,
                         int format, const char *title, uint32_t w, uint32_t h, int quiet);

/* `tzero picture --velocity-field TABLE.csv [--job JOB]` (picture_velocity.c). */
struct picture_select;
int cli_picture_velocity(const char *table, const char *job, const struct picture_select *sel,
                         const char *out, int format, const char *title, uint32_t w, uint32_t h,
                         int quiet);

/* Prints "tzero CMD: <formatted error>[: strerror]" to stderr and returns the
 * exit status for the error's status. */
int cli_report(const char *cmd, const tz_err *e);
/* Prints "tzero CMD: MSG" and a hint to stderr; returns EX_USAGE. */
int cli_usage_error(const char *cmd, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));
/* Prints a cJSON tree (passed as void * so cli.h needs no cJSON header) to stdout
 * and deletes it; takes the tree (NULL is allowed). EX_OK, or EX_OSERR when the
 * text could not be made. */
int cli_print_json(void *tree);
/* Every subcommand's getopt_long loop starts with cli_opt_begin() (optind = 1,
 * opterr = 0: getopt prints nothing, the messages are ours) and ends its switch
 * with `default: return cli_opt_error(cmd, argv, opts);`, the usage error naming
 * the option getopt did not accept: unknown (with the nearest option name
 * suggested), missing its value, or shortened (cli_getopt). */
struct option;
void cli_opt_begin(void);
/* getopt_long(3) that takes long options only as written in full: a shortened
 * name (which getopt_long would take when it fits one option) is returned as
 * '?' for cli_opt_error() to name with the full name, so `--stretch 30` never
 * runs silently as `--stretch-limit 30` nor changes meaning when a later option
 * shares the prefix. Every subcommand's loop calls it instead of getopt_long. */
int cli_getopt(int argc, char **argv, const char *shortopts, const struct option *opts);
int cli_opt_error(const char *cmd, char **argv, const struct option *opts);
/* The usage error for a stray argument; when no --job was given (`job` NULL) and
 * the argument names a .json file, it suggests `--job ARG`. */
int cli_unexpected_arg(const char *cmd, const char *arg, const char *job);
/* Checked option parsers: on failure print a usage error naming the option. */
int cli_parse_i64(const char *cmd, const char *opt, const char *s, long long *out);
int cli_parse_f64(const char *cmd, const char *opt, const char *s, double *out);

#endif
