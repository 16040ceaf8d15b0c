/* check_json_doc -- the library's JSON reading helper (src/util/json_doc.h).
 *
 * Sources: RFC 8259 (The JavaScript Object Notation Data Interchange Format,
 * 2017) for what is and is not JSON, and its section 4 for names that "SHOULD
 * be unique" within an object (we refuse repeats); the Levenshtein (1966) edit
 * distance with its usual worked example kitten -> sitting = 3 (from memory).
 * Line and byte numbers are counted by hand in each text below.
 */
#include <math.h>
#include <string.h>

#include "unit.h"
#include "util/json_doc.h"

static int parse(const char *text, cJSON **root, tz_err *e)
{
  tz_err_init(e);
  return json_doc_parse(root, text, strlen(text), "doc.json", "document", TZ_E_JOB, e);
}

START_TEST(test_edit_distance)
{
  ck_assert_uint_eq(json_doc_edit_distance("kitten", "sitting"), 3);
  ck_assert_uint_eq(json_doc_edit_distance("", "abc"), 3);
  ck_assert_uint_eq(json_doc_edit_distance("same", "same"), 0);
  ck_assert_uint_eq(json_doc_edit_distance("strech_limit_pct", "stretch_limit_pct"), 1);
  static const char *const keys[] = { "layers", "dipping_interface", "description" };
  ck_assert_str_eq(json_doc_nearest("layer", keys, 3), "layers");
  ck_assert_ptr_null(json_doc_nearest("x", keys, 0));
}
END_TEST

START_TEST(test_syntax_fault_place)
{
  cJSON *r = NULL;
  tz_err e;
  /* line 3, byte offset 17 (0-based): the closing brace where a value should be */
  ck_assert_int_eq(parse("{\n \"a\": 1,\n \"b\": }", &r, &e), TZ_E_FORMAT);
  ck_assert_ptr_null(r);
  ck_assert_str_eq(e.path, "doc.json");
  ck_assert_int_eq(e.line, 3);
  ck_assert_int_eq(e.byte, 17);
  ck_assert_ptr_nonnull(strstr(e.msg, "document is not valid JSON"));
  /* trailing text after the value is not JSON either (RFC 8259 section 2) */
  ck_assert_int_eq(parse("{} x", &r, &e), TZ_E_FORMAT);
  /* a NUL byte inside the given length */
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_parse(&r, "{\"a\":\0 1}", 9, "doc.json", "document", TZ_E_JOB, &e),
                   TZ_E_FORMAT);
  ck_assert_int_eq(e.byte, 5);
  ck_assert_ptr_nonnull(strstr(e.msg, "NUL byte"));
}
END_TEST

START_TEST(test_duplicate_keys)
{
  cJSON *r = NULL;
  tz_err e;
  ck_assert_int_eq(parse("{\"a\": 1, \"a\": 2}", &r, &e), TZ_E_JOB);
  ck_assert_ptr_nonnull(strstr(e.msg, "$.a: key given twice"));
  ck_assert_int_eq(parse("{\"a\": [1, {\"b\": {\"c\": 1, \"d\": 2, \"c\": 3}}]}", &r, &e),
                   TZ_E_JOB);
  ck_assert_ptr_nonnull(strstr(e.msg, "$.a[1].b.c: key given twice"));
  /* the same key in two different objects is fine */
  ck_assert_int_eq(parse("{\"a\": {\"x\": 1}, \"b\": {\"x\": 1}}", &r, &e), TZ_OK);
  cJSON_Delete(r);
}
END_TEST

