/* page.h -- HTML QC pages: one line's report, a survey of many lines, a comparison of two stacks.
 *
 * Every page is one self-contained file: inline SVG charts drawn through the
 * picture module's drawing context (SVG with real text and data-* values),
 * stacked-section thumbnails embedded as PNG data URIs, one small plain
 * script (hover or #cmp=N shows a CMP's numbers, sortable tables) and a print
 * style sheet; nothing is fetched from the network or from other files. The
 * line page shows what the report holds and skips what it does not, so it
 * grows with the report (docs/qc-report.md lists the sections). The library
 * never prints: pages come back as strings, or are written through a
 * temporary file renamed on success.
 */
#ifndef TZERO_PAGE_H
#define TZERO_PAGE_H

#include <stddef.h>
#include "tzero/compare.h"
#include "tzero/error.h"

#define PAGE_WIDTH_PX 1100        /* width of every chart; the plot area keeps picture.h margins */
#define PAGE_MAX_REPORTS 10000    /* lines on one survey page */
#define PAGE_THUMB_MAX_SAMPLES (16u << 20)  /* CMPs x samples of a thumbnail */

typedef struct page_line_opts {
  const char *report_path;   /* the QC report (tzero-qc/1) */
  const char *section_path;  /* stacked section for the thumbnail; NULL: the report's
                              * section.path, as given, then beside the report */
  const char *page_path;     /* where the page will be (links are relative to its folder) */
} page_line_opts;

/* The line page of one report. *html is the caller's (free()). A section that
 * cannot be found or read leaves a note instead of the thumbnail. */
int page_line(const page_line_opts *o, char **html, tz_err *err);

/* The page a line's report gets by default: the report's path with ".json"
 * replaced by ".html" (or ".html" appended). *out is the caller's (free()). */
int page_path_for_report(const char *report_path, char **out, tz_err *err);

/* Writes the line page to o->page_path (through a temporary file). */
int page_line_write(const page_line_opts *o, tz_err *err);

/* The survey page of n reports: one row per line with links to each line's
 * page (linked: page_path_for_report(); missing line pages are written first,
 * *written counts them), sortable by column, lines with warnings first. */
int page_survey(const char *const *reports, size_t n, const char *page_path, char **html,
                size_t *written, tz_err *err);

/* The comparison page of two stacks of one line (A before, B after a
 * revision): the per-CMP energy ratio B/A in dB with the threshold, the peak
 * correlation and lag, and both sections' thumbnails on the same CMP axis. */
int page_compare(const char *path_a, const char *path_b, const compare_result *r,
                 double threshold_db, const char *page_path, char **html, tz_err *err);

#endif
