/* fuzz_qc_report.c -- QC reports (JSON, tzero-qc/1): parse, print the summary,
 * one CMP's detail and the fold table, as `tzero report` does. */
#include "fuzz_util.h"
#include "tzero/qc.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  qc_report *r = NULL;
  tz_err e;
  tz_err_init(&e);
  if (qc_report_parse(&r, (const char *)data, size, "qc.json", &e))
    return 0;
  char *text = NULL;
  tz_err_init(&e);
  if (qc_report_summary(r, &text, &e) == TZ_OK)
    free(text);
  static const long cmps[] = { 1, 0, -1, 100 };
  for (size_t i = 0; i < sizeof cmps / sizeof cmps[0]; i++) {
    text = NULL;
    tz_err_init(&e);
    if (qc_report_cmp_detail(r, cmps[i], &text, &e) == TZ_OK)
      free(text);
  }
  text = NULL;
  tz_err_init(&e);
  if (qc_report_fold_csv(r, &text, &e) == TZ_OK)
    free(text);
  qc_report_free(r);
  return 0;
}
