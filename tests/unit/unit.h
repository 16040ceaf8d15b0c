/* unit.h -- the main() every Check suite shares. */
#ifndef TZERO_UNIT_H
#define TZERO_UNIT_H

#include <check.h>
#include <stdlib.h>

#define TZ_UNIT_MAIN(suite_fn)                                   \
  int main(void)                                                 \
  {                                                              \
    SRunner *sr = srunner_create(suite_fn());                    \
    srunner_run_all(sr, CK_NORMAL);                              \
    int nf = srunner_ntests_failed(sr);                          \
    srunner_free(sr);                                            \
    return nf ? EXIT_FAILURE : EXIT_SUCCESS;                     \
  }

#endif
