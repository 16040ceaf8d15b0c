/* table.h -- comma-separated text tables (with '#' comments) and checked number parsing. */
#ifndef TZERO_TABLE_H
#define TZERO_TABLE_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"

typedef struct table_reader table_reader;

/* On success *out owns a new reader: release it with table_close().
 * A missing or unreadable file is TZ_E_NOINPUT with the path recorded. */
int table_open(table_reader **out, const char *path, tz_err *err);
/* Reads from memory; `name` is used in messages. The text is copied. */
int table_open_mem(table_reader **out, const char *name, const char *text, size_t len,
                   tz_err *err);
void table_close(table_reader *t);                 /* NULL is a no-op */
/* SHA-256 (64 hex characters) of every byte of the table as read; borrowed. */
const char *table_sha256(const table_reader *t);

/* Advances to the next row that is neither blank nor a '#' comment. Fields are
 * split on commas and trimmed of blanks. *nfields is 0 at end of input.
 * Lines longer than TABLE_MAX_LINE are TZ_E_FORMAT. */
#define TABLE_MAX_LINE 65536
/* A table file larger than this is refused before it is read whole (TZ_E_FORMAT);
 * a geometry table of a million traces is about 80 MB. */
#define TABLE_MAX_BYTES (1u << 28)
#define TABLE_MAX_FIELDS 256
int table_next(table_reader *t, size_t *nfields, tz_err *err);
/* Borrowed until the next table_next(); "" past the last field. */
const char *table_field(const table_reader *t, size_t i);
int64_t table_line(const table_reader *t);          /* 1-based line of the current row */
const char *table_name(const table_reader *t);
/* The last '#' comment line table_next() passed over, '#' included and trimmed
 * (NULL when none); borrowed until table_close(). */
const char *table_last_comment(const table_reader *t);

/* Checked parsers: whole string must be a number (surrounding blanks allowed).
 * Return 0 on success, -1 on anything else (empty, junk, overflow, NaN, Inf). */
int table_parse_i64(const char *s, int64_t *out);
int table_parse_f64(const char *s, double *out);

/* A list of whole numbers and ranges as people type them: "250", "200,250,300",
 * "200-300", "200-900:50" and commas between any of these (a '-' after the first
 * character of an item splits a range, so "-5-5" is -5 to 5). On success *out
 * owns a sorted array without duplicates (free()). TZ_E_ARG naming the list by `what` (a noun: "CMP" gives "CMP list item '2x':
 * ...") and the offending item; more than `max` numbers is TZ_E_ARG too ("more than
 * 2000000 CMPs"). */
int table_parse_ranges(const char *s, const char *what, size_t max, int32_t **out, size_t *n,
                       tz_err *err);

/* Field parsers that fill `err` with the table name, line and column name. */
int table_field_i64(const table_reader *t, size_t i, const char *column, int64_t *out,
                    tz_err *err);
int table_field_f64(const table_reader *t, size_t i, const char *column, double *out,
                    tz_err *err);

#endif