START_TEST(test_depth_limit)
{
  char text[2 * JSON_DOC_MAX_DEPTH + 8];
  cJSON *r = NULL;
  tz_err e;
  /* exactly the limit: accepted */
  memset(text, '[', JSON_DOC_MAX_DEPTH);
  memset(text + JSON_DOC_MAX_DEPTH, ']', JSON_DOC_MAX_DEPTH);
  text[2 * JSON_DOC_MAX_DEPTH] = '\0';
  ck_assert_int_eq(parse(text, &r, &e), TZ_OK);
  cJSON_Delete(r);
  /* one more level: refused at the opening bracket that passes it */
  memset(text, '[', JSON_DOC_MAX_DEPTH + 1);
  memset(text + JSON_DOC_MAX_DEPTH + 1, ']', JSON_DOC_MAX_DEPTH + 1);
  text[2 * JSON_DOC_MAX_DEPTH + 2] = '\0';
  ck_assert_int_eq(parse(text, &r, &e), TZ_E_FORMAT);
  ck_assert_int_eq(e.byte, JSON_DOC_MAX_DEPTH);
  ck_assert_ptr_nonnull(strstr(e.msg, "nested too deeply (more than 64 levels"));
  /* brackets inside strings do not count */
  ck_assert_int_eq(parse("{\"a\": \"[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[["
                         "[[[[[[[[[[[[\\\"[[\"}", &r, &e), TZ_OK);
  cJSON_Delete(r);
}
END_TEST

START_TEST(test_getters)
{
  cJSON *r = NULL;
  tz_err e;
  ck_assert_int_eq(parse("{\"n\": 4000, \"s\": \"x\", \"i\": 1.5, \"b\": 1, \"e\": \"\", "
                         "\"c\": \"sinc9\"}", &r, &e), TZ_OK);
  double d;
  int64_t i;
  int b;
  const char *s;
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_number(cJSON_GetObjectItem(r, "n"), "$.n", 0, 1000, &d, TZ_E_JOB, &e),
                   TZ_E_JOB);
  ck_assert_str_eq(e.msg, "$.n: expected a number between 0 and 1000, got 4000");
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_number(cJSON_GetObjectItem(r, "s"), "$.s", -HUGE_VAL, HUGE_VAL, &d,
                                   TZ_E_FORMAT, &e), TZ_E_FORMAT);
  ck_assert_str_eq(e.msg, "$.s: expected a number, got a string");
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_int(cJSON_GetObjectItem(r, "i"), "$.i", 0, 9, &i, TZ_E_JOB, &e),
                   TZ_E_JOB);
  ck_assert_str_eq(e.msg, "$.i: expected an integer between 0 and 9, got 1.5");
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_bool(cJSON_GetObjectItem(r, "b"), "$.b", &b, TZ_E_JOB, &e), TZ_E_JOB);
  ck_assert_str_eq(e.msg, "$.b: expected true or false, got a number");
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_string(cJSON_GetObjectItem(r, "e"), "$.e", &s, TZ_E_JOB, &e), TZ_E_JOB);
  ck_assert_str_eq(e.msg, "$.e: expected a non-empty string");
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_number(NULL, "$.missing", 0, 1, &d, TZ_E_JOB, &e), TZ_E_JOB);
  ck_assert_str_eq(e.msg, "$.missing: expected a number between 0 and 1, got nothing");
  static const char *const names[] = { "linear", "sinc8", NULL };
  static const int values[] = { 0, 1 };
  int c = -1;
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_choice(cJSON_GetObjectItem(r, "c"), "$.c", names, values, &c,
                                   TZ_E_JOB, &e), TZ_E_JOB);
  ck_assert_str_eq(e.msg, "$.c: expected \"linear\" or \"sinc8\", got \"sinc9\"");
  static const char *const known[] = { "n", "s", "i", "b", "e", NULL };
  tz_err_init(&e);
  ck_assert_int_eq(json_doc_check_keys(r, "$", known, TZ_E_JOB, &e), TZ_E_JOB);
  ck_assert_str_eq(e.msg, "$.c: unknown key; did you mean \"n\"?");
  cJSON_Delete(r);
}
END_TEST

static Suite *suite(void)
{
  Suite *s = suite_create("json_doc");
  TCase *tc = tcase_create("core");
  tcase_add_test(tc, test_edit_distance);
  tcase_add_test(tc, test_syntax_fault_place);
  tcase_add_test(tc, test_duplicate_keys);
  tcase_add_test(tc, test_depth_limit);
  tcase_add_test(tc, test_getters);
  suite_add_tcase(s, tc);
  return s;
}

TZ_UNIT_MAIN(suite)
